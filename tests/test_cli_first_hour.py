"""What a new user meets in the first hour: inputs the command line must accept, and errors
that say what to type instead.

Run in-process with click's CliRunner (its stderr is kept apart from stdout and is not a
terminal, so progress comes as one summary line). Root counts are checked against numpy's
eigenvalue root finder (Harris et al., "Array programming with NumPy", Nature 585, 2020) on
polynomials whose roots are known by construction from their factors (common practice, no
source); the relative-stability wording against the real parts of those roots.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.cli import main
from robust.render.progress import Progress

CASES_DIR = Path(__file__).resolve().parent.parent / "cases"


def run(*args: str):
    return CliRunner().invoke(main, list(args))


RC_POLYNOMIAL = '[polynomial]\nexpression = "R*C*s^2 + s + 1"\n'


def write_case(tmp_path: Path, parameters: str, polynomial: str = RC_POLYNOMIAL) -> str:
    path = tmp_path / "case.toml"
    path.write_text('title = "first hour"\n' + parameters + polynomial, encoding="utf-8")
    return str(path)


RC = ('[parameters.R]\nnominal = "10k"\ntolerance = "1%"\n'
      '[parameters.C]\nnominal = "470n"\ntolerance = "10%"\n')


def one_error_line(result) -> str:
    """The single 'robust: error:' line of a bad-input run (exit 2, no traceback)."""
    assert result.exit_code == 2, (result.exit_code, result.stdout, result.stderr)
    assert "Traceback" not in result.stderr + result.stdout
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("robust: error:"), result.stderr
    return lines[0]


# -- routh: a polynomial that starts with a minus sign --------------------------------------------


@pytest.mark.parametrize("args", [
    ["routh", "-(s+1)*(s+2)*(s-3)"],
    ["routh", "-(s+1)*(s+2)*(s-3)", "--json"],
    ["routh", "--json", "-(s+1)*(s+2)*(s-3)"],
    ["routh", "--json", "--", "-(s+1)*(s+2)*(s-3)"],
    ["routh", "--shift=0", "-s^3 - 0*s^2 + 7*s + 6"],
])
def test_routh_accepts_a_leading_minus_sign(args):
    """A polynomial beginning with '-' is the argument, not an unknown option."""
    result = run(*args)
    assert result.exit_code == 0, result.stderr
    # -(s+1)(s+2)(s-3) = -s^3 + 7 s + 6: roots -1, -2, 3 (numpy agrees: one right-half-plane root)
    assert sum(np.roots([-1, 0, 7, 6]).real > 0) == 1
    if "--json" in args:
        assert json.loads(result.stdout)["roots"] == {"open_right": 1, "imaginary_axis": 0, "open_left": 2}
    else:
        assert "1 root(s) in the open right half-plane" in result.stdout


def test_routh_option_value_may_be_negative_beside_a_minus_polynomial():
    """--shift -1 keeps its value while a '-' polynomial is still read as the argument."""
    result = run("routh", "--shift", "-1", "-s - 2", "--json")
    assert result.exit_code == 0, result.stderr
    # -s - 2: root -2; relative to Re(s) = 1 it lies left of the line
    assert json.loads(result.stdout)["roots"]["open_left"] == 1


def test_routh_unknown_long_option_is_still_a_usage_error():
    """A mistyped long option is reported with click's suggestion, not read as a polynomial."""
    line = one_error_line(run("routh", "--shft", "1", "s+1"))
    assert "--shift" in line


def test_routh_help_documents_the_double_dash():
    """The help says how to give a polynomial that starts with a minus sign."""
    assert "--" in run("routh", "--help").stdout and "minus" in run("routh", "--help").stdout


# -- routh --shift: relative stability in words ---------------------------------------------------


