"""Tests for the case commands of the command line: ``robust check`` and ``robust trace``.

Run in-process with click's CliRunner. Every kind of bad input must end with exit code 2 and
one line on stderr naming the file and the field (and the line where known), without a
traceback, and quickly (a hang guard, not a performance test). Good input is checked against
references outside the project: witnesses are re-decided by the Hurwitz determinant test
written here with sympy (Hurwitz, "Ueber die Bedingungen, unter welchen eine Gleichung nur
Wurzeln mit negativen reellen Theilen besitzt", Math. Annalen 46, 1895; Meurer et al., "SymPy:
symbolic computing in Python", PeerJ Comput. Sci. 2017) on polynomials rebuilt here from the
case files' header formulas; GraphML output is read back with networkx (Hagberg, Schult &
Swart, "Exploring network structure, dynamics, and function using NetworkX", SciPy 2008).
"""

from __future__ import annotations

import json
import time
from fractions import Fraction
from pathlib import Path

import networkx as nx
import pytest
import sympy as sp
from click.testing import CliRunner

from robust.cli import main
from robust.model.case import load_case

F = Fraction
CASES_DIR = Path(__file__).resolve().parent.parent / "cases"
S = sp.Symbol("s")
HANG_GUARD_SECONDS = 5.0

HEAD = 'title = "t"\n[parameters.R]\nnominal = 2\ntolerance = "5%"\n'  # lines 1-4
POLY = "[polynomial]\n"  # line 5; the formula follows on line 6


def expression(text: str) -> str:
    return HEAD + POLY + f"expression = {json.dumps(text)}\n"


def parameter(lines: str, formula: str = "R*s + 1") -> str:
    return 'title = "t"\n[parameters.R]\n' + lines + "\n" + POLY + f'expression = "{formula}"\n'


def hurwitz_by_determinants(coefficients) -> bool:
    """Hurwitz 1895 leading principal minors, exact with sympy (leading sign normalised)."""
    c = [sp.Rational(F(x).numerator, F(x).denominator) for x in coefficients]
    if c[0] < 0:
        c = [-x for x in c]
    n = len(c) - 1
    def entry(i: int, j: int):
        k = 2 * (j + 1) - (i + 1)  # H[i][j] = c_(2j - i), 1-based, c_0 leading
        return c[k] if 0 <= k <= n else 0

    matrix = sp.Matrix(n, n, entry)
    return all(matrix[:k, :k].det(method="bareiss") > 0 for k in range(1, n + 1))


def run(*args: str):
    """Invoke the CLI in-process; return the result and the wall time."""
    start = time.perf_counter()
    result = CliRunner().invoke(main, list(args))
    return result, time.perf_counter() - start


