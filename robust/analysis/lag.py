"""The phase margin over a box by zero exclusion on the imaginary axis, on the loop itself.

Deciding "every member stays stable under every extra phase lag e^(-j theta), theta in
[0, Theta]" through the real family (D + N)^2 + u (D - N)^2 (:func:`robust.model.family.
phase_family`) doubles the degree and squares the coefficients; for loops with several
parameters its ladder soon stops. The test here works on a polynomial of the loop's degree.

With t = tan(theta / 2), e^(-j theta) = (1 - j t) / (1 + j t), so D + e^(-j theta) N has the
roots of F(s) = A(s) + j t B(s), A = D + N (the closed loop), B = D - N.

Claim. Let B be a connected box of parameters q, T >= tan(Theta / 2) rational, and
a_n(A) the leading coefficient of A. Every root of F lies in the open left half-plane for
every q in B and t in [0, T] when

  (i) a_n(A) keeps one strict sign over B (then the leading coefficient of F,
      a_n(A) + j t a_n(B), has modulus at least |a_n(A)| > 0: the degree is n throughout),
  (ii) F(j w; q, t) != 0 for every q in B, t in [0, T] and w in [-R, R], where R bounds the
       modulus of every root of F over B x [0, T] (Cauchy's or Fujiwara's bound, which hold
       for complex coefficients, from |c_k| <= |a_k(A)| + T |a_k(B)| and |c_n| >= |a_n(A)|:
       :func:`robust.exact.rays.root_bound`), so no root lies on the imaginary axis at all,
  (iii) at one point of B, A (F at t = 0) is Hurwitz (checked exactly).

Proof. B x [0, T] is connected. By (i) the n roots of F depend continuously on (q, t)
(Hurwitz's theorem on the zeros of analytic functions; e.g. Marden, "Geometry of
Polynomials", 1966, from memory) and stay within |s| <= R. A root moving from the open left
half-plane (iii) into the closed right one would meet the imaginary axis, inside |s| <= R,
which (ii) excludes. So every point is as (iii).

Condition (ii) is decided exactly: F(j w) = (Ar - t Bi) + j (Ai + t Br) with A(j w) = Ar + j Ai,
B(j w) = Br + j Bi (:func:`robust.exact.rays.axis_parts`), both polynomials in (q, t, w), and
:func:`.exclusion.exclude_zeros` rules out a common zero over B x [0, T] x [-R, R] by
Bernstein cells. The same holds for any T larger than tan(Theta / 2): a rational T rounded
up proves a little more than asked.
"""

from __future__ import annotations

import math
from fractions import Fraction

import numpy as np

from ..exact.numbers import from_mpq
from ..exact.polynomials import MultiPoly, as_intervals
from ..exact.rays import axis_parts, root_above, root_bound
from ..exact.routh import is_hurwitz
from ..model.family import Box, UncertainPolynomial, loop_sum_and_difference, sign_over_box
from .exclusion import ExclusionTest, exclude_zeros, float_roots, least_magnitude, screen_points

__all__ = ["METHOD_TEXT", "lag_parts", "prove_lag", "tan_half"]

METHOD_TEXT = ("zero exclusion on the imaginary axis for every extra lag"
               " (Bernstein in w, the lag and the parameters)")

def tan_half(u: Fraction) -> Fraction:
    """A rational T >= sqrt(u), u = tan^2(theta / 2) >= 0: exact when u is the square of a
    rational, else rounded up closely."""
    u = Fraction(u)
    p, q = math.isqrt(u.numerator), math.isqrt(u.denominator)
    if p * p == u.numerator and q * q == u.denominator:
        return Fraction(p, q)
    return root_above(u, 2)


def lag_parts(family: UncertainPolynomial) -> tuple[list[MultiPoly], list[MultiPoly], MultiPoly, MultiPoly]:
    """(A, B, Re F(j w), Im F(j w)) of a loop: A = D + N, B = D - N (highest power first)."""
    total, diff = loop_sum_and_difference(family)
    return (total, diff, *axis_parts(total, diff))


def _screen(family: UncertainPolynomial, box: Box, u: Fraction) -> tuple[Fraction, ...] | None:
    """A box corner (or the centre) whose loop with the full lag looks unstable in floats;
    the caller checks it exactly."""
    points = screen_points(box)
    d, n = family.loop
    lag = complex(1, -math.sqrt(float(u))) / complex(1, math.sqrt(float(u)))
    for point in points:
        floats = [float(x) for x in point]
        row = np.array([a.evaluate_float(floats) + lag * b.evaluate_float(floats)
                        for a, b in zip(d, n, strict=True)])
        roots = float_roots(row)
        if roots is not None and len(roots) and roots.real.max() >= 0:
            return tuple(point)
    return None


def prove_lag(family: UncertainPolynomial, u: Fraction, box: Box | None = None,
              max_boxes: int = 500) -> ExclusionTest:
    """Prove that every member over ``box`` (default: the family's) stays stable under every
    extra lag theta with tan^2(theta / 2) <= u, or name a candidate point (continuous-time
    loops)."""
    box = box or family.box
    inside = family.nominal if box.contains(family.nominal) else box.center
    total, diff, real, imag = lag_parts(family)
    if not is_hurwitz([c.evaluate(inside) for c in total]):
        return ExclusionTest("refuted", (*inside, Fraction(0)),
                             reason="the closed loop is unstable at a point")
    if sign_over_box(total[0], box) not in (1, -1):
        return ExclusionTest("open", reason="the leading coefficient is not shown to keep its sign")
    screened = _screen(family, box, u)
    if screened is not None:
        return ExclusionTest("refuted", (*screened, Fraction(u)), reason="a box corner with the full lag")
    t_high = tan_half(u)
    intervals = as_intervals(box.intervals)

    def extent(poly: MultiPoly) -> tuple[Fraction, Fraction]:
        low, high = poly.bound(intervals)[0]
        return from_mpq(low), from_mpq(high)

    least = least_magnitude(total[0], *extent(total[0]), box)
    if least is None:
        return ExclusionTest("open", reason="no lower bound on the leading coefficient's magnitude")
    magnitudes = [max(map(abs, extent(a))) + t_high * max(map(abs, extent(b)))
                  for a, b in zip(total, diff, strict=True)]
    radius = root_bound(magnitudes, least)
    cell = (*box.intervals, (Fraction(0), t_high), (-radius, radius))
    proven, count = exclude_zeros(real, imag, cell, len(family.names) + 1, max_boxes)
    if not proven:
        return ExclusionTest("open", cells=count, radius=radius, t_high=t_high,
                             reason="the work budget ran out")
    return ExclusionTest("proven", cells=count, radius=radius, t_high=t_high)
