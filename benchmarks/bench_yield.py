"""Benchmark: Monte Carlo yield of a degree-8 family with 6 parameters, N = 10^6 draws.

Run with ``python benchmarks/bench_yield.py [N]``. Prints tables; not a test.

The vectorised yield (draws, float coefficients, float Routh screen, exact re-checks) is timed
against a plain Python loop calling numpy.roots on each draw's coefficient row, measured in
the same run on a subset of 20000 draws. The loop is given the float coefficient rows for
free (only root finding is timed), which favours it. Targets: at least 50x the loop and at
least 1e5 draws per second. A stage breakdown (one 100000-draw chunk) shows where the time
goes; when a target is missed, a cProfile listing follows.
"""

from __future__ import annotations

import cProfile
import io
import pstats
import sys
import time

import numpy as np

from robust.analysis.montecarlo import draw_parameters, estimate_yield, float_routh_screen
from robust.model.case import parse_case

TARGET_RATIO = 50.0
TARGET_RATE = 1e5
LOOP_DRAWS = 20_000

# Our own loop: two lags, two lightly damped resonances, a fixed pair and a gain K acting
# through (s + 1)^2; about 82 % of builds are stable.
CASE = """title = "degree-8 loop, 6 parameters"
[parameters.p1]
nominal = 1
tolerance = "20%"
[parameters.p2]
nominal = 2
tolerance = "20%"
[parameters.p3]
nominal = 0.8
tolerance = "30%"
[parameters.p4]
nominal = 4
tolerance = "10%"
[parameters.p5]
nominal = 0.6
tolerance = "30%"
[parameters.K]
nominal = 20
tolerance = "50%"
[polynomial]
expression = "(s + p1)*(s + p2)*(s^2 + p3*s + p4)*(s^2 + p5*s + 9)*(s^2 + s + 2) + K*(s + 1)^2"
"""


def _loop_rate(case, n: int, seed: int) -> tuple[float, float, int]:
    """Draws per second of a numpy.roots loop, its stable fraction, and how many of its
    verdicts differ from the float screen on the same rows."""
    draws = draw_parameters(case, n, np.random.default_rng(seed))
    rows = case.family.coefficients_float(draws)
    started = time.perf_counter()
    stable = np.empty(n, dtype=bool)
    for i, row in enumerate(rows):
        stable[i] = np.roots(row).real.max() < 0
    seconds = time.perf_counter() - started
    screen, _ = float_routh_screen(rows)
    return n / seconds, float(stable.mean()), int(np.sum(screen != stable))


def _stages(case, n: int = 100_000) -> list[tuple[str, float]]:
    rng = np.random.default_rng(1)
    out = []
    t = time.perf_counter()
    draws = draw_parameters(case, n, rng)
    out.append(("draw parameters", time.perf_counter() - t))
    t = time.perf_counter()
    rows = case.family.coefficients_float(draws)
    out.append(("float coefficients (coefficients_float)", time.perf_counter() - t))
    t = time.perf_counter()
    _, clear = float_routh_screen(rows)
    out.append(("float Routh screen", time.perf_counter() - t))
    out.append((f"rows left for exact re-check (default safety): {int((~clear).sum())}", 0.0))
    for safety in (1e6, 1e11):
        _, clear = float_routh_screen(rows, safety=safety)
        out.append((f"  ... with safety = {safety:g}: {int((~clear).sum())}", 0.0))
    return out


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    case = parse_case(CASE)
    print(f"family: degree {case.family.degree}, {len(case.family.names)} parameters, "
          f"{case.family.structure}, {sum(len(c.terms) for c in case.family.coefficients)} monomials")
    result = estimate_yield(case, n=n, seed=0)
    rate = result.draws / result.seconds
    loop_rate, loop_yield, differ = _loop_rate(case, LOOP_DRAWS, seed=0)
    ratio = rate / loop_rate
    lo, hi = result.interval
    print(f"\n{'method':<34} {'draws':>9} {'seconds':>9} {'draws/s':>11} {'yield':>8}")
    print(f"{'estimate_yield (vectorised)':<34} {result.draws:>9} {result.seconds:9.2f} {rate:11.4g} "
          f"{result.fraction:8.4f}")
    print(f"{'Python loop over numpy.roots':<34} {LOOP_DRAWS:>9} {LOOP_DRAWS / loop_rate:9.2f} "
          f"{loop_rate:11.4g} {loop_yield:8.4f}")
    print(f"\n95 % Clopper-Pearson interval: {lo:.5f} .. {hi:.5f}; exact re-checks: {result.exact_rechecks}; "
          f"screen vs numpy.roots disagreements on the loop subset: {differ}")
    print(f"ratio vectorised / loop: {ratio:.1f}x (target >= {TARGET_RATIO:g}x): "
          f"{'met' if ratio >= TARGET_RATIO else 'MISSED'}")
    verdict = "met" if rate >= TARGET_RATE else "MISSED"
    print(f"draws per second: {rate:.4g} (target >= {TARGET_RATE:g}): {verdict}")
    print("\nstage breakdown (one 100000-draw chunk):")
    for label, seconds in _stages(case):
        print(f"  {label:<44} {seconds:8.3f} s" if seconds else f"  {label}")
    if ratio < TARGET_RATIO or rate < TARGET_RATE:
        print("\na target was missed; profile of estimate_yield on 200000 draws (cumulative):")
        profile = cProfile.Profile()
        profile.enable()
        estimate_yield(case, n=200_000, seed=0)
        profile.disable()
        text = io.StringIO()
        pstats.Stats(profile, stream=text).sort_stats("cumulative").print_stats(12)
        print(text.getvalue())


if __name__ == "__main__":
    main()
