"""Which parameter matters: per-parameter margins, ranked most critical first.

For every parameter:

* ``margin_alone``: the scale of this parameter's tolerance alone (the others at nominal)
  up to which the polynomial stays stable - exact, by the first crossing along the two
  directions of its range (see :func:`robust.analysis.crossings.path_margin`);
* ``margin_given_others``: the scale of this parameter's tolerance with every other
  parameter over its full range - a certified bracket by bisection with the decision
  ladder. Below 1 it says how tight this part must be for the design to pass (others as
  given); ``restores`` is False when even a perfect part (scale 0) does not help.

Each margin says what ends it (:class:`~robust.analysis.limits.ScaleEnd`): a crossing, the
part's physical limit, a degree loss, a divided-out factor, or the cap; a part whose margin
only ends at its limit is not critical for stability, and is ranked after those that cross.
The dependency graph names the coefficients through which each parameter acts. Work is
counted, so the ranking is the same on any machine.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace
from fractions import Fraction

from ..exact.numbers import json_float, short_between
from ..model.display import HtmlDisplay
from ..model.family import UncertainPolynomial
from ..model.graph import build_graph
from .bracket import Bracket, Work, bisect_margin, float_down, just_below, scaled_tester
from .crossings import DEFAULT_CAP, RootBound, path_margin, ray_upper_bound, tightener
from .limits import ScaleEnd, end_of_scaling
from .margin import crossing_end
from .outcomes import LimitKind, Verdict
from .scaling import Scaling
from .verdict import decide

__all__ = ["ParameterRank", "RankResult", "rank"]


@dataclass(frozen=True, slots=True)
class ParameterRank:
    """The margins of one parameter, what ends each, and what they mean for its tolerance."""

    name: str
    margin_alone: Bracket
    limit_alone: ScaleEnd
    margin_given_others: Bracket
    limit_given_others: ScaleEnd
    coefficients: tuple[tuple[int, str], ...]  # (power, direction)
    tolerance: str
    tightened: Fraction | None  # largest certified scale that restores stability (failing designs)
    restores: bool | None
    unit: str = ""  # as the case wrote it, for display

    @property
    def crosses(self) -> bool:
        """Whether a root crossing (not a limit or the cap) ends this part's own margin."""
        return self.limit_alone.kind is LimitKind.CROSSING

    def as_dict(self) -> dict[str, object]:
        """JSON: name, margin_alone (number), limit, brackets and the graph's coefficients."""
        return {
            "name": self.name,
            "margin_alone": float_down(self.margin_alone.lower),
            "limit": self.limit_alone.as_dict(),
            "margin_alone_bracket": self.margin_alone.as_dict(),
            "margin_given_others": float_down(self.margin_given_others.lower),
            "limit_given_others": self.limit_given_others.as_dict(),
            "margin_given_others_bracket": self.margin_given_others.as_dict(),
            "acts_through": [{"power": p, "direction": d} for p, d in self.coefficients],
            "tolerance": self.tolerance,
            "unit": self.unit,
            "tightened_scale": json_float(self.tightened),
            "restores_stability_alone": self.restores,
        }


@dataclass(frozen=True, slots=True)
class RankResult(HtmlDisplay):
    """Parameters, most critical first."""

    parameters: tuple[ParameterRank, ...]
    robustly_stable: bool | None
    seconds: float
    safety_stop: bool = False

    def as_dict(self) -> dict[str, object]:
        """JSON per DESIGN.md section 5: parameters [{name, margin_alone, limit, ...}]."""
        return {"parameters": [p.as_dict() for p in self.parameters],
                "robustly_stable": self.robustly_stable, "safety_stop": self.safety_stop,
                "seconds": round(self.seconds, 3)}


def _alone(family: UncertainPolynomial, i: int, cap: Fraction, tol: Fraction, max_boxes: int
           ) -> tuple[Bracket, ScaleEnd]:
    """Parameter ``i`` alone: exact, by the first crossing on the segment of its range."""
    # each direction on its own: a crossing counts when it comes before that direction's own
    # end (a limit reached at the same scale is named instead); over the two directions the
    # smaller wins, and at a tie a crossing in one direction is named over a limit in the other
    best: tuple[Fraction, int, RootBound | None, ScaleEnd, int] | None = None
    for side in (1, -1):
        one_way = Scaling(family, (i,), False, side)
        if not one_way.free():
            continue
        end_s = end_of_scaling(one_way, cap)
        root_s = path_margin(family, i, end_s.scale, side)
        if root_s is not None and root_s.lower < end_s.scale:
            key = (root_s.lower, 0, root_s, end_s, side)
        else:
            key = (end_s.scale, 1, None, end_s, side)
        if best is None or key[:2] < best[:2]:
            best = key
    assert best is not None  # the parameter has a tolerance
    _, _, root, end, side = best
    scaling = Scaling(family, (i,), False, side)
    if root is None:
        # no crossing before the end: stable on every box(rho), rho < end (exact), so the
        # margin is the end itself (a supremum, not attained when the end is a limit)
        upper = None if end.kind is LimitKind.CAP else end.scale
        return Bracket(end.scale, upper, end.exact, note=""), end
    # the isolating interval's low end is proven by the exact crossing argument; a short
    # rational just above the crossing carries a verified witness
    witness = None
    upper = None
    for factor in (Fraction(1, 10**9), Fraction(1, 10**6), Fraction(1, 1000)):
        rho = short_between(root.upper * (1 + factor / 2), root.upper * (1 + factor)) or root.upper * (1 + factor)
        if rho >= end.scale:
            break
        res = decide(family, scaling.box(rho), max_seconds=600, max_boxes=max_boxes)
        if res.verdict is Verdict.UNSTABLE:
            upper, witness = rho, res.witness
            break
    bracket = Bracket(root.lower, upper if upper is not None else end.scale, root.text, root.decimal, witness)
    value = Fraction(root.decimal)
    value = value if root.lower <= value <= bracket.upper else root.lower
    return bracket, ScaleEnd(LimitKind.CROSSING, (family.names[i],), value, root.upper, root.text)


