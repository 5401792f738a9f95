"""Tests for the commands margin, rank and yield, and the requirement lines of check.

Run in-process with click's CliRunner. The expected numbers come from outside the project:
the family (s + a)(s + b)(s + 3) has its roots at -a, -b, -3, so its decay rate is the least
lower end of a and b and its margin is the scale at which a reaches zero (common practice,
no source); the yield case is stable exactly when its constant coefficient is positive and
below a2*a1 (degree-3 Hurwitz condition; Gantmacher, "The Theory of Matrices", vol. 2, 1959,
ch. XV, from memory), and its interval is checked against scipy.stats.binomtest's
Clopper-Pearson interval (Clopper & Pearson, Biometrika 26, 1934).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from scipy import stats

from robust.cli import main


def _write(tmp_path: Path, name: str, text: str) -> str:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _product_case(margin_req: str | None = None, decay_req: str | None = None) -> str:
    """(s + a)(s + b)(s + 3), a = 1 +- 0.3, b = 2 +- 0.5: rho* = 10/3 (a reaches 0), sigma* = 0.7."""
    text = """title = "three first-order lags"
[parameters.a]
nominal = 1
tolerance = "30%"
[parameters.b]
nominal = 2
tolerance = 0.5
[polynomial]
expression = "(s + a)*(s + b)*(s + 3)"
"""
    req = [f"margin = {margin_req}"] if margin_req else []
    req += [f"decay_rate = {decay_req}"] if decay_req else []
    if req:
        text += "[requirements]\n" + "\n".join(req) + "\n"
    return text


_YIELD_CASE = """title = "constant term crossing zero"
[parameters.a]
range = [2, 4]
[parameters.K]
range = [-0.3, 0.7]
[polynomial]
coefficients = ["1", "a", "3", "K"]
"""


def _run(args: list[str]):
    return CliRunner().invoke(main, args, catch_exceptions=False)


# -- margin -------------------------------------------------------------------------------


def test_margin_json_has_bracket_exact_and_decay_rate(tmp_path):
    """--json: margin {lower, upper} numbers around 10/3, exact string or null, decay_rate around 0.7."""
    case = _write(tmp_path, "lags.toml", _product_case())
    result = _run(["margin", case, "--json"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    low, high = data["margin"]["lower"], data["margin"]["upper"]
    assert isinstance(low, float) and isinstance(high, float)
    assert low <= 10 / 3 <= high and (high - low) / high < 1e-5
    assert data["exact"] is None or isinstance(data["exact"], str)
    assert data["decay_rate"]["lower"] <= 0.7 <= data["decay_rate"]["upper"]
    assert "margin: " in result.stderr and "decisions" in result.stderr and "margin: " not in result.stdout


def test_margin_of_an_interval_family_reports_the_exact_value(tmp_path):
    """For a coefficient interval family the JSON carries the algebraic rho* as text."""
    text = """title = "interval cubic"
[parameters.a3]
nominal = 1
tolerance = 0.1
[parameters.a2]
nominal = 3
tolerance = 0.5
[parameters.a1]
nominal = 4
tolerance = 0.7
[parameters.a0]
nominal = 5
tolerance = 0.9
[polynomial]
coefficients = ["a3", "a2", "a1", "a0"]
"""
    result = _run(["margin", _write(tmp_path, "cubic.toml", text), "--json", "--no-decay"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    # (3 - r/2)(4 - 7r/10) = (1 + r/10)(5 + 9r/10): r = (275 - 5 sqrt(2297)) / 26 (degree-3
    # Hurwitz condition on the one Kharitonov polynomial that matters for n = 3; Anderson,
    # Jury & Mansour, IEEE TAC 32, 1987)
    value = (275 - 5 * 2297**0.5) / 26
    assert data["margin"]["lower"] <= value <= data["margin"]["upper"]
    assert data["exact"] is not None and "2297" in data["exact"]
    assert "decay_rate" not in data


def test_margin_stable_up_to_the_cap_has_a_null_upper_end(tmp_path):
    """s^2 + 3 s + k, k = 2 +- 0.1, is stable until k reaches 0 at scale 20: with --cap 10, upper is null."""
    text = """title = "second order"
