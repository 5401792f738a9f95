"""The numbers behind the report's figures (numpy only; drawing lives in figures.py).

Value set. For a fixed frequency omega, p(j omega) = E(omega) + j O(omega) with the even
part E = a0 - a2 w^2 + a4 w^4 - ... and the odd part O = a1 w - a3 w^3 + ... . Over the
coefficient overbound (each a_k in its interval) E and O range independently over
intervals, so the value set of the interval polynomial at j omega is an axis-parallel
rectangle whose four corners are the Kharitonov polynomials at j omega (Dasgupta,
"Kharitonov's theorem revisited", Systems & Control Letters 11, 1988). Every member of
the parametric family has its coefficients inside the overbound, so its p(j omega) lies in
that rectangle; zero exclusion (the origin outside every rectangle) is the frequency-domain
reading of the theorem.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from fractions import Fraction
from typing import Any

import numpy as np

from ..analysis.montecarlo import draw_parameters
from ..exact.interval import KHARITONOV_PATTERNS
from ..exact.numbers import to_float
from ..model.case import Case

__all__ = ["choose_omegas", "nominal_roots", "polynomial_roots", "sample_draws", "value_set_data"]


def sample_draws(case: Case, count: int, seed: int) -> np.ndarray:
    """(count, k) parameter sets drawn per the case's distributions (seeded)."""
    return draw_parameters(case, count, np.random.default_rng(seed))


def polynomial_roots(coefficients: np.ndarray) -> np.ndarray:
    """Roots of each row (highest power first) as an (N, n) complex array; rows whose
    leading coefficient vanishes give NaN (the picture skips them)."""
    coefficients = np.asarray(coefficients, dtype=float)
    count, width = coefficients.shape
    n = width - 1
    out = np.full((count, n), np.nan, dtype=complex)
    ok = coefficients[:, 0] != 0
    if n == 0 or not ok.any():
        return out
    monic = coefficients[ok] / coefficients[ok, :1]
    companion = np.zeros((monic.shape[0], n, n))
    companion[:, 0, :] = -monic[:, 1:]
    if n > 1:
        companion[:, np.arange(1, n), np.arange(n - 1)] = 1.0
    out[ok] = np.linalg.eigvals(companion)
    return out


def nominal_roots(case: Case) -> np.ndarray:
    """Roots of the nominal polynomial (floats, for pictures)."""
    family = case.family
    coeffs = np.array([[to_float(c) for c in family.coefficients_at(family.nominal)]])
    return polynomial_roots(coeffs)[0]


def _round3(x: float) -> float:
    return float(f"{x:.3g}")


def choose_omegas(case: Case, count: int = 6) -> tuple[float, ...]:
    """Frequencies spread over the magnitudes of the nominal roots.

    The distinct root magnitudes (closer than a factor 1.25 count as one) are taken, thinned
    or filled in with geometric midpoints and with half the smallest and twice the largest,
    until ``count`` frequencies remain; each is rounded to three significant digits.
    """
    sizes = sorted(abs(r) for r in nominal_roots(case) if np.isfinite(r) and abs(r) > 0)
    distinct: list[float] = []
    for size in sizes:
        if not distinct or size > distinct[-1] * 1.25:
            distinct.append(float(size))
    if not distinct:
        distinct = [1.0]
    if len(distinct) > count:
        picks = np.linspace(0, len(distinct) - 1, count).round().astype(int)
        chosen = [distinct[i] for i in picks]
    else:
        chosen = list(distinct)
        extra = [chosen[0] / 2, chosen[-1] * 2]
        extra += [float(np.sqrt(a * b)) for a, b in itertools.pairwise(chosen)]
        for value in extra:
            if len(chosen) >= count:
                break
            chosen.append(value)
        while len(chosen) < count:  # one distinct magnitude: spread about it
            chosen.append(chosen[-1] * 1.7)
    return tuple(sorted({_round3(w) for w in chosen}))


def _parts(omega: Fraction, degree: int) -> list[tuple[int, Fraction]]:
    """Per power k: (0 real / 1 imaginary, signed factor) of (j omega)^k."""
    out = []
    for k in range(degree + 1):
        sign = -1 if (k // 2) % 2 else 1
        out.append((k % 2, sign * omega**k))
    return out


def value_set_data(case: Case, omegas: Sequence[float], draws: np.ndarray) -> list[dict[str, Any]]:
    """The overbound's value-set rectangle and sampled members' p(j omega), per omega.

    Parameters
    ----------
    omegas
        Frequencies (positive).
    draws
        (N, k) parameter sets inside the box (e.g. :func:`sample_draws`).

    Returns
    -------
    list of dict
        Per omega: ``omega``; ``rectangle`` = (re_lo, re_hi, im_lo, im_hi) of the
        coefficient overbound, computed exactly and rounded outwards to floats;
        ``corners`` = Kharitonov label -> (re, im) of that polynomial at j omega;
        ``points`` = (N, 2) array of (Re, Im) p(j omega) of the drawn members;
        ``nominal`` = (Re, Im) at the nominal point; ``origin_inside`` = whether the
        rectangle contains 0; ``scale`` = the largest |a_k| omega^k over the box (the size
        of the float rounding in ``points``).
    """
    family = case.family
    n = family.degree
    bounds = family.bounds()
    ascending = list(reversed(bounds))  # ascending[k]: interval of a_k
    coeffs = family.coefficients_float(np.asarray(draws, dtype=float))[:, ::-1]  # ascending
    nominal = [float(c) for c in reversed(family.coefficients_at(family.nominal))]
    out = []
    for omega in omegas:
        w = Fraction(float(omega))
        parts = _parts(w, n)
        lo = [Fraction(0), Fraction(0)]
        hi = [Fraction(0), Fraction(0)]
        scale = 0.0
        for (axis, factor), b in zip(parts, ascending, strict=True):
            ends = (b.low * factor, b.high * factor)
            lo[axis] += min(ends)
            hi[axis] += max(ends)
            scale = max(scale, float(max(abs(e) for e in ends)))
        rectangle = (_down(lo[0]), _up(hi[0]), _down(lo[1]), _up(hi[1]))
        corners = {}
        for label, pattern in KHARITONOV_PATTERNS.items():
            value = [Fraction(0), Fraction(0)]
            for k, ((axis, factor), b) in enumerate(zip(parts, ascending, strict=True)):
                value[axis] += (b.low if pattern[k % 4] == "low" else b.high) * factor
            corners[label] = (float(value[0]), float(value[1]))
        factors = np.array([float(f) for _, f in parts])
        axes = np.array([a for a, _ in parts])
        terms = coeffs * factors[None, :]
        points = np.stack([terms[:, axes == 0].sum(axis=1), terms[:, axes == 1].sum(axis=1)], axis=1)
        nom = np.array(nominal) * factors
        out.append({
            "omega": float(omega),
            "rectangle": rectangle,
            "corners": corners,
            "points": points,
            "nominal": (float(nom[axes == 0].sum()), float(nom[axes == 1].sum())),
            "origin_inside": lo[0] <= 0 <= hi[0] and lo[1] <= 0 <= hi[1],
            "scale": scale,
        })
    return out


def _down(x: Fraction) -> float:
    f = float(x)
    return float(np.nextafter(f, -np.inf)) if Fraction(f) > x else f


def _up(x: Fraction) -> float:
    f = float(x)
    return float(np.nextafter(f, np.inf)) if Fraction(f) < x else f
