"""Tests for robust.model.units: the dimension check of a case's formulas.

References outside the project: pint's own unit registry gives the dimensionality of derived
units (pint documentation, dimensionality); that R*C and L/R are times and 1/sqrt(L*C) a
frequency is common practice, no source. The new shipped case's polynomial is rebuilt with
sympy from its circuit in tests/test_case.py.
"""

from __future__ import annotations

import json
from pathlib import Path

import pint
import pytest
from click.testing import CliRunner
from hypothesis import given
from hypothesis import strategies as st

from robust.cli import main
from robust.errors import CaseError
from robust.model.case import parse_case
from robust.model.expr import parse_formula
from robust.model.units import describe, unit_dimension

CASES_DIR = Path(__file__).resolve().parent.parent / "cases"
UREG = pint.UnitRegistry()

RLC = {"R": ("10", "ohm"), "L": ("1m", "H"), "C": ("10u", "F")}


def case_text(parameters: dict[str, tuple[str, str]], polynomial: str) -> str:
    """A case with parameters {name: (nominal, unit)} (5 % each) and a [polynomial] body."""
    lines = ['title = "t"']
    for name, (nominal, unit) in parameters.items():
        lines += [f"[parameters.{name}]", f"nominal = {json.dumps(nominal)}", 'tolerance = "5%"']
        if unit:
            lines.append(f"unit = {json.dumps(unit)}")
    return "\n".join(lines) + "\n" + polynomial + "\n"


def error_of(parameters: dict[str, tuple[str, str]], polynomial: str) -> str:
    with pytest.raises(CaseError) as caught:
        parse_case(case_text(parameters, polynomial), "u.toml")
    message = str(caught.value)
    assert "\n" not in message
    return message


# -- cases that pass ------------------------------------------------------------------------


@pytest.mark.parametrize("polynomial", [
    '[polynomial]\nexpression = "L*C*s^2 + R*C*s + 1"',
    '[polynomial]\nexpression = "s^2 + R/L*s + 1/(L*C)"',
    '[polynomial]\ncoefficients = ["L*C", "R*C", "1"]',
    '[polynomial]\ncoefficients = ["L", "R", "1/C"]',
    '[polynomial.loop]\nplant = "1/(L*C*s^2 + R*C*s)"\ncontroller = "2"',
])
def test_a_correct_rlc_case_passes_in_every_form(polynomial):
    """A series RLC loop written right, as an expression, a coefficient list or a loop, loads
    with no note (every parameter has a unit)."""
    case = parse_case(case_text(RLC, polynomial), "rlc.toml")
    assert case.notes == ()
    assert case.family.degree == 2


def test_a_transfer_function_may_carry_a_dimension_when_the_loop_gain_has_none():
    """An admittance plant (A/V) times an impedance controller (V/A) is a valid loop."""
    parameters = {**RLC, "Rs": ("1", "ohm")}
    case = parse_case(case_text(parameters, '[polynomial.loop]\nplant = "1/(L*s + R)"\n'
                                            'controller = "Rs*(R*C*s + 1)/(R*C*s)"'), "y.toml")
    assert case.family.degree == 2


def test_written_numbers_and_unchecked_parameters_are_not_compared():
    """0.025*s + 1 writes a time constant as a number, and K has no unit: neither is compared,
    and the case notes K once."""
    case = parse_case(case_text({**RLC, "K": ("3", "")},
                                '[polynomial]\nexpression = "(0.025*s + 1)*(L*s + R) + K*s + 600"'),
                      "n.toml")
    assert case.notes == ("n.toml: parameters without a unit, so the terms holding them are not "
                          "checked for dimension: K",)


def test_a_case_without_units_is_not_checked_and_keeps_no_tree():
    """Without any unit nothing is checked (R*s + L would pass) and no formula keeps its tree."""
    case = parse_case(case_text({"R": ("1", ""), "L": ("1", "")}, '[polynomial]\nexpression = "R*s + L"'))
    assert case.notes == ()
    assert parse_formula("R*s + L", ["R", "L"]).tree is None


# -- each kind of mismatch ------------------------------------------------------------------


def test_a_sum_of_an_expression_adding_unlike_terms_is_named_with_both_dimensions():
    """R*C*s^2 + L*s: a pure frequency against a resistance."""
    message = error_of(RLC, '[polynomial]\nexpression = "R*C*s^2 + L*s + R"')
    assert message == ("u.toml:15: polynomial.expression: R*C*s^2 has dimension [1/time], L*s has "
                       "[resistance]; expected terms of one dimension in every sum")


