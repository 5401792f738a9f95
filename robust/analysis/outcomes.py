"""Outcomes, in one place: the verdict words, the one validity rule of a box and the one
pass/fail rule of a requirement.

Every command (check, margin, rank, report, the CLI) takes its verdict words, its answer to
"does this box still stand for the loop?" and its PASS/FAIL/OPEN from here.
"""

from __future__ import annotations

from dataclasses import dataclass
from enum import StrEnum
from fractions import Fraction

from ..model.family import Box, UncertainPolynomial, sign_over_box

__all__ = [
    "BoxProblem",
    "LimitKind",
    "Outcome",
    "Verdict",
    "box_problem",
    "requirement_outcome",
    "untestable",
]


class Verdict(StrEnum):
    """The answer of a robust-stability decision."""

    STABLE = "stable"  # proven for every point of the box
    UNSTABLE = "unstable"  # a verified witness inside the box
    UNDECIDED = "undecided"  # the budget ran out; what is left is reported

    @property
    def headline(self) -> str:
        """The verdict in one line, for the terminal and the report."""
        return {
            "stable": "STABLE for every parameter set inside the tolerances (proven)",
            "unstable": "UNSTABLE: a verified counterexample lies inside the tolerances",
            "undecided": "UNDECIDED within the work budget",
        }[self.value]

    @property
    def outcome(self) -> Outcome:
        """The sign-off outcome of the verdict alone."""
        return {"stable": Outcome.PASS, "unstable": Outcome.FAIL, "undecided": Outcome.OPEN}[self.value]


class Outcome(StrEnum):
    """The outcome of a requirement, or of the whole sign-off."""

    PASS = "pass"
    FAIL = "fail"
    OPEN = "open"  # not decided within the budget

    @property
    def word(self) -> str:
        """The word people read: PASS, FAIL or UNDECIDED."""
        return {"pass": "PASS", "fail": "FAIL", "open": "UNDECIDED"}[self.value]

    @property
    def passed(self) -> bool | None:
        """True, False or None (JSON ``passed``)."""
        return {"pass": True, "fail": False, "open": None}[self.value]


class LimitKind(StrEnum):
    """What ends a margin: the smallest scale where the family stops being robustly stable
    or the scaled box stops standing for the loop."""

    CROSSING = "crossing"  # a root reaches the imaginary axis (a witness lies just beyond)
    PHYSICAL_LIMIT = "physical_limit"  # a part reaches its physical limit first
    DEGREE_LOSS = "degree_loss"  # the leading coefficient reaches zero
    DENOMINATOR = "denominator"  # a divided-out factor would change sign
    CAP = "cap"  # nothing up to the largest scale tried


#: When two ends come at the same scale, the first of these is named: a part that reaches
#: its limit is what happens, the degree loss or sign change only at that excluded point.
LIMIT_PRECEDENCE = (LimitKind.PHYSICAL_LIMIT, LimitKind.DENOMINATOR, LimitKind.DEGREE_LOSS,
                    LimitKind.CROSSING, LimitKind.CAP)


@dataclass(frozen=True, slots=True)
class BoxProblem:
    """Why a box does not stand for the loop.

    ``proven`` is True when the problem certainly occurs in the box (a part at or past its
    limit, a factor or the leading coefficient reaching zero), False when the sound test
    could not exclude it.
    """

    kind: LimitKind
    parameters: tuple[str, ...]
    proven: bool
    detail: str


def box_problem(family: UncertainPolynomial, box: Box) -> BoxProblem | None:
    """The one validity rule: None when ``box`` stands for the loop, else what is wrong.

    A box stands for the loop when (1) every parameter stays strictly inside its physical
    limits (limits are exclusive), (2) every divided-out denominator or common factor keeps
    one strict sign over it (else the cleared polynomial is not the loop's), and (3) the
    leading coefficient keeps one strict sign (the degree holds).
    """
    outside = []
    for i, (low, high) in enumerate(box.intervals):
        if family.limit_reached(i, low, high) is not None:
            outside.append(family.names[i])
    if outside:
        return BoxProblem(LimitKind.PHYSICAL_LIMIT, tuple(outside), True,
                          "reaches the physical limit of " + ", ".join(outside))
    for factor, sign in zip(family.factors, family.factor_signs(box), strict=True):
        if sign not in (1, -1):
            names = tuple(family.names[i] for i in sorted(factor.variables()))
            return BoxProblem(LimitKind.DENOMINATOR, names, sign == 0,
                              f"the divided-out factor {factor.to_text(family.names)} "
                              + ("changes sign" if sign == 0 else "may change sign"))
    lead = family.coefficients[0]
    sign = sign_over_box(lead, box)
    if sign not in (1, -1):
        names = tuple(family.names[i] for i in sorted(lead.variables()))
        return BoxProblem(LimitKind.DEGREE_LOSS, names, sign == 0,
                          "the leading coefficient " + ("reaches zero" if sign == 0 else "may reach zero"))
    return None


def untestable(family: UncertainPolynomial, box: Box) -> BoxProblem | None:
    """The part of the validity rule that forbids deciding a box at all: a part past its
    physical limit, or a divided-out factor that may change sign (the cleared polynomial is
    then not the loop's). A leading coefficient that reaches zero is left to the decision
    itself, which finds a witness where it changes sign and says undecided where it only
    touches zero."""
    problem = box_problem(family, box)
    if problem is not None and problem.kind is not LimitKind.DEGREE_LOSS:
        return problem
    return None


def requirement_outcome(required: Fraction, direct: Verdict | None = None,
                        lower: Fraction | None = None, upper: Fraction | None = None) -> Outcome:
    """The one pass/fail rule of a requirement "the quantity is at least ``required``".

    ``direct`` is the decision over the required box itself (stable: PASS; unstable: FAIL).
    ``lower`` is a proven lower bound of the quantity and ``upper`` a certified upper bound
    (a verified witness, or the scale at which the box stops standing for the loop). A
    decided direct verdict rules; else the bounds decide when they can; else OPEN.
    """
    if direct is Verdict.STABLE:
        return Outcome.PASS
    if direct is Verdict.UNSTABLE:
        return Outcome.FAIL
    if lower is not None and lower >= required:
        return Outcome.PASS
    if upper is not None and upper <= required:
        return Outcome.FAIL
    return Outcome.OPEN
