"""The exact (Clopper-Pearson) confidence interval of a binomial proportion, without scipy.

Clopper and Pearson, "The use of confidence or fiducial limits illustrated in the case of
the binomial", Biometrika 26, 1934: with x successes in n trials the interval at level 1 - a
is [B(a/2; x, n - x + 1), B(1 - a/2; x + 1, n - x)], B(q; p1, p2) the q-quantile of the beta
distribution (0 when x = 0, 1 when x = n). The regularized incomplete beta function is the
continued fraction of Press, Teukolsky, Vetterling and Flannery, "Numerical Recipes", 2nd
ed., 1992, section 6.4 (modified Lentz evaluation), and the quantile a bisection on it:
what the yield needs, for the cost of the standard library instead of scipy.stats.
"""

from __future__ import annotations

import math

__all__ = ["clopper_pearson", "regularized_beta"]

_TINY = 1e-300


def _continued_fraction(a: float, b: float, x: float) -> float:
    """The continued fraction of I_x(a, b) (Numerical Recipes' betacf), to double precision."""
    qab, qap, qam = a + b, a + 1.0, a - 1.0
    c, d = 1.0, 1.0 - qab * x / qap
    d = 1.0 / (d if abs(d) > _TINY else _TINY)
    h = d
    for m in range(1, 100_000):
        m2 = 2 * m
        for numerator in (m * (b - m) * x / ((qam + m2) * (a + m2)),
                          -(a + m) * (qab + m) * x / ((a + m2) * (qap + m2))):
            d = 1.0 + numerator * d
            d = 1.0 / (d if abs(d) > _TINY else _TINY)
            c = 1.0 + numerator / c
            c = c if abs(c) > _TINY else _TINY
            h *= d * c
        if abs(d * c - 1.0) < 1e-16:
            break
    return h


def regularized_beta(a: float, b: float, x: float) -> float:
    """I_x(a, b), the beta distribution's cumulative probability at x (a, b > 0).

    Examples
    --------
    >>> round(regularized_beta(2.0, 3.0, 0.5), 12)  # 11/16 by the binomial sum
    0.6875
    """
    if x <= 0.0:
        return 0.0
    if x >= 1.0:
        return 1.0
    log_front = (math.lgamma(a + b) - math.lgamma(a) - math.lgamma(b)
                 + a * math.log(x) + b * math.log1p(-x))
    # the fraction converges fast for x below the mean's neighbourhood; use symmetry above it
    if x < (a + 1.0) / (a + b + 2.0):
        return math.exp(log_front) * _continued_fraction(a, b, x) / a
    return 1.0 - math.exp(log_front) * _continued_fraction(b, a, 1.0 - x) / b


def _beta_quantile(q: float, a: float, b: float) -> float:
    """The x with I_x(a, b) = q, by bisection to the last bit."""
    low, high = 0.0, 1.0
    for _ in range(200):
        mid = (low + high) / 2
        if mid in (low, high):
            break
        if regularized_beta(a, b, mid) < q:
            low = mid
        else:
            high = mid
    return (low + high) / 2


def clopper_pearson(successes: int, trials: int, confidence: float = 0.95) -> tuple[float, float]:
    """The exact two-sided interval of the proportion successes / trials.

    Examples
    --------
    >>> low, high = clopper_pearson(0, 10)
    >>> low, round(high, 6)  # 1 - 0.025^(1/10), the closed form for no successes
    (0.0, 0.308497)
    """
    alpha = 1.0 - confidence
    low = 0.0 if successes == 0 else _beta_quantile(alpha / 2, successes, trials - successes + 1)
    high = 1.0 if successes == trials else _beta_quantile(1 - alpha / 2, successes + 1, trials - successes)
    return low, high
