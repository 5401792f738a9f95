"""Tests for the block-diagram form of a case file (robust.model.diagram).

Truth comes from outside the project:
- one loop written as a diagram against the unity-feedback closed form den_P*den_C +
  num_P*num_C (common practice, no source; it is also what ``[polynomial.loop]`` computes);
- a cascade of two loops against the polynomial derived by hand in the test's docstring
  (derived here) and against sympy's symbolic determinant of the interconnection (Meurer et
  al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017);
- Mason's gain rule on two-loop diagrams: the graph determinant Delta = 1 - sum of loop gains
  + sum of products of pairs of non-touching loops (Mason, "Feedback theory: further
  properties of signal flow graphs", Proc. IRE 44(7), 1956, pp. 920-926), with the loops'
  gains computed by sympy;
- the shipped cascaded drive against sympy's determinant of its equations.
Every error message is checked on its own small case through the command line.
"""

from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path

import pytest
import sympy as sp
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.cli import main
from robust.model.case import load_case, parse_case

F = Fraction
S = sp.Symbol("s")
ROOT = Path(__file__).resolve().parent.parent


def _case(equations: list[str], parameters: dict[str, str] | None = None, inputs: list[str] | None = None,
          extra: str = "") -> str:
    lines = ['title = "t"']
    for name, nominal in (parameters or {"K": "2"}).items():
        lines += [f"[parameters.{name}]", f"nominal = {json.dumps(nominal)}", 'tolerance = "10%"']
    lines.append("[polynomial.diagram]")
    if inputs is not None:
        lines.append(f"inputs = {json.dumps(inputs)}")
    lines.append(f"equations = {json.dumps(equations)}")
    return "\n".join(lines) + "\n" + extra


def _proportional(a, b) -> bool:
    """Two coefficient lists (highest power first) of one polynomial up to a constant factor."""
    a, b = list(a), list(b)
    while a and a[0] == 0:
        a.pop(0)
    while b and b[0] == 0:
        b.pop(0)
    return len(a) == len(b) and all(x * b[0] == y * a[0] for x, y in zip(a, b, strict=True))


def _sympy_coefficients(expr, at: dict[str, Fraction]) -> list[Fraction]:
    """Coefficients in s, highest first, of a sympy expression at exact parameter values."""
    values = {sp.Symbol(n): sp.Rational(v.numerator, v.denominator) for n, v in at.items()}
    poly = sp.Poly(sp.expand(sp.cancel(expr.subs(values))), S)
    return [F(int(c.p), int(c.q)) for c in poly.all_coeffs()]


def _points(family, count: int):
    for k in range(count):  # fixed points spread over the box: low, high and between
        t = F(k, max(count - 1, 1))
        yield tuple(lo + (hi - lo) * (t if i % 2 == 0 else 1 - t)
                    for i, (lo, hi) in enumerate(family.box.intervals))


# -- one loop: the diagram gives exactly the polynomial of [polynomial.loop] ---------------------

LOOPS = [
    ("K/(s*(s + 1))", "1"),
    ("K/(T*s + 1)^2", "(2 + 3/s)"),
    ("(s + 2)/(s^2 + K*s + 4)", "(T*s + 1)/(0.1*s + 1)"),
]


@pytest.mark.parametrize(("plant", "controller"), LOOPS)
def test_one_loop_as_a_diagram_equals_the_loop_form(plant, controller):
    """e = r - y, u = C e, y = P u: den_P den_C + num_P num_C, coefficient by coefficient
    (common practice, no source), which [polynomial.loop] also gives."""
    parameters = {"K": "2", "T": "0.5"}
    diagram = parse_case(_case(["e = r - y", f"u = {controller}*e", f"y = {plant}*u"], parameters))
    head = 'title = "t"\n' + "".join(f'[parameters.{n}]\nnominal = "{v}"\ntolerance = "10%"\n'
                                     for n, v in parameters.items())
    loop = parse_case(head + f'[polynomial.loop]\nplant = "{plant}"\ncontroller = "{controller}"\n')
    assert diagram.family.formulas() == loop.family.formulas()
    # and the closed form from sympy at a point of the box
    at = dict(zip(diagram.family.names, diagram.family.nominal, strict=True))
    p = _gain(plant, at)
    c = _gain(controller, at)
    n_p, d_p = sp.fraction(sp.together(p))
    n_c, d_c = sp.fraction(sp.together(c))
    expected = _sympy_coefficients(sp.expand(d_p * d_c + n_p * n_c), {})
    assert _proportional(diagram.family.written_at(diagram.family.nominal), expected)