@settings(max_examples=25, deadline=None)
@given(st.lists(st.integers(1, 9), min_size=1, max_size=4), st.integers(1, 9))
def test_shift_conclusion_speaks_of_relative_stability(roots, sigma):
    """With --shift, a stable polynomial that misses the line is 'only slower than asked',
    never 'unstable'; one that clears it meets relative stability."""
    # roots at -r for each r in `roots` (all stable); numpy's roots give the same real parts
    coefficients = np.poly([-r for r in roots])
    slowest = max(np.roots(coefficients).real)
    text = " + ".join(f"{round(c)}*s^{len(coefficients) - 1 - k}" for k, c in enumerate(coefficients))
    result = run("routh", "--shift", str(sigma), text)
    assert result.exit_code == 0, result.stderr
    conclusion = result.stdout.strip().splitlines()[-1]
    assert "unstable" not in conclusion.replace("the polynomial itself is unstable", "")
    if slowest < -sigma - 1e-9:
        assert "relative stability met" in conclusion
    else:
        assert "relative stability not met" in conclusion and "only slower than asked" in conclusion


def test_shift_conclusion_still_says_when_the_polynomial_itself_is_unstable():
    """A polynomial with a right-half-plane root is named unstable in its own words."""
    result = run("routh", "--shift", "1", "(s-2)*(s+3)")
    assert "the polynomial itself is unstable (1 root(s)" in result.stdout


# -- demo --json, exit codes in help -----------------------------------------------------------------


@pytest.mark.slow
def test_demo_json_prints_the_reports_result(tmp_path):
    """`robust demo --json` prints one JSON document, the same as the report's result.json."""
    result = run("demo", "-o", str(tmp_path / "demo"), "--json")
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data == json.loads((tmp_path / "demo" / "result.json").read_text(encoding="utf-8"))
    assert data["check"]["verdict"] in ("stable", "unstable", "undecided")


@pytest.mark.parametrize("command", sorted(main.commands))
def test_every_command_help_lists_its_exit_codes(command):
    """Each command's --help names its exit codes, 2 (bad input) among them."""
    text = " ".join(run(command, "--help").stdout.split())
    assert "Exit codes:" in text and "2 bad input" in text


# -- case files: errors that say what to type ----------------------------------------------------


def test_bare_tolerance_crossing_zero_is_refused_with_the_percentage_to_write(tmp_path):
    """tolerance = 5 on a 470 nF part is +-5 F: refused, with "5%" suggested."""
    parameters = ('[parameters.R]\nnominal = "10k"\ntolerance = "1%"\n'
                  '[parameters.C]\nnominal = "470n"\ntolerance = 5\n')
    line = one_error_line(run("check", write_case(tmp_path, parameters)))
    assert "parameters.C.tolerance" in line and "case.toml:7" in line
    assert "absolute" in line and 'tolerance = "5%"' in line and "range = [low, high]" in line


def test_large_bare_tolerance_is_explained_once_on_stderr(tmp_path):
    """An absolute tolerance of half the nominal is read as written, and a note says so once."""
    parameters = '[parameters.R]\nnominal = 2\ntolerance = 1\n[parameters.C]\nnominal = 1\ntolerance = "1%"\n'
    result = run("check", write_case(tmp_path, parameters), "--json")
    assert json.loads(result.stdout)["verdict"] == "stable"  # R*C in [0.99, 3.03]: s^2 + s + 1 scaled
    notes = [x for x in result.stderr.splitlines() if x.startswith("robust: note:")]
    assert len(notes) == 1 and "50 %" in notes[0] and 'tolerance = "1%"' in notes[0]


@pytest.mark.parametrize("nominal, hints", [
    ('"10kOhm"', ['"10k"', 'unit = "Ohm"']),
    ('"470 nF"', ['"470n"', 'unit = "F"']),
    ('"22K"', ['"22k"', "kilo is a lowercase k"]),
    ('"4.7MEG"', ['"4.7M"', "mega is an upper-case M"]),
    ('"22KOhm"', ['"22k"', 'unit = "Ohm"', "lowercase k"]),
])
def test_number_with_a_unit_or_wrong_case_suffix_says_what_to_write(tmp_path, nominal, hints):
    """Units written into numbers and upper-case suffixes get the exact text to write."""
    parameters = (f'[parameters.R]\nnominal = {nominal}\ntolerance = "1%"\n'
                  '[parameters.C]\nnominal = "1u"\ntolerance = "1%"\n')
    line = one_error_line(run("check", write_case(tmp_path, parameters)))
    assert "parameters.R.nominal" in line
    for hint in hints:
        assert hint in line