# (id, file text, field named in the message or None, line or None, problem pattern)
BAD_INPUTS = [
    ("toml_syntax", 'title = "t"\n[parameters.R\nnominal = 1\n', None, 2, "TOML syntax error"),
    ("toml_duplicate_key", 'title = "t"\ntitle = "u"\n', None, 2, "TOML syntax error"),
    ("empty_file", "", None, None, "empty"),
    ("blank_file", "  \n\n", None, None, "empty"),
    ("missing_parameters", 'title = "t"\n[polynomial]\nexpression = "s + 1"\n', "parameters", None,
     "missing"),
    ("no_parameters", 'title = "t"\n[parameters]\n[polynomial]\nexpression = "s + 1"\n', "parameters", 2,
     "no parameters"),
    ("missing_polynomial", HEAD, "polynomial", None, "missing"),
    ("missing_title", HEAD.replace('title = "t"\n', "") + POLY + 'expression = "R*s + 1"\n', "title", None,
     "title"),
    ("undeclared_name", expression("Q*s + 1"), "polynomial.expression", 6, "unknown name 'Q'"),
    ("undeclared_in_coefficients", HEAD + POLY + 'coefficients = ["1", "Q"]\n',
     "polynomial.coefficients[1]", 6, "unknown name 'Q'"),
    ("variable_in_coefficients", HEAD + POLY + 'coefficients = ["s", "1"]\n',
     "polynomial.coefficients[0]", 6, "unknown name 's'"),
    ("nominal_and_range_and_tolerance", parameter('nominal = 1\ntolerance = "5%"\nrange = [0.9, 1.1]'),
     "parameters.R", 2, "exactly one"),
    ("neither_tolerance_nor_range", parameter("nominal = 1"), "parameters.R", 2, "neither"),
    ("tolerance_without_nominal", parameter('tolerance = "5%"'), "parameters.R", 2, "nominal"),
    ("negative_percentage", parameter('nominal = 1\ntolerance = "-5%"'), "parameters.R.tolerance", 4,
     "negative"),
    ("negative_number_tolerance", parameter("nominal = 1\ntolerance = -0.1"), "parameters.R.tolerance", 4,
     "negative"),
    ("negative_suffixed_tolerance", parameter('nominal = 1\ntolerance = "-2m"'), "parameters.R.tolerance", 4,
     "negative"),
    ("malformed_percentage", parameter('nominal = 1\ntolerance = "five%"'), "parameters.R.tolerance", 4,
     "malformed"),
    ("malformed_tolerance", parameter('nominal = 1\ntolerance = "lots"'), "parameters.R.tolerance", 4,
     "malformed"),
    ("boolean_tolerance", parameter("nominal = 1\ntolerance = true"), "parameters.R.tolerance", 4,
     "tolerance"),
    ("tolerance_100_percent", parameter('nominal = 1\ntolerance = "100%"'), "parameters.R.tolerance", 4,
     "100 %"),
    ("tolerance_250_percent", parameter('nominal = 1\ntolerance = "+-250%"'), "parameters.R.tolerance", 4,
     "100 %"),
    ("reversed_range", parameter("range = [2, 1]"), "parameters.R.range", 3, "reversed"),
    ("three_number_range", parameter("range = [1, 2, 3]"), "parameters.R.range", 3, "two numbers"),
    ("nominal_outside_range", parameter("range = [1, 2]\nnominal = 5"), "parameters.R.nominal", 4,
     "outside"),
    ("unknown_suffix", parameter('nominal = "10x"\ntolerance = "1%"'), "parameters.R.nominal", 3,
     "not a number"),
    ("double_suffix", parameter('nominal = "10kk"\ntolerance = "1%"'), "parameters.R.nominal", 3,
     "not a number"),
    ("suffix_on_tolerance", parameter('nominal = 1\ntolerance = "2q"'), "parameters.R.tolerance", 4,
     "malformed"),
    ("nan_nominal", parameter('nominal = nan\ntolerance = "1%"'), "parameters.R.nominal", 3, "finite"),
    ("unknown_distribution", parameter('nominal = 1\ntolerance = "1%"\ndistribution = "cauchy"'),
     "parameters.R.distribution", 5, "distribution"),
    ("formula_syntax_error", expression("R*s + * 1"), "polynomial.expression", 6, "unexpected"),
    ("unbalanced_parenthesis", expression("(R*s + 1"), "polynomial.expression", 6, "unbalanced"),
    ("missing_operator", expression("2 R*s + 1"), "polynomial.expression", 6, "missing operator"),
    ("function_call", expression("sin(R)*s + 1"), "polynomial.expression", 6, "function call"),
    ("attribute_access", expression("R.real*s + 1"), "polynomial.expression", 6, "attribute"),
    ("dunder_attribute", expression("R.__class__*s"), "polynomial.expression", 6, "attribute"),
    ("division_by_s", expression("R*s + 1/s"), "polynomial.expression", 6, "division by an expression in s"),
    ("negative_power_of_s", expression("s^2 + R*s^-1"), "polynomial.expression", 6, "negative power"),
    ("rational_in_s", expression("s^2 + R/(s + 1)"), "polynomial.expression", 6, "division"),
    ("zero_polynomial", expression("R*s - R*s"), "polynomial.expression", 6, "identically zero"),
    ("zero_coefficients", HEAD + POLY + 'coefficients = ["0", "R - R"]\n', "polynomial.coefficients", 6,
     "identically zero"),
    ("constant_polynomial", expression("R + 1"), "polynomial.expression", 6, "does not depend on s"),
    ("vanishing_denominator_coefficients",
     'title = "t"\n[parameters.R]\nrange = [0.5, 1.5]\n' + POLY + 'coefficients = ["1/(R-1)", "1"]\n',
     "polynomial.coefficients", 5, "may vanish"),
    ("vanishing_denominator_expression", expression("s^2 + s/(R - 2) + 1"), "polynomial.expression", 6,
     "may vanish"),
    ("division_by_zero", expression("s + 1/0"), "polynomial.expression", 6, "division by zero"),
    ("exponent_tower", expression("s^2^3 + 1"), "polynomial.expression", 6, "tower"),
    ("symbolic_exponent", expression("s^R + 1"), "polynomial.expression", 6, "integer constant"),
    ("absurd_power_of_s", expression("s^5000 + 1"), "polynomial.expression", 6, "too large"),
    ("absurd_binomial", expression("(s+1)^300"), "polynomial.expression", 6, "too large"),
    ("absurd_nested_degree", expression("((s+1)^150)^2"), "polynomial.expression", 6, "degree"),
    ("absurd_parameter_degree", expression("(R+1)^150*(R+2)^150*s + 1"), "polynomial.expression", 6,
     "absurd size"),
    ("absurd_coefficient_list", HEAD + POLY + "coefficients = [" + ", ".join(['"1"'] * 5002) + "]\n",
     "polynomial.coefficients", 6, "degree too high"),
    ("deep_nesting", expression("(" * 1000 + "s" + ")" * 1000), "polynomial.expression", 6,
     "nested too deeply"),
    ("deep_unary_minus", expression("-" * 1000 + "s"), "polynomial.expression", 6, "nested too deeply"),
    ("unknown_parameter_key", parameter('nominal = 1\ntolerance = "1%"\ncolour = "red"'),
     "parameters.R.colour", 5, "unknown key"),
    ("unknown_top_level_key", 'colour = "red"\n' + HEAD + POLY + 'expression = "R*s + 1"\n', "colour", 1,
     "unknown"),
    ("unknown_polynomial_key", HEAD + POLY + 'expression = "R*s + 1"\nfoo = 1\n', "polynomial.foo", 7,
     "unknown key"),
    ("two_polynomial_forms", HEAD + POLY + 'expression = "R*s + 1"\ncoefficients = ["1", "1"]\n',
     "polynomial", 5, "exactly one"),
    ("unknown_requirement", HEAD + POLY + 'expression = "R*s + 1"\n[requirements]\nphase = 45\n',
     "requirements.phase", 8, "unknown"),
    ("formula_not_text", HEAD + POLY + "expression = [1, 2]\n", "polynomial.expression", 6, "text"),
    ("bad_parameter_name", 'title = "t"\n[parameters."1R"]\nnominal = 1\ntolerance = 0\n' + POLY
     + 'expression = "s + 1"\n', "parameters.1R", None, "name"),
    ("parameter_named_s", 'title = "t"\n[parameters.s]\nnominal = 1\ntolerance = 0\n' + POLY
     + 'expression = "s + 1"\n', "parameters.s", 2, "variable"),
    # a controller whose denominator is zero once expanded: the loop would read as "stable"
    ("identically_zero_denominator", HEAD + "[polynomial.loop]\n" + 'plant = "1/(s-R)"\n'
     + 'controller = "(s+1)/((s+1)^2-s^2-2*s-1)"\n', "polynomial.loop.controller", 7,
     "identically zero once expanded"),
    ("identically_zero_negative_power", expression("s^2 + (R - R)^-1"), "polynomial.expression", 6,
     "identically zero once expanded"),
    ("expansion_over_the_work_limit", expression("(R+s+1)^60*(R+s+2)^60"), "polynomial.expression", 6,
     "term products"),
    ("formulas_too_long_together", HEAD + POLY + "coefficients = ["
     + ", ".join([json.dumps("+".join(["R"] * 9999))] * 6) + "]\n", "polynomial.coefficients", 6,
     "too long together"),
    ("unicode_digit_in_formula", expression("R*s + \u0663"), "polynomial.expression", 6,
     "unexpected character"),
    ("unicode_digit_nominal", parameter('nominal = "\u0663"\ntolerance = "1%"'), "parameters.R.nominal", 3,
     "not a number"),
    ("multi_line_title", 'title = "two\\nlines"\n' + HEAD.split("\n", 1)[1] + POLY
     + 'expression = "R*s + 1"\n', "title", 1, "several lines"),
    ("exponent_of_thousands_of_digits", expression("s^" + "9" * 5000), "polynomial.expression", 6,
     "exponent too large"),
]


