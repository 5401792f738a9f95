"""Tests for robust.model.case: case files, parameters and their tolerances.

Truth comes from outside the project: every example case's characteristic polynomial is
rebuilt here with sympy from the derivation in the file's header comment (Meurer et al.,
"SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017) and compared with the loaded
family at the nominal point; expected verdicts are the ones stated in each file's header;
engineering suffixes and percentages are the usual SI multipliers (common practice, no
source); decimals are compared with Python's exact ``Fraction`` of the decimal text.
"""

from __future__ import annotations

import hashlib
import random
from fractions import Fraction
from pathlib import Path

import pytest
import sympy as sp

from robust.analysis.verdict import check
from robust.errors import CaseError, InputError, RobustError
from robust.model.case import load_case, parse_case

F = Fraction
CASES_DIR = Path(__file__).resolve().parent.parent / "cases"
CASES = sorted(CASES_DIR.glob("*.toml"))
S = sp.Symbol("s")
R = sp.Rational


def Q(text: str) -> sp.Rational:
    """An exact rational from decimal text (sympy reads decimal strings exactly)."""
    return sp.Rational(text)


# -- independent rebuilds of the example cases (from their header derivations) ----------------


def _active_filter():
    R1, R2, C1, C2, kr, wt = sp.symbols("R1 R2 C1 C2 kr wt")
    G = 1 + kr
    p = (G * R1 * R2 * C1 * C2 * S**3
         + (wt * R1 * R2 * C1 * C2 + G * (R1 * C1 + R1 * C2 + R2 * C2)) * S**2
         + (wt * (R1 * C2 + R2 * C2 + (1 - G) * R1 * C1) + G) * S + wt)
    nominal = {R1: Q("10e3"), R2: Q("10e3"), C1: Q("1.5e-9"), C2: Q("1.5e-9"), kr: Q("1.5"),
               wt: (Q("3.0e6") + Q("6.0e6")) / 2}
    return p, nominal


def _buck():
    Vin, L, C, rc, Rl = sp.symbols("Vin L C rc R")
    num_p = Q("0.25") * Vin * Rl * (C * rc * S + 1)
    den_p = (L * C * (Rl + rc) * S**2 + (L + C * (Rl * rc + Q("0.008") * Rl + Q("0.008") * rc)) * S
             + Rl + Q("0.008"))
    num_c, den_c = Q("6.8") * S + 40000, S * (Q("0.0000025") * S + 1)
    p = den_p * den_c + num_p * num_c  # unity negative feedback
    nominal = {Vin: 12, L: Q("4.7e-6"), C: Q("1000e-6"), rc: (Q("0.030") + Q("0.060")) / 2,
               Rl: (Q("0.5") + Q("6.4")) / 2}
    return p, nominal


def _interval_measured():
    a = sp.symbols("a5 a4 a3 a2 a1 a0")
    p = sum(c * S ** (5 - k) for k, c in enumerate(a))
    mid = [1, 8, 27, 46, 40, 12]  # the header's nominal (midpoint) polynomial
    return p, dict(zip(a, mid, strict=True))


def _interval_unstable():
    a = sp.symbols("a4 a3 a2 a1 a0")
    p = sum(c * S ** (4 - k) for k, c in enumerate(a))
    mid = [1, Q("2.8"), Q("4.6"), Q("3.7"), Q("2.4")]  # the header's nominal polynomial
    return p, dict(zip(a, mid, strict=True))


def _maglev():
    m, kx, ki, L, Rc, ks = sp.symbols("m kx ki L R ks")
    # the expanded form written out in the header
    p = (m * L * S**4 + m * (Rc + 600 * L) * S**3 + (600 * m * Rc - kx * L) * S**2
         + (28 * ks * ki - kx * (Rc + 600 * L)) * S + (840 * ks * ki - 600 * kx * Rc))
    nominal = {m: Q("0.05"), kx: 196, ki: Q("1.96"), L: Q("10e-3"), Rc: 4, ks: 500}
    return p, nominal