def _gain(text: str, at: dict[str, Fraction]):
    """A transfer function of LOOPS as a sympy expression at a parameter point, built from a
    table of the few texts this module uses (no text is read by sympy)."""
    k, t = (sp.Rational(at[n].numerator, at[n].denominator) for n in ("K", "T"))
    table = {
        "K/(s*(s + 1))": k / (S * (S + 1)), "1": sp.Integer(1),
        "K/(T*s + 1)^2": k / (t * S + 1) ** 2, "(2 + 3/s)": 2 + 3 / S,
        "(s + 2)/(s^2 + K*s + 4)": (S + 2) / (S**2 + k * S + 4),
        "(T*s + 1)/(0.1*s + 1)": (t * S + 1) / (sp.Rational(1, 10) * S + 1),
    }
    return table[text]


@settings(max_examples=25, deadline=None)
@given(st.lists(st.integers(1, 9), min_size=2, max_size=4),
       st.lists(st.integers(1, 9), min_size=1, max_size=3), st.integers(1, 9))
def test_random_one_loop_diagrams_match_the_closed_form(den, num, gain):
    """Random plants num(s)/den(s) with integer coefficients, PI controller: the diagram's
    polynomial is den*s + (gain*s + 1)*num (the unity-feedback closed form, derived here)."""
    den_text = " + ".join(f"{c}*s^{len(den) - 1 - i}" for i, c in enumerate(den))
    num_text = " + ".join(f"{c}*s^{len(num) - 1 - i}" for i, c in enumerate(num))
    case = parse_case(_case(["e = r - y", f"u = (K*{gain} + 1/s)*e", f"y = ({num_text})/({den_text})*u"]))
    k = case.family.nominal[0]
    d = sum(c * S ** (len(den) - 1 - i) for i, c in enumerate(den))
    n = sum(c * S ** (len(num) - 1 - i) for i, c in enumerate(num))
    kk = sp.Rational(k.numerator, k.denominator)
    expected = _sympy_coefficients(sp.expand(d * S + (kk * gain * S + 1) * n), {})
    assert _proportional(case.family.written_at(case.family.nominal), expected)


# -- cascades and Mason's rule --------------------------------------------------------------------

def test_cascade_of_two_loops_matches_the_hand_derivation_and_sympys_determinant():
    """Inner loop: v = Ki/s*(y1r - y1), y1 = 1/(T*s + 1)*v; outer: y1r = Ko*(r - y2),
    y2 = 1/s*y1. By hand (derived here): the inner closed loop is Ki/(T s^2 + s + Ki), so
    1 + Ko/s * Ki/(T s^2 + s + Ki) = 0 gives p = T s^3 + s^2 + Ki s + Ko Ki."""
    parameters = {"Ki": "3", "Ko": "0.5", "T": "0.2"}
    equations = ["y1r = Ko*(r - y2)", "v = Ki/s*(y1r - y1)", "y1 = 1/(T*s + 1)*v", "y2 = 1/s*y1"]
    case = parse_case(_case(equations, parameters))
    names = case.family.names
    assert case.diagram is not None and case.diagram.inputs == ("r",)
    for point in _points(case.family, 4):
        at = dict(zip(names, point, strict=True))
        ki, ko, t = (sp.Rational(at[n].numerator, at[n].denominator) for n in ("Ki", "Ko", "T"))
        by_hand = _sympy_coefficients(t * S**3 + S**2 + ki * S + ko * ki, {})
        # sympy: det(I - G) over the signals (y1r, v, y1, y2) times the denominators 1, s, T s + 1, s
        g = sp.zeros(4, 4)
        g[0, 3] = -ko
        g[1, 0], g[1, 2] = ki / S, -ki / S
        g[2, 1] = 1 / (t * S + 1)
        g[3, 2] = 1 / S
        det = (sp.eye(4) - g).det() * S * (t * S + 1) * S
        got = case.family.written_at(point)
        assert _proportional(got, by_hand)
        assert _proportional(got, _sympy_coefficients(det, {}))


def _mason_delta(loops: list[tuple[set[str], object]]):
    """1 - sum L_i + sum over pairs of non-touching loops L_i L_j - ... (Mason 1956)."""
    import itertools

    delta = sp.Integer(1)
    for size in range(1, len(loops) + 1):
        for group in itertools.combinations(loops, size):
            nodes = [n for n, _ in group]
            if all(a.isdisjoint(b) for a, b in itertools.combinations(nodes, 2)):
                delta += (-1) ** size * sp.prod([gain for _, gain in group])
    return delta