def test_a_nested_sum_is_checked_too():
    """(R + L)*s: the sum inside the parentheses adds a resistance to an inductance."""
    message = error_of(RLC, '[polynomial]\nexpression = "(R + L)*C*s + 1"')
    assert "polynomial.expression: R has dimension [resistance], L has [inductance]" in message


def test_a_coefficient_list_compares_a_k_times_s_to_the_k():
    """[L*C, R, 1]: L*C*s^2 is dimensionless, R*s a resistance per second (1/capacitance);
    the later entry is named."""
    message = error_of(RLC, '[polynomial]\ncoefficients = ["L*C", "R", "1"]')
    assert message == ("u.toml:15: polynomial.coefficients[1]: L*C*s^2 is dimensionless, R*s has "
                       "[1/capacitance]; expected terms of one dimension in every sum")


def test_a_sum_inside_one_coefficient_is_named_with_its_index():
    """coefficients[2] = C + R: a capacitance plus a resistance."""
    message = error_of(RLC, '[polynomial]\ncoefficients = ["L*C", "R*C", "C + R"]')
    assert "polynomial.coefficients[2]: C has dimension [capacitance], R has [resistance]" in message


def test_a_loop_numerator_and_a_loop_denominator_are_each_checked():
    """Plant numerator R + L and controller denominator C*s + R each add unlike terms."""
    numerator = error_of(RLC, '[polynomial.loop]\nplant = "(R + L)/(L*s + R)"')
    assert "polynomial.loop.plant: R has dimension [resistance], L has [inductance]" in numerator
    denominator = error_of(RLC, '[polynomial.loop]\nplant = "1/(L*s + R)"\ncontroller = "R/(C*s + R)"')
    assert ("polynomial.loop.controller: C*s has dimension [1/resistance], R has [resistance]"
            in denominator)


def test_a_loop_gain_with_a_dimension_is_refused():
    """P = 1/(L*s + R) in A/V with a dimensionless controller: 1 + P*C adds siemens to 1."""
    message = error_of(RLC, '[polynomial.loop]\nplant = "1/(L*s + R)"\ncontroller = "R*C*s + 1"')
    assert message == ("u.toml:14: polynomial.loop: the loop gain P*C has dimension [1/resistance] "
                       "(plant [1/resistance], controller dimensionless), but 1 + P*C adds it to 1; "
                       "expected a dimensionless loop gain (e.g. a plant in V/A with a controller in A/V)")


@pytest.mark.parametrize("unit, problem", [
    ("Henri", "'Henri' is not a unit pint knows"),
    ("4.7 uF", "holds a number"),
    ("m^9^9", "not a small integer"),
    ("ohm; rm", "is not a unit"),
    ("(ohm", "is not a unit pint can read"),
])
def test_a_unit_pint_cannot_read_names_the_unit_field_and_its_text(unit, problem):
    """The error names parameters.L.unit, the line of the unit and the text."""
    message = error_of({**RLC, "L": ("1m", unit)}, '[polynomial]\nexpression = "L*C*s^2 + R*C*s + 1"')
    assert message.startswith("u.toml:9: parameters.L.unit: ")
    assert problem in message and 'expected a unit such as "ohm"' in message


@given(st.text(alphabet="mAVsHFkg*/^()0123 -.%µΩe", max_size=20))
def test_any_unit_text_gives_a_dimension_or_one_case_error(unit):
    """Whatever a unit field holds, pint's answer is a dimension or one CaseError, never
    another exception."""
    text = case_text({**RLC, "L": ("1m", unit)}, '[polynomial]\nexpression = "L*C*s^2 + R*C*s + 1"')
    try:
        parse_case(text, "u.toml")
    except CaseError as error:
        assert "\n" not in str(error)


# -- the shipped case through the command line ----------------------------------------------


def run_check(tmp_path, text: str) -> str:
    """robust check on ``text``: exit 2, nothing on stdout, one error line (returned)."""
    path = tmp_path / "case.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    assert result.stdout == ""
    message = result.stderr.strip()
    assert "\n" not in message and "Traceback" not in message
    assert message.startswith(f"robust: error: {path}:")
    return message


def test_an_inductor_given_in_farads_in_the_shipped_converter_is_one_error_line(tmp_path):
    """cases/converter_units.toml with L in F: robust check exits 2 with one line naming the
    plant's sum that no longer adds like terms."""
    text = (CASES_DIR / "converter_units.toml").read_text(encoding="utf-8")
    wrong = text.replace('[parameters.L]\nnominal = "10u"\ntolerance = "20%"\nunit = "H"',
                         '[parameters.L]\nnominal = "10u"\ntolerance = "20%"\nunit = "F"')
    assert wrong != text
    message = run_check(tmp_path, wrong)
    assert ": polynomial.loop.plant: " in message and "expected terms of one dimension" in message
    assert "[capacitance" in message


