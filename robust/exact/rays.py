"""A polynomial on a ray from the origin, exactly: real and imaginary parts as polynomials.

The damping sector {Re(s) < -zeta |s|} of :mod:`robust.exact.regions` is bounded by two rays
from the origin; the upper one is s = rho d, rho >= 0, with the unit direction

    d = j e^(j alpha) = -sin(alpha) + j cos(alpha),   zeta = sin(alpha),

(alpha = pi/2 - phi, phi = arccos(zeta) the sector's half-angle). With the angle carried as
t = tan(alpha / 2), sin(alpha) = 2t / (1 + t^2) and cos(alpha) = (1 - t^2) / (1 + t^2) are
rational, so every power d^k = c_k + j s_k is an exact rational complex number (derived here by
repeated multiplication). For p(s) = sum_k a_k s^k with real coefficients,

    Re p(rho d) = sum_k a_k c_k rho^k,   Im p(rho d) / rho = sum_(k >= 1) a_k s_k rho^(k - 1)

(s_0 = 0), both polynomials in the parameters and rho: p(rho d) = 0 needs both to vanish.
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction

from .numbers import from_mpq
from .polynomials import MultiPoly

__all__ = ["axis_parts", "direction_powers", "ray_parts", "ray_values", "root_above", "root_bound"]


def direction_powers(n: int, t: Fraction) -> list[tuple[Fraction, Fraction]]:
    """(c_k, s_k) with d^k = c_k + j s_k for k = 0 .. n, d = -sin(alpha) + j cos(alpha) and
    tan(alpha / 2) = t (exact)."""
    t = Fraction(t)
    sine, cosine = 2 * t / (1 + t * t), (1 - t * t) / (1 + t * t)
    re, im = -sine, cosine
    out = [(Fraction(1), Fraction(0))]
    for _ in range(n):
        c, s = out[-1]
        out.append((c * re - s * im, c * im + s * re))
    return out


def ray_parts(coefficients: Sequence[MultiPoly], t: Fraction) -> tuple[MultiPoly, MultiPoly]:
    """(Re p(rho d), Im p(rho d) / rho) as polynomials in the parameters and rho (one more
    variable, the last), for p with coefficients a_n .. a_0 (highest power first) in the
    parameters."""
    n = len(coefficients) - 1
    nvars = coefficients[0].nvars
    powers = direction_powers(n, t)
    real: dict[tuple[int, ...], Fraction] = {}
    imag: dict[tuple[int, ...], Fraction] = {}
    for i, coeff in enumerate(coefficients):
        k = n - i  # a_k multiplies s^k
        c, s = powers[k]
        for exponents, value in coeff.terms:
            v = from_mpq(value)
            if c:
                key = (*exponents, k)
                real[key] = real.get(key, Fraction(0)) + c * v
            if s and k:
                key = (*exponents, k - 1)
                imag[key] = imag.get(key, Fraction(0)) + s * v
    return MultiPoly.from_mapping(nvars + 1, real), MultiPoly.from_mapping(nvars + 1, imag)


def ray_values(coefficients: Sequence[Fraction], t: Fraction, rho: Fraction) -> tuple[Fraction, Fraction]:
    """(Re p(rho d), Im p(rho d)) at one point, exactly, from numeric coefficients (highest first)."""
    n = len(coefficients) - 1
    powers = direction_powers(n, t)
    re = sum((Fraction(a) * powers[n - i][0] * Fraction(rho) ** (n - i) for i, a in enumerate(coefficients)),
             Fraction(0))
    im = sum((Fraction(a) * powers[n - i][1] * Fraction(rho) ** (n - i) for i, a in enumerate(coefficients)),
             Fraction(0))
    return re, im


def root_above(q: Fraction, k: int) -> Fraction:
    """A rational r >= q^(1/k) (q >= 0), close to it (about 1e-9 relative): a float guess,
    checked exactly and raised until it holds."""
    if q == 0:
        return Fraction(0)
    guess = Fraction(float(q) ** (1.0 / k)).limit_denominator(10**6) if q < 10**300 else Fraction(q)
    guess = max(guess, Fraction(1, 10**12))
    step = Fraction(1, 2**30)  # from about 1e-9 relative, doubling: close above, and soon
    while guess**k < q:
        guess *= 1 + step
        step *= 2
    return guess


def axis_parts(total: Sequence[MultiPoly], diff: Sequence[MultiPoly]) -> tuple[MultiPoly, MultiPoly]:
    """(Re F(j w), Im F(j w)) for F(s) = A(s) + j t B(s), as polynomials in the parameters, t
    and w (two more variables, in that order), for real A and B with coefficients a_n .. a_0
    (highest power first, same length) in the parameters.

    With (j w)^k = j^k w^k, A(j w) = Ar + j Ai with Ar = sum_(k even) (-1)^(k/2) a_k w^k and
    Ai = sum_(k odd) (-1)^((k-1)/2) a_k w^k (likewise B), so Re F = Ar - t Bi, Im F = Ai + t Br.
    """
    n = len(total) - 1
    nvars = total[0].nvars
    real: dict[tuple[int, ...], Fraction] = {}
    imag: dict[tuple[int, ...], Fraction] = {}
    for i, (a, b) in enumerate(zip(total, diff, strict=True)):
        k = n - i
        sign = -1 if k % 4 in (2, 3) else 1  # j^k = sign (k even) or sign j (k odd)
        # k even: a_k -> Re, t b_k -> Im; k odd: a_k -> Im, t b_k -> -Re
        a_side, b_side, b_sign = (real, imag, sign) if k % 2 == 0 else (imag, real, -sign)
        for poly, side, t_power, factor in ((a, a_side, 0, sign), (b, b_side, 1, b_sign)):
            for exponents, value in poly.terms:
                key = (*exponents, t_power, k)
                side[key] = side.get(key, Fraction(0)) + factor * from_mpq(value)
    return MultiPoly.from_mapping(nvars + 2, real), MultiPoly.from_mapping(nvars + 2, imag)


def root_bound(magnitudes: Sequence[Fraction], lead_least: Fraction) -> Fraction:
    """A bound R on |s| for every root of every polynomial whose coefficients a_n .. a_0
    (highest first) satisfy |a_k| <= ``magnitudes[n - k]`` and |a_n| >= ``lead_least`` > 0.

    The smaller of Cauchy's bound 1 + max_(k < n) |a_k| / |a_n| (Cauchy 1829, from memory) and
    Fujiwara's 2 max(|a_(n-1)/a_n|, |a_(n-2)/a_n|^(1/2), ..., |a_0 / (2 a_n)|^(1/n)) (Fujiwara,
    "Ueber die obere Schranke des absoluten Betrages der Wurzeln einer algebraischen
    Gleichung", 1916, from memory); the k-th roots are rounded up to rationals.
    """
    n = len(magnitudes) - 1
    if n <= 0:
        return Fraction(0)
    ratios = [Fraction(m) / lead_least for m in magnitudes[1:]]  # |a_(n-1)| .. |a_0| over |a_n|
    cauchy = 1 + max(ratios)
    terms = [root_above(q / (2 if k == n else 1), k) for k, q in enumerate(ratios, start=1)]
    return min(cauchy, 2 * max(terms))