@pytest.mark.parametrize("polynomial, hint", [
    ('[polynomial]\nexpression = "R*CC*s^2 + s + 1"\n', "did you mean C?"),
    ('[polynomial]\nexpresion = "R*C*s^2 + s + 1"\n', "did you mean expression?"),
    ('[polynomal]\nexpression = "R*C*s^2 + s + 1"\n', "did you mean polynomial?"),
    ('[loop]\nplant = "1/(R*C*s^2 + s)"\n', "did you mean [polynomial.loop]?"),
    ('[polynomial]\nexpression = "R*C*s^2 + s + 1"\n[requirements]\nmargins = 2\n', "did you mean margin?"),
])
def test_near_miss_names_get_a_suggestion(tmp_path, polynomial, hint):
    """A mistyped parameter, key or table is answered with the name probably meant."""
    line = one_error_line(run("check", write_case(tmp_path, RC, polynomial)))
    assert hint in line


def test_mistyped_parameter_key_gets_a_suggestion(tmp_path):
    """'tolerence' under a parameter suggests 'tolerance'."""
    parameters = '[parameters.R]\nnominal = 2\ntolerence = "1%"\n'
    text = write_case(tmp_path, parameters, '[polynomial]\nexpression = "R*s + 1"\n')
    line = one_error_line(run("check", text))
    assert "did you mean tolerance?" in line


def test_mistyped_parameter_in_a_formula_suggests_the_declared_one(tmp_path):
    """'Rff' where Rf is declared: did you mean Rf?"""
    parameters = '[parameters.Rf]\nnominal = "10k"\ntolerance = "1%"\n'
    line = one_error_line(run("check", write_case(tmp_path, parameters,
                                                  '[polynomial]\nexpression = "Rff*s + 1"\n')))
    assert "did you mean Rf?" in line


# -- wording and progress --------------------------------------------------------------------------


def test_interval_family_is_not_called_independent_dependence():
    """check names an interval family's structure in plain words."""
    result = run("check", str(CASES_DIR / "interval_measured.toml"))
    assert "independent dependence" not in result.stdout
    assert "independent coefficients" in result.stdout


def test_progress_is_one_summary_line_on_stderr_and_json_is_untouched():
    """margin off a terminal: stdout is exactly the JSON document, stderr one summary line."""
    case = str(CASES_DIR / "thermal_pi_affine.toml")
    result = run("margin", case, "--json", "--no-decay")
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)  # nothing but the document on stdout
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("margin: ") and "decision" in lines[0]
    again = json.loads(run("margin", case, "--json", "--no-decay").stdout)
    assert {k: v for k, v in data.items() if not k.endswith("seconds")} == \
        {k: v for k, v in again.items() if not k.endswith("seconds")}


def test_live_progress_writes_to_its_stream_only_and_ends_with_a_summary():
    """A live progress line (as on a terminal) goes to its own stream and ends in one summary."""
    stream = io.StringIO()
    shown = Progress("margin", None, "decision", stream=stream, live=True)
    for _ in range(3):
        shown.listen("decision", {})
    shown.listen("tested", {"scale": 2, "verdict": type("V", (), {"value": "stable"})()})
    shown.finish()
    text = stream.getvalue()
    assert text.endswith("\n")
    assert text.strip().splitlines()[-1].startswith("margin: 3 decisions; stable to x2")


def test_figure_axes_carry_units(monkeypatch):
    """The s-plane picture labels Re s in 1/s and Im s in rad/s; value-set panels name rad/s."""
    from robust.model.case import load_case
    from robust.render import figures

    captured = []
    monkeypatch.setattr(figures, "_png", lambda figure: captured.append(figure) or b"")
    case = load_case(CASES_DIR / "interval_measured.toml")
    draws = np.array([[float(v) for v in case.family.nominal]])
    figures.root_cloud_picture(case, draws)
    axis = captured[-1].axes[0]
    assert axis.get_xlabel() == "Re s (1/s)" and axis.get_ylabel() == "Im s (rad/s)"
    figures.value_set_picture(case, [1.0], draws)
    assert "rad/s" in captured[-1].axes[0].get_title()