def test_the_shipped_converter_is_fully_checked():
    """Every parameter of cases/converter_units.toml has a unit, so no note is said."""
    result = CliRunner().invoke(main, ["check", str(CASES_DIR / "converter_units.toml")])
    assert result.exit_code == 0
    assert "note" not in result.stderr


# -- outside checks ---------------------------------------------------------------------------


@pytest.mark.parametrize("unit, reference", [
    ("ohm", "volt / ampere"), ("F", "coulomb / volt"), ("H", "weber / ampere"),
    ("N*m/A", "volt * second"), ("W/V", "ampere"), ("rad/s", "hertz"),
])
def test_unit_dimensions_are_pints(unit, reference):
    """Derived units have the dimensionality pint's registry gives their definitions (pint
    documentation, dimensionality)."""
    assert unit_dimension(unit) == UREG.parse_units(reference).dimensionality


def test_time_constants_and_resonance_of_the_trade():
    """R*C and L/R are times and 1/sqrt(L*C) a frequency (common practice, no source): the
    walker agrees through the sums those facts allow."""
    parameters = {**RLC}
    # R*C*s and L/R*s are pure numbers, so each adds to 1; L*C*s^2 is too (the square of
    # s/w0 with w0 = 1/sqrt(L*C))
    for formula in ("R*C*s + 1", "L/R*s + 1", "L*C*s^2 + 1"):
        case = parse_case(case_text(parameters, f'[polynomial]\nexpression = "{formula}"'))
        assert case.notes == ()
    time = UREG.parse_units("s").dimensionality
    assert unit_dimension("ohm") * unit_dimension("F") == time
    assert unit_dimension("H") / unit_dimension("ohm") == time
    assert (unit_dimension("H") * unit_dimension("F")) ** -1 == unit_dimension("Hz") ** 2
    assert describe(unit_dimension("ohm") * unit_dimension("F")) == "[time]"


# -- the matrix forms -----------------------------------------------------------------------

MOTOR = {"R": ("2", "ohm"), "L": ("5m", "H"), "Kt": ("50m", "N*m/A"), "J": ("20u", "kg*m^2"),
         "b": ("1u", "N*m*s/rad")}
# states: the winding current (A) and the shaft speed (rad/s); input: the winding voltage (V)
MOTOR_A = '[["-R/L", "-Kt/L"], ["Kt/J", "-b/J"]]'


def state_space(a: str, feedback: str = "") -> str:
    return f"[polynomial.state_space]\nA = {a}\n{feedback}"


def test_the_shipped_two_mass_mechanism_loads_fully_checked():
    """cases/two_mass_mechanism.toml has a unit on every part and passes the entry and pair
    checks unchanged (0.5*Kt and 20*Kt hold written numbers, so they are not compared)."""
    case = parse_case((CASES_DIR / "two_mass_mechanism.toml").read_text(encoding="utf-8"), "m.toml")
    assert case.notes == ()


def test_a_stiffness_entered_as_a_damping_in_the_shipped_mechanism_is_one_line(tmp_path):
    """C[1][1] = ks (N*m/rad) instead of cs: ks*s is a torque per second, J2*s^2 a torque;
    robust check names the entry, both terms and their dimensions."""
    text = (CASES_DIR / "two_mass_mechanism.toml").read_text(encoding="utf-8")
    wrong = text.replace('["-cs", "cs"]]', '["-cs", "ks"]]')
    assert wrong != text
    message = run_check(tmp_path, wrong)
    assert ": polynomial.mechanical.C[1][1]: J2*s^2 (M[1][1]) has dimension [energy], ks*s (C[1][1]) " \
           "has [power]; expected M*s^2, C*s and K of one dimension at each entry" in message


def test_a_load_inertia_in_kg_among_kg_m2_in_the_shipped_mechanism_is_one_line(tmp_path):
    """J2 given in kg where J1 is in kg*m^2: the load's entry no longer adds like terms."""
    text = (CASES_DIR / "two_mass_mechanism.toml").read_text(encoding="utf-8")
    wrong = text.replace('tolerance = "10%"\nunit = "kg*m^2"', 'tolerance = "10%"\nunit = "kg"')
    assert wrong != text
    message = run_check(tmp_path, wrong)
    assert ": polynomial.mechanical.C[1][1]: J2*s^2 (M[1][1]) has dimension [mass/time^2]" in message


