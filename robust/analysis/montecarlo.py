"""Monte Carlo yield: the fraction of builds that are stable when parts are drawn at random.

A complement to the worst case, never a replacement for it. Parameters are drawn (seeded)
uniformly over their range, or normally about nominal with the tolerance as 3 sigma and
clipped to the range. The whole batch is screened with a vectorised floating-point Routh
recurrence; members whose float decision is not clear-cut (a first-column entry within a
safety factor of the rounding error) are re-decided exactly at the drawn point (a float is
an exact rational). The stable fraction comes with a Clopper-Pearson interval (Clopper &
Pearson, "The use of confidence or fiducial limits illustrated in the case of the
binomial", Biometrika 26, 1934).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

import numpy as np
from scipy import stats

from ..exact.routh import is_hurwitz

__all__ = ["YieldResult", "draw_parameters", "estimate_yield", "float_routh_screen"]

_CHUNK = 100_000


@dataclass(frozen=True, slots=True)
class YieldResult:
    """Stable fraction of N seeded draws with a confidence interval."""

    draws: int
    stable: int
    seed: int
    confidence: float
    interval: tuple[float, float]
    exact_rechecks: int
    unstable_ranges: tuple[tuple[str, float, float], ...]
    seconds: float

    @property
    def fraction(self) -> float:
        """stable / draws."""
        return self.stable / self.draws if self.draws else 0.0

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        return {
            "draws": self.draws,
            "stable": self.stable,
            "unstable": self.draws - self.stable,
            "yield": self.fraction,
            "confidence": self.confidence,
            "interval": list(self.interval),
            "seed": self.seed,
            "exact_rechecks": self.exact_rechecks,
            "unstable_ranges": {n: [lo, hi] for n, lo, hi in self.unstable_ranges},
            "seconds": round(self.seconds, 3),
        }


def draw_parameters(case, n: int, rng: np.random.Generator) -> np.ndarray:
    """(n, k) parameter draws per the case's distributions, inside the box."""
    family = case.family
    columns = []
    for p in (case.parameter(name) for name in family.names):
        lo, hi, nom = float(p.low), float(p.high), float(p.nominal)
        if p.distribution == "normal" and hi > lo:
            sigma = max(hi - nom, nom - lo) / 3.0
            columns.append(np.clip(rng.normal(nom, sigma, n), lo, hi))
        else:
            columns.append(rng.uniform(lo, hi, n) if hi > lo else np.full(n, lo))
    return np.stack(columns, axis=1)


def float_routh_screen(coefficients: np.ndarray, safety: float = 1e6) -> tuple[np.ndarray, np.ndarray]:
    """Vectorised float Routh test of each row (highest power first).

    Returns (stable, clear): ``clear`` is False where some first-column entry is too small
    relative to the magnitudes that produced it for its sign to be trusted; those rows must
    be re-decided exactly.
    """
    c = np.array(coefficients, dtype=float)
    count, width = c.shape
    n = width - 1
    sign = np.sign(c[:, :1])
    sign[sign == 0] = 1
    c = c * sign
    stable = np.all(c > 0, axis=1)
    # balance the coefficients: s = w z with w = (a_0 / a_n)^(1/n) scales the roots by 1/w
    # and keeps the signs of their real parts; then normalise each row
    with np.errstate(all="ignore"):
        logs = np.log(np.abs(np.where(c == 0, 1.0, c)))
        w = (logs[:, -1] - logs[:, 0]) / max(n, 1)
        w[~np.isfinite(w)] = 0.0
        powers = np.arange(n, -1, -1)[None, :]  # the power of s in each column
        logs = logs + w[:, None] * powers
        c = np.where(c == 0, 0.0, np.sign(c) * np.exp(logs - np.max(logs, axis=1, keepdims=True)))
    eps = np.finfo(float).eps * safety
    clear = np.ones(count, dtype=bool)
    if n <= 2:
        return stable, clear
    cols = n // 2 + 1
    a = np.zeros((count, cols))
    b = np.zeros((count, cols))
    a[:, : len(range(0, width, 2))] = c[:, 0::2]
    b[:, : len(range(1, width, 2))] = c[:, 1::2]
    a_mag, b_mag = np.abs(a), np.abs(b)
    with np.errstate(all="ignore"):
        for _ in range(2, n + 1):
            b0 = b[:, :1]
            new = np.zeros_like(a)
            new[:, :-1] = (b0 * a[:, 1:] - a[:, :1] * b[:, 1:]) / b0
            mag = np.zeros_like(a)
            # first-order error bound of a1 - a0 b1 / b0: the errors of a1, a0, b1 and of the
            # divisor b0 (a small b0 from an earlier cancellation magnifies the last two)
            ratio = np.abs(b[:, 1:] / b0)
            mag[:, :-1] = 2 * a_mag[:, 1:] + ratio * a_mag[:, :1] \
                + np.abs(a[:, :1] / b0) * (b_mag[:, 1:] + ratio * b_mag[:, :1])
            lead = new[:, 0]
            ok = np.isfinite(lead)
            uncertain = ~ok | (np.abs(lead) <= eps * np.maximum(mag[:, 0], 1e-300))
            clear &= ~(uncertain & stable)
            stable &= ok & (lead > 0)
            a, b = b, new
            a_mag, b_mag = b_mag, mag
    return stable, clear


def estimate_yield(case, n: int = 100_000, seed: int = 0, confidence: float = 0.95,
                   progress: Callable[[int, int], None] | None = None) -> YieldResult:
    """Estimate the stable fraction of ``n`` random builds (seeded).

    Examples
    --------
    >>> import robust
    >>> y = robust.estimate_yield(robust.load_case("cases/thermal_pi_affine.toml"), n=2000, seed=1)
    >>> y.fraction
    1.0
    """
    started = time.perf_counter()
    rng = np.random.default_rng(seed)
    family = case.family
    stable_total = 0
    rechecks = 0
    k = len(family.names)
    lo_unstable = np.full(k, np.inf)
    hi_unstable = np.full(k, -np.inf)
    done = 0
    while done < n:
        size = min(_CHUNK, n - done)
        draws = draw_parameters(case, size, rng)
        coeffs = family.coefficients_float(draws)
        stable, clear = float_routh_screen(coeffs)
        for idx in np.flatnonzero(~clear):
            rechecks += 1
            point = [Fraction(float(x)) for x in draws[idx]]
            stable[idx] = is_hurwitz(family.coefficients_at(point))
        stable_total += int(stable.sum())
        bad = draws[~stable]
        if len(bad):
            lo_unstable = np.minimum(lo_unstable, bad.min(axis=0))
            hi_unstable = np.maximum(hi_unstable, bad.max(axis=0))
        done += size
        if progress is not None:
            progress(done, n)
    test = stats.binomtest(stable_total, n)
    ci = test.proportion_ci(confidence_level=confidence, method="exact")
    ranges = tuple((name, float(lo_unstable[i]), float(hi_unstable[i]))
                   for i, name in enumerate(family.names) if np.isfinite(lo_unstable[i]))
    return YieldResult(n, stable_total, seed, confidence, (float(ci.low), float(ci.high)), rechecks,
                       ranges, time.perf_counter() - started)
