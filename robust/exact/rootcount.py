"""Exact root counts relative to the imaginary axis without an ε table.

The Routh array needs the ε rule when a leading entry vanishes, and its rational functions
of ε grow quickly with the degree (a sparse or symmetric polynomial of degree 200 would need
entries of degree ~190 in ε). The counts have a cheaper exact route:

1. split p = q * g with g = gcd(p(s), p(-s)): g holds every root pair r, -r (imaginary-axis
   roots and roots at the origin included), q none;
2. q: with q(jω) = j^n D(ω) + j^(n-1) N(ω) built from the first two Routh rows, the Cauchy
   index of N/D over the real line is n - 2k, k the number of roots in the open right
   half-plane (Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV, section 3);
   D and N are coprime because q has no pair r, -r;
3. g: each square-free factor g_i (Yun, "On square-free decomposition algorithms", 1976)
   is even or odd, g_i(s) = s^e G(s^2); a negative real root x of G gives the imaginary pair
   ±j sqrt(-x), every other root pairs off as r, -r across the axis.

Cauchy indices and real-root counts come from generalised Sturm sequences (Sturm 1829;
I(f1/f0) = V(-inf) - V(+inf), the drop in sign variations of f0, f1, -rem(f0, f1), ...),
computed fraction-free with positive multipliers so that every sign is kept.
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction
from itertools import pairwise
from math import lcm

from . import intpoly
from .intpoly import Poly

__all__ = ["count_roots", "square_free"]


def _integer_polynomial(coefficients: Sequence[Fraction]) -> Poly:
    scale = lcm(*(c.denominator for c in coefficients))
    return intpoly.from_descending([c.numerator * (scale // c.denominator) for c in coefficients])


def _positive_part(p: Poly) -> Poly:
    """p divided by its positive content: same signs everywhere, smaller numbers."""
    c = intpoly.content(p)
    return p if c in (0, 1) else tuple(x // c for x in p)


def _sturm(f0: Poly, f1: Poly) -> list[Poly]:
    """f0, f1, -rem(f0, f1), ... (positive multiples), ending at a multiple of their gcd."""
    sequence = [f0, f1]
    while len(sequence[-1]) > 1:
        rest = intpoly.pseudo_remainder(sequence[-2], sequence[-1])
        if not rest:
            break
        sequence.append(_positive_part(intpoly.negate(rest)))
    return sequence


def _variations(signs: Sequence[int]) -> int:
    signs = [s for s in signs if s]
    return sum(1 for a, b in pairwise(signs) if a != b)


def _at_plus_infinity(sequence: Sequence[Poly]) -> int:
    return _variations([1 if p[-1] > 0 else -1 for p in sequence if p])


def _at_minus_infinity(sequence: Sequence[Poly]) -> int:
    return _variations([(1 if p[-1] > 0 else -1) * (-1 if len(p) % 2 == 0 else 1)
                        for p in sequence if p])


def _at_zero(sequence: Sequence[Poly]) -> int:
    return _variations([(p[0] > 0) - (p[0] < 0) for p in sequence if p])


def _right_count_without_pairs(q: Poly) -> int:
    """Roots of q in the open right half-plane, when q has no root pair r, -r."""
    n = len(q) - 1
    d = intpoly.trim(q[k] * (-1 if (n - k) // 2 % 2 else 1) if (n - k) % 2 == 0 else 0
                     for k in range(n + 1))
    m = intpoly.trim(q[k] * (-1 if (n - 1 - k) // 2 % 2 else 1) if (n - 1 - k) % 2 == 0 else 0
                     for k in range(n))
    if not m:
        index = 0
    else:
        sequence = _sturm(d, m)
        index = _at_minus_infinity(sequence) - _at_plus_infinity(sequence)
    right, odd = divmod(n - index, 2)
    if odd or not 0 <= right <= n:  # a broken invariant, never an input problem
        raise ArithmeticError(f"Cauchy index {index} impossible for degree {n}")
    return right


def _negative_real_roots(p: Poly) -> int:
    """Distinct negative real roots of a square-free p with p(0) != 0."""
    if len(p) <= 1:
        return 0
    sequence = _sturm(p, intpoly.derivative(p))
    return _at_minus_infinity(sequence) - _at_zero(sequence)


def square_free(p: Poly) -> list[tuple[Poly, int]]:
    """Yun's square-free decomposition of a primitive p: [(p_i, i)], p = c * prod p_i^i."""
    p = intpoly.primitive(p)
    if len(p) <= 1:
        return []
    dp = intpoly.derivative(p)
    a = intpoly.gcd_poly(p, dp)
    b = intpoly.divide_exact(p, a)
    c = intpoly.divide_exact(dp, a)
    d = intpoly.sub(c, intpoly.derivative(b))
    out = []
    i = 1
    while len(b) > 1:
        a = intpoly.gcd_poly(b, d) if d else b
        b = intpoly.divide_exact(b, a)
        c = intpoly.divide_exact(d, a) if d else ()
        d = intpoly.sub(c, intpoly.derivative(b))
        if len(a) > 1:
            out.append((a, i))
        i += 1
    return out


def count_roots(coefficients: Sequence[Fraction]) -> tuple[int, int, int, int]:
    """Root counts, with multiplicity, of a non-zero polynomial.

    Parameters
    ----------
    coefficients
        Exact coefficients, highest power first, the first one non-zero.

    Returns
    -------
    tuple
        (open_right, imaginary_axis, open_left, paired): ``paired`` is the degree of
        gcd(p(s), p(-s)), the number of roots that come in pairs r, -r.
    """
    p = intpoly.primitive(_integer_polynomial(coefficients))
    mirrored = tuple(-x if k % 2 else x for k, x in enumerate(p))
    g = intpoly.gcd_poly(p, mirrored)
    q = intpoly.divide_exact(p, g)
    right = axis = left = 0
    if len(q) > 1:
        right = _right_count_without_pairs(q)
        left = len(q) - 1 - right
    for factor, multiplicity in square_free(g):
        odd = factor[0] == 0
        even = factor[1:] if odd else factor
        if any(even[1::2]):  # a broken invariant: every factor of g is even or odd
            raise ArithmeticError("a square-free factor of gcd(p(s), p(-s)) is neither even nor odd")
        on_axis = 2 * _negative_real_roots(even[0::2]) + (1 if odd else 0)
        off_axis = len(factor) - 1 - on_axis
        axis += multiplicity * on_axis
        right += multiplicity * off_axis // 2
        left += multiplicity * off_axis // 2
    return right, axis, left, len(g) - 1