def _given_others(family: UncertainPolynomial, i: int, robust_ok: bool | None, cap: Fraction,
                  tol: Fraction, work: Work, max_boxes: int) -> tuple[Bracket, ScaleEnd]:
    """Bracket on the scale of one tolerance, the others over their full range."""
    scaling = Scaling.one(family, i, others_full=True)
    end = end_of_scaling(scaling, cap)

    test = scaled_tester(family, scaling.box, work, max_boxes)

    work.tests += 1
    verdict0, w0 = test(Fraction(0))
    if verdict0 is Verdict.UNSTABLE:
        bracket = Bracket(Fraction(0), Fraction(0), witness=w0,
                          note="unstable even with this parameter at nominal: tightening it alone does not help")
        return bracket, crossing_end(family, bracket, value=Fraction(0))
    if verdict0 is not Verdict.STABLE:
        return (Bracket(Fraction(0), None, note="undecided with this parameter at nominal"),
                replace(end, proven=False))
    start = Fraction(1) if robust_ok is not False else Fraction(1, 2)
    # an exact crossing on a segment from a stable point (the others at a corner) gives a
    # witnessed upper end at once; bisection then closes the bracket below it
    ray = ray_upper_bound(family, end.scale, scaling=scaling)
    upper, witness = ray if ray is not None else (None, None)
    lower = Fraction(1) if robust_ok and upper is not None and upper > 1 else Fraction(0)
    bracket = bisect_margin(test, end.scale, end.kind is LimitKind.CAP, tol, work, start=start,
                            lower=lower, upper=upper, witness=witness,
                            tighten=tightener(family, end.scale, scaling))
    if bracket.upper is not None:
        return bracket, crossing_end(family, bracket)
    top = end.scale if end.kind is LimitKind.CAP else just_below(end.scale, tol)
    proven = bracket.lower >= top
    return (replace(bracket, upper=None if end.kind is LimitKind.CAP else end.scale),
            replace(end, proven=proven))


def rank(case_or_family, cap: Fraction | float = DEFAULT_CAP, rel_tol: float = 1e-6,
         max_seconds: float = 600.0, max_boxes: int = 500, max_tests: int = 16) -> RankResult:
    """Rank the parameters by how little tolerance growth they stand (most critical first).

    Parameters
    ----------
    max_boxes, max_tests
        The work budget per parameter: decisions of at most ``max_boxes`` boxes, at most
        ``max_tests`` of them; ``max_seconds`` is only a safety stop, reported when it fires.

    Examples
    --------
    >>> import robust
    >>> r = robust.rank(robust.load_case("cases/thermal_pi_affine.toml"))
    >>> sorted(p.name for p in r.parameters)
    ['C', 'G', 'Kd']
    """
    started = time.perf_counter()
    family: UncertainPolynomial = getattr(case_or_family, "family", case_or_family)
    parameters = getattr(case_or_family, "parameters", None)
    cap = Fraction(cap) if not isinstance(cap, Fraction) else cap
    tol = Fraction(rel_tol)
    deadline = started + max_seconds
    graph = build_graph(family)
    whole = decide(family, family.box, max_seconds=max_seconds, max_boxes=max_boxes * 4)
    robust_ok = {Verdict.STABLE: True, Verdict.UNSTABLE: False}.get(whole.verdict)
    clock = whole.safety_stop
    out = []
    for i, name in enumerate(family.names):
        acts = tuple(sorted(((node[1], graph.edges[("parameter", name), node]["direction"])
                             for node in graph.successors(("parameter", name))), reverse=True))
        tol_text = next((p.tolerance for p in parameters if p.name == name), "") if parameters else ""
        unit = family.box.unit_of(name)
        if family.box.low[i] == family.box.high[i]:
            fixed = Bracket(cap, None, note="no tolerance")
            end = ScaleEnd(LimitKind.CAP, (), cap, cap, None, "no tolerance")
            out.append(ParameterRank(name, fixed, end, fixed, end, acts, tol_text, None, None, unit))
            continue
        if time.perf_counter() >= deadline:  # the safety stop: the parts left are not ranked
            clock = True
            skipped = Bracket(Fraction(0), None, note="not computed: the wall-clock safety stop fired")
            end = ScaleEnd(LimitKind.CAP, (), cap, cap, None, "not computed", proven=False)
            out.append(ParameterRank(name, skipped, end, skipped, end, acts, tol_text, None, None, unit))
            continue
        alone, alone_end = _alone(family, i, cap, tol, max_boxes)
        work = Work(max_tests, deadline)
        given, given_end = _given_others(family, i, robust_ok, cap, tol, work, max_boxes)
        clock |= work.clock_fired
        tightened, restores = None, None
        if robust_ok is False:
            restores = True if given.lower > 0 else (False if given.upper == 0 else None)
            tightened = given.lower if restores else None
        out.append(ParameterRank(name, alone, alone_end, given, given_end, acts, tol_text, tightened,
                                 restores, unit))
    # crossings first (the parts that matter for stability), then the parts that only reach a limit
    out.sort(key=lambda p: (not p.crosses, p.margin_alone.lower, p.margin_given_others.lower, p.name))
    return RankResult(tuple(out), robust_ok, time.perf_counter() - started, clock)
