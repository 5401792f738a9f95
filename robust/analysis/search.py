"""Witness search: where inside a box might the family be unstable?

Floating point only guides this search; every candidate it returns is an exact rational
point inside the box, and callers re-decide it with the exact Routh array. The score of a
point is the worst root's angle, max Re(r)/|r| over the roots r: scale-free, in [-1, 1], and
positive exactly when a root lies in the open right half-plane.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from fractions import Fraction

import numpy as np

from ..exact.numbers import to_float
from ..exact.routh import is_hurwitz
from ..model.family import Box, UncertainPolynomial

__all__ = ["batch_worst_angle", "search_witness", "worst_root_angle"]


def worst_root_angle(coefficients: Sequence[float]) -> float:
    """max Re(r)/|r| over the roots of one polynomial (floats; screening only)."""
    return float(batch_worst_angle(np.asarray([coefficients], dtype=float))[0])


def batch_worst_angle(coefficients: np.ndarray) -> np.ndarray:
    """Worst root angle for each row of an (N, n+1) coefficient array, highest power first.

    Uses the eigenvalues of stacked companion matrices. Rows with a vanishing or
    sign-changed leading coefficient score +1 (treated as unstable candidates).
    """
    coefficients = np.asarray(coefficients, dtype=float)
    count, width = coefficients.shape
    n = width - 1
    out = np.ones(count)
    lead = coefficients[:, 0]
    with np.errstate(all="ignore"):
        ok = (np.abs(lead) > 0) & np.isfinite(coefficients).all(axis=1)
        if n == 0 or not ok.any():
            return np.where(ok, -1.0, 1.0)
        monic = coefficients[ok] / lead[ok, None]
    finite = np.isfinite(monic).all(axis=1)  # a quotient may still overflow
    ok[np.flatnonzero(ok)[~finite]] = False
    monic = monic[finite]
    if not ok.any():
        return out
    companion = np.zeros((monic.shape[0], n, n))
    companion[:, 0, :] = -monic[:, 1:]
    if n > 1:
        companion[:, np.arange(1, n), np.arange(n - 1)] = 1.0
    with np.errstate(all="ignore"):
        roots = np.linalg.eigvals(companion)
        size = np.abs(roots)
        angle = np.where(size > 0, roots.real / np.where(size > 0, size, 1.0), 0.0)
    scores = angle.max(axis=1)
    scores[~np.isfinite(scores)] = 1.0
    out[ok] = scores
    return out


def _to_point(t: np.ndarray, box: Box) -> tuple[Fraction, ...]:
    """Exact rational point from normalised coordinates t in [0, 1]^k."""
    point = []
    for x, (lo, hi) in zip(t, box.intervals, strict=True):
        frac = Fraction(float(min(max(x, 0.0), 1.0))).limit_denominator(2**40)
        point.append(lo + frac * (hi - lo))
    return tuple(point)


def _coefficients_many(family: UncertainPolynomial, points: np.ndarray) -> np.ndarray:
    return family.coefficients_float(points)


def search_witness(
    family: UncertainPolynomial,
    box: Box,
    seed: int = 0,
    samples: int = 256,
    local: int = 3,
    max_corners: int = 1024,
    deadline: float | None = None,
) -> tuple[tuple[Fraction, ...], str] | None:
    """Look for a rational point of ``box`` where the family is not Hurwitz.

    Returns (point, how it was found) for a point whose exact polynomial is not Hurwitz,
    or None. Tries the corners (exactly), a seeded uniform sample screened in floats, then
    a bounded Nelder-Mead maximisation of the worst root angle from the best samples.
    """
    # the deadline is a safety stop only (None: none); the work is bounded by counts
    free = [i for i, (a, b) in enumerate(box.intervals) if b > a]
    if 2 ** len(free) <= max_corners:
        for corner in box.vertices():
            if deadline is not None and time.perf_counter() > deadline:
                return None
            coeffs = family.coefficients_at(corner)
            if coeffs[0] != 0 and not is_hurwitz(coeffs):
                return corner, "box corner"
    if not free:
        return None
    rng = np.random.default_rng(seed)
    k = len(box.names)
    lo = np.array([to_float(a) for a in box.low])
    width = np.array([to_float(b - a) for a, b in box.intervals])
    if not (np.isfinite(lo).all() and np.isfinite(width).all() and np.isfinite(lo + width).all()):
        return None  # a box beyond the float range: the exact methods decide it alone
    t = rng.random((samples, k))
    t[:, width == 0] = 0.0
    scores = batch_worst_angle(_coefficients_many(family, lo + t * width))
    order = np.argsort(-scores)
    for idx in order[: min(16, samples)]:
        if scores[idx] < -1e-3:
            break
        point = _to_point(t[idx], box)
        coeffs = family.coefficients_at(point)
        if coeffs[0] != 0 and not is_hurwitz(coeffs):
            return point, "sampled point"

    def objective(x: np.ndarray) -> float:
        full = np.zeros(k)
        full[free] = np.clip(x, 0.0, 1.0)
        return -float(batch_worst_angle(_coefficients_many(family, (lo + full * width)[None, :]))[0])

    if scores[order[0]] < -0.1:
        return None  # every sample is far from the boundary: leave the rest to subdivision
    from scipy.optimize import minimize  # loaded only when a local search runs (it is slow to import)

    for idx in order[:local]:
        if deadline is not None and time.perf_counter() > deadline:
            break
        x0 = t[idx][free]
        res = minimize(objective, x0, method="Nelder-Mead", bounds=[(0.0, 1.0)] * len(free),
                       options={"maxfev": 60 * len(free) + 100, "xatol": 1e-10, "fatol": 1e-12})
        if -res.fun < -1e-6:
            continue
        full = np.zeros(k)
        full[free] = np.clip(res.x, 0.0, 1.0)
        point = _to_point(full, box)
        coeffs = family.coefficients_at(point)
        if coeffs[0] != 0 and not is_hurwitz(coeffs):
            return point, "local optimisation of the worst root"
    return None
