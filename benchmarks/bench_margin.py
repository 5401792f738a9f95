"""Benchmark: robust margin rho* of an interval family and of a multilinear family.

Run with ``python benchmarks/bench_margin.py``. Prints one table; not a test.

1. A degree-10 interval family (each coefficient its own parameter, 2 % tolerance about the
   coefficients of a stable product of our own choosing). rho* is exact here: the least
   positive root of a_0, a_n or a Hurwitz determinant of one of the four Kharitonov
   polynomials. Target: under 0.2 s, with ``exact`` set.
2. A 6-parameter multilinear degree-5 family (two lags, a resonance and a gain), where rho*
   comes from rays and bisection with the decision ladder: time and bracket width.
"""

from __future__ import annotations

import statistics
import time
from fractions import Fraction

from robust.analysis.margin import margin
from robust.model.case import parse_case

TARGET_INTERVAL_SECONDS = 0.2


def _interval_case(degree: int = 10) -> str:
    """s^10 .. s^0 coefficients of (s+1)(s+2)(s^2+s+4)(s^2+2s+9)(s+3)(s+0.5)(s^2+1.5s+2) +- 2 %."""
    factors = [[1, 1], [1, 2], [1, 1, 4], [1, 2, 9], [1, 3], [1, Fraction(1, 2)], [1, Fraction(3, 2), 2]]
    poly = [Fraction(1)]
    for f in factors:
        out = [Fraction(0)] * (len(poly) + len(f) - 1)
        for i, a in enumerate(poly):
            for j, b in enumerate(f):
                out[i + j] += a * Fraction(b)
        poly = out
    assert len(poly) == degree + 1
    names = [f"a{degree - k}" for k in range(degree + 1)]
    lines = ['title = "degree-10 interval family"']
    for name, value in zip(names, poly, strict=True):
        lines += [f"[parameters.{name}]", f'nominal = "{float(value)!r}"', 'tolerance = "2%"']
        assert Fraction(repr(float(value))) == value  # the coefficients are short decimals
    lines += ["[polynomial]", "coefficients = [" + ", ".join(f'"{n}"' for n in names) + "]"]
    return "\n".join(lines) + "\n"


_MULTILINEAR = """title = "6-parameter multilinear degree-5 family"
[parameters.p1]
nominal = 1
tolerance = "20%"
[parameters.p2]
nominal = 2
tolerance = "20%"
[parameters.z]
nominal = 0.6
tolerance = "30%"
[parameters.w]
nominal = 4
tolerance = "10%"
[parameters.c]
nominal = 3
tolerance = "15%"
[parameters.K]
nominal = 4
tolerance = "25%"
[polynomial]
expression = "(s + p1)*(s + p2)*(s^2 + z*s + w)*(s + c) + K*(s + 1)"
"""


def _time_margin(text: str, repeats: int) -> tuple[list[float], object]:
    times, result = [], None
    for _ in range(repeats):
        case = parse_case(text)
        started = time.perf_counter()
        result = margin(case, with_decay=False, max_seconds=60)
        times.append(time.perf_counter() - started)
    return times, result


def main() -> None:
    rows = []
    for label, text, repeats in (("degree-10 interval (11 parameters)", _interval_case(), 5),
                                 ("degree-5 multilinear (6 parameters)", _MULTILINEAR, 3)):
        times, result = _time_margin(text, repeats)
        case = parse_case(text)
        b = result.margin
        width = b.relative_width
        rows.append((label, case.family.structure, times[0], statistics.median(times),
                     float(b.lower), None if b.upper is None else float(b.upper), width,
                     b.exact is not None, result.method, b.note))
    print(f"{'family':<38} {'class':<12} {'first s':>8} {'median s':>9} {'lower':>12} {'upper':>12} "
          f"{'rel width':>10} {'exact':>6}  method")
    for label, kind, first, median, lower, upper, width, exact, method, _ in rows:
        up = "open" if upper is None else f"{upper:.9g}"
        wd = "-" if width is None else f"{width:.2e}"
        print(f"{label:<38} {kind:<12} {first:8.3f} {median:9.3f} {lower:12.9g} {up:>12} {wd:>10} "
              f"{'yes' if exact else 'no':>6}  {method}")
    for row in rows:
        if row[9]:
            print(f"note ({row[0]}): {row[9]}")
    interval = rows[0]
    verdict = "met" if interval[3] < TARGET_INTERVAL_SECONDS else "MISSED"
    print(f"\ntarget: degree-10 interval margin under {TARGET_INTERVAL_SECONDS} s (median of 5): {verdict}"
          f" ({interval[3]:.3f} s; first run {interval[2]:.3f} s); exact set: {interval[7]}")


if __name__ == "__main__":
    main()
