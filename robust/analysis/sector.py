"""The damping sector over a box by zero exclusion on its boundary ray, on p itself.

Deciding "every root of every member has damping ratio above zeta" through the real family
P(w) = p(e^(j alpha) w) p(e^(-j alpha) w) of degree 2n (:func:`robust.model.family.sector_family`)
squares the coefficients, and its Hurwitz determinant Delta_(2n-1) is soon too large to
multiply out. The test here works on p, of degree n.

Claim. Let B be a connected box of parameters and p(s; q) = sum_k a_k(q) s^k real. Every root
of every member lies in the open sector S = {Re(s) < -zeta |s|} when

  (i) a_n keeps one strict sign over B,
  (ii) a_0 keeps one strict sign over B (no root at s = 0),
  (iii) p(rho d; q) != 0 for every q in B and rho in (0, R], where d = j e^(j alpha) is the
        direction of the sector's upper boundary ray and R bounds |s| for every root over B,
  (iv) at one point of B every root lies in S.

Proof. By (i) the degree is n all over B, so the n roots depend continuously on q (Hurwitz's
theorem on the zeros of analytic functions; e.g. Marden, "Geometry of Polynomials", 1966,
from memory) and stay within |s| <= R. The boundary of S is {0} and the two rays rho d,
rho conj(d), rho > 0. A root path from inside S (iv) to outside it would meet the boundary:
not at 0 (ii), not on the upper ray (iii), and not on the lower ray, whose roots are the
conjugates of upper-ray roots because p is real. B being connected, every point is as (iv).

Condition (iii) is decided exactly. With t = tan(alpha / 2) rational, d^k = c_k + j s_k is
rational (:mod:`robust.exact.rays`), so Re p(rho d) and Im p(rho d) / rho are polynomials in
(q, rho); p(rho d) = 0 needs both to vanish, which :func:`.exclusion.exclude_zeros` rules out
over B x [0, R] by Bernstein cells.
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction

import numpy as np

from ..exact.rays import ray_parts, root_bound
from ..exact.regions import damping_of, sector_product
from ..exact.routh import is_hurwitz
from ..model.family import Box, UncertainPolynomial, sign_over_box
from .exclusion import ExclusionTest, exclude_zeros, float_roots, least_magnitude, screen_points

__all__ = ["METHOD_TEXT", "prove_sector", "sector_inside"]

METHOD_TEXT = "zero exclusion on the sector's boundary ray (Bernstein in rho and the parameters)"

def sector_inside(coefficients: Sequence[Fraction], t: Fraction) -> bool:
    """Every root of p (highest power first) has damping ratio above damping_of(t), exactly
    (the Hurwitz test of p(e^(j alpha) w) p(e^(-j alpha) w))."""
    return is_hurwitz(sector_product(coefficients, t))


def _screen(family: UncertainPolynomial, box: Box, t: Fraction) -> tuple[Fraction, ...] | None:
    """A box corner (or the centre) whose roots look least damped, when floats put one below
    damping_of(t); the caller checks it exactly."""
    points = screen_points(box)
    coefficients = family.coefficients_float(np.array([[float(x) for x in p] for p in points]))
    zeta = float(damping_of(t))
    worst, where = zeta, None
    for point, row in zip(points, coefficients, strict=True):
        roots = float_roots(row)
        for r in () if roots is None else roots:
            size = abs(r)
            damping = -r.real / size if size else 1.0
            if damping < worst:
                worst, where = damping, point
    return tuple(where) if where is not None else None


def prove_sector(family: UncertainPolynomial, t: Fraction, box: Box | None = None,
                max_boxes: int = 500) -> ExclusionTest:
    """Prove that every root of every member over ``box`` (default: the family's) has damping
    ratio above damping_of(t), or find a point of the box where one has not (continuous time)."""
    box = box or family.box
    a = family.coefficients
    inside = family.nominal if box.contains(family.nominal) else box.center
    if not sector_inside(family.coefficients_at(inside), t):
        return ExclusionTest("refuted", tuple(inside), reason="a point of the box is outside the sector")
    if all(lo == hi for lo, hi in box.intervals):  # one point: its exact test is the answer
        return ExclusionTest("proven")
    for k, label in ((0, "leading"), (len(a) - 1, "constant")):
        if sign_over_box(a[k], box) not in (1, -1):
            return ExclusionTest("open", reason=f"the {label} coefficient is not shown to keep its sign")
    screened = _screen(family, box, t)
    if screened is not None and not sector_inside(family.coefficients_at(screened), t):
        return ExclusionTest("refuted", screened, reason="a box corner is outside the sector")
    bounds = family.bounds(box)
    least = least_magnitude(a[0], bounds[0].low, bounds[0].high, box)
    if least is None:
        return ExclusionTest("open", reason="no lower bound on the leading coefficient's magnitude")
    radius = root_bound([max(abs(b.low), abs(b.high)) for b in bounds], least)
    real, imag = ray_parts(a, t)
    proven, count = exclude_zeros(real, imag, (*box.intervals, (Fraction(0), radius)), len(family.names),
                                  max_boxes)
    if not proven:
        return ExclusionTest("open", cells=count, radius=radius, reason="the work budget ran out")
    return ExclusionTest("proven", cells=count, radius=radius)
