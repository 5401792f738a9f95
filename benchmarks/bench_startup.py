"""Benchmark: how long commands take to start, against the bare interpreter in the same run.

Run with ``python benchmarks/bench_startup.py [REPEATS]``. Prints a table; not a test.

Each command runs REPEATS times (default 7) as ``python -m robust ...`` in a fresh process;
the median wall time is compared with the median of ``python -c pass`` measured in the same
run, interleaved, so that a busy machine slows both alike. Targets (issue 12): ``--help`` and
``routh`` within 0.35 s of the bare interpreter, ``check`` of a shipped interval case within
0.8 s. The modules each command has loaded when it ends are counted too, the heavy
libraries among them named.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
HEAVY = ("sympy", "scipy", "networkx", "matplotlib", "numpy", "mpmath", "flint", "gmpy2")

#: (label, arguments after ``python``, allowed extra seconds over the bare interpreter)
COMMANDS = [
    ("robust --help", ["-m", "robust", "--help"], 0.35),
    ("robust routh", ["-m", "robust", "routh", "s^3 + 4*s^2 + 6*s + 4"], 0.35),
    ("robust check (interval)",
     ["-m", "robust", "check", str(ROOT / "cases" / "interval_measured.toml")], 0.8),
]


def _run(args: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run([sys.executable, *args], cwd=ROOT, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL, check=False)
    return time.perf_counter() - start


def _loaded(args: list[str]) -> tuple[int, list[str]]:
    """How many modules a command has loaded when it ends, and the heavy libraries among them."""
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        listing = Path(folder) / "modules.txt"
        code = ("import atexit, runpy, sys\n"
                f"atexit.register(lambda: open({str(listing)!r}, 'w').write(chr(10).join(sys.modules)))\n"
                f"sys.argv = ['robust', *{args[2:]!r}]\n"
                "runpy.run_module('robust', run_name='__main__')\n")
        subprocess.run([sys.executable, "-c", code], cwd=ROOT, stdout=subprocess.DEVNULL,
                       stderr=subprocess.DEVNULL, check=False)
        names = listing.read_text().split() if listing.exists() else []
    heavy = sorted({n.split(".")[0] for n in names if n.split(".")[0] in HEAVY})
    return len(names), heavy


def main() -> int:
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 7
    bare: list[float] = []
    times: dict[str, list[float]] = {label: [] for label, _, _ in COMMANDS}
    for _ in range(repeats):
        bare.append(_run(["-c", "pass"]))
        for label, args, _ in COMMANDS:
            times[label].append(_run(args))
    reference = statistics.median(bare)
    print(f"bare interpreter (python -c pass): median {reference:.3f} s over {repeats} runs")
    print(f"{'command':<26} {'median s':>9} {'over bare':>10} {'target':>8} {'used':>6}  "
          f"modules  heavy libraries loaded")
    missed = 0
    for label, args, target in COMMANDS:
        median = statistics.median(times[label])
        extra = median - reference
        count, heavy = _loaded(args)
        used = extra / target
        missed += used > 1
        print(f"{label:<26} {median:9.3f} {extra:10.3f} {target:8.2f} {used:5.0%}  {count:7d}  "
              f"{', '.join(heavy) or '-'}")
    print("all targets met" if not missed else f"{missed} target(s) missed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
