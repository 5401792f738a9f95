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
(q, rho); p(rho d) = 0 needs both to vanish. Over a cell of B x [0, R] their Bernstein
expansions (:mod:`robust.exact.bernstein`, in one common basis) enclose their values: since
the Bernstein basis functions are non-negative and sum to 1, the pair (Re, Im / rho) at every
point of the cell is a convex combination of the pairs of coefficients (Re_I, Im_I). A cell is
excluded when all coefficients of one of them have one strict sign, or when the pairs lie in
one open half-plane through 0 (zero exclusion for the value set, as in the mapping theorem's
use of convex hulls). Other cells are halved (de Casteljau) along the axis, rho or a
parameter, where the coefficients change most; cells are counted against the budget, never
seconds.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from itertools import islice, product

import numpy as np

from ..exact.bernstein import Patch, bernstein_patch
from ..exact.polynomials import MultiPoly
from ..exact.rays import ray_parts, root_bound
from ..exact.regions import damping_of, sector_product
from ..exact.routh import is_hurwitz
from ..model.family import Box, UncertainPolynomial, sign_over_box

__all__ = ["METHOD_TEXT", "SectorTest", "prove_sector", "sector_inside"]

METHOD_TEXT = "zero exclusion on the sector's boundary ray (Bernstein in rho and the parameters)"

#: Box corners screened in floating point for a point outside the sector before subdividing.
_SCREEN_CORNERS = 64


@dataclass(frozen=True, slots=True)
class SectorTest:
    """What :func:`prove_sector` found.

    ``status``: ``proven`` (every root of every member has damping ratio above damping_of(t)),
    ``refuted`` (``point``, in the box, has a root outside the open sector, checked exactly) or
    ``open`` (a condition could not be shown, or the budget ran out). ``cells``: the cells of
    B x [0, R] tested; ``radius``: R.
    """

    status: str
    point: tuple[Fraction, ...] | None = None
    cells: int = 0
    radius: Fraction | None = None
    reason: str = ""


def sector_inside(coefficients: Sequence[Fraction], t: Fraction) -> bool:
    """Every root of p (highest power first) has damping ratio above damping_of(t), exactly
    (the Hurwitz test of p(e^(j alpha) w) p(e^(-j alpha) w))."""
    return is_hurwitz(sector_product(coefficients, t))


def _screen(family: UncertainPolynomial, box: Box, t: Fraction) -> tuple[Fraction, ...] | None:
    """A box corner (or the centre) whose roots look least damped, when floats put one below
    damping_of(t); the caller checks it exactly."""
    points = [box.center, *islice(product(*((lo, hi) for lo, hi in box.intervals)), _SCREEN_CORNERS)]
    coefficients = family.coefficients_float(np.array([[float(x) for x in p] for p in points]))
    zeta = float(damping_of(t))
    worst, where = zeta, None
    for point, row in zip(points, coefficients, strict=True):
        row = row / (np.abs(row).max() or 1.0)
        with np.errstate(all="ignore"):
            try:
                roots = np.roots(row)
            except np.linalg.LinAlgError:
                continue
        for r in roots:
            size = abs(r)
            damping = -r.real / size if size else 1.0
            if damping < worst:
                worst, where = damping, point
    return tuple(where) if where is not None else None


def _one_sign(patch: Patch) -> bool:
    return patch.positive() or patch.high() < 0


def _as_floats(tensor: np.ndarray) -> tuple[np.ndarray, int]:
    """The integers of a tensor divided by 2^shift as floats (no overflow), and the shift."""
    flat = [int(x) for x in tensor.reshape(-1).tolist()]
    shift = max(max(abs(x) for x in flat).bit_length() - 60, 0)
    return np.array([float(x >> shift) if x >= 0 else -float(-x >> shift) for x in flat]), shift


def _in_half_plane(re_patch: Patch, im_patch: Patch) -> bool:
    """The points (Re_I, Im_I) of the two aligned patches' Bernstein coefficients lie in an
    open half-plane through 0. The Bernstein basis functions are non-negative and sum to 1,
    so (Re, Im / rho) at every point of the cell is a convex combination of those points and
    is not 0 (the value-set form of zero exclusion). Floats find the direction (opposite the
    largest gap between the points' angles); the test u Re_I + v Im_I > 0 for every I is
    exact on the integers (a positive scale of either coordinate moves the points but not
    whether the half-plane exists)."""
    if re_patch.axes != im_patch.axes or re_patch.tensor.shape != im_patch.tensor.shape:
        return False
    (x, re_shift), (y, im_shift) = _as_floats(re_patch.tensor), _as_floats(im_patch.tensor)
    angles = np.sort(np.arctan2(y, x))
    gaps = np.diff(np.concatenate([angles, angles[:1] + 2 * np.pi]))
    k = int(np.argmax(gaps))
    if gaps[k] <= np.pi:
        return False
    middle = angles[k] + gaps[k] / 2 + np.pi
    u, v = (round(float(c) * 2**40) for c in (np.cos(middle), np.sin(middle)))
    combined = (u << im_shift) * re_patch.tensor + (v << re_shift) * im_patch.tensor
    return bool(combined.min() > 0)