def _mount():
    """det(M s^2 + C s + K) of the header's equations of motion, by sympy's determinant."""
    m1, m2, k1, k2, c1, c2 = sp.symbols("m1 m2 k1 k2 c1 c2")
    mass = sp.Matrix([[m1, 0], [0, m2]])
    damping = sp.Matrix([[c1 + c2, -c2], [-c2, c2]])
    stiffness = sp.Matrix([[k1 + k2, -k2], [-k2, k2]])
    p = (mass * S**2 + damping * S + stiffness).det()
    nominal = {m1: 12, m2: 3, k1: 40000, k2: 18000, c1: 6, c2: 2}
    return p, nominal


def _servo():
    Kt, Ra, La, J, b, Ka = sp.symbols("Kt Ra La J b Ka")
    p = (S * ((J * S + b) * (La * S + Ra) + Kt**2) * S * (Q("0.003") * S + 1)
         + Ka * Kt * (Q("0.05") * S**2 + Q("1.5") * S + 5))
    nominal = {Kt: Q("50e-3"), Ra: 2, La: Q("1e-3"), J: (Q("2.0e-5") + Q("6.0e-5")) / 2,
               b: Q("20e-6"), Ka: 12}
    return p, nominal


def _thermal():
    C, G, Kd = sp.symbols("C G Kd")
    p = S * (C * S + G) * (8 * S + 1) + Kd * (4 * S + Q("0.1"))  # the header derivation
    nominal = {C: 450, G: (Q("0.6") + Q("1.2")) / 2, Kd: 5}
    return p, nominal


def _digital_current_loop():
    L, Vin, R, Kp, Ki = sp.symbols("L Vin R Kp Ki")
    Ts = Q("0.00001")
    # the header's derivation, in z (written with the symbol S here)
    p = S * (S - 1 + R * Ts / L) * (S - 1) * L + Vin * Ts * (Kp * (S - 1) + Ki * Ts * S)
    nominal = {L: Q("22e-6"), Vin: 12, R: (Q("0.03") + Q("0.12")) / 2, Kp: Q("0.03"), Ki: 300}
    return p, nominal


def _servo_lead():
    Km, Tm, Te = sp.symbols("Km Tm Te")
    p = S * (Tm * S + 1) * (Te * S + 1) * (Q("0.004") * S + 1) + 8 * Km * (Q("0.025") * S + 1)
    nominal = {Km: 20, Tm: Q("0.05"), Te: Q("0.002")}
    return p, nominal


def _two_mass():
    J1, J2, ks, cs, Kt = sp.symbols("J1 J2 ks cs Kt")
    Kp, Kd = 20 * Kt, Q("0.5") * Kt
    # the header's expanded det(M s^2 + C s + K), not the matrices the file holds
    p = (J1 * J2 * S**4 + (J1 * cs + J2 * cs + J2 * Kd) * S**3 + ((J1 + J2) * ks + Kd * cs) * S**2
         + (Kd * ks + Kp * cs) * S + Kp * ks)
    nominal = {J1: Q("200e-6"), J2: Q("1e-3"), ks: 50, cs: Q("10e-3"), Kt: Q("100e-3")}
    return p, nominal


def _cascaded_drive():
    """Closed loop by loop, innermost first (derived here, not from the file's equations):
    back-EMF: i/v = (J s + B)/Dm, Dm = (L s + R)(J s + B) + Kt^2; current PI Ci = (5 s + 2400)/s:
    w/ir = Kt (5 s + 2400)/Dc, Dc = s Dm + (5 s + 2400)(J s + B); speed PI (Kpw s + 8)/s with
    the filter 1/(Tw s + 1): Dw = s Dc (Tw s + 1) + (Kpw s + 8) Kt (5 s + 2400); position
    th = w/s with gain Kpp: p = s Dw + Kpp (Kpw s + 8) Kt (5 s + 2400)(Tw s + 1)."""
    R, L, Kt, J, B, Tw, Kpw, Kpp = sp.symbols("R L Kt J B Tw Kpw Kpp")
    dm = (L * S + R) * (J * S + B) + Kt**2
    dc = S * dm + (5 * S + 2400) * (J * S + B)
    dw = S * dc * (Tw * S + 1) + (Kpw * S + 8) * Kt * (5 * S + 2400)
    p = S * dw + Kpp * (Kpw * S + 8) * Kt * (5 * S + 2400) * (Tw * S + 1)
    nominal = {R: Q("1.2"), L: Q("2.5e-3"), Kt: Q("80e-3"), J: Q("60e-6"), B: Q("10e-6"),
               Tw: Q("0.5e-3"), Kpw: Q("0.2"), Kpp: 30}
    return p, nominal