[parameters.k]
nominal = 2
tolerance = 0.1
[polynomial]
coefficients = ["1", "3", "k"]
"""
    result = _run(["margin", _write(tmp_path, "second.toml", text), "--cap", "10", "--json", "--no-decay"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert data["margin"] == {"lower": 10.0, "upper": None}


def test_margin_requirements_that_hold_pass_with_exit_0(tmp_path):
    """margin 3 <= 10/3 and decay rate 0.6 <= 0.7: PASS lines and exit code 0."""
    result = _run(["margin", _write(tmp_path, "ok.toml", _product_case("3", "0.6"))])
    assert result.exit_code == 0
    assert "Requirement margin >= 3: PASS" in result.stdout
    assert "Requirement decay_rate >= 0.6 1/s: PASS" in result.stdout
    # 4/sigma with sigma = 0.7: about 5.714 s (common practice, no source)
    assert "4/sigma = 5.714 s" in result.stdout


@pytest.mark.parametrize(("margin_req", "decay_req", "failing"), [
    ("3.5", None, "Requirement margin >= 3.5: FAIL"),
    (None, "0.75", "Requirement decay_rate >= 0.75 1/s: FAIL"),
])
def test_margin_requirement_that_fails_exits_1(tmp_path, margin_req, decay_req, failing):
    """margin 3.5 > 10/3 or decay rate 0.75 > 0.7: a FAIL line and exit code 1."""
    result = _run(["margin", _write(tmp_path, "bad.toml", _product_case(margin_req, decay_req))])
    assert result.exit_code == 1
    assert failing in result.stdout


# -- check with requirements --------------------------------------------------------------


def test_check_exits_1_when_a_requirement_fails_on_a_stable_family(tmp_path):
    """The family is robustly stable, but decay rate 0.75 > 0.7 fails: exit code 1."""
    case = _write(tmp_path, "check.toml", _product_case("3", "0.75"))
    result = _run(["check", case, "--json"])
    assert result.exit_code == 1
    data = json.loads(result.stdout)
    assert data["verdict"] == "stable"
    assert data["requirements"]["margin"]["passed"] is True
    assert data["requirements"]["decay_rate"]["passed"] is False
    text = _run(["check", case])
    assert text.exit_code == 1
    assert "Requirement decay rate (every root has Re(s) < -0.75): FAIL" in text.stdout
    assert "Requirement margin (stable with every tolerance scaled by 3): PASS" in text.stdout


def test_check_exits_0_when_every_requirement_holds(tmp_path):
    """Stable family with margin 3 and decay rate 0.6 met: exit code 0."""
    result = _run(["check", _write(tmp_path, "good.toml", _product_case("3", "0.6"))])
    assert result.exit_code == 0
    assert "FAIL" not in result.stdout


# -- rank ---------------------------------------------------------------------------------


def test_rank_json_lists_parameters_most_critical_first(tmp_path):
    """a alone reaches 0 at scale 10/3, b alone at 4: a comes first, each with margin_alone."""
    result = _run(["rank", _write(tmp_path, "lags.toml", _product_case()), "--json"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    names = [p["name"] for p in data["parameters"]]
    assert names == ["a", "b"]
    alone = {p["name"]: p["margin_alone"] for p in data["parameters"]}
    assert alone["a"] == pytest.approx(10 / 3, rel=1e-9)
    assert alone["b"] == pytest.approx(4, rel=1e-9)


def test_rank_text_has_a_row_per_parameter(tmp_path):
    """The table names every parameter and what it acts through."""
    result = _run(["rank", _write(tmp_path, "lags.toml", _product_case())])
    assert result.exit_code == 0
    lines = result.stdout.splitlines()
    assert any(line.startswith("a ") for line in lines) and any(line.startswith("b ") for line in lines)


# -- yield --------------------------------------------------------------------------------


def test_yield_json_has_yield_interval_and_draws(tmp_path):
    """-n 2000 --seed 3 --json: the documented keys; the interval is scipy's Clopper-Pearson and
    holds the true stable fraction 0.7; the same seed repeats the result."""
    case = _write(tmp_path, "yield.toml", _YIELD_CASE)
    result = _run(["yield", case, "-n", "2000", "--seed", "3", "--json"])
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert data["draws"] == 2000
    assert data["yield"] == data["stable"] / 2000
    ci = stats.binomtest(data["stable"], 2000).proportion_ci(0.95, method="exact")
    assert data["interval"] == pytest.approx([ci.low, ci.high], rel=1e-9)
    assert data["interval"][0] <= 0.7 <= data["interval"][1]
    again = json.loads(_run(["yield", case, "-n", "2000", "--seed", "3", "--json"]).stdout)
    assert (again["stable"], again["interval"]) == (data["stable"], data["interval"])
    assert "yield: 2000 draws" in result.stderr  # progress on stderr only


def test_yield_text_reports_the_fraction(tmp_path):
    """Text output gives stable/draws and names the interval method."""
    result = _run(["yield", _write(tmp_path, "yield.toml", _YIELD_CASE), "-n", "1000", "--seed", "1"])
    assert result.exit_code == 0
    assert "/1000 random builds stable" in result.stdout and "Clopper-Pearson" in result.stdout


# -- bad input ----------------------------------------------------------------------------


def _assert_one_line_error(result) -> None:
    assert result.exit_code == 2
    assert "Traceback" not in result.output
    errors = [line for line in result.stderr.splitlines() if "error" in line.lower()]
    assert len(errors) == 1, result.stderr
    assert result.stdout == ""


@pytest.mark.parametrize("command", [["margin"], ["rank"], ["yield", "-n", "10"]])
def test_missing_case_file_exits_2_with_one_line(tmp_path, command):
    """A case path that does not exist: exit code 2 and one error line, no traceback."""
    result = _run([*command, str(tmp_path / "nope.toml")])
    _assert_one_line_error(result)
    assert result.stderr.count("\n") == 1 and "no such file" in result.stderr


@pytest.mark.parametrize("cap", ["abc", "-1", "0"])
def test_bad_cap_exits_2_with_one_line(tmp_path, cap):
    """--cap that is not a positive number: exit code 2 and one error line."""
    result = _run(["margin", _write(tmp_path, "lags.toml", _product_case()), "--cap", cap])
    _assert_one_line_error(result)
    assert "--cap" in result.stderr


def test_zero_draws_exits_2(tmp_path):
    """-n 0 is refused by the option's range check: exit code 2, one error line, no traceback."""
    result = _run(["yield", _write(tmp_path, "yield.toml", _YIELD_CASE), "-n", "0"])
    _assert_one_line_error(result)
    assert "-n" in result.stderr


def test_malformed_case_exits_2_with_one_line(tmp_path):
    """A case file with a formula error: exit code 2 and one line naming the file."""
    text = _YIELD_CASE.replace('"1", "a", "3", "K"', '"1", "a +", "3", "K"')
    result = _run(["margin", _write(tmp_path, "broken.toml", text)])
    _assert_one_line_error(result)
    assert "broken.toml" in result.stderr