def _relative_spread(patch: Patch) -> dict[int, float]:
    top = float(np.abs(patch.tensor).max()) or 1.0
    return {i: float(v) / top for i, v in patch.spread().items()}


def prove_sector(family: UncertainPolynomial, t: Fraction, box: Box | None = None,
                max_boxes: int = 500) -> SectorTest:
    """Prove that every root of every member over ``box`` (default: the family's) has damping
    ratio above damping_of(t), or find a point of the box where one has not (continuous time)."""
    box = box or family.box
    a = family.coefficients
    inside = family.nominal if box.contains(family.nominal) else box.center
    if not sector_inside(family.coefficients_at(inside), t):
        return SectorTest("refuted", tuple(inside), reason="a point of the box is outside the sector")
    if all(lo == hi for lo, hi in box.intervals):  # one point: its exact test is the answer
        return SectorTest("proven")
    for k, label in ((0, "leading"), (len(a) - 1, "constant")):
        if sign_over_box(a[k], box) not in (1, -1):
            return SectorTest("open", reason=f"the {label} coefficient is not shown to keep its sign")
    screened = _screen(family, box, t)
    if screened is not None and not sector_inside(family.coefficients_at(screened), t):
        return SectorTest("refuted", screened, reason="a box corner is outside the sector")
    bounds = family.bounds(box)
    least = _least_magnitude(a[0], bounds[0].low, bounds[0].high, box)
    if least is None:
        return SectorTest("open", reason="no lower bound on the leading coefficient's magnitude")
    radius = root_bound([max(abs(b.low), abs(b.high)) for b in bounds], least)
    real, imag = ray_parts(a, t)
    rho = len(family.names)
    full = (*box.intervals, (Fraction(0), radius))
    degrees = [max(real.degree_in(i), imag.degree_in(i)) for i in range(rho + 1)]
    cells = [(full, bernstein_patch(real, full, degrees), bernstein_patch(imag, full, degrees))]
    count = 0
    while cells:
        if count >= max_boxes:
            return SectorTest("open", cells=count, radius=radius, reason="the work budget ran out")
        cell, re_patch, im_patch = cells.pop()
        count += 1
        if _one_sign(re_patch) or _one_sign(im_patch) or _in_half_plane(re_patch, im_patch):
            continue
        axis = _split_axis(cell, re_patch, im_patch, rho)
        lo, hi = cell[axis]
        mid = (lo + hi) / 2
        low_re, high_re = re_patch.halves(axis)
        low_im, high_im = im_patch.halves(axis)
        cells.append((_with(cell, axis, (mid, hi)), high_re, high_im))
        cells.append((_with(cell, axis, (lo, mid)), low_re, low_im))
    return SectorTest("proven", cells=count, radius=radius)


def _least_magnitude(poly: MultiPoly, low: Fraction, high: Fraction, box: Box) -> Fraction | None:
    """A positive lower bound of |poly| over the box: from its bounds (low, high) when they
    exclude 0, else from its Bernstein coefficients; None when neither shows one."""
    if low > 0 or high < 0:
        return min(abs(low), abs(high))
    patch = bernstein_patch(poly, box.intervals)
    if patch.positive():
        return patch.low()
    return -patch.high() if patch.high() < 0 else None


def _with(cell: tuple, axis: int, interval: tuple[Fraction, Fraction]) -> tuple:
    return (*cell[:axis], interval, *cell[axis + 1:])


#: The weight of rho's share in the choice of the axis to halve: rho enters with degree n, the
#: parameters mostly with degree 1 or 2, and halving rho pays off sooner (4 was the best of
#: 1/2, 1, 2, 4, 8, 16 in cells near the worst damping of cases/servo_pid.toml and
#: cases/cascaded_motor_drive.toml).
_RHO_WEIGHT = 4.0


def _split_axis(cell: tuple, re_patch: Patch, im_patch: Patch, rho: int) -> int:
    """The axis (rho or a parameter of non-zero width) along which the Bernstein coefficients
    of Re and Im / rho change most, relative to their size (rho's share weighted): where the
    enclosure loses most."""
    score = {i: 0.0 for i, (lo, hi) in enumerate(cell) if hi > lo}
    for patch in (re_patch, im_patch):
        for i, v in _relative_spread(patch).items():
            if i in score:
                score[i] += v * (_RHO_WEIGHT if i == rho else 1.0)
    return max(score, key=lambda i: (score[i], i == rho))