def assert_one_line_error(result, seconds, path, field, line, pattern):
    assert result.exit_code == 2, (result.exit_code, result.stdout, result.stderr)
    assert seconds < HANG_GUARD_SECONDS
    assert result.stdout == ""
    assert "Traceback" not in result.stderr and "Traceback" not in result.stdout
    message = result.stderr.strip()
    assert "\n" not in message
    assert message.startswith("robust: error: " + str(path))
    if line is not None:
        assert message.startswith(f"robust: error: {path}:{line}: ")
    if field is not None:
        assert f": {field}" in message
    assert pattern in message


@pytest.mark.parametrize("name, text, field, line, pattern", BAD_INPUTS, ids=[b[0] for b in BAD_INPUTS])
def test_bad_case_file_exits_2_with_one_line(tmp_path, name, text, field, line, pattern):
    """Each kind of bad case file gives exit code 2 and one line naming file, field and line."""
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    result, seconds = run("check", str(path))
    assert_one_line_error(result, seconds, path, field, line, pattern)


@pytest.mark.parametrize("name, text, field, line, pattern", BAD_INPUTS[:12],
                         ids=[b[0] for b in BAD_INPUTS[:12]])
def test_trace_refuses_bad_input_the_same_way(tmp_path, name, text, field, line, pattern):
    """robust trace reads case files through the same checks: exit 2, one line."""
    path = tmp_path / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    result, seconds = run("trace", str(path))
    assert_one_line_error(result, seconds, path, field, line, pattern)