def test_mechanical_pairs_must_factor_by_row_and_column():
    """A cart (x, kg) and a rotor (theta, kg*m^2) joined by a spring kc at lever arm r: K is
    [[k + kc, -kc*r], [-kc*r, kt + kc*r^2]]. With the lever arm forgotten in K[0][1] every
    entry still adds like terms, but K[0][1]*K[1][0] and K[0][0]*K[1][1], two terms of one
    determinant, differ; the later entry is named."""
    parameters = {"m": ("2", "kg"), "J": ("10m", "kg*m^2"), "k": ("100", "N/m"),
                  "kt": ("5", "N*m/rad"), "kc": ("3", "N/m"), "r": ("50m", "m")}
    body = ('[polynomial.mechanical]\nM = [["m", 0], [0, "J"]]\n'
            'K = [["k + kc", "-kc*r"], ["-kc*r", "kt + kc*r^2"]]')
    assert parse_case(case_text(parameters, body), "r.toml").notes == ()
    message = error_of(parameters, body.replace('["k + kc", "-kc*r"]', '["k + kc", "-kc"]'))
    assert message.startswith("u.toml:28: polynomial.mechanical.K[1][0]: in det(M*s^2 + C*s + K) the entries "
                              "[0][1] and [1][0] multiply to [")
    assert message.endswith("and both products are terms of one sum; expected entries whose dimensions "
                            "factor by row and column (row i a force or torque, column j per unit of "
                            "coordinate j)")
    # the dimensions named are pint's: (N/m)*N against (N/m)*(N*m)
    assert describe(unit_dimension("N/m") * unit_dimension("N")) in message
    assert f"to {describe(unit_dimension('N') ** 2)}, and" in message


def test_a_correct_motor_state_space_with_feedback_passes():
    """di/dt = (-R i - Kt w + v)/L, dw/dt = (Kt i - b w)/J with v = -(kp i + kw w): every
    entry and every pair agrees, so no note is said."""
    parameters = {**MOTOR, "kp": ("3", "V/A"), "kw": ("10m", "V*s/rad")}
    case = parse_case(case_text(parameters, state_space(MOTOR_A, 'B = [["1/L"], [0]]\nK = [["kp", "kw"]]')),
                      "motor.toml")
    assert case.notes == ()
    # the trade's facts behind it (common practice, no source), through pint's registry:
    # R/L and b/J are rates, and Kt/L times Kt/J is a rate squared
    assert unit_dimension("ohm") / unit_dimension("H") == UREG.parse_units("1/s").dimensionality
    assert (unit_dimension("N*m/A") ** 2 / unit_dimension("H") / unit_dimension("kg*m^2")
            == UREG.parse_units("1/s^2").dimensionality)


def test_a_state_space_diagonal_entry_that_is_not_a_rate_is_one_line(tmp_path):
    """A[1][1] = -b (a damping, not a rate): robust check names the entry and asks for 1/s."""
    message = run_check(tmp_path, case_text(MOTOR, state_space('[["-R/L", "-Kt/L"], ["Kt/J", "-b"]]')))
    assert message.endswith(": polynomial.state_space.A[1][1]: s has dimension [1/time], -b (A[1][1]) has "
                            "[energy*time]; expected diagonal entries in 1/s (rates), since det(s*I - A) "
                            "subtracts each from s")


def test_a_discrete_state_space_diagonal_entry_must_be_a_pure_number():
    """With variable z the diagonal of A adds to z, a pure number: b/J (a rate) is refused."""
    text = 'variable = "z"\n' + case_text(MOTOR, state_space('[["0.5", "1"], ["0", "b/J"]]'))
    with pytest.raises(CaseError) as caught:
        parse_case(text, "z.toml")
    message = str(caught.value)
    assert "polynomial.state_space.A[1][1]: z is dimensionless, b/J (A[1][1]) has [1/time]" in message
    assert "expected dimensionless diagonal entries" in message


def test_state_feedback_must_have_the_dimension_of_a_entry_by_entry():
    """kp in A/V instead of V/A: (B*K)[0][0] is no longer a rate like A[0][0] = -R/L."""
    parameters = {**MOTOR, "kp": ("3", "A/V"), "kw": ("10m", "V*s/rad")}
    message = error_of(parameters, state_space(MOTOR_A, 'B = [["1/L"], [0]]\nK = [["kp", "kw"]]'))
    assert ("polynomial.state_space.A[0][0]: -R/L (A[0][0]) has dimension [1/time], (B*K)[0][0] has "
            "[1/resistance^2/time]; expected (B*K)[0][0] of the dimension of A[0][0]") in message


