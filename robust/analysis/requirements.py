"""The case's requirements, each decided directly over its own box, by one procedure that
check, margin and the report all use (so that they give the same outcome)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

from ..exact.numbers import approx_text, format_fraction, json_float
from ..model.family import UncertainPolynomial, shifted_family
from .criteria import MEASURE_OF_REQUIREMENT, decide_criterion
from .outcomes import BoxProblem, Outcome, Verdict, box_problem, requirement_outcome
from .scaling import Scaling
from .verdict import Witness, decide

__all__ = ["DEFAULT_REQUIREMENT_BOXES", "RequirementCheck", "check_requirements", "decide_margin_over",
           "decide_requirement", "reuse_or_decide"]

#: The box budget of one requirement's direct decision, the same in every command.
DEFAULT_REQUIREMENT_BOXES = 5000

_WORDS = {"margin": "stable with every tolerance scaled by {v}",
          "decay_rate": "every root has Re(s) < -{v}",
          "radius": "every root inside |z| < {v}",
          "gain_margin_db": "stable for every extra loop gain within -{v} .. +{v} dB",
          "phase_margin_deg": "stable for every extra phase shift (lag or lead) up to {v} degrees",
          "damping_ratio": "every root with damping ratio above {v}"}


@dataclass(frozen=True, slots=True)
class RequirementCheck:
    """One requirement of the case, decided directly over its own box.

    ``direct`` is the verdict over that box (None when the box does not stand for the loop:
    ``problem`` says why); ``outcome`` is the one pass/fail rule applied to it.
    """

    name: str  # a key of robust.model.case.REQUIREMENTS
    required: Fraction
    direct: Verdict | None
    outcome: Outcome
    witness: Witness | None
    problem: BoxProblem | None = None
    safety_stop: bool = False

    @property
    def passed(self) -> bool | None:
        """True, False or None (undecided)."""
        return self.outcome.passed

    @property
    def wording(self) -> str:
        """What the requirement asks, in words."""
        return _WORDS[self.name].format(v=approx_text(self.required))

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        return {"required": json_float(self.required), "required_exact": format_fraction(self.required),
                "outcome": self.outcome.value, "passed": self.passed,
                "direct": None if self.direct is None else self.direct.value,
                "witness": self.witness.as_dict() if self.witness else None,
                "problem": None if self.problem is None else
                {"kind": self.problem.kind.value, "parameters": list(self.problem.parameters),
                 "proven": self.problem.proven, "detail": self.problem.detail},
                "safety_stop": self.safety_stop}


def decide_requirement(family: UncertainPolynomial, name: str, required: Fraction,
                       max_boxes: int = DEFAULT_REQUIREMENT_BOXES, max_seconds: float = 600.0
                       ) -> RequirementCheck:
    """Decide one requirement directly: stable over box(required) for ``"margin"`` (a box that
    reaches a physical limit, a sign change of a divided-out factor or a degree loss fails
    it), every root left of Re(s) = -required over the box for ``"decay_rate"``."""
    if name == "margin":
        return decide_margin_over(family, Scaling.everything(family).box(required), required, max_boxes,
                                  max_seconds)
    if name == "decay_rate":
        res = decide(shifted_family(family, required) if required else family, family.box,
                     max_seconds=max_seconds, max_boxes=max_boxes)
    elif name in MEASURE_OF_REQUIREMENT:
        verdict, witness, stop = decide_criterion(family, MEASURE_OF_REQUIREMENT[name], required, max_boxes,
                                                  max_seconds)
        return RequirementCheck(name, required, verdict, requirement_outcome(required, verdict), witness,
                                None, stop)
    else:
        raise ValueError(f"unknown requirement {name!r}")
    return RequirementCheck(name, required, res.verdict, requirement_outcome(required, res.verdict),
                            res.witness, None, res.safety_stop)


def decide_margin_over(family: UncertainPolynomial, box, required: Fraction,
                       max_boxes: int = DEFAULT_REQUIREMENT_BOXES, max_seconds: float = 600.0
                       ) -> RequirementCheck:
    """The margin requirement decided over ``box``, the tolerance box scaled by ``required``
    (for a design map, with the cell's design ranges put in): a box that reaches a physical
    limit, a sign change of a divided-out factor or a degree loss fails it (or leaves it open
    when that is not proven); else it passes exactly when the family is stable over the box."""
    problem = box_problem(family, box)
    if problem is not None:
        return RequirementCheck("margin", required, None, Outcome.FAIL if problem.proven else Outcome.OPEN,
                                None, problem)
    res = decide(family, box, max_seconds=max_seconds, max_boxes=max_boxes)
    return RequirementCheck("margin", required, res.verdict, requirement_outcome(required, res.verdict),
                            res.witness, None, res.safety_stop)


def reuse_or_decide(known: Sequence[RequirementCheck], family: UncertainPolynomial, name: str,
                    required: Fraction, max_boxes: int = DEFAULT_REQUIREMENT_BOXES,
                    max_seconds: float = 600.0) -> RequirementCheck:
    """The direct decision of a requirement: one already made (in ``known``, for the same
    requirement and value, by :func:`check_requirements` of the same case) or a new one."""
    for check in known:
        if check.name == name and check.required == required:
            return check
    return decide_requirement(family, name, required, max_boxes, max_seconds)


def check_requirements(case, max_seconds: float = 600.0, max_boxes: int = DEFAULT_REQUIREMENT_BOXES
                       ) -> tuple[RequirementCheck, ...]:
    """Decide the case's requirements directly, in the order of
    :data:`robust.model.case.REQUIREMENTS`."""
    family: UncertainPolynomial = case.family
    return tuple(decide_requirement(family, name, value, max_boxes, max_seconds)
                 for name, value in case.requirements.asked())