def _converter_units():
    """From the circuit's impedances (the header's derivation), not from the file's formulas."""
    Vin, Vm, L, rL, C, rc, Rl, R1, R2, C1, C2 = sp.symbols("Vin Vm L rL C rc R R1 R2 C1 C2")
    z_out = 1 / (1 / Rl + 1 / (rc + 1 / (S * C)))  # load parallel to the capacitor and its ESR
    plant = Vin / Vm * z_out / (z_out + rL + S * L)
    z_feedback = 1 / (1 / (R2 + 1 / (S * C1)) + S * C2)  # R2 + C1 in series, C2 across
    loop = sp.cancel(sp.together(plant * z_feedback / R1))
    num, den = sp.fraction(loop)
    p = sp.expand(den + num)  # unity negative feedback: the numerator of 1 + P*Gc
    nominal = {Vin: 12, Vm: Q("1.5"), L: Q("10e-6"), rL: Q("15e-3"), C: Q("470e-6"),
               rc: (Q("0.040") + Q("0.080")) / 2, Rl: (Q("0.66") + Q("3.3")) / 2, R1: Q("10e3"),
               R2: Q("27e3"), C1: Q("3.3e-9"), C2: Q("56e-12")}
    return p, nominal


# expected verdict (from each file's header) and the rebuilt polynomial
EXPECTED = {
    "digital_current_loop": ("stable", _digital_current_loop),
    "servo_lead_criteria": ("stable", _servo_lead),
    "active_filter": ("stable", _active_filter),
    "converter_units": ("stable", _converter_units),
    "buck_voltage_loop": ("stable", _buck),
    "interval_measured": ("stable", _interval_measured),
    "interval_unstable": ("unstable", _interval_unstable),
    "isolation_mount": ("stable", _mount),
    "maglev_lead": ("unstable", _maglev),
    "servo_pid": ("stable", _servo),
    "thermal_pi_affine": ("stable", _thermal),
    "two_mass_mechanism": ("stable", _two_mass),
    "cascaded_motor_drive": ("stable", _cascaded_drive),
}
# Cases written as one expression or coefficient list with integer constants: the family's
# coefficients are the written ones exactly (no constant factor cleared).
UNSCALED = {"active_filter", "interval_measured", "interval_unstable", "isolation_mount", "maglev_lead"}


def _sympy_coefficients(p, values):
    poly = sp.Poly(sp.expand(p.subs(values)), S)
    return [F(int(c.p), int(c.q)) for c in poly.all_coeffs()]


def test_every_case_file_has_an_expectation():
    """The table of expectations covers exactly the case files shipped."""
    assert {p.stem for p in CASES} == set(EXPECTED)


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_case_loads_and_check_gives_the_stated_verdict(path):
    """Each example loads and robust.analysis.verdict.check returns the verdict its header states."""
    case = load_case(path)
    result = check(case)
    assert result.verdict == EXPECTED[path.stem][0]
    if result.verdict == "unstable":
        assert result.witness is not None and case.family.box.contains(result.witness.point)


