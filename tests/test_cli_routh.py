"""Tests for ``robust routh``: the command line over the exact Routh array, run in-process.

Truth comes from outside the project: root counts from sympy's exact root isolation
(``tests/reference.py``; Meurer et al., "SymPy: symbolic computing in Python", PeerJ Comput.
Sci., 2017), counts known by construction from the factors (a root's half-plane is the
sign of its real part; common practice, no source) and the closed-form degree-4
Hurwitz condition (Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV; from
memory). Exit code 2 for bad input is DESIGN.md section 5. The installed click (8.2 and
later) keeps stderr apart from stdout in CliRunner.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner
from reference import reference_counts

from robust.cli import EXAMPLE_POLYNOMIAL, main
from robust.model.forms import routh_table


@pytest.fixture
def run():
    runner = CliRunner()

    def invoke(*args: str):
        return runner.invoke(main, ["routh", *args])

    return invoke


def counts_line(right: int, axis: int, left: int) -> str:
    return (f"{right} root(s) in the open right half-plane, {axis} on the imaginary axis, "
            f"{left} in the open left half-plane")


def test_text_output_shows_every_power_the_counts_and_a_conclusion(run):
    """The table lists s^4 .. s^0, then the counts and a 'Conclusion:' line."""
    # (s + 1)(s + 2)(s^2 + s + 3): all four roots on the left (by construction)
    result = run("(s + 1)*(s + 2)*(s^2 + s + 3)")
    assert result.exit_code == 0
    lines = result.stdout.splitlines()
    labels = [line.split("|")[0].strip() for line in lines if "|" in line]
    assert labels == ["s^4", "s^3", "s^2", "s^1", "s^0"]
    assert counts_line(0, 0, 4) in result.stdout
    assert "Conclusion: stable" in result.stdout
    assert result.stderr == ""


def test_unstable_polynomial_is_concluded_unstable(run):
    """Roots on the right are counted (as sympy counts them) and the conclusion says unstable."""
    result = run("s^3 + s^2 + 2*s + 8")  # a2*a1 = 2 < a3*a0 = 8: not Hurwitz
    assert result.exit_code == 0
    right, axis, left = reference_counts([1, 1, 2, 8])  # sympy exact isolation (Meurer et al.)
    assert counts_line(right, axis, left) in result.stdout
    assert "Conclusion: unstable" in result.stdout


def test_imaginary_axis_roots_are_reported_as_not_asymptotically_stable(run):
    """(s^2 + 1)^2 (s + 1) gives 0, 4, 1 and a conclusion about roots on the axis."""
    result = run("(s^2 + 1)^2*(s + 1)")
    assert result.exit_code == 0
    assert counts_line(0, 4, 1) in result.stdout  # by construction
    assert "not asymptotically stable" in result.stdout
    assert "row of zeros" in result.stdout


def test_coeffs_option_reads_a_comma_separated_list(run):
    """--coeffs "1, 2, 3" is s^2 + 2s + 3 and gives the same table as the text form."""
    by_list = run("--coeffs", "1, 2, 3")
    by_text = run("s^2 + 2*s + 3")
    assert by_list.exit_code == by_text.exit_code == 0
    assert by_list.stdout == by_text.stdout
    assert counts_line(*reference_counts([1, 2, 3])) in by_list.stdout  # sympy (Meurer et al.)


def test_coeffs_option_takes_decimals_exactly(run):
    """--coeffs with 0.1, 0.2, 0.02 keeps the exact boundary: two roots on the axis."""
    result = run("--coeffs", "1, 0.1, 0.2, 0.02", "--json")
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert data["roots"] == {"open_right": 0, "imaginary_axis": 2, "open_left": 1}  # construction
    assert data["coefficients"] == ["1", "1/10", "1/5", "1/50"]


def test_shift_counts_relative_to_the_shifted_line(run):
    """--shift 1 on s^2 + 2s + 5 (roots -1 +- 2j) puts both roots on the line Re(s) = -1."""
    result = run("s^2 + 2*s + 5", "--shift", "1", "--json")
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert data["roots"] == {"open_right": 0, "imaginary_axis": 2, "open_left": 0}
    assert data["shift"] == "1"
    text = run("s^2 + 2*s + 5", "--shift", "0.5")
    assert text.exit_code == 0
    assert "left of the line Re(s) = -1/2" in text.stdout


def test_json_output_follows_the_contract(run):
    """--json prints one JSON document with degree, rows, sign_changes, roots, special_rows."""
    polynomial = "(s^2 - 2*s + 5)*(s^2 + 2*s + 5)"
    result = run(polynomial, "--json")
    assert result.exit_code == 0
    data = json.loads(result.stdout)
    assert {"degree", "rows", "sign_changes", "roots", "special_rows"} <= set(data)
    assert data["degree"] == 4
    assert [row["power"] for row in data["rows"]] == [4, 3, 2, 1, 0]
    assert all(isinstance(e, str) for row in data["rows"] for e in row["entries"])
    expected = reference_counts([1, 0, 6, 0, 25])  # sympy exact isolation (Meurer et al.)
    assert data["roots"] == dict(zip(("open_right", "imaginary_axis", "open_left"), expected,
                                     strict=True))
    assert data["special_rows"][0]["kind"] == "zero_row"
    assert data["sign_changes"] == 2


def test_no_argument_runs_the_built_in_example(run):
    """Without POLYNOMIAL or --coeffs the built-in example is tabulated."""
    result = run()
    assert result.exit_code == 0
    assert result.stdout.startswith("p(s) = s^4 + 6*s^3")
    a4, a3, a2, a1, a0 = routh_table(EXAMPLE_POLYNOMIAL).coefficients
    # degree 4 Hurwitz: all a_i > 0 and a3*a2*a1 > a4*a1^2 + a3^2*a0 (Gantmacher, "The Theory
    # of Matrices", vol. 2, 1959, ch. XV; from memory)
    assert min(a4, a3, a2, a1, a0) > 0 and a3 * a2 * a1 > a4 * a1**2 + a3**2 * a0
    assert counts_line(0, 0, 4) in result.stdout
    assert "Conclusion:" in result.stdout


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        (["s^2 + "], "formula ends too early"),
        (["s^2 + 2s"], "missing operator"),
        (["s^2 + R*s"], "unknown name 'R'"),
        (["__import__('os')"], "not part of a formula"),
        (["0*s^2"], "zero polynomial"),
        (["s + 1", "--coeffs", "1, 1"], "not both"),
        (["--coeffs", "1, , 2"], "empty coefficient"),
        (["--coeffs", ""], "empty coefficient"),
        (["--coeffs", "1, x"], "not a number"),
        (["--coeffs", "0, 0"], "zero polynomial"),
        (["s + 1", "--shift", "abc"], "not a number"),
        (["s + 1", "--shift", "nan"], "not a number"),
        (["(" * 500 + "s" + ")" * 500], "nested too deeply"),
        (["(s + 1)^200*(s + 1)^200"], "degree in s too high"),
    ],
)
def test_bad_input_exits_2_with_one_error_line(run, args, fragment):
    """Every bad input exits 2 with a single 'robust: error:' line on stderr and no traceback."""
    result = run(*args)
    assert result.exit_code == 2
    assert result.stdout == ""
    lines = result.stderr.splitlines()
    assert len(lines) == 1
    assert lines[0].startswith("robust: error:")
    assert fragment in lines[0]
    assert "Traceback" not in result.output
