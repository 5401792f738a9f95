"""Exact first crossings along one-dimensional paths in parameter space.

Along a path whose coefficients are polynomials in r (one parameter moving, a ray from
nominal to a corner, or a Kharitonov vertex of box(r)), a Hurwitz polynomial first loses
stability where its a_0, a_n or Hurwitz determinant Delta_(n-1) vanishes (a root at 0, at
infinity, or a pair r, -r: Orlando's formula, Gantmacher, "The Theory of Matrices", vol. 2,
1959, ch. XV). The first such r is found by exact real-root isolation (sympy).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from fractions import Fraction

import sympy as sp
from sympy.polys.matrices import DomainMatrix

from ..exact.hurwitz import hurwitz_matrix
from ..exact.numbers import short_between
from ..exact.polynomials import MultiPoly, as_intervals
from ..model.family import UncertainPolynomial
from .verdict import Witness

__all__ = [
    "DEFAULT_CAP",
    "crossing_polynomials",
    "describe_root",
    "exact_interval_margin",
    "first_positive_root",
    "path_margin",
    "ray_upper_bound",
    "ray_witness",
    "scale_of_point",
    "substitute_expressions",
    "tightener",
]

DEFAULT_CAP = Fraction(100)
_R = sp.Symbol("r")


def crossing_polynomials(coeffs: Sequence[sp.Expr]) -> list[sp.Poly]:
    """a_0, a_n and Delta_(n-1) of a polynomial whose coefficients are polynomials in r."""
    n = len(coeffs) - 1
    out = [sp.Poly(sp.expand(coeffs[-1]), _R), sp.Poly(sp.expand(coeffs[0]), _R)]
    if n >= 2:
        # the determinant in exact polynomial arithmetic over QQ[r]: sympy's expression-level
        # Berkowitz + expand takes minutes at degree 10 (and ignores every time budget)
        ring = sp.QQ[_R]
        matrix = DomainMatrix.from_Matrix(hurwitz_matrix([sp.expand(c) for c in coeffs], n - 1))
        out.append(sp.Poly(ring.to_sympy(matrix.convert_to(ring).det()), _R))
    return out


def first_positive_root(polys: Sequence[sp.Poly], cap: Fraction) -> tuple[sp.Expr, Fraction, Fraction] | None:
    """Least real root in (0, cap] over the polynomials: (exact root, isolating low, high)."""
    sup = sp.Rational(cap.numerator, cap.denominator)
    firsts = []
    for poly in polys:
        if poly.is_zero or poly.degree() <= 0:
            continue
        for (lo, hi), _ in poly.intervals(inf=0, sup=sup):
            if hi <= 0:
                continue  # the root at 0 (cannot happen for a stable start)
            # isolating intervals of different polynomials overlap in general, so their
            # coarse ends do not order the roots: refine each least positive root first
            if lo != hi:
                lo, hi = poly.refine_root(lo, hi, eps=hi * sp.Rational(1, 10**20))
            firsts.append((Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q)), poly))
            break  # intervals come sorted: the first positive one is the least
    if not firsts:
        return None
    lo_min, _, poly = min(firsts, key=lambda f: f[0])
    hi_min = min(f[1] for f in firsts)  # the least root lies in [least low end, least high end]
    roots = [r for r in poly.real_roots() if r > 0]
    root = min(roots, key=lambda r: float(r.evalf(30)))
    # refine the isolating interval to ~1e-15 relative
    lo_f, hi_f = _refine(poly, root)
    return root, min(lo_f, lo_min), min(hi_f, hi_min)


def _refine(poly: sp.Poly, root: sp.Expr) -> tuple[Fraction, Fraction]:
    if root.is_Rational:
        value = Fraction(int(root.p), int(root.q))
        return value, value
    value = float(root.evalf(40))
    eps = sp.Rational(1, 10**18) * max(1, abs(int(value)) + 1)
    for (lo, hi), _ in poly.intervals(eps=eps):
        lo_f, hi_f = Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q))
        if lo_f <= Fraction(value) * (1 + Fraction(1, 10**9)) and hi_f >= Fraction(value) * (1 - Fraction(1, 10**9)):
            return lo_f, hi_f
    exact = Fraction(value)
    return exact, exact


def describe_root(root: sp.Expr) -> tuple[str, str]:
    text = sp.sstr(root)
    if len(text) > 200:
        poly = sp.minimal_polynomial(root, _R) if not isinstance(root, sp.CRootOf) else root.poly
        text = f"root of {sp.sstr(poly.as_expr() if hasattr(poly, 'as_expr') else poly)} near {float(root.evalf(20)):.12g}"
    return text, sp.sstr(root.evalf(20))


def path_margin(family: UncertainPolynomial, index: int, cap: Fraction = DEFAULT_CAP,
                others: Sequence[Fraction] | None = None) -> tuple[Fraction, str | None, str | None]:
    """Exact margin of one parameter alone (the others fixed at ``others``, default nominal).

    Returns (value as a close rational, exact text, decimal text); the value is the cap
    when the polynomial stays Hurwitz along both directions up to the cap.
    """
    point = list(others if others is not None else family.nominal)
    nom = family.nominal[index]
    lo, hi = family.box.low[index], family.box.high[index]
    best = None
    for end, span in ((hi, hi - nom), (lo, nom - lo)):
        if span == 0:
            continue
        direction = 1 if end >= nom else -1
        symbols = []
        for i, v in enumerate(point):
            if i == index:
                symbols.append(sp.Rational(nom.numerator, nom.denominator)
                               + direction * sp.Rational(span.numerator, span.denominator) * _R)
            else:
                symbols.append(sp.Rational(v.numerator, v.denominator))
        coeffs = [substitute_expressions(c, symbols) for c in family.coefficients]
        found = first_positive_root(crossing_polynomials(coeffs), cap)
        if found is not None and (best is None or found[1] < best[1]):
            best = found
    if best is None:
        return cap, None, None
    root, lo_f, hi_f = best
    text, dec = describe_root(root)
    return lo_f, text, dec


def substitute_expressions(poly: MultiPoly, values: Sequence[sp.Expr]) -> sp.Expr:
    total = sp.Integer(0)
    for e, c in poly.terms:
        term = sp.Rational(int(c.numerator), int(c.denominator))
        for v, k in zip(values, e, strict=True):
            if k:
                term *= v**k
        total += term
    return sp.expand(total)


def scale_of_point(family: UncertainPolynomial, point: Sequence[Fraction]) -> Fraction:
    """The least rho with ``point`` inside box(rho)."""
    rho = Fraction(0)
    for x, n, lo, hi in zip(point, family.nominal, family.box.low, family.box.high, strict=True):
        if x > n:
            rho = max(rho, (x - n) / (hi - n)) if hi > n else rho
        elif x < n:
            rho = max(rho, (n - x) / (n - lo)) if lo < n else rho
    return rho


def ray_witness(family: UncertainPolynomial, target: Sequence[Fraction], limit: Fraction
                 ) -> tuple[Fraction, Witness] | None:
    """First exact crossing on the ray nominal + t (target - nominal), 0 < t <= limit, and a
    verified witness just beyond it: (rho of the witness, witness)."""
    from .verdict import _make_witness

    values = [sp.Rational(n.numerator, n.denominator)
              + sp.Rational((c - n).numerator, (c - n).denominator) * _R
              for n, c in zip(family.nominal, target, strict=True)]
    found = first_positive_root(crossing_polynomials([substitute_expressions(c, values) for c in family.coefficients]), limit)
    if found is None:
        return None
    _, _, hi_f = found
    for beyond in (short_between(hi_f, hi_f * (1 + Fraction(1, 10**9))), hi_f * (1 + Fraction(1, 10**7)),
                   hi_f * Fraction(101, 100)):
        if beyond is None:
            continue
        point = tuple(n + beyond * (c - n) for n, c in zip(family.nominal, target, strict=True))
        rho = scale_of_point(family, point)
        w = _make_witness(family, point, "point on a ray from nominal", family.box.scaled(family.nominal, rho))
        if w is not None:
            return rho, w
    return None


def tightener(family: UncertainPolynomial) -> Callable[[Witness], tuple[Fraction, Witness]]:
    """Slide a witness towards nominal along its ray, to the first crossing."""

    def tighten(witness: Witness) -> tuple[Fraction, Witness]:
        rho = scale_of_point(family, witness.point)
        found = ray_witness(family, witness.point, Fraction(1))
        if found is not None and found[0] <= rho:
            return found
        return rho, witness

    return tighten


def ray_upper_bound(family: UncertainPolynomial, cap: Fraction, rays: int = 64, seed: int = 0):
    """An upper bound on rho* from straight rays nominal -> corner: (rho, witness) or None.

    Floats pick the rays that leave the stable region first; their first crossing is then
    found exactly (as for one parameter) and a short rational just beyond it is verified.
    """
    import numpy as np

    from .search import batch_worst_angle

    k = len(family.names)
    nominal = np.array([float(x) for x in family.nominal])
    up = np.array([float(h - n) for h, n in zip(family.box.high, family.nominal, strict=True)])
    down = np.array([float(n - lo) for lo, n in zip(family.box.low, family.nominal, strict=True)])
    free = [i for i in range(k) if up[i] > 0 or down[i] > 0]
    if not free:
        return None
    rng = np.random.default_rng(seed)
    if 2 ** len(free) <= rays:
        signs = np.array([[1 if (v >> b) & 1 else -1 for b in range(len(free))]
                          for v in range(2 ** len(free))])
    else:
        signs = rng.choice([-1, 1], size=(rays, len(free)))
    directions = np.zeros((len(signs), k))
    for j, i in enumerate(free):
        directions[:, i] = np.where(signs[:, j] > 0, up[i], -down[i])
    grid = np.concatenate([np.linspace(0, 1, 41)[1:], np.geomspace(1, float(cap), 60)[1:]])
    first = np.full(len(directions), np.inf)
    for t in grid:
        points = nominal + t * directions
        bad = (batch_worst_angle(family.coefficients_float(points)) > 0) & ~np.isfinite(first)
        first[bad] = t
    order = [int(i) for i in np.argsort(first) if np.isfinite(first[i])][:3]
    best = None
    for idx in order:
        corner = []
        for i in range(k):
            if i in free:
                j = free.index(i)
                corner.append(family.box.high[i] if signs[idx][j] > 0 else family.box.low[i])
            else:
                corner.append(family.nominal[i])
        found = ray_witness(family, corner, cap)
        if found is not None and (best is None or found[0] < best[0]):
            best = found
    return best


def exact_interval_margin(family: UncertainPolynomial, cap: Fraction):
    """rho* for an independent family with monotone coefficients over box(cap), else None."""
    if family.structure != "independent":
        return None
    big = family.box.scaled(family.nominal, cap)
    intervals = as_intervals(big.intervals)
    n = family.degree
    lows, highs = [], []
    for k, coeff in enumerate(family.coefficients):
        signs = coeff.derivative_signs(intervals, family.derivatives()[k])
        if any(s is None for s in signs):
            return None
        ends = []
        for want_high in (False, True):
            values = []
            for i, s in enumerate(signs):
                nom = family.nominal[i]
                nom_q = sp.Rational(nom.numerator, nom.denominator)
                up = family.box.high[i] - nom
                down = nom - family.box.low[i]
                if s == 0:
                    values.append(nom_q)
                elif (s > 0) == want_high:
                    values.append(nom_q + sp.Rational(up.numerator, up.denominator) * _R)
                else:
                    values.append(nom_q - sp.Rational(down.numerator, down.denominator) * _R)
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
    return first_positive_root(polys, cap)