@pytest.mark.parametrize("touching", [False, True])
def test_two_loop_diagrams_follow_masons_rule(touching):
    """Two first-order loops, either apart (a cascade: non-touching, Delta = 1 - L1 - L2 +
    L1 L2) or sharing the signal x (touching: Delta = 1 - L1 - L2). The characteristic
    polynomial is Delta times the blocks' denominators (Mason 1956, with the graph
    determinant of the interconnection)."""
    parameters = {"a": "2", "b": "3", "c": "0.5"}
    if touching:
        equations = ["x = r - a/(s + 1)*x - b/(s + 2)*y", "y = c*x"]
        loops = lambda a, b, c: [({"x"}, -a / (S + 1)), ({"x", "y"}, -b / (S + 2) * c)]  # noqa: E731
        denominators = lambda: (S + 1) * (S + 2)  # noqa: E731
    else:
        equations = ["x = r - a/(s + 1)*x", "y = x - b/(s + 2)*y + c*x"]
        loops = lambda a, b, c: [({"x"}, -a / (S + 1)), ({"y"}, -b / (S + 2))]  # noqa: E731
        denominators = lambda: (S + 1) * (S + 2)  # noqa: E731
    case = parse_case(_case(equations, parameters))
    for point in _points(case.family, 3):
        at = dict(zip(case.family.names, point, strict=True))
        a, b, c = (sp.Rational(at[n].numerator, at[n].denominator) for n in ("a", "b", "c"))
        expected = _sympy_coefficients(_mason_delta(loops(a, b, c)) * denominators(), {})
        assert _proportional(case.family.written_at(point), expected)
    assert len(case.diagram.loops()) == 2


def test_the_shipped_cascaded_drive_matches_sympys_determinant():
    """cases/cascaded_motor_drive.toml: three nested loops and the back-EMF loop; sympy's
    determinant of I - G over its ten signals, times the equations' denominators s (speed PI),
    s (current PI), L s + R, J s + B, s (th = w/s), Tw s + 1."""
    case = load_case(ROOT / "cases" / "cascaded_motor_drive.toml")
    names = case.family.names
    for point in _points(case.family, 3):
        at = {n: sp.Rational(v.numerator, v.denominator) for n, v in zip(names, point, strict=True)}
        R, L, Kt, J, B, Tw, Kpw, Kpp = (at[n] for n in ("R", "L", "Kt", "J", "B", "Tw", "Kpw", "Kpp"))
        order = ["ep", "wr", "ew", "ir", "ei", "v", "i", "w", "th", "wm"]
        k = {n: order.index(n) for n in order}
        g = sp.zeros(10, 10)
        g[k["ep"], k["th"]] = -1
        g[k["wr"], k["ep"]] = Kpp
        g[k["ew"], k["wr"]], g[k["ew"], k["wm"]] = 1, -1
        g[k["ir"], k["ew"]] = Kpw + 8 / S
        g[k["ei"], k["ir"]], g[k["ei"], k["i"]] = 1, -1
        g[k["v"], k["ei"]] = 5 + 2400 / S
        g[k["i"], k["v"]], g[k["i"], k["w"]] = 1 / (L * S + R), -Kt / (L * S + R)
        g[k["w"], k["i"]] = Kt / (J * S + B)
        g[k["th"], k["w"]] = 1 / S
        g[k["wm"], k["w"]] = 1 / (Tw * S + 1)
        det = (sp.eye(10) - g).det(method="berkowitz") * S * S * (L * S + R) * (J * S + B) * S * (Tw * S + 1)
        assert _proportional(case.family.written_at(point), _sympy_coefficients(det, {}))
    assert case.family.degree == 6


# -- what trace and the report show ---------------------------------------------------------------

def test_trace_shows_the_equations_signals_and_loops():
    result = CliRunner().invoke(main, ["trace", str(ROOT / "cases" / "cascaded_motor_drive.toml"), "--json"])
    assert result.exit_code == 0, result.output
    diagram = json.loads(result.stdout)["diagram"]
    assert diagram["inputs"] == ["r"] and diagram["signals"][0] == "ep"
    loops = {tuple(loop["signals"]) for loop in diagram["loops"]}
    # the back-EMF loop, the current loop, the speed loop and the position loop
    assert ("i", "w") in loops and ("ei", "v", "i") in loops and len(loops) == 4
    back_emf = next(loop for loop in diagram["loops"] if loop["signals"] == ["i", "w"])
    assert "Kt^2" in back_emf["gain"] and back_emf["gain"].startswith("-")
    text = CliRunner().invoke(main, ["trace", str(ROOT / "cases" / "cascaded_motor_drive.toml")]).stdout
    assert "Loop 1: i -> w -> i" in text and "  i = (v - Kt*w)/(L*s + R)" in text


def test_the_case_as_written_lists_every_equation():
    case = load_case(ROOT / "cases" / "cascaded_motor_drive.toml")
    lines = case.written.splitlines()
    assert lines[0].startswith("polynomial = det(I - G)")
    assert "  wm = w/(Tw*s + 1)" in lines and len(lines) == 11


