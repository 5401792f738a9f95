"""Benchmark of the exact Routh engine against a plain Fraction loop and sympy's exact counting.

Run with ``python benchmarks/bench_routh.py`` (about two to three minutes on two cores).

Two families per degree (10, 50, 100, 200):

* random: integer coefficients of 10 digits with random signs (almost never Hurwitz, so the
  fast Hurwitz test usually stops at once; the full table still runs to the end);
* stable: products of factors (s + k) and (s^2 + a s + b) with random positive integers,
  Hurwitz by construction, so every method works through the whole array.

Timed, median of several repeats:

* ``robust.routh_table``: the table with its counts; the exact rows are materialised lazily
  for display, so ``.rows`` is timed separately;
* ``robust.is_hurwitz``: the fast exact yes/no test;
* a plain ``fractions.Fraction`` Routh loop written here (no special-case handling);
* sympy's exact complex root counting (Meurer et al., "SymPy: symbolic computing in Python",
  PeerJ Comput. Sci., 2017): per square-free factor, a check that no root pair r, -r exists
  (gcd with p(-s)), then ``Poly.count_roots`` over the rectangle 0 <= Re <= R, |Im| <= R with R
  above the Cauchy bound. It runs in a child process with a time budget; when it does not
  finish, the ratio is printed as a lower bound.
"""

from __future__ import annotations

import itertools
import multiprocessing as mp
import random
import statistics
import sys
import time
from fractions import Fraction

import sympy as sp

import robust

DEGREES = (10, 50, 100, 200)
REPEATS = {10: 21, 50: 7, 100: 5, 200: 3}
SYMPY_BUDGET = 45.0  # seconds per sympy call
SYMPY_DEGREES = (10, 50, 100)
TARGET_LOOP, TARGET_SYMPY = 10, 1000  # at degree 100: at least this many times faster
S = sp.Symbol("s")


# -- the inputs ----------------------------------------------------------------------------------


def random_polynomial(degree: int, rng: random.Random) -> list[int]:
    return [rng.choice((-1, 1)) * rng.randint(10**9, 10**10 - 1) for _ in range(degree + 1)]


def stable_polynomial(degree: int, rng: random.Random) -> list[int]:
    """Product of (s + k) and (s^2 + a s + b), all positive: Hurwitz by construction."""
    poly = [1]
    while len(poly) - 1 < degree:
        if degree - (len(poly) - 1) >= 2 and rng.random() < 0.5:
            factor = [1, rng.randint(1, 9), rng.randint(1, 9)]
        else:
            factor = [1, rng.randint(1, 9)]
        out = [0] * (len(poly) + len(factor) - 1)
        for i, x in enumerate(poly):
            for j, y in enumerate(factor):
                out[i + j] += x * y
        poly = out
    return poly


# -- the competitors -----------------------------------------------------------------------------


def plain_fraction_routh(coefficients: list[int]) -> int:
    """Textbook Routh recurrence on Fractions; returns the first column's sign changes."""
    c = [Fraction(x) for x in coefficients]
    n = len(c) - 1
    width = n // 2 + 1
    zero = Fraction(0)
    rows = [c[0::2] + [zero] * (width - len(c[0::2])), c[1::2] + [zero] * (width - len(c[1::2]))]
    for _ in range(2, n + 1):
        a, b = rows[-2], rows[-1]
        rows.append([(b[0] * a[j + 1] - a[0] * b[j + 1]) / b[0] for j in range(width - 1)] + [zero])
    first = [row[0] for row in rows[: n + 1]]
    return sum(1 for x, y in itertools.pairwise(first) if (x > 0) != (y > 0))


def sympy_right_count(coefficients: list[int]) -> int:
    """Exact number of roots with Re > 0 by sympy's complex root counting."""
    poly = sp.Poly(coefficients, S, domain=sp.QQ)
    mirror = sp.Poly(-S, S, domain=sp.QQ)
    right = 0
    for factor, multiplicity in poly.sqf_list()[1]:
        if factor.degree() <= 0:
            continue
        if sp.gcd(factor, factor.compose(mirror)).degree() > 0:
            raise ValueError("roots symmetric about the origin: the rectangle count is not exact")
        coeffs = factor.all_coeffs()
        bound = sp.Integer(int(1 + max(abs(c) for c in coeffs[1:]) / abs(coeffs[0])) + 1)
        right += multiplicity * factor.count_roots(-bound * sp.I, bound + bound * sp.I)
    return right


def _timed_child(func, argument, queue) -> None:
    start = time.perf_counter()
    result = func(argument)
    queue.put((result, time.perf_counter() - start))


