"""Benchmark: the Bernstein test of the Hurwitz conditions against the interval overbound.

Run: ``python benchmarks/bench_subbox.py [--quick]``. Not a test; prints three tables. The
reference in every row is the same engine in the same run with the sub-box test switched to
the interval overbound + Kharitonov (``robust.analysis.verdict.SUB_BOX_TEST = "overbound"``),
which is what every sub-box used before the Bernstein test existed.

(a) Correlated families decided with the default budget (20000 boxes): boxes and seconds,
    and the ratios reference / ours (target: >= 20x fewer boxes where the overbound needs
    subdivision at all). Families (our own numbers): a lightly damped two-mass chain (six
    parts, +-30 %), the shipped isolation mount, a thin-margin multilinear cubic, a
    10-parameter degree-8 loop with squares and products of three (too large for the
    Bernstein tensors: both columns use the overbound there, said in the 'test' column) and a
    10-parameter degree-4 loop (a DC motor, a PI controller and a sensor filter).
(b) rho* and the decay rate on every shipped case: relative bracket widths (asked: 1e-6,
    1e-9 for interval families) and seconds, ours and the reference.
(c) Growth with the number of parameters (4 to 32) of a multilinear cubic whose three
    poles and gain are each a product of a quarter of the parameters.
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

import robust.analysis.verdict as verdict
from robust.analysis.margin import margin
from robust.analysis.subbox import hurwitz_conditions
from robust.analysis.verdict import check
from robust.model.case import load_case, parse_case

ROOT = Path(__file__).resolve().parent.parent


def _case(title: str, parameters: dict[str, tuple[str, str]], expression: str) -> str:
    lines = [f'title = "{title}"']
    for name, (nominal, tolerance) in parameters.items():
        lines += [f"[parameters.{name}]", f'nominal = "{nominal}"', f'tolerance = "{tolerance}"']
    lines += ["[polynomial]", f'expression = "{expression}"']
    return "\n".join(lines) + "\n"


CHAIN = _case("two-mass chain, light damping",
              {"m1": ("2", "30%"), "m2": ("0.5", "30%"), "k1": ("8000", "30%"), "k2": ("2000", "30%"),
               "c1": ("0.05", "30%"), "c2": ("0.02", "30%")},
              "(m1*s^2 + (c1 + c2)*s + k1 + k2)*(m2*s^2 + c2*s + k2) - (c2*s + k2)^2")
THIN = ('title = "thin multilinear cubic"\n'
        '[parameters.x]\nnominal = "0"\nrange = ["-0.45", "0.45"]\n'
        '[parameters.y]\nnominal = "0"\nrange = ["-0.45", "0.45"]\n'
        '[polynomial]\ncoefficients = ["1", "2 + x", "2 + y", "3 + x + y + x*y"]\n')
POLY10_DEG8 = _case("10-parameter degree-8 loop",
                    {"T1": ("1", "5%"), "T2": ("0.1", "5%"), "z": ("0.5", "5%"), "w": ("20", "5%"),
                     "Tf": ("0.01", "5%"), "z2": ("0.4", "5%"), "w2": ("60", "5%"), "Tz": ("0.4", "5%"),
                     "a": ("0.02", "5%"), "K": ("6", "5%")},
                    "s*(T1*s + 1)*(T2*s + 1)*(s^2 + 2*z*w*s + w^2)*(Tf*s + 1)*(s^2 + 2*z2*w2*s + w2^2)"
                    " + K*w^2*w2^2*(Tz*s + 1)*(a*s + 1)")
POLY10_DEG4 = _case("10-parameter degree-4 loop",
                    {"J": ("0.02", "50%"), "b": ("0.1", "50%"), "L": ("0.005", "50%"), "R": ("1.5", "50%"),
                     "kt": ("0.3", "10%"), "ke": ("0.3", "10%"), "kp": ("4", "10%"), "ki": ("20", "10%"),
                     "g": ("2", "5%"), "Tf": ("0.002", "20%")},
                    "s*((J*s + b)*(L*s + R) + kt*ke)*(Tf*s + 1) + g*kt*(kp*s + ki)")


def _growth_case(k: int) -> str:
    """(s + P1)(s + 2 P2)(s + 3 P3) + 39 G: P1, P2, P3 and G each the product of k/4 parameters
    of nominal 1, each +-10/(k/4) %, so each product spreads about +-10 % whatever k is."""
    q = k // 4
    spread = f"{10 / q:.4g}%"
    names = [f"p{i}" for i in range(k)]
    groups = [names[j * q:(j + 1) * q] for j in range(4)]
    product = ["*".join(g) for g in groups]
    expression = f"(s + {product[0]})*(s + 2*{product[1]})*(s + 3*{product[2]}) + 39*{product[3]}"
    return _case(f"{k}-parameter multilinear cubic", {n: ("1", spread) for n in names}, expression)


def _timed(function, *args, **kwargs):
    started = time.perf_counter()
    result = function(*args, **kwargs)
    return result, time.perf_counter() - started


def _both(function, *args, **kwargs):
    """(ours, seconds), (reference, seconds)."""
    verdict.SUB_BOX_TEST = "auto"
    ours = _timed(function, *args, **kwargs)
    verdict.SUB_BOX_TEST = "overbound"
    try:
        reference = _timed(function, *args, **kwargs)
    finally:
        verdict.SUB_BOX_TEST = "auto"
    return ours, reference


def _test_used(case) -> str:
    family = case.family
    return "bernstein" if hurwitz_conditions(family, family.nominal) is not None else "overbound"


def table_a(max_boxes: int) -> None:
    print(f"(a) decisions with a budget of {max_boxes} boxes (reference: overbound + Kharitonov)")
    header = (f"{'family':34} {'par':>3} {'deg':>3} {'class':11} {'test':9} {'verdict':9} {'boxes':>6} "
              f"{'s':>7} | {'ref verdict':11} {'ref boxes':>9} {'ref s':>7} | {'boxes x':>8} {'time x':>7}")
    print(header)
    print("-" * len(header))
    mount = (ROOT / "cases" / "isolation_mount.toml").read_text()
    for text in (CHAIN, mount, THIN, POLY10_DEG8, POLY10_DEG4):
        case = parse_case(text, "<bench>")
        (ours, s_ours), (ref, s_ref) = _both(check, case, max_boxes=max_boxes)
        ratio_boxes = ref.boxes / max(ours.boxes, 1)
        ratio_time = s_ref / s_ours if s_ours else float("inf")
        family = case.family
        print(f"{case.title[:34]:34} {len(family.names):3d} {family.degree:3d} {family.kind:11} "
              f"{_test_used(case):9} {ours.verdict.value:9} {ours.boxes:6d} {s_ours:7.3f} | "
              f"{ref.verdict.value:11} {ref.boxes:9d} {s_ref:7.3f} | {ratio_boxes:8.1f} {ratio_time:7.1f}")
    print("('boxes' counts sub-boxes tested; 0 means the whole-box overbound decided; an undecided "
          "reference has used its whole budget, so the true ratio is larger)\n")


def _width(bracket) -> str:
    width = bracket.relative_width
    return "open" if width is None else f"{width:.1e}"


def table_b() -> None:
    print("(b) rho* and decay rate on the shipped cases (reference: the overbound in every decision)")
    header = (f"{'case':24} {'rho* lower':>12} {'width':>8} {'sigma width':>11} {'s':>7} | "
              f"{'ref width':>9} {'ref sigma w':>11} {'ref s':>7} | {'time x':>7}")
    print(header)
    print("-" * len(header))
    for path in sorted((ROOT / "cases").glob("*.toml")):
        case = load_case(path)
        (ours, s_ours), (ref, s_ref) = _both(margin, case)
        sigma = ours.decay.bracket if ours.decay else None
        sigma_ref = ref.decay.bracket if ref.decay else None
        print(f"{path.stem:24} {float(ours.margin.lower):12.9g} {_width(ours.margin):>8} "
              f"{_width(sigma) if sigma else '-':>11} {s_ours:7.2f} | {_width(ref.margin):>9} "
              f"{_width(sigma_ref) if sigma_ref else '-':>11} {s_ref:7.2f} | {s_ref / s_ours:7.1f}")
    print("(width: (upper - lower) / upper; a margin that ends at a physical limit has that limit as "
          "its upper end)\n")


def table_c(sizes: tuple[int, ...], max_boxes: int) -> None:
    print(f"(c) growth with the number of parameters (budget {max_boxes} boxes)")
    header = (f"{'parameters':>10} {'test':9} {'verdict':9} {'boxes':>6} {'s':>7} | {'ref verdict':11} "
              f"{'ref boxes':>9} {'ref s':>7}")
    print(header)
    print("-" * len(header))
    for k in sizes:
        case = parse_case(_growth_case(k), "<bench>")
        (ours, s_ours), (ref, s_ref) = _both(check, case, max_boxes=max_boxes)
        print(f"{k:10d} {_test_used(case):9} {ours.verdict.value:9} {ours.boxes:6d} {s_ours:7.3f} | "
              f"{ref.verdict.value:11} {ref.boxes:9d} {s_ref:7.3f}")
    print()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="smaller reference budgets (about a minute)")
    args = parser.parse_args()
    budget = 2000 if args.quick else verdict.DEFAULT_MAX_BOXES
    table_a(budget)
    if not args.quick:
        table_b()
    table_c((4, 8, 12, 16, 24, 32), budget)


if __name__ == "__main__":
    main()
