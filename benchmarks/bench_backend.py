"""Benchmark: exact number backends on the three hot spots, in the same run.

Run with ``python benchmarks/bench_backend.py``. Prints tables; not a test.

The same Python code runs with each backend's integers/rationals, so the table compares the
arithmetic, not the algorithms:

1. the fraction-free Routh recurrence (random integer polynomials of degree 30 and 120):
   GMP integers (gmpy2 ``mpz``, what :mod:`robust.exact.routh` uses), FLINT integers
   (python-flint ``fmpz``) and Python ``int``;
2. the margin crossings of the degree-10 interval family of ``bench_margin.py`` (the least
   positive root of each of its 23 crossing polynomials, to a relative width of 1e-20):
   ours (Sturm counts and bisection on GMP rationals, :mod:`robust.exact.realroots`), sympy's
   ``Poly.intervals`` + ``refine_root`` (what was used before), and FLINT's certified complex
   root isolation (``fmpz_poly.complex_roots``, real roots only; it gives balls, not the
   exact rational bracket, so its time is a lower bound for a FLINT path);
3. Horner evaluation of the degree-8 family of ``bench_yield.py`` at exact rational points
   (the subdivision's kind of work): ``mpq`` against ``fmpq`` and ``Fraction``.

python-flint is optional here: without it the FLINT columns read "not installed". Installing
it changes sympy's own ground types (sympy then uses FLINT inside), so measure it in a
separate environment (``python -m venv --system-site-packages``) rather than beside a
working checkout.
"""

from __future__ import annotations

import random
import statistics
import sys
import time
from fractions import Fraction
from itertools import pairwise
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import gmpy2

try:
    import flint
except ImportError:  # optional
    flint = None