@pytest.mark.parametrize("where", ["expression", "coefficients", "plant", "nominal", "title"])
def test_python_code_in_a_case_file_is_never_run(tmp_path, where):
    """A formula (or value) that is Python code is refused and never executed."""
    sentinel = tmp_path / "pwned_x"
    payload = f'__import__("os").system("touch {sentinel}")'
    quoted = json.dumps(payload)
    texts = {
        "expression": HEAD + POLY + f"expression = {quoted}\n",
        "coefficients": HEAD + POLY + f'coefficients = ["1", {quoted}]\n',
        "plant": HEAD + "[polynomial.loop]\n" + f"plant = {quoted}\n",
        "nominal": f'title = "t"\n[parameters.R]\nnominal = {quoted}\ntolerance = 0\n' + POLY
                   + 'expression = "R*s + 1"\n',
        "title": f"title = {quoted}\n" + HEAD.split("\n", 1)[1] + POLY + f"expression = {quoted}\n",
    }
    path = tmp_path / "evil.toml"
    path.write_text(texts[where], encoding="utf-8")
    result, seconds = run("check", str(path))
    assert result.exit_code == 2 and seconds < HANG_GUARD_SECONDS
    assert "Traceback" not in result.stderr
    assert not sentinel.exists()


def test_missing_file_exits_2(tmp_path):
    """A path that does not exist is bad input, named in one line."""
    path = tmp_path / "nowhere.toml"
    result, seconds = run("check", str(path))
    assert_one_line_error(result, seconds, path, None, None, "no such file")