@pytest.mark.parametrize("path", CASES, ids=lambda p: p.stem)
def test_nominal_coefficients_equal_an_independent_sympy_expansion(path):
    """At the nominal point the family's coefficients are those of the header's derivation,
    expanded by sympy (up to one positive constant factor where constants were cleared)."""
    case = load_case(path)
    fam = case.family
    p, values = EXPECTED[path.stem][1]()
    # the nominal point itself is the one the file states
    assert case.family.point_dict(fam.nominal) == {str(k): F(str(v)) for k, v in values.items()}
    ref = _sympy_coefficients(p, values)  # sympy (Meurer et al. 2017)
    got = list(fam.written_at(fam.nominal))  # the polynomial in the case's own variable
    assert len(got) == len(ref)
    factor = got[0] / ref[0]
    assert factor > 0
    assert got == [factor * c for c in ref]
    if path.stem in UNSCALED:
        assert factor == 1
    # a constant factor: the same at random points of the box (an identity, not a coincidence)
    rng = random.Random(path.stem)
    symbols = {str(k): k for k in values}
    for _ in range(3):
        point = tuple(lo + (hi - lo) * F(rng.randint(0, 20), 20) for lo, hi in fam.box.intervals)
        at = {symbols[n]: R(v.numerator, v.denominator) for n, v in zip(fam.names, point, strict=True)}
        ref_here = _sympy_coefficients(p, at)
        assert list(fam.written_at(point)) == [factor * c for c in ref_here]


@pytest.mark.parametrize("stem, kind", [
    ("active_filter", "multilinear"), ("buck_voltage_loop", "multilinear"),
    ("interval_measured", "independent"), ("interval_unstable", "independent"),
    ("maglev_lead", "multilinear"), ("servo_pid", "polynomial"), ("thermal_pi_affine", "affine"),
    ("isolation_mount", "multilinear"), ("servo_lead_criteria", "multilinear"),
    ("digital_current_loop", "multilinear"), ("two_mass_mechanism", "multilinear"),
    ("converter_units", "multilinear"),
])
def test_case_dependence_class_is_the_one_the_header_derives(stem, kind):
    """Each case's dependence class is the one its header comment derives."""
    assert load_case(CASES_DIR / f"{stem}.toml").family.kind == kind


def test_case_records_what_was_written():
    """A loaded case keeps title, form, formulas, requirements and the file's hash."""
    path = CASES_DIR / "thermal_pi_affine.toml"
    case = load_case(path)
    assert case.title.startswith("Heated block")
    assert case.form == "coefficients"
    assert case.formulas[0] == ("coefficients[0] (s^3)", "8*C")
    assert case.requirements.decay_rate == F(1, 100) and case.requirements.margin is None
    assert case.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert case.path == str(path)


# -- parameters -------------------------------------------------------------------------------


def _case(params: str, poly: str = 'expression = "R*s + 1"', extra: str = "") -> str:
    return f'title = "t"\n{extra}[parameters.R]\n{params}\n[polynomial]\n{poly}\n'


def _param(params: str):
    return parse_case(_case(params), "p.toml").parameters[0]


@pytest.mark.parametrize("tolerance, low, high", [
    ('"5%"', F(19, 10), F(21, 10)),
    ('"+-5%"', F(19, 10), F(21, 10)),
    ('"±2%"', F(49, 25), F(51, 25)),
    ('"+/-2%"', F(49, 25), F(51, 25)),
    ("0.1", F(19, 10), F(21, 10)),
    ('"0.1"', F(19, 10), F(21, 10)),
    ('"2m"', F(1998, 1000), F(2002, 1000)),
    ('"+-250m"', F(7, 4), F(9, 4)),
    ("0", F(2), F(2)),
    ('"0%"', F(2), F(2)),
    ('"99.5%"', F(1, 100), F(399, 100)),
])
def test_tolerance_forms_give_the_exact_range(tolerance, low, high):
    """Percentages, +-/± prefixes, absolute numbers and suffixed absolutes give exact ranges."""
    p = _param(f"nominal = 2\ntolerance = {tolerance}")
    assert (p.nominal, p.low, p.high) == (F(2), low, high)
    assert p.tolerance == tolerance.strip('"')


