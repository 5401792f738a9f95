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

Loop response. A loop case holds (D, N), den_P den_C and num_P num_C, so that L = N / D.
For a case in s, L(j omega) = N(j omega) / D(j omega). For a case in z, D and N are held in
their Hurwitz form, the bilinear image w = (z - 1) / (z + 1) multiplied by the same
(1 - w)^n; on the unit circle z = e^(j theta) that is w = j tan(theta / 2), and the common
factor cancels in the ratio, so L(e^(j theta)) = N(j tan(theta/2)) / D(j tan(theta/2))
(closed form derived here). Both are evaluated in the homogeneous form
sum a_k (j sin(theta/2))^k cos(theta/2)^(n-k), which stays finite up to theta = pi.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import numpy as np

from ..analysis.montecarlo import draw_parameters
from ..exact.interval import KHARITONOV_PATTERNS
from ..exact.numbers import to_float
from ..exact.polynomials import MultiPoly
from ..model.case import Case
from ..model.family import LOOP_GAIN, PHASE_LAG

__all__ = ["LoopMark", "choose_omegas", "crossings", "float_rows", "loop_frequencies", "loop_mark",
           "loop_values", "nominal_roots", "phase_degrees", "polynomial_roots", "sample_draws",
           "value_set_data", "written_roots"]


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


def nominal_roots(case: Case, written: bool = False) -> np.ndarray:
    """Roots of the nominal polynomial (floats, for pictures): of the Hurwitz form, or with
    ``written`` of the polynomial in the user's variable (z for discrete time)."""
    family = case.family
    exact = family.written_at(family.nominal) if written else family.coefficients_at(family.nominal)
    return polynomial_roots(np.array([[to_float(c) for c in exact]]))[0]


def float_rows(polys: Sequence[MultiPoly], draws: np.ndarray) -> np.ndarray:
    """(N, len(polys)) float values of each polynomial at each row of ``draws`` (pictures only)."""
    points = np.asarray(draws, dtype=float)
    return np.stack([p.evaluate_many(points) for p in polys], axis=1)


def written_roots(case: Case, draws: np.ndarray) -> np.ndarray:
    """(N, n) roots of the polynomial as written (in z for discrete time) at each draw."""
    return polynomial_roots(float_rows(case.family.written, draws))


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


def _frequency_powers(case: Case, frequencies: np.ndarray, degree: int) -> np.ndarray:
    """(F, n + 1): the factor multiplying each coefficient (highest power first) when a
    polynomial of the loop is evaluated on the stability boundary (see the module note)."""
    frequencies = np.asarray(frequencies, dtype=float)
    powers = np.arange(degree, -1, -1)
    if not case.family.discrete:
        return (1j * frequencies[:, None]) ** powers[None, :]
    theta = frequencies * (to_float(case.sample_time) if case.sample_time is not None else 1.0)
    half = theta[:, None] / 2
    return (1j * np.sin(half)) ** powers[None, :] * np.cos(half) ** (degree - powers)[None, :]


def loop_values(case: Case, points: np.ndarray, frequencies: Sequence[float] | np.ndarray) -> np.ndarray:
    """(N, F) complex loop L = N / D at each parameter point (rows) and frequency.

    Frequencies are omega in rad/s for a case in s; for a case in z they are omega in rad/s
    when the case gives a sample time T (theta = omega T), else theta in rad/sample.
    Floats, for pictures only; NaN where D vanishes.
    """
    den, num = case.family.loop
    factors = _frequency_powers(case, np.asarray(frequencies, dtype=float), len(den) - 1)
    d = float_rows(den, points) @ factors.T
    n = float_rows(num, points) @ factors.T
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(d != 0, n / np.where(d != 0, d, 1), np.nan)