def test_directory_exits_2(tmp_path):
    """A directory given as a case is bad input, named in one line."""
    result, seconds = run("check", str(tmp_path))
    assert_one_line_error(result, seconds, tmp_path, None, None, "directory")


def test_byte_order_mark_is_accepted(tmp_path):
    """A case file that starts with a UTF-8 byte-order mark reads like one without it."""
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + expression("R*s + 1").encode())
    result, _ = run("check", str(path), "--json")
    assert result.exit_code == 0, result.stderr
    assert json.loads(result.stdout)["verdict"] == "stable"  # R*s + 1 with R near 2: root -1/R


@pytest.mark.skipif(not Path("/dev/zero").exists(), reason="no /dev/zero here")
def test_device_is_refused_before_it_is_read():
    """/dev/zero (endless) is refused as not a regular file, without reading it."""
    result, seconds = run("check", "/dev/zero")
    assert_one_line_error(result, seconds, "/dev/zero", None, None, "not a regular file")


def test_oversized_file_is_refused_before_it_is_read(tmp_path):
    """A file over the size limit is refused from its size alone (a sparse file: no data)."""
    from robust.model.case import MAX_FILE

    path = tmp_path / "huge.toml"
    with open(path, "wb") as handle:
        handle.truncate(MAX_FILE + 1)
    result, seconds = run("check", str(path))
    assert_one_line_error(result, seconds, path, None, None, "file too large")


def test_non_utf8_file_exits_2(tmp_path):
    """A file that is not UTF-8 text is bad input."""
    path = tmp_path / "latin1.toml"
    path.write_bytes(b'title = "caf\xe9"\n')
    result, seconds = run("check", str(path))
    assert_one_line_error(result, seconds, path, None, None, "UTF-8")


# -- robust check on the example cases --------------------------------------------------------

EXIT = {"active_filter": 0, "buck_voltage_loop": 0, "interval_measured": 0, "interval_unstable": 1,
        "maglev_lead": 1, "servo_pid": 0, "thermal_pi_affine": 0}  # from each file's header


@pytest.fixture(scope="module")
def check_json():
    """robust check --json on every example case (parsed documents, exit codes)."""
    out = {}
    for stem in EXIT:
        result, _ = run("check", str(CASES_DIR / f"{stem}.toml"), "--json")
        out[stem] = (result.exit_code, json.loads(result.stdout))
    return out


@pytest.mark.parametrize("stem", sorted(EXIT))
def test_check_json_has_the_documented_keys(check_json, stem):
    """check --json has verdict, method, nominal (roots), witness and unresolved."""
    code, doc = check_json[stem]
    assert code == EXIT[stem]
    assert {"verdict", "method", "nominal", "witness", "unresolved"} <= set(doc)
    assert doc["verdict"] == ("stable" if EXIT[stem] == 0 else "unstable")
    assert isinstance(doc["method"], str) and doc["method"]
    degree = load_case(CASES_DIR / f"{stem}.toml").family.degree
    roots = doc["nominal"]
    assert set(roots) == {"open_right", "imaginary_axis", "open_left"}
    assert roots == {"open_right": 0, "imaginary_axis": 0, "open_left": degree}  # every nominal is stable
    assert doc["unresolved"] == 0
    if doc["verdict"] == "stable":
        assert doc["witness"] is None


# The characteristic polynomials of the unstable cases, from their header comments.
def _maglev(v):
    m, kx, ki, L, R, ks = (v[k] for k in ("m", "kx", "ki", "L", "R", "ks"))
    return (m * L * S**4 + m * (R + 600 * L) * S**3 + (600 * m * R - kx * L) * S**2
            + (28 * ks * ki - kx * (R + 600 * L)) * S + (840 * ks * ki - 600 * kx * R))


def _gimbal(v):
    return sum(v[f"a{k}"] * S**k for k in range(5))