def run_in_child(func, argument, budget: float) -> tuple[object, float | None]:
    """(func(argument), seconds) from a child process, or (None, None) when it does not
    finish within ``budget`` seconds (the child is then stopped)."""
    context = mp.get_context("fork")
    queue = context.Queue()
    child = context.Process(target=_timed_child, args=(func, argument, queue))
    child.start()
    child.join(budget)
    if child.is_alive():
        child.terminate()
        child.join()
        return None, None
    return queue.get()


def time_sympy(coefficients: list[int], budget: float) -> tuple[int | None, float | None]:
    """(count, seconds) or (None, None) when sympy does not finish within the budget."""
    return run_in_child(sympy_right_count, coefficients, budget)  # type: ignore[return-value]


def median_time(func, argument, repeats: int) -> tuple[float, object]:
    """Median seconds over ``repeats`` calls, and the last call's result."""
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = func(argument)
        times.append(time.perf_counter() - start)
    return statistics.median(times), result


# -- the run ---------------------------------------------------------------------------------------


def fmt(seconds: float | None) -> str:
    if seconds is None:
        return "-"
    if seconds < 1e-3:
        return f"{seconds * 1e6:.0f} us"
    if seconds < 1:
        return f"{seconds * 1e3:.1f} ms"
    return f"{seconds:.2f} s"


def main() -> int:
    rng = random.Random(20240611)
    print(f"robust {robust.__version__}, sympy {sp.__version__}, Python {sys.version.split()[0]}")
    print(f"median of {dict(REPEATS)} repeats per degree; sympy: one run, budget "
          f"{SYMPY_BUDGET:.0f} s per call\n")
    header = (f"{'family':7} {'deg':>4} {'routh_table':>12} {'.rows':>10} {'is_hurwitz':>11} "
              f"{'Fraction':>10} {'sympy':>20} {'Fraction/ours':>14} {'sympy/ours':>12}")
    print(header)
    print("-" * len(header))
    summary = {}
    sympy_gave_up = {"random": False, "stable": False}
    for degree in DEGREES:
        for family, build in (("random", random_polynomial), ("stable", stable_polynomial)):
            coefficients = build(degree, rng)
            repeats = REPEATS[degree]
            ours, table = median_time(robust.routh_table, coefficients, repeats)
            rows, _ = median_time(lambda t: t.rows, table, repeats)  # lazy: built on each access
            hurwitz, verdict = median_time(robust.is_hurwitz, coefficients, repeats)
            loop, changes = median_time(plain_fraction_routh, coefficients, max(1, repeats // 2))
            assert changes == table.roots.open_right
            assert verdict == table.is_hurwitz
            if family == "stable":
                assert table.is_hurwitz
            sympy_text, sympy_ratio = "skipped (> budget)", "-"
            if degree in SYMPY_DEGREES and not sympy_gave_up[family]:
                count, seconds = time_sympy(coefficients, SYMPY_BUDGET)
                if seconds is None:
                    sympy_gave_up[family] = True
                    sympy_ratio = f"> {SYMPY_BUDGET / ours:.0f}x"
                    summary[(family, degree, "sympy")] = SYMPY_BUDGET / ours
                else:
                    assert count == table.roots.open_right, (count, table.roots)
                    sympy_text = fmt(seconds) + " (agrees)"
                    sympy_ratio = f"{seconds / ours:.0f}x"
                    summary[(family, degree, "sympy")] = seconds / ours
            summary[(family, degree, "loop")] = loop / ours
            print(f"{family:7} {degree:>4} {fmt(ours):>12} {fmt(rows):>10} "
                  f"{fmt(hurwitz):>11} {fmt(loop):>10} {sympy_text:>20} "
                  f"{loop / ours:>13.1f}x {sympy_ratio:>12}", flush=True)
    print()
    print(f"targets at degree 100: routh_table >= {TARGET_LOOP}x faster than the Fraction loop, "
          f">= {TARGET_SYMPY}x faster than sympy's exact counting")
    for family in ("random", "stable"):
        loop_ratio = summary[(family, 100, "loop")]
        sympy_ratio = summary.get((family, 100, "sympy"))
        lower = " (lower bound: sympy hit the budget)" if sympy_gave_up[family] else ""
        print(f"  {family}: Fraction loop {loop_ratio:.1f}x "
              f"[{'met' if loop_ratio >= TARGET_LOOP else 'NOT met'}], "
              f"sympy {sympy_ratio:.0f}x{lower} "
              f"[{'met' if sympy_ratio >= TARGET_SYMPY else 'NOT met'}]")
    return 0


if __name__ == "__main__":
    sys.exit(main())