def loop_frequencies(case: Case, count: int = 600) -> np.ndarray:
    """A logarithmic frequency grid around the nominal loop's poles, zeros and closed-loop
    roots: 1/30 of the smallest to 30 times the largest magnitude (for z: up to theta = pi)."""
    family = case.family
    point = np.array([[to_float(v) for v in family.nominal]])
    roots = [polynomial_roots(float_rows(part, point))[0] for part in family.loop]
    roots.append(nominal_roots(case))
    sizes = np.abs(np.concatenate(roots))
    sizes = sizes[np.isfinite(sizes) & (sizes > 0)]
    low, high = (float(sizes.min()), float(sizes.max())) if len(sizes) else (1.0, 1.0)
    if not family.discrete:
        return np.geomspace(low / 30, high * 30, count)
    # a Hurwitz-form root w sits at theta = 2 atan|w| on the circle's frequency axis
    scale = 1 / to_float(case.sample_time) if case.sample_time is not None else 1.0
    low_theta = min(2 * float(np.arctan(low)) / 30, np.pi / 100)
    return np.geomspace(low_theta, np.pi, count) * scale


def phase_degrees(values: np.ndarray) -> np.ndarray:
    """Unwrapped phase in degrees along the last axis (frequency), each curve shifted by a
    multiple of 360 so that it starts in (-270, 90]."""
    phase = np.degrees(np.unwrap(np.angle(values), axis=-1))
    start = phase[..., :1]
    return phase - 360 * np.ceil((start - 90) / 360)


def crossings(case: Case, point: np.ndarray, frequencies: np.ndarray, kind: str
              ) -> list[tuple[float, complex]]:
    """Where one member's loop crosses |L| = 1 (``kind`` "gain") or the negative real axis
    (``kind`` "phase"): (frequency, L there), found on the grid and refined by bisection
    in log frequency. Floats, for pictures only."""
    def measure(values: np.ndarray) -> np.ndarray:
        if kind == "gain":
            return np.log(np.abs(values))
        return np.where(values.real < 0, values.imag, np.nan)

    def at(f: float) -> complex:
        return complex(loop_values(case, point[None, :], [f])[0, 0])

    values = loop_values(case, point[None, :], frequencies)[0]
    g = measure(values)
    out = []
    for i in np.nonzero(g[:-1] * g[1:] < 0)[0]:
        low, high = float(frequencies[i]), float(frequencies[i + 1])
        side = np.sign(g[i])
        for _ in range(60):
            mid = math.sqrt(low * high)
            value = measure(np.array([at(mid)]))[0]
            if not np.isfinite(value):
                break
            if np.sign(value) == side:
                low = mid
            else:
                high = mid
        f = math.sqrt(low * high)
        out.append((f, at(f)))
    return out


@dataclass(frozen=True, slots=True)
class LoopMark:
    """The limiting member of a gain or phase margin where its loop meets the critical
    point: at its gain crossover (phase margin) or its phase crossover (gain margin)."""

    measure: str  # the criterion's name
    kind: str  # "gain" (|L| = 1) or "phase" (L real negative)
    frequency: float
    value: complex  # L there
    point: np.ndarray  # the member's parameters

    @property
    def magnitude_db(self) -> float:
        return 20 * math.log10(abs(self.value))


def loop_mark(case: Case, measure: str, limited_by: dict[str, Fraction], frequencies: np.ndarray
              ) -> LoopMark | None:
    """Where the member that limits a gain or phase margin (its witness: the parameter point
    and the extra gain k or phase lag) meets the critical point: of its phase crossovers the
    one where k |L| is nearest 1, of its gain crossovers the one whose phase lead over -180
    degrees is nearest the lag. None when no crossover lies on the grid."""
    names = case.family.names
    point = np.array([to_float(limited_by[n]) for n in names])
    if PHASE_LAG in limited_by:
        kind = "gain"
        lag = math.degrees(2 * math.atan(math.sqrt(to_float(limited_by[PHASE_LAG]))))

        def distance(value: complex) -> float:
            return abs((math.degrees(np.angle(value)) + 180) % 360 - lag)
    elif LOOP_GAIN in limited_by:
        kind = "phase"
        gain = to_float(limited_by[LOOP_GAIN])

        def distance(value: complex) -> float:
            return abs(math.log(abs(value) * gain))
    else:
        return None
    found = crossings(case, point, frequencies, kind)
    if not found:
        return None
    f, value = min(found, key=lambda item: distance(item[1]))
    return LoopMark(measure, kind, f, value, point)
