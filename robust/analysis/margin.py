"""Robust margins: how far the tolerances can grow, and the guaranteed decay rate.

rho* is the largest scale of every tolerance half-width about nominal for which the
family stays robustly stable and box(rho) still stands for the loop (every part strictly
inside its physical limits, the degree kept, every divided-out factor of one sign) (box(rho): nominal - rho (nominal - low) .. nominal +
rho (high - nominal)). It is reported as a certified bracket [lower, upper]: the family is
proven stable over box(lower) and a verified witness lies in box(upper).

* Families with no parameter in two coefficients and monotone coefficients: every
  Kharitonov polynomial of box(rho) has coefficients polynomial in rho (affine when the
  coefficients are the parameters themselves), so a vertex first fails where its a_0, a_n or
  Hurwitz determinant Delta_(n-1) vanishes (a root at 0, at infinity, or a pair r, -r:
  Orlando's formula, Gantmacher 1959, ch. XV). rho* is the least positive real root of those
  polynomials: an exact algebraic number (sympy real-root isolation).
* One parameter alone (rank): the same argument along the two directions of its range.
* Otherwise: straight rays nominal -> corner give a verified upper end, and bisection on rho
  with the decision ladder of :mod:`robust.analysis.verdict` the proven lower end.

What ends rho* is reported (:class:`~robust.analysis.limits.ScaleEnd`): a crossing (with a
witness just beyond), a physical limit, a degree loss, a divided-out factor, or the cap.
Work is counted (decisions and boxes), so the same input gives the same bracket anywhere.

The decay-rate margin sigma* is the largest sigma with every root of every member in
Re(s) < -sigma, found the same way on the shifted family p(s - sigma).
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, replace
from fractions import Fraction

from ..exact.numbers import json_float, short_between
from ..exact.routh import routh_table
from ..model.case import REQUIREMENTS
from ..model.display import HtmlDisplay
from ..model.family import Box, UncertainPolynomial
from .bracket import Bracket, Work, bisect_margin, float_down, float_up, just_below, scaled_tester
from .criteria import REQUIREMENT_OF, Criterion, criteria_for, measure_criterion
from .crossings import DEFAULT_CAP, exact_interval_margin, ray_upper_bound, tightener
from .decay import DecayResult, decay_rate
from .limits import ScaleEnd, end_of_scaling
from .outcomes import LimitKind, Outcome, Verdict, requirement_outcome
from .requirements import DEFAULT_REQUIREMENT_BOXES, RequirementCheck, reuse_or_decide
from .scaling import Scaling

__all__ = ["DEFAULT_MARGIN_BOXES", "DEFAULT_MARGIN_TESTS", "MarginResult", "crossing_end", "margin"]

#: Box budget of each decision inside a margin search, and how many decisions it may make.
DEFAULT_MARGIN_BOXES = 1000
DEFAULT_MARGIN_TESTS = 48


@dataclass(frozen=True, slots=True)
class MarginResult(HtmlDisplay):
    """Result of :func:`margin`: the bracket on rho*, what ends it, the requirement."""

    margin: Bracket
    method: str
    decay: DecayResult | None
    requirement: Fraction | None
    outcome: Outcome | None
    limit: ScaleEnd
    seconds: float
    direct: RequirementCheck | None = None
    safety_stop: bool = False
    #: Gain and phase margins, damping ratio, spectral radius (:mod:`.criteria`).
    criteria: tuple[Criterion, ...] = ()
    #: The family's box, for the units of the parameters named in the result (display only).
    box: Box | None = None

    @property
    def passed(self) -> bool | None:
        """The margin requirement: True, False or None (undecided or none set)."""
        return None if self.outcome is None else self.outcome.passed

    def outcomes(self) -> tuple[tuple[str, Fraction, Outcome], ...]:
        """(requirement, required value, outcome) for every requirement this search decided,
        in the order of robust.model.case.REQUIREMENTS; the gain margin holds when both
        directions hold."""
        out: dict[str, tuple[Fraction, Outcome]] = {}
        if self.requirement is not None and self.outcome is not None:
            out["margin"] = (self.requirement, self.outcome)
        if self.decay is not None and self.decay.requirement is not None and self.decay.outcome is not None:
            out["decay_rate"] = (self.decay.requirement, self.decay.outcome)
        worse = (Outcome.FAIL, Outcome.OPEN, Outcome.PASS)
        for criterion in self.criteria:
            if criterion.requirement is None or criterion.outcome is None:
                continue
            name = REQUIREMENT_OF[criterion.measure.name]
            if name in out:  # the other direction of the gain margin: the worse outcome rules
                criterion_outcome = min(out[name][1], criterion.outcome, key=worse.index)
            else:
                criterion_outcome = criterion.outcome
            out[name] = (criterion.requirement, criterion_outcome)
        return tuple((name, *out[name]) for name in REQUIREMENTS if name in out)

    def as_dict(self) -> dict[str, object]:
        """JSON per DESIGN.md section 5: margin {lower, upper}, exact, limit, decay_rate."""
        data: dict[str, object] = {
            "margin": {"lower": float_down(self.margin.lower),
                       "upper": None if self.margin.upper is None else float_up(self.margin.upper)},
            "exact": self.margin.exact,
            "limit": self.limit.as_dict(),
            "margin_detail": self.margin.as_dict(),
            "method": self.method,
            "requirement": json_float(self.requirement),
            "outcome": None if self.outcome is None else self.outcome.value,
            "passed": self.passed,
            "safety_stop": self.safety_stop,
            "seconds": round(self.seconds, 4),
        }
        if self.margin.witness is not None:
            data["witness"] = self.margin.witness.as_dict()
        if self.decay is not None:
            data["decay_rate"] = {"lower": float_down(self.decay.bracket.lower),
                                  "upper": None if self.decay.bracket.upper is None
                                  else float_up(self.decay.bracket.upper)}
            data["decay_rate_detail"] = self.decay.as_dict()
        for criterion in self.criteria:
            if criterion.measure.name == "gain_margin_db_lower_direction":
                data.setdefault("gain_margin_db", {})["lower_direction"] = criterion.as_dict()
            else:
                data[criterion.measure.name] = {**criterion.as_dict(), **data.get(criterion.measure.name, {})}
        return data


def crossing_end(family: UncertainPolynomial, bracket: Bracket, exact: str | None = None,
                 value: Fraction | None = None) -> ScaleEnd:
    """The end of a bracket closed by a witness: a crossing, named by the parameters the
    witness moves to the edge of its scaled box."""
    upper = bracket.upper if bracket.upper is not None else bracket.lower
    names: tuple[str, ...] = ()
    if bracket.witness is not None and upper > 0:
        fam = family
        edge = []
        for name, x, n, lo, hi in zip(fam.names, bracket.witness.point, fam.nominal, fam.box.low,
                                      fam.box.high, strict=True):
            half = (hi - n) if x >= n else (n - lo)
            if half > 0 and abs(x - n) >= half * upper * Fraction(99, 100):
                edge.append(name)
        names = tuple(edge)
    if value is None:
        value = short_between(bracket.lower, upper) or bracket.lower
    return ScaleEnd(LimitKind.CROSSING, names, value, upper, exact)


def margin(case_or_family, cap: Fraction | float = DEFAULT_CAP, rel_tol: float | None = None,
           max_seconds: float = 600.0, max_boxes: int = DEFAULT_MARGIN_BOXES,
           max_tests: int = DEFAULT_MARGIN_TESTS, with_decay: bool = True,
           requirement_boxes: int = DEFAULT_REQUIREMENT_BOXES,
           known: Sequence[RequirementCheck] = (), with_criteria: bool = True) -> MarginResult:
    """The robust margin rho* of a case (certified bracket), what ends it, and the decay rate.

    Parameters
    ----------
    cap
        Largest scale tried; a family stable up to it is reported as "at least cap".
    rel_tol
        Relative bracket width asked for (default 1e-9 for interval families, 1e-6 otherwise).
    max_boxes, max_tests
        The work budget: decisions of at most ``max_boxes`` boxes, at most ``max_tests`` of
        them for rho* (as many again, of half the boxes, for the decay rate).
    max_seconds
        A wall-clock safety stop, reported when it fires (``safety_stop``).
    known
        Requirements of the case already decided directly (:func:`check_requirements`): a
        bracket that leaves one open uses that decision instead of deciding it again.
    with_criteria
        Also bracket the gain and phase margins (loops), the damping ratio and the spectral
        radius (discrete time): :mod:`.criteria`, each with a quarter of the boxes and as many
        decisions (the search stops at its first undecided one).

    Examples
    --------
    >>> import robust
    >>> m = robust.margin(robust.load_case("cases/interval_measured.toml"), with_decay=False)
    >>> m.margin.lower > 1, m.limit.kind.value
    (True, 'crossing')
    """
    started = time.perf_counter()
    family: UncertainPolynomial = getattr(case_or_family, "family", case_or_family)
    requirements = getattr(case_or_family, "requirements", None)
    cap = Fraction(cap) if not isinstance(cap, Fraction) else cap
    work = Work(max_tests, started + max_seconds)
    decay = None
    if with_decay and not family.discrete:  # discrete time: the spectral radius instead
        # the shifted family's decisions are the dearer ones (larger coefficients): half the boxes
        decay = decay_rate(family, getattr(requirements, "decay_rate", None),
                           max_boxes=max(max_boxes // 2, 1),
                           max_tests=max_tests, max_seconds=max_seconds,
                           requirement_boxes=requirement_boxes, known=known)
    req = getattr(requirements, "margin", None)
    scaling = Scaling.everything(family)
    tol = Fraction(rel_tol if rel_tol is not None else (1e-9 if family.structure == "independent" else 1e-6))

    test = scaled_tester(family, scaling.box, work, max_boxes)

    def measured(bracket: Bracket) -> tuple[Criterion, ...]:
        """The criteria, told whether rho*'s bracket already decides robust stability (proven
        at a scale >= 1, or a witness at a scale <= 1)."""
        if not with_criteria:
            return ()
        stable = True if bracket.lower >= 1 else False if (
            bracket.witness is not None and bracket.upper is not None and bracket.upper <= 1) else None
        asked = dict(requirements.asked()) if requirements is not None else {}
        sample_time = getattr(case_or_family, "sample_time", None)  # the radius's reading in 1/s
        return tuple(
            replace(measure_criterion(family, measure, asked.get(REQUIREMENT_OF[measure.name]),
                                      max_boxes=max(max_boxes // 4, 1), max_tests=max_tests,
                                      max_seconds=max(work.deadline - time.perf_counter(), 0.01),
                                      requirement_boxes=requirement_boxes, stable=stable),
                    sample_time=sample_time)
            for measure in criteria_for(family))

    def done(bracket: Bracket, method: str, limit: ScaleEnd) -> MarginResult:
        direct = outcome = None
        if req is not None:
            certified_upper = bracket.upper if limit.kind is LimitKind.CAP else \
                min(x for x in (bracket.upper, limit.upper) if x is not None)
            outcome = requirement_outcome(req, None, bracket.lower, certified_upper)
            if outcome is Outcome.OPEN:  # the bracket does not decide it: decide it directly
                direct = reuse_or_decide(known, family, "margin", req, requirement_boxes,
                                         max(work.deadline - time.perf_counter(), 0.01))
                outcome = requirement_outcome(req, direct.direct, bracket.lower, certified_upper)
                # the bracket agrees with the direct decision
                if direct.direct is Verdict.STABLE and bracket.lower < req:
                    bracket = replace(bracket, lower=req)
                elif direct.direct is Verdict.UNSTABLE and (bracket.upper is None or bracket.upper > req):
                    bracket = replace(bracket, upper=req, witness=direct.witness)
                    if limit.kind is not LimitKind.CROSSING or limit.scale > req:
                        limit = crossing_end(family, bracket)
        criteria = measured(bracket)
        return MarginResult(bracket, method, decay, req, outcome, limit, time.perf_counter() - started,
                            direct, work.clock_fired, criteria, family.box)

    nominal = family.coefficients_at(family.nominal)
    if nominal[0] == 0 or not routh_table(list(nominal)).is_hurwitz:
        bracket = Bracket(Fraction(0), Fraction(0), note="the nominal design is not stable")
        return done(bracket, "nominal", ScaleEnd(LimitKind.CROSSING, (), Fraction(0), Fraction(0), "0"))
    end = end_of_scaling(scaling, cap)
    top = end.scale if end.kind is LimitKind.CAP else just_below(end.scale, tol)

    def ended(bracket: Bracket, method: str) -> MarginResult:
        """No witness below the end: the end closes the bracket (a cap leaves it open)."""
        proven = bracket.lower >= top
        upper = None if end.kind is LimitKind.CAP else end.scale
        limit = replace(end, proven=proven, scale=end.scale)
        return done(replace(bracket, upper=upper, exact=end.exact if proven else None), method, limit)

    applicable, exact = exact_interval_margin(family, end.scale)
    if exact is not None and exact.upper < end.scale:
        lower = just_below(exact.lower, tol)
        upper = short_between(exact.upper * (1 + tol / 4), exact.upper * (1 + tol / 2)) \
            or exact.upper * (1 + tol / 4)
        if upper < end.scale:
            work.tests += 2
            proof, refute = test(lower), test(upper)
            if proof[0] is Verdict.STABLE and refute[0] is Verdict.UNSTABLE:
                bracket = Bracket(lower, upper, exact.text, exact.decimal, refute[1])
                value = Fraction(exact.decimal) if lower <= Fraction(exact.decimal) <= upper else None
                return done(bracket, "exact (Kharitonov vertices)",
                            crossing_end(family, bracket, exact.text, value))
    elif applicable:
        # no crossing before the end (Kharitonov vertices, exactly): prove up to it
        work.tests += 1
        if test(top)[0] is Verdict.STABLE:
            return ended(Bracket(top, None), "exact (Kharitonov vertices)")
    ray = ray_upper_bound(family, end.scale)
    if ray is not None:
        upper, witness = ray
        # proofs get cheaper away from the boundary: step down from the asked width until
        # one holds, then bisect between the proven and the witnessed ends
        lower = Fraction(0)
        for rel in sorted({tol, *(Fraction(1, 10**k) for k in (4, 3, 2) if Fraction(1, 10**k) > tol)}):
            candidate = just_below(upper, rel)
            work.tests += 1
            if test(candidate)[0] is Verdict.STABLE:
                lower = candidate
                break
        if lower >= just_below(upper, tol):
            bracket = Bracket(lower, upper, witness=witness)
            return done(bracket, "ray bound, proven by the decision ladder", crossing_end(family, bracket))
        bracket = bisect_margin(test, end.scale, end.kind is LimitKind.CAP, tol, work, lower=lower,
                                upper=upper, witness=witness, tighten=tightener(family, end.scale))
        return done(bracket, "bisection with the decision ladder", crossing_end(family, bracket))
    bracket = bisect_margin(test, end.scale, end.kind is LimitKind.CAP, tol, work,
                            tighten=tightener(family, end.scale))
    if bracket.upper is not None:
        return done(bracket, "bisection with the decision ladder", crossing_end(family, bracket))
    return ended(bracket, "bisection with the decision ladder")