@pytest.mark.parametrize("text, value", [
    ('"4.7p"', F(47, 10**13)), ('"100n"', F(1, 10**7)), ('"22u"', F(22, 10**6)),
    ('"2µ"', F(2, 10**6)), ('"10m"', F(1, 100)), ('"4.7k"', F(4700)), ('"1.5M"', F(1500000)),
    ('"2G"', F(2 * 10**9)), ('"1e-3"', F(1, 1000)), ('"-3"', F(-3)), ('"1_000"', F(1000)),
])
def test_engineering_suffixes_are_exact_multipliers(text, value):
    """p n u/µ m k M G scale by 1e-12 .. 1e9 exactly."""
    assert _param(f"nominal = {text}\ntolerance = 0").nominal == value


@pytest.mark.parametrize("text, value", [
    ("0.1", F(1, 10)), ("3.0e6", F(3 * 10**6)), ("1e-7", F(1, 10**7)), ("0.3", F(3, 10)),
    ("4.7e-3", F(47, 10**4)), ("12", F(12)),
])
def test_toml_floats_are_read_as_their_decimal_text(text, value):
    """A TOML float is the decimal the user typed (0.1 is 1/10), never the binary double."""
    assert _param(f"nominal = {text}\ntolerance = 0").nominal == value
    if value.denominator & (value.denominator - 1):  # not a dyadic rational
        assert F(float(text)) != value  # so the binary double would have been wrong


def test_range_without_nominal_takes_the_midpoint():
    """A range alone gives its midpoint as nominal; with a nominal, that value."""
    p = _param("range = [0.1, 0.3]")
    assert (p.low, p.nominal, p.high, p.tolerance) == (F(1, 10), F(1, 5), F(3, 10), "range")
    p = _param("range = [0.1, 0.3]\nnominal = 0.25")
    assert p.nominal == F(1, 4)
    p = _param('range = ["1k", "2.2k"]')
    assert (p.low, p.high) == (F(1000), F(2200))


def test_unit_note_and_distribution_are_kept():
    """unit, note and distribution pass through unchanged; uniform is the default."""
    p = _param('nominal = "4.7n"\ntolerance = "10%"\nunit = "F"\nnote = "X7R"\ndistribution = "normal"')
    assert (p.unit, p.note, p.distribution) == ("F", "X7R", "normal")
    assert _param('nominal = 1\ntolerance = "1%"').distribution == "uniform"


def test_percentage_of_a_negative_nominal_uses_its_magnitude():
    """A percentage tolerance on a negative nominal still gives low < nominal < high."""
    p = _param('nominal = -2\ntolerance = "5%"')
    assert (p.low, p.high) == (F(-21, 10), F(-19, 10))
    assert p.relative_tolerance == F(1, 20)


def test_relative_tolerance():
    """relative_tolerance is the largest deviation over |nominal|; None for nominal 0."""
    assert _param("range = [1, 4]\nnominal = 2").relative_tolerance == 1
    assert _param("range = [-1, 1]").relative_tolerance is None


# -- other fields -----------------------------------------------------------------------------


def test_another_variable_name():
    """variable = "q" makes q the polynomial variable of a continuous-time case."""
    case = parse_case(_case("nominal = 2\ntolerance = 0", 'expression = "q^2 + R*q + 1"',
                            'variable = "q"\n'), "q.toml")
    assert case.variable == "q" and case.family.coefficients_at((F(2),)) == (F(1), F(2), F(1))
    assert not case.discrete


def test_variable_z_is_discrete_time_and_keeps_the_written_polynomial():
    """variable = "z": the written polynomial in z is kept, and the family decided is its
    bilinear image (1 - w)^n p((1 + w)/(1 - w)), worked by hand for z^2 + R z + 1/4 at R = 1:
    (1 + w)^2 + (1 + w)(1 - w) + (1 - w)^2 / 4 = (1/4) w^2 + (3/2) w + 9/4."""
    case = parse_case(_case("nominal = 1\ntolerance = 0", 'expression = "4*z^2 + 4*R*z + 1"',
                            'variable = "z"\n'), "z.toml")
    assert case.discrete
    assert case.family.written_at((F(1),)) == (F(4), F(4), F(1))
    assert case.family.coefficients_at((F(1),)) == (F(1), F(6), F(9))  # 4 times the hand result


