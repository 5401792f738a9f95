"""Exact first crossings along one-dimensional paths in parameter space.

Along a path whose coefficients are polynomials in r (one parameter moving, a ray from
nominal to a corner, or a Kharitonov vertex of box(r)), a Hurwitz polynomial first loses
stability where its a_0, a_n or Hurwitz determinant Delta_(n-1) vanishes (a root at 0, at
infinity, or a pair r, -r: Orlando's formula, Gantmacher, "The Theory of Matrices", vol. 2,
1959, ch. XV). The first such r is found by exact real-root isolation (Sturm counts).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp

from ..exact.hurwitz import hurwitz_minor_polynomial
from ..exact.numbers import approx_text, format_fraction, short_between, to_float
from ..exact.polynomials import MultiPoly, as_intervals
from ..exact.realroots import least_root_in
from ..model.family import UncertainPolynomial
from .scaling import Scaling
from .verdict import Witness

__all__ = [
    "DEFAULT_CAP",
    "RootBound",
    "crossing_polynomials",
    "exact_interval_margin",
    "first_crossing",
    "first_positive_root",
    "path_expressions",
    "path_margin",
    "ray_upper_bound",
    "ray_witness",
    "substitute_expressions",
    "tightener",
]

DEFAULT_CAP = Fraction(100)
_ROOT_WIDTH = Fraction(1, 10**20)  # relative width of an isolated crossing
_R = sp.Symbol("r")


def crossing_polynomials(coeffs: Sequence[sp.Expr], lead: bool = True) -> list[sp.Poly]:
    """a_0, a_n (unless ``lead`` is False) and Delta_(n-1) of a polynomial whose coefficients
    are polynomials in r. Without a_n only real crossings of the imaginary axis count (a root
    at 0 or a pair r, -r); a_n reaching 0 is a loss of degree, reported as such elsewhere."""
    n = len(coeffs) - 1
    out = [sp.Poly(sp.expand(coeffs[-1]), _R)] + ([sp.Poly(sp.expand(coeffs[0]), _R)] if lead else [])
    if n >= 2:
        # evaluation at integer points and interpolation on GMP rationals: about fifty times
        # faster than the determinant over QQ[r] (and sympy's expression-level one takes minutes)
        in_r = [[Fraction(int(c.p), int(c.q)) for c in sp.Poly(sp.expand(c), _R).all_coeffs()]
                for c in coeffs]
        minor = hurwitz_minor_polynomial(in_r, n - 1)
        out.append(sp.Poly([sp.Rational(c.numerator, c.denominator) for c in minor], _R))
    return out


@dataclass(frozen=True, slots=True)
class RootBound:
    """An exact real number r* known by an isolating interval: lower <= r* <= upper (equal
    when r* is rational); ``text`` is its exact form, ``decimal`` about 15 digits of it."""

    lower: Fraction
    upper: Fraction
    text: str
    decimal: str

    @staticmethod
    def rational(value: Fraction) -> RootBound:
        """A rational r*."""
        return RootBound(value, value, format_fraction(value), approx_text(value, 15))


def first_positive_root(polys: Sequence[sp.Poly], cap: Fraction) -> RootBound | None:
    """The least real root in (0, cap] of any of the polynomials (in r), exactly.

    Each polynomial's least root there is isolated by Sturm counts and narrowed by exact
    bisection to a relative width of 1e-20 (:mod:`robust.exact.realroots`); a polynomial
    whose roots all lie above the best found so far costs one Sturm count.
    """
    best: tuple[Fraction, Fraction, sp.Poly] | None = None
    for poly in polys:
        if poly.is_zero or poly.degree() <= 0:
            continue
        coefficients = [Fraction(int(c.p), int(c.q)) for c in poly.all_coeffs()]
        high = cap if best is None else min(cap, best[1])
        found = least_root_in(coefficients, Fraction(0), high, _ROOT_WIDTH)
        if found is not None and (best is None or found[0] < best[0]):
            best = (found[0], found[1], poly)
    if best is None:
        return None
    lo_f, hi_f, poly = best
    if lo_f == hi_f:
        return RootBound.rational(lo_f)
    return RootBound(lo_f, hi_f, _root_text(poly, lo_f, hi_f), approx_text((lo_f + hi_f) / 2, 15))


def _root_text(poly: sp.Poly, lo: Fraction, hi: Fraction) -> str:
    """Exact text of the root of ``poly`` isolated in [lo, hi]: radicals up to degree 2,
    else "root of q(r) in [lo, hi]" with q the irreducible factor that has it."""
    low, high = sp.Rational(lo.numerator, lo.denominator), sp.Rational(hi.numerator, hi.denominator)
    try:
        factors = poly.factor_list()[1]
    except OverflowError:  # sympy's factoring meets numbers beyond floats: name the root by its value
        return f"root of {sp.sstr(poly.as_expr())} near {approx_text((lo + hi) / 2, 15)}"
    for factor, _ in factors:
        if factor.count_roots(low, high) == 0:
            continue
        if factor.degree() <= 2:
            try:
                for root in sp.roots(factor, filter="R"):
                    if low <= root <= high:
                        return sp.sstr(sp.nsimplify(root))
            except OverflowError:  # radicals of numbers beyond floats: the value names it
                pass
        return f"root of {sp.sstr(factor.as_expr())} near {approx_text((lo + hi) / 2, 15)}"
    return f"root near {approx_text((lo + hi) / 2, 15)}"


def substitute_expressions(poly: MultiPoly, values: Sequence[sp.Expr]) -> sp.Expr:
    """The polynomial with each parameter replaced by a sympy expression (in r)."""
    total = sp.Integer(0)
    for e, c in poly.terms:
        term = sp.Rational(int(c.numerator), int(c.denominator))
        for v, k in zip(values, e, strict=True):
            if k:
                term *= v**k
        total += term
    return sp.expand(total)


def _q(x: Fraction) -> sp.Rational:
    return sp.Rational(x.numerator, x.denominator)


def path_expressions(path: Sequence[tuple[Fraction, Fraction]]) -> list[sp.Expr]:
    """Per parameter a + b*r, as sympy expressions."""
    return [_q(a) + _q(b) * _R for a, b in path]


def first_crossing(family: UncertainPolynomial, paths: Iterable[Sequence[tuple[Fraction, Fraction]]],
                   cap: Fraction, lead: bool = True) -> RootBound | None:
    """The least r in (0, cap] where the polynomial stops being Hurwitz along any of the
    straight paths (value a + b*r per parameter), starting from a Hurwitz point at r = 0;
    with ``lead`` False a leading coefficient reaching 0 does not count."""
    polys: list[sp.Poly] = []
    for path in paths:
        values = path_expressions(path)
        polys += crossing_polynomials([substitute_expressions(c, values) for c in family.coefficients], lead)
    return first_positive_root(polys, cap)


def path_margin(family: UncertainPolynomial, index: int, cap: Fraction = DEFAULT_CAP, side: int = 0
                ) -> RootBound | None:
    """Exact first crossing of the imaginary axis as parameter ``index`` alone moves (the
    others at nominal) over the directions of its range given by ``side`` (+1 up, -1 down,
    0 both); None when no root crosses up to ``cap`` (a leading coefficient reaching 0 is a
    loss of degree, not a crossing)."""
    scaling = Scaling(family, (index,), False, side)
    return first_crossing(family, scaling.vertex_paths((index,)), cap, lead=False)


def ray_witness(family: UncertainPolynomial, target: Sequence[Fraction], limit: Fraction,
                scaling: Scaling | None = None) -> tuple[Fraction, Witness] | None:
    """First exact crossing on the segment base + t (target - base), 0 < t < limit, and a
    verified witness just beyond it, strictly below ``limit``: (rho of the witness, witness).

    ``base`` is where the way to ``target`` starts at rho = 0 in ``scaling`` (default: every
    tolerance scaled, so the base is the nominal point); it must be Hurwitz.
    """
    from .verdict import make_witness

    scaling = scaling or Scaling.everything(family)
    base = scaling.base_of(target)
    path = [(b, c - b) for b, c in zip(base, target, strict=True)]
    found = first_crossing(family, [path], limit)
    if found is None:
        return None
    hi_f = found.upper
    for beyond in (short_between(hi_f, hi_f * (1 + Fraction(1, 10**9))), hi_f * (1 + Fraction(1, 10**7)),
                   hi_f * Fraction(101, 100)):
        if beyond is None:
            continue
        point = tuple(b + beyond * (c - b) for b, c in zip(base, target, strict=True))
        rho = scaling.scale_of_point(point)
        if rho >= limit:
            continue
        how = ("point on a ray from nominal" if base == family.nominal
               else "point on a segment from a stable point")
        w = make_witness(family, point, how, scaling.box(rho))
        if w is not None:
            return rho, w
    return None


def tightener(family: UncertainPolynomial, limit: Fraction, scaling: Scaling | None = None
              ) -> Callable[[Witness], tuple[Fraction, Witness]]:
    """Slide a witness back towards where its way starts (see :func:`ray_witness`), to the
    first crossing."""
    scaling = scaling or Scaling.everything(family)

    def tighten(witness: Witness) -> tuple[Fraction, Witness]:
        rho = scaling.scale_of_point(witness.point)
        found = ray_witness(family, witness.point, Fraction(1) if rho == 0 else min(Fraction(1), limit / rho),
                            scaling)
        if found is not None and found[0] <= rho:
            return found
        return rho, witness

    return tighten


def ray_upper_bound(family: UncertainPolynomial, limit: Fraction, rays: int = 64, seed: int = 0,
                    scaling: Scaling | None = None) -> tuple[Fraction, Witness] | None:
    """An upper bound on the margin below ``limit`` from straight segments: (rho, witness) or
    None.

    For every tolerance scaled together (the default ``scaling``) the segments are the rays
    nominal -> corner; when only some parameters are scaled with the others over their full
    range, each segment starts at a corner of the others' box with the scaled ones at
    nominal (a stable point, when the box at scale 0 is stable) and moves the scaled ones
    towards a corner of theirs. Floats pick the segments that leave the stable region first
    (a seeded choice, so the same segments every run); their first crossing is then found
    exactly and a short rational just beyond it is verified.
    """
    import numpy as np

    from .search import batch_worst_angle

    scaling = scaling or Scaling.everything(family)
    fam = family
    k = len(fam.names)
    nominal = np.array([to_float(x) for x in fam.nominal])
    up = np.array([to_float(h - n) for h, n in zip(fam.box.high, fam.nominal, strict=True)])
    down = np.array([to_float(n - lo) for lo, n in zip(fam.box.low, fam.nominal, strict=True)])
    moving = [i for i in scaling.scaled if up[i] > 0 or down[i] > 0]
    spread = [i for i in range(k) if i not in scaling.scaled and scaling.others_full
              and (up[i] > 0 or down[i] > 0)]
    free = moving + spread
    if not moving:
        return None
    rng = np.random.default_rng(seed)
    if 2 ** len(free) <= rays:
        signs = np.array([[1 if (v >> b) & 1 else -1 for b in range(len(free))]
                          for v in range(2 ** len(free))])
    else:
        signs = rng.choice([-1, 1], size=(rays, len(free)))
    directions = np.zeros((len(signs), k))
    bases = np.tile(nominal, (len(signs), 1))
    for j, i in enumerate(free):
        step = np.where(signs[:, j] > 0, up[i], -down[i])
        if i in moving:
            directions[:, i] = step
        else:
            bases[:, i] += step
    top = to_float(limit)
    # points crowd towards the top too: a crossing just before a limit is a narrow window
    grid = np.unique(np.concatenate([np.linspace(0, min(1.0, top), 41)[1:],
                                     np.geomspace(1.0, top, 60)[1:] if top > 1 else np.array([]),
                                     top * (1 - np.geomspace(0.1, 1e-6, 16))]))
    grid = grid[grid > 0]
    first = np.full(len(directions), np.inf)
    before = np.zeros(len(directions))  # the last grid point seen stable on each segment
    with np.errstate(all="ignore"):
        for t in grid:
            points = bases + t * directions
            bad = (batch_worst_angle(fam.coefficients_float(points)) > 0) & ~np.isfinite(first)
            first[bad] = t
            before[~np.isfinite(first)] = t
        # refine every crossing by float bisection, so that segments crossing between the
        # same two grid points are told apart before the few exact checks
        hit = np.isfinite(first)
        low, high = before[hit], first[hit]
        for _ in range(30):
            mid = (low + high) / 2
            bad = batch_worst_angle(fam.coefficients_float(bases[hit] + mid[:, None] * directions[hit])) > 0
            high = np.where(bad, mid, high)
            low = np.where(bad, low, mid)
        first[hit] = high
    order = [int(i) for i in np.argsort(first, kind="stable") if np.isfinite(first[i])][:3]
    best = None
    for idx in order:
        target = list(fam.nominal)
        for j, i in enumerate(free):
            target[i] = fam.box.high[i] if signs[idx][j] > 0 else fam.box.low[i]
        found = ray_witness(fam, target, limit, scaling)
        if found is not None and (best is None or found[0] < best[0]):
            best = found
    return best


def exact_interval_margin(family: UncertainPolynomial, limit: Fraction) -> tuple[bool, RootBound | None]:
    """The first crossing of box(rho) for rho in (0, limit], exactly, for a family in which no
    parameter enters two coefficients and every coefficient is monotone in each parameter
    over box(limit): (True, the crossing or None when nothing crosses up to ``limit``);
    (False, None) when the family is not of that kind.

    Every Kharitonov polynomial of box(rho) then has coefficients polynomial in rho, and the
    family first fails where one of them loses stability or a coefficient's lower end
    reaches zero (Kharitonov 1978).
    """
    if family.structure != "independent":
        return False, None
    big = family.box.scaled(family.nominal, limit)
    intervals = as_intervals(big.intervals)
    n = family.degree
    lows, highs = [], []
    for k, coeff in enumerate(family.coefficients):
        signs = coeff.derivative_signs(intervals, family.derivatives()[k])
        if any(s is None for s in signs):
            return False, None
        ends = []
        for want_high in (False, True):
            values = []
            for i, s in enumerate(signs):
                nom = family.nominal[i]
                up = family.box.high[i] - nom
                down = nom - family.box.low[i]
                if s == 0:
                    values.append(_q(nom))
                elif (s > 0) == want_high:
                    values.append(_q(nom) + _q(up) * _R)
                else:
                    values.append(_q(nom) - _q(down) * _R)
            ends.append(substitute_expressions(coeff, values))
        lows.append(ends[0])
        highs.append(ends[1])
    lead_positive = family.coefficients[0].evaluate(family.nominal) > 0
    if not lead_positive:
        lows, highs = [-h for h in highs], [-lo for lo in lows]
    polys = [sp.Poly(lo, _R) for lo in lows]  # every lower bound must stay positive
    for pattern in (("low", "low", "high", "high"), ("high", "high", "low", "low"),
                    ("high", "low", "low", "high"), ("low", "high", "high", "low")):
        vertex = [lows[k] if pattern[(n - k) % 4] == "low" else highs[k] for k in range(n + 1)]
        polys += crossing_polynomials(vertex)
    return True, first_positive_root(polys, limit)