def test_a_diagram_without_feedback_is_the_product_of_its_denominators():
    """No loop: det(I - G) = 1, so the polynomial is (s + K)(s + 3) (derived here)."""
    case = parse_case(_case(["x = 1/(s + K)*r", "y = 2/(s + 3)*x"]))
    assert case.diagram.loops() == ()
    assert _proportional(case.family.written_at((F(2),)), [1, 5, 6])


# -- errors: one line, exit 2, naming the equation and the signal ----------------------------------

ERRORS = [
    ("defined twice", ["e = r - y", "y = K/s*e", "y = e"], None,
     "equations[2]", "the signal y is defined twice (also by equation 1)"),
    ("undeclared", ["e = r - y", "y = K/s*e + d"], ["r"],
     "equations[1]", "d is not a parameter, a signal an equation defines or a declared input"),
    ("typo of a signal", ["e = r - ymeas", "y = K/s*e", "y_meas = y/(s + 1)"], None,
     "equations[0]", "ymeas is not a parameter or a signal any equation defines (did you mean y_meas?)"),
    ("typo of a parameter", ["e = r - y", "y = KK/s*e"], None,
     "equations[1]",
     "a term multiplies signals (e and KK): the diagram must be linear; "
     "KK is not a parameter (did you mean K?)"),
    ("product of signals", ["e = r - y", "y = K*e*y"], None, "equations[1]",
     "a term multiplies signals (e and y)"),
    ("division by a signal", ["e = r - y", "y = K/e"], None, "equations[1]", "divides by the signal e"),
    ("offset", ["e = r - y", "y = K/s*e + 1"], None, "equations[1]", "a term holds no signal"),
    ("no equals sign", ["e = r - y", "y K*e"], None, "equations[1]", "exactly one '='"),
    ("left side a parameter", ["K = r"], None, "equations[0]", "K is a parameter, not a signal"),
    ("left side not a name", ["y + 1 = r"], None, "equations[0]", "is not one signal name"),
    ("singular", ["a = r + b", "b = a"], None, "polynomial.diagram.equations",
     "the interconnection is singular (its determinant is identically zero): an algebraic loop through a, b"),
    ("bad formula", ["e = r - y", "y = K/(s*e"], None, "equations[1]", "unbalanced '('"),
    ("suffix in a formula", ["e = r - y", "y = 10k/s*e"], None, "equations[1]",
     "engineering suffixes such as 4.7k belong in parameter values"),
]


@pytest.mark.parametrize(("name", "equations", "inputs", "field", "words"), ERRORS,
                         ids=[e[0] for e in ERRORS])
def test_bad_diagrams_exit_2_with_one_line(tmp_path, name, equations, inputs, field, words):
    path = tmp_path / "case.toml"
    path.write_text(_case(equations, inputs=inputs))
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2, result.output
    line = result.stderr.strip()
    assert len(line.splitlines()) == 1 and str(path) in line
    assert field in line and words in line, line
    assert "expected" in line


def test_unknown_key_and_missing_equations(tmp_path):
    path = tmp_path / "case.toml"
    path.write_text(_case(["y = K/s*r"]).replace("equations =", "equatoins ="))
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2 and "unknown key (did you mean equations?)" in result.stderr


def test_undeclared_inputs_are_named_in_a_note():
    case = parse_case(_case(["e = r - y", "y = K/s*e"]))
    assert case.diagram.inputs == ("r",)
    assert any("read as external inputs: r" in note for note in case.notes)


def test_a_unit_mistake_in_the_shipped_drive_is_caught(tmp_path):
    """Friction entered with a stiffness unit: J*s + B adds kg*m^2/s to N*m/rad (= kg*m^2/s^2):
    one line naming the equation (a fact of the trade: viscous friction is torque per speed)."""
    text = (ROOT / "cases" / "cascaded_motor_drive.toml").read_text()
    path = tmp_path / "drive.toml"
    path.write_text(text.replace('unit = "N*m*s/rad"', 'unit = "N*m/rad"'))
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    line = result.stderr.strip()
    assert len(line.splitlines()) == 1
    assert "polynomial.diagram.equations[7]" in line and "J*s" in line and "B" in line


def test_a_diagram_case_is_hashable_and_travels_to_other_processes():
    """Like every case: hashable (caches key on it) and equal after pickling (the executor
    sends work to other processes)."""
    import pickle

    case = load_case(ROOT / "cases" / "cascaded_motor_drive.toml")
    assert hash(case) == hash(pickle.loads(pickle.dumps(case)))
    assert pickle.loads(pickle.dumps(case)) == case
