"""The same input gives the same JSON, on a loaded machine too, and the re-run line of a
report reproduces it.

Budgets count work (decisions, boxes), never seconds, so machine load cannot change a result;
DESIGN.md section 5 allows only keys whose names end in "seconds" to differ between runs.
The load here is real: busy processes started by the test, one per core.
"""

from __future__ import annotations

import json
import os
import re
import shlex
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from robust.cli import main

CASES = Path(__file__).resolve().parent.parent / "cases"


def _strip(value):
    """The JSON without the keys that may differ between runs (names ending in "seconds")."""
    if isinstance(value, dict):
        return {k: _strip(v) for k, v in value.items() if not k.endswith("seconds")}
    if isinstance(value, list):
        return [_strip(v) for v in value]
    return value


def _run(*args: str) -> dict:
    done = subprocess.run([sys.executable, "-m", "robust", *args, "--json"], capture_output=True,
                          text=True, check=False, timeout=900)
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


@pytest.fixture()
def busy_machine():
    """Every core kept busy by another process while the test runs."""
    burners = [subprocess.Popen([sys.executable, "-c", "while True: pass"])
               for _ in range(os.cpu_count() or 2)]
    try:
        yield
    finally:
        for burner in burners:
            burner.kill()
            burner.wait()


@pytest.mark.slow
def test_margin_rank_and_report_repeat_exactly_under_load(busy_machine, tmp_path):
    """Two runs of margin, rank and report on a loaded machine give identical JSON (apart from
    the *seconds keys)."""
    case = str(CASES / "thermal_pi_affine.toml")
    for args in (("margin", case), ("rank", case)):
        assert _strip(_run(*args)) == _strip(_run(*args))
    quick = ("--search-boxes", "200", "--search-tests", "12", "--draws", "500")
    first = _run("report", case, "-o", str(tmp_path / "one"), *quick)
    second = _run("report", case, "-o", str(tmp_path / "two"), *quick)
    assert first["safety_stop"] is False
    assert _strip(first) == _strip(second)


def test_report_rerun_line_reproduces_the_report(tmp_path):
    """The re-run command written in the report, run as written, gives the same result.json."""
    case = str(CASES / "interval_unstable.toml")
    runner = CliRunner()
    first = runner.invoke(main, ["report", case, "-o", str(tmp_path / "one"), "--search-boxes", "100",
                                 "--search-tests", "8", "--draws", "300", "--seed", "7"])
    assert first.exit_code == 0, first.output
    markdown = (tmp_path / "one" / "report.md").read_text(encoding="utf-8")
    line = next(m.group(0) for m in re.finditer(r"robust report .*", markdown))
    words = shlex.split(line.replace("DIR", str(tmp_path / "two")))
    assert words[:2] == ["robust", "report"]
    again = runner.invoke(main, words[1:])
    assert again.exit_code == 0, again.output
    result = [json.loads((tmp_path / d / "result.json").read_text(encoding="utf-8")) for d in ("one", "two")]
    assert _strip(result[0]) == _strip(result[1])
    assert result[1]["settings"]["seed"] == 7 and result[1]["settings"]["search_tests"] == 8
