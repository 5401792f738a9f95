"""Benchmark of the decision engine: time to a decided verdict against brute force.

Run: ``python benchmarks/bench_verdict.py``. Not a test; prints a table.

Three in-memory cases (our own numbers, written as case-file TOML and read with
``robust.model.case.parse_case``):

1. an interval family of degree 20 (one parameter per coefficient, a small relative spread
   about a Hurwitz polynomial built from factors); target under 50 ms;
2. a 6-parameter multilinear degree-5 loop whose interval overbound is inconclusive;
   reference: the exact Routh test on a 5-per-parameter grid (5^6 = 15625 points);
3. a 10-parameter degree-8 loop with polynomial dependence (squares, products of three and
   more); reference: the exact Routh test on a 3-per-parameter grid (3^10 = 59049 points).

A grid is evidence, not a proof: the engine's "stable" covers every point of the box, the
grid only its own points, so "faster than the grid" is the least we ask.
"""

from __future__ import annotations

import argparse
import itertools
import time
from fractions import Fraction

from robust.analysis.verdict import check
from robust.exact.routh import is_hurwitz
from robust.model.case import parse_case


def _case_text(title: str, parameters: dict[str, dict[str, str]], polynomial: str) -> str:
    lines = [f'title = "{title}"']
    for name, spec in parameters.items():
        lines.append(f"[parameters.{name}]")
        for key, value in spec.items():
            if key == "range":
                lines.append(f'range = ["{value[0]}", "{value[1]}"]')
            else:
                lines.append(f'{key} = "{value}"')
    lines += ["[polynomial]", polynomial]
    return "\n".join(lines) + "\n"


def _multiply(p: list[Fraction], q: list[Fraction]) -> list[Fraction]:
    out = [Fraction(0)] * (len(p) + len(q) - 1)
    for i, a in enumerate(p):
        for j, b in enumerate(q):
            out[i + j] += a * b
    return out


def interval_degree_20() -> str:
    """Ten damped pairs s^2 + 2 zeta w s + w^2 (w from 1 to 2.8, zeta 0.9); each coefficient
    gets its own range of +-0.05 % about the product, decimal-rounded. (A degree-20
    interval family tolerates little: at +-0.1 % this one already fails.)"""
    poly = [Fraction(1)]
    for i in range(10):
        w = 1 + Fraction(i, 5)
        poly = _multiply(poly, [Fraction(1), 2 * Fraction(9, 10) * w, w * w])
    names = [f"a{20 - k}" for k in range(21)]
    params = {}
    for name, c in zip(names, poly, strict=True):
        centre = Fraction(f"{float(c):.9g}")
        spread = centre / 2000
        params[name] = {"range": (f"{float(centre - spread):.12g}", f"{float(centre + spread):.12g}")}
    polynomial = "coefficients = [" + ", ".join(f'"{n}"' for n in names) + "]"
    return _case_text("degree-20 interval family", params, polynomial)


def multilinear_degree_5() -> str:
    """Type-1 loop, three lags and a lead: s (T1 s + 1)(T2 s + 1)(T3 s + 1)(Tf s + 1) + K (Tz s + 1)."""
    nominal = {"T1": "1", "T2": "0.2", "T3": "0.05", "Tf": "0.02", "K": "10", "Tz": "0.5"}
    params = {n: {"nominal": v, "tolerance": "20%"} for n, v in nominal.items()}
    polynomial = 'expression = "s*(T1*s + 1)*(T2*s + 1)*(T3*s + 1)*(Tf*s + 1) + K*(Tz*s + 1)"'
    return _case_text("multilinear degree 5", params, polynomial)


def polynomial_degree_8() -> str:
    """Type-1 loop with two lags, a filter and two resonant modes (w^2, z*w products), a lead
    zero and a second zero: ten parameters, each 5 %."""
    nominal = {
        "T1": "1",
        "T2": "0.1",
        "z": "0.5",
        "w": "20",
        "Tf": "0.01",
        "z2": "0.4",
        "w2": "60",
        "Tz": "0.4",
        "a": "0.02",
        "K": "6",
    }
    params = {n: {"nominal": v, "tolerance": "5%"} for n, v in nominal.items()}
    polynomial = (
        'expression = "s*(T1*s + 1)*(T2*s + 1)*(s^2 + 2*z*w*s + w^2)*(Tf*s + 1)'
        '*(s^2 + 2*z2*w2*s + w2^2) + K*w^2*w2^2*(Tz*s + 1)*(a*s + 1)"'
    )
    return _case_text("polynomial degree 8", params, polynomial)


def grid_reference(family, per_side: int) -> tuple[float, int, int]:
    """Seconds, points and unstable points of the exact Routh test on a uniform grid."""
    axes = [
        [lo + (hi - lo) * Fraction(j, per_side - 1) for j in range(per_side)]
        for lo, hi in family.box.intervals
    ]
    start = time.perf_counter()
    points = bad = 0
    for point in itertools.product(*axes):
        points += 1
        if not is_hurwitz(family.coefficients_at(point)):
            bad += 1
    return time.perf_counter() - start, points, bad


def best_time(case, repeats: int):
    """Fastest of ``repeats`` runs of check() (the result of the last one)."""
    best, result = float("inf"), None
    for _ in range(repeats):
        start = time.perf_counter()
        result = check(case)
        best = min(best, time.perf_counter() - start)
    return best, result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--no-grid", action="store_true", help="skip the brute-force grids")
    args = parser.parse_args()
    rows = []

    case = parse_case(interval_degree_20(), "<bench 1>")
    seconds, result = best_time(case, 5)
    rows.append(("1 interval, deg 20, 21 par", case.family.kind, result, seconds, "target 50 ms", 0.050))

    for label, text, per_side in (
        ("2 multilinear, deg 5, 6 par", multilinear_degree_5(), 5),
        ("3 polynomial, deg 8, 10 par", polynomial_degree_8(), 3),
    ):
        case = parse_case(text, "<bench>")
        seconds, result = best_time(case, 1)
        if args.no_grid:
            rows.append((label, case.family.kind, result, seconds, "grid skipped", None))
            continue
        grid_seconds, points, bad = grid_reference(case.family, per_side)
        rows.append(
            (
                label,
                case.family.kind,
                result,
                seconds,
                f"grid {per_side}^{len(case.family.names)} = {points} pts, {bad} unstable",
                grid_seconds,
            )
        )

    header = (
        f"{'case':30} {'class':12} {'verdict':10} {'method':12} {'overbound':12} "
        f"{'boxes':>6} {'ours s':>8} {'reference':36} {'ref s':>8} {'ref/ours':>9}"
    )
    print(header)
    print("-" * len(header))
    for label, kind, res, seconds, ref_text, ref_seconds in rows:
        ratio = f"{ref_seconds / seconds:9.1f}" if ref_seconds else f"{'':>9}"
        ref = f"{ref_seconds:8.3f}" if ref_seconds else f"{'':>8}"
        overbound = "stable" if res.overbound.stable else "inconclusive"
        print(
            f"{label:30} {kind:12} {res.verdict:10} {res.method:12} {overbound:12} "
            f"{res.boxes:6d} {seconds:8.3f} {ref_text:36} {ref} {ratio}"
        )


if __name__ == "__main__":
    main()