def _median_time(func, repeats: int = 5) -> float:
    times = []
    for _ in range(repeats):
        started = time.perf_counter()
        func()
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def _routh_fraction_free(coefficients: list) -> int:
    """Sign changes of the first column, by the fraction-free recurrence (no special cases)."""
    a, b = coefficients[0::2], coefficients[1::2]
    zero = coefficients[0] - coefficients[0]
    first = [a[0], b[0]]
    previous = None
    while len(b) and b[0] != 0:
        width = max(len(a), len(b))
        a = a + [zero] * (width - len(a))
        b = b + [zero] * (width - len(b))
        row = [b[0] * a[k + 1] - a[0] * b[k + 1] for k in range(width - 1)]
        if previous is not None and previous != 0:
            row = [x // previous for x in row]  # exact: the fraction-free (Bareiss-like) step
        previous = b[0]
        a, b = b, row
        if not row:
            break
        first.append(row[0])
    signs = [x > 0 for x in first if x != 0]
    return sum(1 for p, q in pairwise(signs) if p != q)


def bench_routh() -> None:
    print("1. fraction-free Routh recurrence (median of 5)")
    print(f"   {'degree':>6} {'gmpy2 mpz':>12} {'flint fmpz':>12} {'python int':>12}")
    rng = random.Random(1)
    for degree in (30, 120):
        poly = [rng.randint(1, 10**6) for _ in range(degree + 1)]
        row = []
        for kind in ("mpz", "fmpz", "int"):
            if kind == "fmpz" and flint is None:
                row.append("not installed")
                continue
            convert = {"mpz": gmpy2.mpz, "fmpz": (flint.fmpz if flint else int), "int": int}[kind]
            values = [convert(c) for c in poly]
            row.append(f"{_median_time(lambda values=values: _routh_fraction_free(values)):.4f} s")
        print(f"   {degree:>6} " + " ".join(f"{x:>12}" for x in row))


def _crossing_polynomials():
    from bench_margin import _interval_case

    from robust.analysis import crossings
    from robust.model.case import parse_case

    captured = []
    original = crossings.first_positive_root

    def spy(polys, cap):
        captured.append((list(polys), cap))
        return original(polys, cap)

    crossings.first_positive_root = spy
    try:
        crossings.exact_interval_margin(parse_case(_interval_case()).family, Fraction(100))
    finally:
        crossings.first_positive_root = original
    return captured[0]


def _sympy_least_root(polys, cap) -> None:
    import sympy as sp

    sup = sp.Rational(cap.numerator, cap.denominator)
    for poly in polys:
        if poly.is_zero or poly.degree() <= 0:
            continue
        square_free = poly.sqf_part()
        for (lo, hi), _ in square_free.intervals(inf=0, sup=sup):
            if hi > 0 and lo != hi:
                square_free.refine_root(lo, hi, eps=hi * sp.Rational(1, 10**20))
            break


def _flint_least_root(polys) -> None:
    from math import lcm

    for poly in polys:
        if poly.is_zero or poly.degree() <= 0:
            continue
        values = [Fraction(int(c.p), int(c.q)) for c in poly.all_coeffs()]
        scale = lcm(*(v.denominator for v in values))
        integer = flint.fmpz_poly([int(v * scale) for v in reversed(values)])
        common = integer.gcd(integer.derivative())
        if common.degree() > 0:
            integer = integer // common
        for root in integer.complex_roots():
            value = root[0] if isinstance(root, tuple) else root
            if value.imag.is_zero() and value.real > 0:
                break


def bench_crossings() -> None:
    from robust.exact.realroots import least_root_in

    polys, cap = _crossing_polynomials()
    degrees = sorted({p.degree() for p in polys})
    print(f"\n2. least positive root of the {len(polys)} crossing polynomials of the degree-10 "
          f"interval margin (degrees {degrees}; median of 5)")
    ours = _median_time(lambda: [least_root_in([Fraction(int(c.p), int(c.q)) for c in p.all_coeffs()],
                                               Fraction(0), cap, Fraction(1, 10**20))
                                 for p in polys if p.degree() > 0])
    before = _median_time(lambda: _sympy_least_root(polys, cap))
    print(f"   ours (Sturm + bisection, gmpy2)        {ours:8.4f} s")
    print(f"   sympy intervals + refine_root          {before:8.4f} s   ({before / ours:.1f}x ours)")
    if flint is None:
        print("   flint fmpz_poly.complex_roots           not installed")
    else:
        flint_time = _median_time(lambda: _flint_least_root(polys))
        print(f"   flint fmpz_poly.complex_roots (balls)  {flint_time:8.4f} s   "
              f"({ours / flint_time:.1f}x faster than ours; no exact bracket)")


def bench_evaluation() -> None:
    from bench_yield import CASE

    from robust.model.case import parse_case

    family = parse_case(CASE).family
    terms = [(e, c) for coefficient in family.coefficients for e, c in coefficient.terms]
    rng = random.Random(2)
    points = [[Fraction(rng.randint(1, 999), rng.randint(1, 999)) for _ in family.names] for _ in range(200)]
    print(f"\n3. exact evaluation of the degree-8 family's {len(terms)} terms at 200 rational points "
          "(median of 5)")

    def run(make) -> float:
        converted = [(e, make(c)) for e, c in terms]
        values = [[make(x) for x in point] for point in points]

        def once() -> None:
            for point in values:
                total = make(Fraction(0))
                for e, c in converted:
                    term = c
                    for x, k in zip(point, e, strict=True):
                        if k:
                            term = term * x**k
                    total = total + term

        return _median_time(once)

    def to_mpq(x: Fraction):
        return gmpy2.mpq(int(x.numerator), int(x.denominator))

    rows = [("gmpy2 mpq", run(to_mpq)), ("fractions.Fraction", run(lambda x: x))]
    if flint is not None:
        rows.append(("flint fmpq", run(lambda x: flint.fmpq(int(x.numerator), int(x.denominator)))))
    base = rows[0][1]
    for name, seconds in rows:
        print(f"   {name:<20} {seconds:8.4f} s   ({seconds / base:.2f}x gmpy2)")
    if flint is None:
        print("   flint fmpq           not installed")


def main() -> None:
    print(f"python-flint: {flint.__version__ if flint else 'not installed'}; gmpy2: {gmpy2.version()}")
    bench_routh()
    bench_crossings()
    bench_evaluation()


if __name__ == "__main__":
    main()
