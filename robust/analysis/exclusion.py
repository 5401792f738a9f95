"""Zero exclusion for a complex polynomial over a box, by Bernstein cells: the one loop that
the damping sector's ray test (:mod:`.sector`) and the phase lag's axis test (:mod:`.lag`)
share.

Given exact polynomials Re and Im in some variables over a box, show that Re + j Im has no
zero in it. Over a cell their Bernstein expansions (:mod:`robust.exact.bernstein`, in one
common basis) enclose their values: since the Bernstein basis functions are non-negative
and sum to 1, the pair (Re, Im) at every point of the cell is a convex combination of the
pairs of coefficients (Re_I, Im_I). A cell is excluded when all coefficients of one of them
have one strict sign, or when the pairs lie in one open half-plane through 0 (zero
exclusion for the value set, as in the mapping theorem's use of convex hulls). Other cells
are halved (de Casteljau) along the axis where the coefficients change most; cells are
counted against the budget, never seconds.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from itertools import islice, product

import numpy as np

from ..exact.bernstein import Patch, bernstein_patch
from ..exact.polynomials import MultiPoly
from ..model.family import Box

__all__ = ["ExclusionTest", "exclude_zeros", "float_roots", "least_magnitude", "screen_points"]

#: The weight of the favoured axis's share in the choice of the axis to halve: the ray's rho
#: (or the axis's w) enters with degree n, the parameters mostly with degree 1 or 2, and
#: halving it pays off sooner (4 was the best of 1/2, 1, 2, 4, 8, 16 in cells near the worst
#: damping of cases/servo_pid.toml and cases/cascaded_motor_drive.toml).
_FAVOURED_WEIGHT = 4.0


@dataclass(frozen=True, slots=True)
class ExclusionTest:
    """What a zero-exclusion test (:func:`robust.analysis.sector.prove_sector`,
    :func:`robust.analysis.lag.prove_lag`) found.

    ``status``: ``proven`` (the criterion holds at every point of the box), ``refuted``
    (``point`` is a candidate the caller checks exactly; the lag test appends u =
    tan^2(theta / 2) to the parameters) or ``open`` (a condition could not be shown, or the
    budget ran out). ``cells``: the Bernstein cells tested; ``radius``: the root bound R;
    ``t_high``: the lag test's T = tan(theta / 2) rounded up (None for the ray test).
    """

    status: str
    point: tuple[Fraction, ...] | None = None
    cells: int = 0
    radius: Fraction | None = None
    reason: str = ""
    t_high: Fraction | None = None


def exclude_zeros(real: MultiPoly, imag: MultiPoly, box: Sequence[tuple[Fraction, Fraction]],
                  favoured: int, max_boxes: int) -> tuple[bool, int]:
    """(True when real + j imag has no zero over ``box``, the cells tested). False: the budget
    ran out. ``favoured``: the variable whose halving is weighted up."""
    box = tuple(box)
    degrees = [max(real.degree_in(i), imag.degree_in(i)) for i in range(len(box))]
    cells = [(box, bernstein_patch(real, box, degrees), bernstein_patch(imag, box, degrees))]
    count = 0
    while cells:
        if count >= max_boxes:
            return False, count
        cell, re_patch, im_patch = cells.pop()
        count += 1
        if _one_sign(re_patch) or _one_sign(im_patch) or _in_half_plane(re_patch, im_patch):
            continue
        axis = _split_axis(cell, re_patch, im_patch, favoured)
        lo, hi = cell[axis]
        mid = (lo + hi) / 2
        low_re, high_re = re_patch.halves(axis)
        low_im, high_im = im_patch.halves(axis)
        cells.append((_with(cell, axis, (mid, hi)), high_re, high_im))
        cells.append((_with(cell, axis, (lo, mid)), low_re, low_im))
    return True, count


def least_magnitude(poly: MultiPoly, low: Fraction, high: Fraction, box: Box) -> Fraction | None:
    """A positive lower bound of |poly| over the box: from its bounds (low, high) when they
    exclude 0, else from its Bernstein coefficients; None when neither shows one."""
    if low > 0 or high < 0:
        return min(abs(low), abs(high))
    patch = bernstein_patch(poly, box.intervals)
    if patch.positive():
        return patch.low()
    return -patch.high() if patch.high() < 0 else None


#: Box corners screened in floating point for a refuting point before subdividing.
_SCREEN_CORNERS = 64


def screen_points(box: Box) -> list[tuple[Fraction, ...]]:
    """The points a float screen tries before subdividing: the centre and up to 64 corners."""
    return [box.center, *islice(product(*((lo, hi) for lo, hi in box.intervals)), _SCREEN_CORNERS)]


def float_roots(row: np.ndarray) -> np.ndarray | None:
    """numpy's roots of one coefficient row (highest first, real or complex), scaled first;
    None when the root finder fails. Floats only guide: the caller checks exactly."""
    row = row / (np.abs(row).max() or 1.0)
    with np.errstate(all="ignore"):
        try:
            return np.roots(row)
        except np.linalg.LinAlgError:
            return None


def _one_sign(patch: Patch) -> bool:
    return patch.positive() or patch.high() < 0


def _as_floats(tensor: np.ndarray) -> tuple[np.ndarray, int]:
    """The integers of a tensor divided by 2^shift as floats (no overflow), and the shift."""
    flat = [int(x) for x in tensor.reshape(-1).tolist()]
    shift = max(max(abs(x) for x in flat).bit_length() - 60, 0)
    return np.array([float(x >> shift) if x >= 0 else -float(-x >> shift) for x in flat]), shift


def _in_half_plane(re_patch: Patch, im_patch: Patch) -> bool:
    """The points (Re_I, Im_I) of the two aligned patches' Bernstein coefficients lie in an
    open half-plane through 0, so no convex combination of them is 0. Floats find the
    direction (opposite the largest gap between the points' angles); the test
    u Re_I + v Im_I > 0 for every I is exact on the integers (a positive scale of either
    coordinate moves the points but not whether the half-plane exists)."""
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


def _with(cell: tuple, axis: int, interval: tuple[Fraction, Fraction]) -> tuple:
    return (*cell[:axis], interval, *cell[axis + 1:])


def _split_axis(cell: tuple, re_patch: Patch, im_patch: Patch, favoured: int) -> int:
    """The axis of non-zero width along which the Bernstein coefficients of Re and Im change
    most, relative to their size (the favoured axis's share weighted): where the enclosure
    loses most."""
    score = {i: 0.0 for i, (lo, hi) in enumerate(cell) if hi > lo}
    for patch in (re_patch, im_patch):
        for i, v in _relative_spread(patch).items():
            if i in score:
                score[i] += v * (_FAVOURED_WEIGHT if i == favoured else 1.0)
    return max(score, key=lambda i: (score[i], i == favoured))