@pytest.mark.parametrize("stem, rebuild", [("maglev_lead", _maglev), ("interval_unstable", _gimbal)])
def test_check_json_witness_is_a_verified_counterexample(check_json, stem, rebuild):
    """The witness is an exact point inside the tolerances where the polynomial is not Hurwitz."""
    _, doc = check_json[stem]
    witness = doc["witness"]
    case = load_case(CASES_DIR / f"{stem}.toml")
    values = {name: F(text) for name, text in witness["parameters"].items()}
    assert set(values) == set(case.names)
    for p in case.parameters:
        assert p.low <= values[p.name] <= p.high
    exact = {k: sp.Rational(v.numerator, v.denominator) for k, v in values.items()}
    poly = sp.Poly(sp.expand(rebuild(exact)), S)
    coefficients = [F(int(c.p), int(c.q)) for c in poly.all_coeffs()]
    assert not hurwitz_by_determinants(coefficients)  # Hurwitz 1895, sympy
    roots = witness["roots"]
    assert roots["open_right"] + roots["imaginary_axis"] > 0
    assert sum(roots.values()) == len(coefficients) - 1


def test_check_text_states_the_verdict_and_the_witness():
    """The text report names the case, the verdict and every witness parameter."""
    result, _ = run("check", str(CASES_DIR / "maglev_lead.toml"))
    assert result.exit_code == 1
    out = result.stdout
    assert "Verdict: UNSTABLE" in out and "Witness" in out
    for name in ("m", "kx", "ki", "L", "R", "ks"):
        assert f"  {name} = " in out
    result, _ = run("check", str(CASES_DIR / "thermal_pi_affine.toml"))
    assert result.exit_code == 0
    assert "Verdict: STABLE" in result.stdout and "Witness" not in result.stdout


# -- robust trace -----------------------------------------------------------------------------


@pytest.mark.parametrize("stem", sorted(EXIT))
def test_trace_text_lists_every_coefficient_with_range_and_drivers(stem):
    """trace prints each coefficient, its formula, its range and the parameters driving it."""
    case = load_case(CASES_DIR / f"{stem}.toml")
    fam = case.family
    result, _ = run("trace", str(CASES_DIR / f"{stem}.toml"))
    assert result.exit_code == 0
    lines = result.stdout.splitlines()
    for k, formula in enumerate(fam.formulas()):
        power = fam.degree - k
        header = f"a{power} (s^{power}) = {formula}"
        assert header in lines
        detail = lines[lines.index(header) + 1]
        assert "range [" in detail and "driven by:" in detail
        used = {fam.names[i] for i in fam.coefficients[k].variables()}
        for name in used:
            assert f"{name} (" in detail.split("driven by:")[1]


def test_trace_json_coefficients_carry_bounds_and_directions():
    """trace --json lists power, formula, exact low/high, bound kind and parameter directions."""
    path = CASES_DIR / "maglev_lead.toml"
    result, _ = run("trace", str(path), "--json")
    assert result.exit_code == 0
    doc = json.loads(result.stdout)
    fam = load_case(path).family
    coefficients = doc["coefficients"]
    assert [c["power"] for c in coefficients] == list(range(fam.degree, -1, -1))
    for c, bound, formula in zip(coefficients, fam.bounds(), fam.formulas(), strict=True):
        assert {"power", "formula", "low", "high", "bound", "parameters"} <= set(c)
        assert c["formula"] == formula
        assert (F(c["low"]), F(c["high"])) == (bound.low, bound.high)
        assert c["bound"] in ("exact", "outer")
        assert set(c["parameters"].values()) <= {"+", "-", "0", "mixed"}
    # a0 = 840*ks*ki - 600*kx*R (header): rises with ks and ki, falls with kx and R
    assert coefficients[-1]["parameters"] == {"kx": "-", "ki": "+", "R": "-", "ks": "+"}
    # and the exact range of a0 over the box, by hand: 840*475*1.666 - 600*274.4*4.4 = -59682 ...
    assert F(coefficients[-1]["low"]) == 840 * 475 * F("1.666") - 600 * F("274.4") * F("4.4")
    # ... up to 840*525*2.254 - 600*117.6*3.6 = 739998
    assert F(coefficients[-1]["high"]) == 840 * 525 * F("2.254") - 600 * F("117.6") * F("3.6")


