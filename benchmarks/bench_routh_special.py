"""Benchmark of the Routh array's special-case path on sparse, even and symmetric polynomials.

Run with ``python benchmarks/bench_routh_special.py`` (one to three minutes on two cores).

Every polynomial below meets a zero row or a zero leading entry (the ε rule) at degree 200:
sparse (s^200 + 1, s^200 - 1, s^200 + s^100 + 1), even ((s^2 + 1)^100, (s^4 + 1)^50),
palindromic (1 + s + ... + s^200) and a product with stable factors ((s + 1)^100 (s^100 + 1)).

Timed, median of a few repeats, in this process:

* ``robust.routh_table``: the table and the counts;
* the same followed by the terminal rendering and the JSON form (what ``robust routh`` does
  after start-up);

and, as the reference measured in the same run, sympy's exact root counting (Meurer et al.,
"SymPy: symbolic computing in Python", PeerJ Comput. Sci., 2017): per square-free factor, the
pair factor gcd(f(s), f(-s)) counted through its even part's negative real roots, the rest by
``Poly.count_roots`` over a rectangle around the right half-plane. It runs in a child process
with a time budget; when it does not finish, the ratio is printed as a lower bound. The counts
of both are compared when sympy finishes.

Target: every polynomial well under a second in ``routh_table`` + rendering (it took from
8 s to more than 15 minutes before the special-case path was reworked).
"""

from __future__ import annotations

import sys
from pathlib import Path

import sympy as sp

ROOT = Path(__file__).resolve().parents[1]
sys.path[:0] = [str(ROOT), str(ROOT / "tests")]  # this checkout's robust, and the test reference

from bench_routh import median_time, run_in_child  # noqa: E402
from reference import isolated_counts  # noqa: E402

import robust  # noqa: E402
from robust.render.text import render_table  # noqa: E402

S = sp.Symbol("s")
REPEATS = 3
SYMPY_BUDGET = 60.0  # seconds per sympy call
TARGET_SECONDS = 1.0


def coefficients(expr) -> list[int]:
    return [int(c) for c in sp.Poly(sp.expand(expr), S).all_coeffs()]


CASES = {
    "s^200 + 1": [1] + [0] * 199 + [1],
    "s^200 - 1": [1] + [0] * 199 + [-1],
    "s^200 + s^100 + 1": [1] + [0] * 99 + [1] + [0] * 99 + [1],
    "1 + s + ... + s^200": [1] * 201,
    "(s^2 + 1)^100": coefficients((S**2 + 1) ** 100),
    "(s^4 + 1)^50": coefficients((S**4 + 1) ** 50),
    "(s + 1)^100 (s^100 + 1)": coefficients((S + 1) ** 100 * (S**100 + 1)),
}


def shown(c: list[int]) -> robust.RouthTable:
    table = robust.routh_table(c)
    render_table(table)
    table.as_dict()
    return table


def main() -> int:
    print(f"robust {robust.__version__}, sympy {sp.__version__}, Python {sys.version.split()[0]}")
    print(f"ours: median of {REPEATS}; sympy: one run, budget {SYMPY_BUDGET:.0f} s\n")
    header = (f"{'polynomial':26} {'routh_table':>12} {'+ text, JSON':>13} {'rows cut':>9} "
              f"{'sympy':>22} {'sympy/routh_table':>18}")
    print(header)
    print("-" * len(header))
    worst = 0.0
    for name, c in CASES.items():
        table_seconds, table = median_time(robust.routh_table, c, REPEATS)
        total, _ = median_time(shown, c, REPEATS)
        worst = max(worst, total)
        counts, seconds = run_in_child(isolated_counts, c, SYMPY_BUDGET)
        got = (table.roots.open_right, table.roots.imaginary_axis, table.roots.open_left)
        if seconds is None:
            sympy_text, ratio = f"> {SYMPY_BUDGET:.0f} s", f"> {SYMPY_BUDGET / table_seconds:.0f}x"
        else:
            assert counts == got, (name, counts, got)
            sympy_text, ratio = f"{seconds:.3f} s (agrees)", f"{seconds / table_seconds:.2f}x"
        print(f"{name:26} {table_seconds:11.3f}s {total:12.3f}s {table.omitted_rows:9} "
              f"{sympy_text:>22} {ratio:>18}", flush=True)
    print()
    print(f"target: every polynomial under {TARGET_SECONDS} s; worst {worst:.3f} s "
          f"[{'met' if worst < TARGET_SECONDS else 'NOT met'}]")
    return 0


if __name__ == "__main__":
    sys.exit(main())