def test_loop_form_is_den_p_den_c_plus_num_p_num_c():
    """[polynomial.loop] gives the unity-feedback characteristic polynomial, up to a constant."""
    text = _case("nominal = 2\ntolerance = 0",
                 '[polynomial.loop]\nplant = "R/(s*(s + 1))"\ncontroller = "(s + 3)/(s + 10)"')
    case = parse_case(text, "loop.toml")
    # by hand: s*(s + 1)*(s + 10) + R*(s + 3) at R = 2 -> s^3 + 11 s^2 + 12 s + 6
    got = case.family.coefficients_at((F(2),))
    assert [c / got[0] for c in got] == [1, 11, 12, 6]
    assert case.form == "loop"
    assert dict(case.formulas) == {"plant": "R/(s*(s + 1))", "controller": "(s + 3)/(s + 10)"}


def test_loop_without_controller_defaults_to_unity():
    """A loop without controller is closed through C = 1."""
    text = _case("nominal = 2\ntolerance = 0", '[polynomial.loop]\nplant = "R/(s + 1)"')
    got = parse_case(text, "loop.toml").family.coefficients_at((F(2),))
    assert [c / got[0] for c in got] == [1, 3]  # s + 1 + R


def test_requirements_are_exact():
    """margin and decay_rate are exact rationals; an unknown requirement is refused."""
    text = _case("nominal = 2\ntolerance = 0") + "[requirements]\nmargin = 1.25\ndecay_rate = \"0.5\"\n"
    req = parse_case(text, "r.toml").requirements
    assert (req.margin, req.decay_rate) == (F(5, 4), F(1, 2))
    with pytest.raises(CaseError, match="unknown requirement"):
        parse_case(_case("nominal = 2\ntolerance = 0") + "[requirements]\nphase = 45\n", "r.toml")
    with pytest.raises(CaseError, match=r"requirements\.margin.*positive"):
        parse_case(_case("nominal = 2\ntolerance = 0") + "[requirements]\nmargin = 0\n", "r.toml")


def test_case_error_is_structured_and_a_value_error():
    """A CaseError is a ValueError and a RobustError carrying file, field and line."""
    text = _case('nominal = 2\ntolerance = "-5%"')
    with pytest.raises(CaseError) as info:
        parse_case(text, "bad.toml")
    error = info.value
    assert isinstance(error, ValueError) and isinstance(error, InputError)
    assert isinstance(error, RobustError) and error.exit_code == 2
    assert (error.file, error.field, error.line) == ("bad.toml", "parameters.R.tolerance", 4)
    assert str(error).startswith("bad.toml:4: parameters.R.tolerance: a tolerance cannot be negative")


def test_parameter_named_like_the_variable_is_refused():
    """A parameter may not be called like the polynomial variable."""
    text = 'title = "t"\n[parameters.s]\nnominal = 1\ntolerance = 0\n[polynomial]\nexpression = "s + 1"\n'
    with pytest.raises(CaseError, match="name of the polynomial variable"):
        parse_case(text, "v.toml")


def test_nominal_outside_its_range_is_refused():
    """An explicit nominal must lie inside its range."""
    with pytest.raises(CaseError, match="outside the range"):
        _param("range = [1, 2]\nnominal = 5")


def test_two_polynomial_forms_are_refused():
    """[polynomial] takes exactly one of expression, coefficients and loop."""
    with pytest.raises(CaseError, match="exactly one"):
        parse_case(_case("nominal = 2\ntolerance = 0", 'expression = "s + 1"\ncoefficients = ["1", "1"]'),
                   "two.toml")