def test_trace_writes_graphml_and_refuses_to_overwrite(tmp_path):
    """--graphml writes a readable graph; the same path again is refused with exit 2."""
    target = tmp_path / "graph.graphml"
    path = str(CASES_DIR / "thermal_pi_affine.toml")
    result, _ = run("trace", path, "--graphml", str(target))
    assert result.exit_code == 0
    assert str(target) in result.stdout
    graph = nx.read_graphml(target)  # NetworkX (Hagberg et al. 2008)
    assert {"parameter:C", "parameter:G", "parameter:Kd", "coefficient:0", "vertex:K1"} <= set(graph.nodes)
    before = target.read_bytes()
    again, seconds = run("trace", path, "--graphml", str(target))
    assert again.exit_code == 2 and seconds < HANG_GUARD_SECONDS
    assert "--graphml" in again.stderr and "exists" in again.stderr
    assert "Traceback" not in again.stderr
    assert target.read_bytes() == before


def test_trace_graphml_to_a_directory_is_refused(tmp_path):
    """--graphml naming a directory is a usage error (exit 2)."""
    result, _ = run("trace", str(CASES_DIR / "thermal_pi_affine.toml"), "--graphml", str(tmp_path))
    assert result.exit_code == 2


# -- numbers of every documented size --------------------------------------------------------------

HUGE_LITERAL = "7" * 5000  # beyond Python's 4,300-digit integer-string limit


@pytest.mark.parametrize("nominal", ["1e400", "1e-400", HUGE_LITERAL], ids=["1e400", "1e-400", "5000-digits"])
def test_numbers_beyond_the_float_range_work_in_check_trace_and_yield(tmp_path, nominal):
    """Nominals of 1e400, 1e-400 and 5000 digits (docs allow exponents to 400, literals of any
    length) run through check, trace and yield without a traceback; R*s^2 + K*s + R is stable
    for R > 0 and K > 0 (degree 2: all coefficients positive; Gantmacher 1959, from memory)."""
    path = tmp_path / "scale.toml"
    path.write_text('title = "extreme scale"\n[parameters.R]\n'
                    f'nominal = "{nominal}"\ntolerance = "10%"\n'
                    '[parameters.K]\nnominal = "2"\ntolerance = "5%"\n'
                    '[polynomial]\nexpression = "R*s^2 + K*s + R"\n', encoding="utf-8")
    for args in (["check", "--json"], ["trace"], ["trace", "--json"], ["yield", "-n", "300", "--json"]):
        result, _ = run(args[0], str(path), *args[1:])
        assert result.exit_code == 0, (args, result.stderr)
        assert "Traceback" not in result.stderr + result.stdout
        if "--json" in args:
            data = json.loads(result.stdout)  # valid JSON: no Infinity or NaN tokens
            assert "Infinity" not in result.stdout and "NaN" not in result.stdout
            if args[0] == "yield":
                assert data["stable"] == 300
            if args[0] == "check":
                assert data["verdict"] == "stable"
    shown, _ = run("trace", str(path))
    assert "inf" not in shown.stdout  # the ranges are written as numbers, e.g. 9e+399


def test_witness_beyond_the_float_range_is_shown_without_float_roots(tmp_path):
    """An unstable family at R = 1e400 shows its exact witness; float root values are left out."""
    path = tmp_path / "unstable.toml"
    path.write_text('title = "huge and unstable"\n[parameters.R]\nnominal = "1e400"\ntolerance = "1%"\n'
                    '[polynomial]\nexpression = "s^3 + 2*s^2 + 2*s + R"\n', encoding="utf-8")
    result, _ = run("check", str(path))
    # a2 a1 = 4 < a3 a0 = R: unstable (degree-3 Hurwitz condition; Gantmacher 1959, from memory)
    assert result.exit_code == 1, result.stderr
    assert "Traceback" not in result.stderr
    assert "R = 1e+400" in result.stdout and "root values: not shown" in result.stdout
