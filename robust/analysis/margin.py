"""Robust margins: how far the tolerances can grow, and the guaranteed decay rate.

rho* is the largest scale of every tolerance half-width about nominal for which the
family stays robustly stable (box(rho): nominal - rho (nominal - low) .. nominal +
rho (high - nominal)). It is reported as a certified bracket [lower, upper]: the family is
proven stable over box(lower) and a verified witness lies in box(upper).

* Families with no parameter in two coefficients and monotone coefficients: every
  Kharitonov polynomial of box(rho) has coefficients polynomial in rho (affine when the
  coefficients are the parameters themselves), so a vertex first fails where its a_0, a_n or
  Hurwitz determinant Delta_(n-1) vanishes (a root at 0, at infinity, or a pair r, -r:
  Orlando's formula, Gantmacher 1959, ch. XV). rho* is the least positive real root of those
  polynomials: an exact algebraic number (sympy real-root isolation).
* One parameter alone (rank): the same argument along the two directions of its range.
* Otherwise: bisection on rho with the decision ladder of :mod:`robust.analysis.verdict` at each step.

The decay-rate margin sigma* is the largest sigma with every root of every member in
Re(s) < -sigma, found the same way on the shifted family p(s - sigma).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

from ..exact.numbers import short_between
from ..exact.routh import routh_table
from ..model.family import Box, UncertainPolynomial
from .bracket import Bracket, Tester, bisect_margin, float_down, float_up
from .crossings import DEFAULT_CAP, describe_root, exact_interval_margin, ray_upper_bound, tightener
from .decay import DecayResult, decay_rate
from .verdict import Witness, decide

__all__ = ["MarginResult", "margin"]



@dataclass(frozen=True, slots=True)
class MarginResult:
    """Result of :func:`margin`."""

    margin: Bracket
    method: str
    decay: DecayResult | None
    requirement: Fraction | None
    passed: bool | None
    seconds: float

    def as_dict(self) -> dict[str, object]:
        """JSON per DESIGN.md section 5: margin {lower, upper}, exact, decay_rate."""
        data: dict[str, object] = {
            "margin": {"lower": float_down(self.margin.lower),
                       "upper": None if self.margin.upper is None else float_up(self.margin.upper)},
            "exact": self.margin.exact,
            "margin_detail": self.margin.as_dict(),
            "method": self.method,
            "requirement": None if self.requirement is None else float(self.requirement),
            "passed": self.passed,
            "seconds": round(self.seconds, 4),
        }
        if self.margin.witness is not None:
            data["witness"] = self.margin.witness.as_dict()
        if self.decay is not None:
            data["decay_rate"] = {"lower": float_down(self.decay.bracket.lower),
                                  "upper": None if self.decay.bracket.upper is None
                                  else float_up(self.decay.bracket.upper)}
            data["decay_rate_detail"] = self.decay.as_dict()
        return data


def _family_tester(family: UncertainPolynomial, box_of: Callable[[Fraction], Box],
                   max_boxes: int) -> Tester:
    def test(rho: Fraction, seconds: float) -> tuple[str, Witness | None]:
        box = box_of(rho)
        if not family.valid_on(box):
            return "undecided", None
        res = decide(family, box, max_seconds=seconds, max_boxes=max_boxes)
        return res.verdict, res.witness

    return test


def margin(case_or_family, cap: Fraction | float = DEFAULT_CAP, rel_tol: float | None = None,
           max_seconds: float = 60.0, max_boxes: int = 5000, with_decay: bool = True) -> MarginResult:
    """The robust margin rho* of a case (certified bracket), and its decay-rate margin.

    Parameters
    ----------
    cap
        Largest scale tried; a family stable up to it is reported as "at least cap".
    rel_tol
        Relative bracket width asked for (default 1e-9 for interval families, 1e-6 otherwise).

    Examples
    --------
    >>> import robust
    >>> m = robust.margin(robust.load_case("cases/interval_measured.toml"), with_decay=False)
    >>> m.margin.lower > 1
    True
    """
    started = time.perf_counter()
    family: UncertainPolynomial = getattr(case_or_family, "family", case_or_family)
    requirements = getattr(case_or_family, "requirements", None)
    cap = Fraction(cap) if not isinstance(cap, Fraction) else cap
    deadline = started + max_seconds
    nominal = family.coefficients_at(family.nominal)
    decay = None
    if with_decay:
        decay = decay_rate(family, getattr(requirements, "decay_rate", None),
                           max_seconds=max_seconds / 3, max_boxes=max_boxes)
    req = getattr(requirements, "margin", None)

    def done(bracket: Bracket, method: str) -> MarginResult:
        passed = None
        if req is not None:
            passed = True if bracket.lower >= req else (
                False if bracket.upper is not None and bracket.upper < req else None)
            if passed is None:
                res = decide(family, family.box.scaled(family.nominal, req), max_seconds=10)
                passed = True if res.verdict == "stable" else False if res.verdict == "unstable" else None
        return MarginResult(bracket, method, decay, req, passed, time.perf_counter() - started)

    if not routh_table(list(nominal)).is_hurwitz:
        return done(Bracket(Fraction(0), Fraction(0), note="the nominal design is not stable"), "nominal")
    exact = exact_interval_margin(family, cap)
    if exact is not None:
        root, lo_f, hi_f = exact
        text, dec = describe_root(root)
        tol = Fraction(rel_tol if rel_tol is not None else 1e-9)
        # short rationals just outside the isolating interval, within the asked width
        # strictly inside/outside: a rational root has lo_f == hi_f == root, where the
        # family is on the stability boundary and neither proof nor witness exists
        lower = short_between(lo_f * (1 - tol / 2), lo_f * (1 - tol / 4)) or lo_f * (1 - tol / 4)
        upper = short_between(hi_f * (1 + tol / 4), hi_f * (1 + tol / 2)) or hi_f * (1 + tol / 4)
        proof = decide(family, family.box.scaled(family.nominal, lower), max_seconds=10, search=False)
        refute = decide(family, family.box.scaled(family.nominal, upper), max_seconds=10)
        if proof.verdict == "stable" and refute.verdict == "unstable":
            return done(Bracket(lower, upper, text, dec, refute.witness), "exact (Kharitonov vertices)")
    tol = rel_tol if rel_tol is not None else (1e-9 if family.structure == "independent" else 1e-6)
    tester = _family_tester(family, lambda rho: family.box.scaled(family.nominal, rho), max_boxes)
    ray = ray_upper_bound(family, cap)
    if ray is not None:
        upper, witness = ray
        lower = short_between(upper * (1 - Fraction(tol) / 2), upper * (1 - Fraction(tol) / 4)) \
            or upper * (1 - Fraction(tol) / 2)
        verdict, _ = tester(lower, max(min(20.0, (deadline - time.perf_counter()) / 2), 0.5))
        if verdict == "stable":
            return done(Bracket(lower, upper, witness=witness), "ray bound, proven by the decision ladder")
        bracket = bisect_margin(tester, cap, tol, deadline, upper=upper, witness=witness,
                                tighten=tightener(family))
        return done(bracket, "bisection with the decision ladder")
    bracket = bisect_margin(tester, cap, tol, deadline, tighten=tightener(family))
    if bracket.upper is None and bracket.lower >= cap:
        return done(bracket, "bisection (stable up to the cap)")
    return done(bracket, "bisection with the decision ladder")
