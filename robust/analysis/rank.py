"""Which parameter matters: per-parameter margins, ranked most critical first.

For every parameter:

* ``margin_alone``: the scale of this parameter's tolerance alone (the others at nominal)
  up to which the polynomial stays stable - exact, by the first crossing along the two
  directions of its range (see :func:`robust.analysis.margin.path_margin`);
* ``margin_given_others``: the scale of this parameter's tolerance with every other
  parameter over its full range - a certified bracket by bisection with the decision
  ladder. Below 1 it says how tight this part must be for the design to pass (others as
  given); ``restores`` is False when even a perfect part (scale 0) does not help.

The dependency graph names the coefficients through which each parameter acts.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from fractions import Fraction

from ..model.family import Box, UncertainPolynomial
from ..model.graph import build_graph
from ..exact.numbers import short_between
from .bracket import Bracket, bisect_margin
from .crossings import DEFAULT_CAP, path_margin
from .verdict import Witness, decide

__all__ = ["ParameterRank", "RankResult", "rank"]


@dataclass(frozen=True, slots=True)
class ParameterRank:
    """The margins of one parameter and what they mean for its tolerance."""

    name: str
    margin_alone: Bracket
    margin_given_others: Bracket
    coefficients: tuple[tuple[int, str], ...]  # (power, direction)
    tolerance: str
    tightened: Fraction | None  # largest certified scale that restores stability (failing designs)
    restores: bool | None

    def as_dict(self) -> dict[str, object]:
        """JSON: name, margin_alone (number), brackets and the graph's coefficients."""
        return {
            "name": self.name,
            "margin_alone": self.margin_alone.as_dict()["lower"],
            "margin_alone_bracket": self.margin_alone.as_dict(),
            "margin_given_others": self.margin_given_others.as_dict()["lower"],
            "margin_given_others_bracket": self.margin_given_others.as_dict(),
            "acts_through": [{"power": p, "direction": d} for p, d in self.coefficients],
            "tolerance": self.tolerance,
            "tightened_scale": None if self.tightened is None else float(self.tightened),
            "restores_stability_alone": self.restores,
        }


@dataclass(frozen=True, slots=True)
class RankResult:
    """Parameters, most critical first."""

    parameters: tuple[ParameterRank, ...]
    robustly_stable: bool | None
    seconds: float

    def as_dict(self) -> dict[str, object]:
        """JSON per DESIGN.md section 5: parameters [{name, margin_alone, ...}]."""
        return {"parameters": [p.as_dict() for p in self.parameters],
                "robustly_stable": self.robustly_stable, "seconds": round(self.seconds, 3)}


def _alone(family: UncertainPolynomial, i: int, cap: Fraction) -> Bracket:
    value, exact, decimal = path_margin(family, i, cap)
    if exact is None:
        return Bracket(cap, None, note=f"stable up to the cap {float(cap):g}")
    # the isolating interval's low end is proven by the exact crossing argument; a short
    # rational just above the crossing carries a verified witness
    return Bracket(value, _beyond(family, i, value, cap), exact, decimal)


def _beyond(family: UncertainPolynomial, i: int, value: Fraction, cap: Fraction) -> Fraction | None:
    for factor in (Fraction(1, 10**9), Fraction(1, 10**6), Fraction(1, 1000)):
        rho = short_between(value * (1 + factor / 2), value * (1 + factor)) or value * (1 + factor)
        if rho > cap:
            return None
        box = _only(family, i, rho, others_at_nominal=True)
        res = decide(family, box, max_seconds=2, max_boxes=200)
        if res.verdict == "unstable":
            return rho
    return None


def _only(family: UncertainPolynomial, i: int, rho: Fraction, others_at_nominal: bool) -> Box:
    low, high = list(family.box.low), list(family.box.high)
    if others_at_nominal:
        low = list(family.nominal)
        high = list(family.nominal)
    n = family.nominal[i]
    low[i] = n - rho * (n - family.box.low[i])
    high[i] = n + rho * (family.box.high[i] - n)
    return Box(family.names, tuple(low), tuple(high))


def rank(case_or_family, cap: Fraction | float = DEFAULT_CAP, rel_tol: float = 1e-3,
         max_seconds: float = 60.0, max_boxes: int = 3000) -> RankResult:
    """Rank the parameters by how little tolerance growth they stand (most critical first).

    Examples
    --------
    >>> import robust
    >>> r = robust.rank(robust.load_case("cases/thermal_pi_affine.toml"), max_seconds=20)
    >>> sorted(p.name for p in r.parameters)
    ['C', 'G', 'Kd']
    >>> r.parameters[0].margin_alone.lower <= r.parameters[-1].margin_alone.lower
    True
    """
    started = time.perf_counter()
    family: UncertainPolynomial = getattr(case_or_family, "family", case_or_family)
    parameters = getattr(case_or_family, "parameters", None)
    cap = Fraction(cap) if not isinstance(cap, Fraction) else cap
    graph = build_graph(family)
    whole = decide(family, family.box, max_seconds=max_seconds / 4, max_boxes=max_boxes)
    robust_ok = {"stable": True, "unstable": False}.get(whole.verdict)
    free = [i for i, (a, b) in enumerate(family.box.intervals) if b > a]
    per = max((max_seconds * 3 / 4) / max(len(free), 1), 1.0)
    out = []
    for i, name in enumerate(family.names):
        acts = tuple(sorted(((node[1], graph.edges[("parameter", name), node]["direction"])
                             for node in graph.successors(("parameter", name))), reverse=True))
        tol = next((p.tolerance for p in parameters if p.name == name), "") if parameters else ""
        if i not in free:
            fixed = Bracket(cap, None, note="no tolerance")
            out.append(ParameterRank(name, fixed, fixed, acts, tol, None, None))
            continue
        alone = _alone(family, i, cap)
        deadline = time.perf_counter() + per

        def test(rho: Fraction, seconds: float, i=i) -> tuple[str, Witness | None]:
            box = _only(family, i, rho, others_at_nominal=False)
            if not family.valid_on(box):
                return "undecided", None
            res = decide(family, box, max_seconds=min(seconds, per), max_boxes=max_boxes)
            return res.verdict, res.witness

        given = _given_others(test, robust_ok, cap, rel_tol, deadline)
        tightened, restores = None, None
        if robust_ok is False:
            restores = given.lower > 0 or (given.upper is None)
            if given.lower == 0 and given.upper == 0:
                restores = False
            tightened = given.lower if restores else None
        out.append(ParameterRank(name, alone, given, acts, tol, tightened, restores))
    out.sort(key=lambda p: (p.margin_alone.lower, p.margin_given_others.lower))
    return RankResult(tuple(out), robust_ok, time.perf_counter() - started)


def _given_others(test, robust_ok: bool | None, cap: Fraction, rel_tol: float, deadline: float) -> Bracket:
    """Bracket on the scale of one tolerance, the others over their full range."""
    verdict0, w0 = test(Fraction(0), max(deadline - time.perf_counter(), 0.5))
    if verdict0 == "unstable":
        return Bracket(Fraction(0), Fraction(0), witness=w0,
                       note="unstable even with this parameter at nominal: tightening it alone does not help")
    if verdict0 != "stable":
        return Bracket(Fraction(0), None, note="undecided with this parameter at nominal")
    start = Fraction(1) if robust_ok is not False else Fraction(1, 2)
    return bisect_margin(test, cap, rel_tol, deadline, start=start)
