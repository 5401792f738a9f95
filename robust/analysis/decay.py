"""The decay-rate margin: the largest sigma with every root of every member in Re(s) < -sigma.

Found on the shifted family p(s - sigma), which is Hurwitz exactly when every root of p has
real part below -sigma: a certified bracket (proven below, a verified slow member above).
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, replace
from fractions import Fraction

from ..exact.numbers import approx_text, json_float, short_between, to_float
from ..exact.routh import routh_table
from ..model.family import UncertainPolynomial, shifted_family
from .bracket import Bracket, Work, bisect_margin, just_below
from .outcomes import Outcome, Verdict, requirement_outcome
from .requirements import DEFAULT_REQUIREMENT_BOXES, RequirementCheck, reuse_or_decide
from .verdict import Witness, decide

__all__ = ["DecayResult", "decay_rate"]


@dataclass(frozen=True, slots=True)
class DecayResult:
    """Certified bracket on sigma*, the requirement's outcome, and the 2 % settling-time
    reading 4/sigma."""

    bracket: Bracket
    requirement: Fraction | None
    outcome: Outcome | None
    direct: RequirementCheck | None = None

    @property
    def passed(self) -> bool | None:
        """True, False or None (undecided or no requirement)."""
        return None if self.outcome is None else self.outcome.passed

    def settling_time(self) -> float | None:
        """About 4/sigma seconds to settle within 2 % (common practice, no source)."""
        low = self.bracket.lower
        return None if low <= 0 else json_float(4 / low)

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        data = self.bracket.as_dict()
        data["settling_time_2pct_at_most"] = self.settling_time()
        data["requirement"] = json_float(self.requirement)
        data["outcome"] = None if self.outcome is None else self.outcome.value
        data["passed"] = self.passed
        return data


def _decay_upper(family: UncertainPolynomial, seed: int = 0):
    """An upper bound on sigma* from the slowest sampled member: (sigma, witness) or None."""
    import numpy as np

    from .search import _to_point

    box = family.box
    k = len(family.names)
    rng = np.random.default_rng(seed)
    t = rng.random((256, k))
    points = [family.nominal]
    if 2 ** k <= 256:
        points += box.vertices()
    points += [_to_point(row, box) for row in t[:64]]
    best = None
    for point in points:
        exact = family.coefficients_at(point)
        largest = max(abs(c) for c in exact)
        coeffs = [to_float(c / largest) for c in exact]  # scaled: guidance in floats cannot overflow
        if coeffs[0] == 0:
            continue
        with np.errstate(all="ignore"):
            rate = -max(r.real for r in np.roots(coeffs))
        if rate != rate:
            continue
        if best is None or rate < best[0]:
            best = (rate, point)
    if best is None:
        return None
    rate, point = best
    if rate <= 0:
        return None
    exact_coeffs = family.coefficients_at(point)
    for factor in (Fraction(1, 10**9), Fraction(1, 10**6), Fraction(1, 100)):
        guess = Fraction(rate) * (1 + factor)
        sigma = short_between(guess, guess * (1 + factor)) or guess
        table = routh_table(list(exact_coeffs), shift=sigma)
        if not table.is_hurwitz:
            return sigma, Witness(family.names, tuple(point), exact_coeffs, table.roots,
                                  f"slowest sampled member (roots counted right of Re(s) = -{approx_text(sigma)})")
    return None


def decay_rate(family: UncertainPolynomial, requirement: Fraction | None = None,
               rel_tol: float = 1e-6, max_boxes: int = 500, max_tests: int = 48,
               max_seconds: float = 600.0, requirement_boxes: int = DEFAULT_REQUIREMENT_BOXES,
               known: Sequence[RequirementCheck] = ()) -> DecayResult:
    """Certified bracket on the worst-case decay rate over the family's box.

    Work is counted (``max_tests`` decisions of at most ``max_boxes`` boxes each), so the
    result does not depend on the machine; ``max_seconds`` is only a safety stop.
    """
    work = Work(max_tests, time.perf_counter() + max_seconds)
    tol = Fraction(rel_tol)

    def test(sigma: Fraction) -> tuple[Verdict, Witness | None]:
        res = decide(shifted_family(family, sigma) if sigma else family, family.box,
                     max_seconds=max(work.deadline - time.perf_counter(), 0.01),
                     max_boxes=max_boxes, search=sigma == 0)
        work.clock_fired |= res.safety_stop
        return res.verdict, res.witness

    verdict, witness = test(Fraction(0))
    if verdict is not Verdict.STABLE:
        note = ("the family is not robustly stable: no positive decay rate" if verdict is Verdict.UNSTABLE
                else "robust stability itself is undecided")
        bracket = Bracket(Fraction(0), Fraction(0) if verdict is Verdict.UNSTABLE else None,
                          witness=witness, note=note)
    else:
        found = _decay_upper(family)
        if found is None:
            bracket = Bracket(Fraction(0), None, note="no slow member found")
        else:
            upper, witness = found
            lower = just_below(upper, tol)
            work.tests += 1
            if test(lower)[0] is Verdict.STABLE:
                bracket = Bracket(lower, upper, witness=witness)
            else:
                bracket = bisect_margin(test, upper, False, tol, work, upper=upper, witness=witness)
    if requirement is None:
        return DecayResult(bracket, None, None)
    outcome = requirement_outcome(requirement, None, bracket.lower, bracket.upper)
    if outcome is not Outcome.OPEN:  # the bracket decides it
        return DecayResult(bracket, requirement, outcome)
    direct = reuse_or_decide(known, family, "decay_rate", requirement, requirement_boxes,
                             max(work.deadline - time.perf_counter(), 0.01))
    outcome = requirement_outcome(requirement, direct.direct, bracket.lower, bracket.upper)
    # the bracket agrees with the direct decision: a proven requirement raises the proven end,
    # a refuted one lowers the witnessed end
    if direct.direct is Verdict.STABLE and bracket.lower < requirement:
        bracket = replace(bracket, lower=requirement)
    elif direct.direct is Verdict.UNSTABLE and (bracket.upper is None or bracket.upper > requirement):
        bracket = replace(bracket, upper=requirement, witness=direct.witness)
    return DecayResult(bracket, requirement, outcome, direct)