def test_the_terms_of_one_entry_of_b_times_k_must_agree():
    """Two inputs: (B K)[0][0] = B[0][0]*K[0][0] + B[0][1]*K[1][0] adds a rate to a resistance
    per time; the later gain K[1][0] is named."""
    parameters = {**MOTOR, "k1": ("3", "V/A"), "k2": ("1", "V")}
    message = error_of(parameters, state_space(MOTOR_A, 'B = [["1/L", "1/L"], [0, 0]]\n'
                                                        'K = [["k1", "k1"], ["k2", "k1"]]'))
    assert "polynomial.state_space.K[1][0]: 1/L*k1 (B[0][0]*K[0][0]) has dimension [1/time]" in message


def test_a_state_space_pair_whose_state_units_do_not_cancel_is_refused():
    """A[1][0] = Kt*J instead of Kt/J: every entry alone may be a ratio of state units, but
    A[0][1]*A[1][0] must be a rate squared."""
    message = error_of(MOTOR, state_space('[["-R/L", "-Kt/L"], ["Kt*J", "-b/J"]]'))
    assert ("polynomial.state_space.A[1][0]: in det(s*I - A) the entries [0][1] and [1][0] multiply to "
            "[energy^2*time^2], the entries [0][0] and [1][1] to [1/time^2]") in message
    assert message.endswith("expected A[i][j] in (unit of state i)/(unit of state j) per second, so that "
                            "A[i][j]*A[j][i] has dimension [1/time^2]")


def test_matrix_entries_that_are_numbers_or_unitless_are_not_compared():
    """A[0][1] = 1 (a written number) and a parameter c without a unit leave their pairs
    unchecked; the note names c."""
    parameters = {"k": ("4", "N/m"), "m": ("1", "kg"), "c": ("1", "")}
    case = parse_case(case_text(parameters, state_space('[["0", "1"], ["-k/m", "-c/m"]]')), "n.toml")
    assert case.notes == ("n.toml: parameters without a unit, so the terms holding them are not checked "
                          "for dimension: c",)


# -- scale: values are used as written, so one sum needs one unit scale ----------------------

@pytest.mark.parametrize(("parameters", "polynomial", "first", "second"), [
    # an inductance in mH beside a resistance in ohm: L*s is in thousandths of an ohm
    ({"R": ("10", "ohm"), "L": ("1", "mH"), "C": ("10u", "F")},
     '[polynomial]\nexpression = "L*C*s^2 + R*C*s + 1"', "L*C*s^2", "R*C*s"),
    # two time constants, one in ms and one in s
    ({"T1": ("5", "ms"), "T2": ("0.2", "s")}, '[polynomial]\nexpression = "T1*T2*s^2 + (T1 + T2)*s + 1"',
     "T1", "T2"),
    # a speed limit in rpm against a bandwidth in rad/s
    ({"w1": ("3000", "rpm"), "w2": ("100", "rad/s")},
     '[polynomial]\nexpression = "s^2 + (w1 + w2)*s + w1*w2"', "w1", "w2"),
])
def test_terms_of_one_dimension_in_two_scales_are_refused(parameters, polynomial, first, second):
    """The terms agree in dimension but not in scale; pint's conversion factors (mH = 1e-3 H,
    ms = 1e-3 s, rpm = 2 pi/60 rad/s) are the reference for the scale each message names."""
    message = error_of(parameters, polynomial)
    assert "need one scale" in message and first in message and second in message
    factors = {"mH": UREG("mH").to("H").magnitude, "ms": UREG("ms").to("s").magnitude,
               "rpm": UREG("rpm").to("rad/s").magnitude}
    unit = next(u for _, u in parameters.values() if u in factors)
    assert f"in units of {factors[unit]:.6g}" in message


def test_si_units_with_suffixes_pass_and_a_written_number_is_not_compared():
    """The same RLC written in SI units with suffixes passes; T*s + 1 with T in ms is not
    compared (a written number has no known unit)."""
    parse_case(case_text(RLC, '[polynomial]\nexpression = "L*C*s^2 + R*C*s + 1"'), "u.toml")
    parse_case(case_text({"T": ("5", "ms")}, '[polynomial]\nexpression = "T*s + 1"'), "u.toml")


def test_a_scaled_loop_gain_is_refused():
    """1 + P*C adds the loop gain to 1: a gain in mV/V is a thousandth of a pure number."""
    message = error_of({"K": ("2", "mV/V"), "w": ("10", "rad/s"), "Kc": ("3", "1")},
                       '[polynomial.loop]\nplant = "K*w/(s + w)"\ncontroller = "Kc"')
    assert "loop gain" in message and "in units of 0.001" in message
