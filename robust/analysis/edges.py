"""Edges of an affine (polytopic) family, decided exactly.

For coefficients affine in the parameters the family is a polytope of polynomials; with a
fixed degree it is Hurwitz-stable exactly when every exposed edge is (Bartlett, Hollot &
Lin, "Root locations of an entire polytope of polynomials: it suffices to check the
edges", 1988). Every edge of the parameter box maps onto a segment of that polytope, and
the box edges include all exposed edges of the image, so testing them all is exact.

A segment p(l) = (1 - l) p0 + l p1, 0 <= l <= 1, with Hurwitz ends loses stability only
where a root crosses the imaginary axis: at the origin (a_0(l) = 0), through infinity
(a_n(l) = 0), or as a pair r, -r, which by Orlando's formula makes the Hurwitz determinant
of order n-1 vanish (Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV).
Conversely a member whose Delta_(n-1) vanishes has a root pair r, -r, so it is not Hurwitz.
Hence the segment is stable iff a_0(l) a_n(l) Delta_(n-1)(l) has no root in [0, 1] — an
exact question about one rational polynomial in l, answered by real-root isolation; a
failing segment yields a rational witness between the roots, re-checked with the Routh
array. (This is the segment condition behind Bialas' eigenvalue test; Bialas, "A necessary
and sufficient condition for the stability of convex combinations of stable polynomials or
matrices", 1985.)
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

from ..exact.hurwitz import hurwitz_minor_polynomial
from ..exact.routh import is_hurwitz

__all__ = ["SegmentResult", "box_edges", "check_segment"]


@dataclass(frozen=True, slots=True)
class SegmentResult:
    """Verdict on one segment: ``stable``, or the parameter ``l`` of a failing member."""

    stable: bool
    witness_l: Fraction | None = None
    crossing: str = ""  # "origin", "infinity", "imaginary pair", or "" when stable


def check_segment(p0: Sequence[Fraction], p1: Sequence[Fraction]) -> SegmentResult:
    """Decide exactly whether every convex combination of two polynomials is Hurwitz.

    ``p0`` and ``p1`` are coefficient lists of the same length, highest power first.
    """
    if not is_hurwitz(p0):
        return SegmentResult(False, Fraction(0), "end")
    if not is_hurwitz(p1):
        return SegmentResult(False, Fraction(1), "end")
    n = len(p0) - 1
    lam_polys = {"origin": _affine(p0[-1], p1[-1]), "infinity": _affine(p0[0], p1[0])}
    if n >= 2:
        # Delta_(n-1)((1 - l) p0 + l p1): every coefficient is affine in l (ascending here)
        lam_polys["imaginary pair"] = hurwitz_minor_polynomial(
            [[b - a, a] for a, b in zip(p0, p1, strict=True)], n - 1)[::-1]
    factors = {}
    for name, coeffs in lam_polys.items():
        if _positive_on_unit_interval(coeffs):
            continue  # certified: no root in [0, 1]
        import sympy as sp  # only where the cheap certificate fails: a check need not load it

        factors[name] = sp.Poly([sp.Rational(c.numerator, c.denominator) for c in reversed(coeffs)],
                                sp.Symbol("l"))
    live = {}
    for name, poly in factors.items():
        if poly.is_zero:
            return SegmentResult(False, Fraction(1, 2), name)
        if poly.degree() > 0 and poly.count_roots(0, 1) > 0:
            live[name] = poly
    if not live:
        return SegmentResult(True)
    # A crossing exists in [0, 1]. Find a rational member that is not Hurwitz: exact
    # rational roots, then points inside, beside and between the isolating intervals,
    # refined until the unstable stretch between two crossings is hit.
    for eps in (Fraction(1, 10**4), Fraction(1, 10**12), Fraction(1, 10**40)):
        spans: list[tuple[Fraction, Fraction]] = []
        for poly in live.values():
            for (low, high), _mult in poly.intervals(inf=0, sup=1, eps=eps):
                spans.append((Fraction(int(low.p), int(low.q)), Fraction(int(high.p), int(high.q))))
        spans.sort()
        trials = []
        for (lo, hi), nxt in zip(spans, [*spans[1:], None], strict=True):
            trials += [lo, hi, (lo + hi) / 2, lo - eps, hi + eps]
            if nxt is not None:
                trials.append((hi + nxt[0]) / 2)
        for lam in trials:
            if 0 <= lam <= 1 and not is_hurwitz(_combine(p0, p1, lam)):
                return SegmentResult(False, lam, next(iter(live)))
    return SegmentResult(False, None, next(iter(live)))  # touches the boundary only


def _affine(a: Fraction, b: Fraction) -> list[Fraction]:
    """(1 - l) a + l b as ascending coefficients in l."""
    return [a, b - a]


def _positive_on_unit_interval(ascending: Sequence[Fraction]) -> bool:
    """Sufficient test: all Bernstein coefficients on [0, 1] of one sign (and non-zero)
    means no root in [0, 1] (Bernstein basis enclosure; Farouki & Rajan, "On the numerical
    condition of polynomials in Bernstein form", 1987)."""
    d = len(ascending) - 1
    while d > 0 and ascending[d] == 0:
        d -= 1
    if d == 0:
        return ascending[0] != 0
    from math import comb

    bern = [sum(Fraction(comb(j, i), comb(d, i)) * ascending[i] for i in range(j + 1)) for j in range(d + 1)]
    return all(b > 0 for b in bern) or all(b < 0 for b in bern)


def _combine(p0: Sequence[Fraction], p1: Sequence[Fraction], lam: Fraction) -> list[Fraction]:
    return [(1 - lam) * a + lam * b for a, b in zip(p0, p1, strict=True)]


def box_edges(vertices_count: int, free: Sequence[int]) -> list[tuple[int, int]]:
    """Edges of a box as pairs of vertex indices (bit i of an index = parameter free[i] high)."""
    k = len(free)
    return [(v, v | (1 << i)) for v in range(vertices_count) for i in range(k) if not v & (1 << i)]
