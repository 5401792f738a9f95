"""Start-up: the quick commands load no heavy library, and the help's budget defaults are the
analyses' own.

Time is not asserted here (benchmarks/bench_startup.py measures it); what makes start-up
slow is, and that is countable: which modules a fresh interpreter has loaded when a command
ends. The reference outside the project is the interpreter's own ``sys.modules`` (common
practice, no source).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from robust.analysis import defaults, verdict

HEAVY = ("sympy", "scipy", "networkx", "matplotlib", "numpy", "mpmath", "pint")

_LOADED = """
import json, runpy, sys
sys.argv = ["robust", *json.loads(sys.argv[1])]
try:
    runpy.run_module("robust", run_name="__main__")
except SystemExit:
    pass
sys.stderr.write("\\nMODULES " + json.dumps(sorted({m.split('.')[0] for m in sys.modules})) + "\\n")
"""


def loaded_after(*args: str) -> set[str]:
    """Top-level modules a fresh interpreter holds after running ``robust ARGS``."""
    done = subprocess.run([sys.executable, "-c", _LOADED, json.dumps(list(args))],
                          capture_output=True, text=True, check=False)
    line = [x for x in done.stderr.splitlines() if x.startswith("MODULES ")][-1]
    return set(json.loads(line.removeprefix("MODULES ")))


@pytest.mark.parametrize("args", [("--help",), ("routh", "--help"), ("check", "--help"),
                                  ("routh", "s^3 + 2*s^2 + 3*s + 1"),
                                  ("routh", "--json", "--coeffs", "1, 2, 3")])
def test_quick_commands_load_no_heavy_library(args):
    """--help and routh answer without numpy, sympy, scipy, networkx, matplotlib or pint."""
    assert loaded_after(*args) & set(HEAVY) == set()


def test_interval_check_loads_only_numpy_of_the_heavy_libraries():
    """check of an interval case (no units) needs neither sympy, pint nor any of the report's
    libraries."""
    loaded = loaded_after("check", str(Path(__file__).parent.parent / "cases" / "interval_measured.toml"))
    assert loaded & set(HEAVY) == {"numpy"}


def test_help_defaults_are_the_checks_own():
    """The light defaults module states the same budgets as robust.analysis.verdict."""
    assert defaults.DEFAULT_MAX_BOXES == verdict.DEFAULT_MAX_BOXES
    assert defaults.DEFAULT_MAX_SECONDS == verdict.DEFAULT_MAX_SECONDS
