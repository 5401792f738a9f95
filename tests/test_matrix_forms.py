"""Tests for the matrix forms of a case file (robust.model.matrices) and the determinant
behind them (robust.exact.polydet).

Truth comes from outside the project: a state-space case's polynomial is compared with the
eigenvalues numpy computes for A or A - B K at random points of the box (Harris et al.,
"Array programming with NumPy", Nature 2020: ``numpy.linalg.eigvals`` and ``numpy.poly``);
det(M s^2 + C s + K) of a mass-spring-damper chain with the closed form derived by hand in
its test's docstring (derived here); the determinant module with sympy's ``Matrix.det()``
(Meurer et al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017). Every
error message is checked on its own small case through the command line.
"""

from __future__ import annotations

import json
import random
from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.cli import main
from robust.errors import InputError
from robust.exact import sparse
from robust.exact.polydet import determinant
from robust.model.case import parse_case

F = Fraction
S = sp.Symbol("s")


def _head(*parameters: tuple[str, str, str]) -> str:
    lines = ['title = "t"']
    for name, nominal, tolerance in parameters:
        lines += [f"[parameters.{name}]", f"nominal = {json.dumps(nominal)}",
                  f"tolerance = {json.dumps(tolerance)}"]
    return "\n".join(lines) + "\n"


def _matrix(rows) -> str:
    return json.dumps([[str(e) for e in row] for row in rows])


def _points(family, count: int, seed: str):
    rng = random.Random(seed)
    for _ in range(count):
        yield tuple(lo + (hi - lo) * F(rng.randint(0, 40), 40) for lo, hi in family.box.intervals)


def _monic(coefficients) -> np.ndarray:
    values = np.array([float(c) for c in coefficients])
    return values / values[0]


# -- state space against numpy's eigenvalues --------------------------------------------------

STATE_HEAD = _head(("k", "40", "10%"), ("m", "2", "5%"), ("c", "3", "20%"), ("g", "0.5", "30%"))
STATE_A = [["0", "1", "0"], ["-k/m", "-c/m", "g/m"], ["1/(m + g)", "0", "-c - k/(c + g)"]]
STATE_B = [["0"], ["1/m"], ["g"]]
STATE_K = [["2*g", "0.5", "k/10"]]


def _numeric_state(values: dict[str, float], feedback: bool) -> np.ndarray:
    """A (or A - B K) of the case above, built here from the same formulas written in Python."""
    k, m, c, g = (values[n] for n in ("k", "m", "c", "g"))
    a = np.array([[0, 1, 0], [-k / m, -c / m, g / m], [1 / (m + g), 0, -c - k / (c + g)]])
    if not feedback:
        return a
    b = np.array([[0], [1 / m], [g]])
    gain = np.array([[2 * g, 0.5, k / 10]])
    return a - b @ gain


@pytest.mark.parametrize("feedback", [False, True], ids=["open", "state_feedback"])
def test_state_space_polynomial_has_the_eigenvalues_numpy_finds(feedback):
    """det(sI - A), and det(sI - (A - B K)) with feedback, have the eigenvalues numpy computes
    for the same matrix at random points of the box (numpy, Harris et al. 2020)."""
    extra = f"B = {_matrix(STATE_B)}\nK = {_matrix(STATE_K)}\nC = [[1, 0, 0]]\n" if feedback else ""
    case = parse_case(STATE_HEAD + f"[polynomial.state_space]\nA = {_matrix(STATE_A)}\n" + extra, "ss.toml")
    assert case.form == "state_space" and case.family.degree == 3
    for point in _points(case.family, 12, f"state-{feedback}"):
        values = {n: float(v) for n, v in zip(case.family.names, point, strict=True)}
        reference = np.poly(np.linalg.eigvals(_numeric_state(values, feedback)))  # numpy
        got = _monic(case.family.written_at(point))
        np.testing.assert_allclose(got, reference.real, rtol=1e-9, atol=1e-9)


@settings(max_examples=25)
@given(st.lists(st.integers(-6, 6), min_size=9, max_size=9), st.fractions(0, 1, max_denominator=20))
def test_discrete_state_space_matches_numpy_eigenvalues(entries, where):
    """In z, det(zI - A) of an integer-and-parameter A has numpy's eigenvalues of A (Harris et
    al. 2020), whatever the integers are."""
    rows = [[f"{entries[3 * i + j]}/4" + ("*a" if i == j else "") for j in range(3)] for i in range(3)]
    text = 'title = "t"\nvariable = "z"\n[parameters.a]\nrange = [0.5, 1.5]\n' \
           f"[polynomial.state_space]\nA = {_matrix(rows)}\n"
    case = parse_case(text, "z.toml")
    a_value = F(1, 2) + where
    numeric = np.array([[entries[3 * i + j] / 4 * (float(a_value) if i == j else 1) for j in range(3)]
                        for i in range(3)])
    reference = np.poly(np.linalg.eigvals(numeric)).real  # numpy
    got = case.family.written_at((a_value,))
    # written_at gives the z polynomial of full degree 3, leading coefficient 1 up to scaling
    np.testing.assert_allclose(_monic(got), reference, rtol=1e-9, atol=1e-9)


# -- mechanical form against a closed form derived here ---------------------------------------


def test_mass_spring_damper_chain_matches_the_closed_form():
    """Three equal masses m in a chain fixed at one end, free at the other, each link a spring k
    with a damper c in parallel: M = m*I, K = k*T, C = c*T with T = [[2, -1, 0], [-1, 2, -1],
    [0, -1, 1]]. Derived here: det(m s^2 I + (c s + k) T) = (c s + k)^3 det(x I + T) with
    x = m s^2/(c s + k), and expanding along the first row
    det(x I + T) = (x + 2)((x + 2)(x + 1) - 1) - (x + 1) = x^3 + 5 x^2 + 6 x + 1, so
    p(s) = (m s^2)^3 + 5 (m s^2)^2 (c s + k) + 6 m s^2 (c s + k)^2 + (c s + k)^3."""
    chain = [[2, -1, 0], [-1, 2, -1], [0, -1, 1]]
    text = (_head(("m", "1.5", "10%"), ("k", "300", "20%"), ("c", "0.4", "50%")) + "[polynomial.mechanical]\n"
            f"M = {_matrix([['m' if i == j else 0 for j in range(3)] for i in range(3)])}\n"
            f"C = {_matrix([[f'{t}*c' for t in row] for row in chain])}\n"
            f"K = {_matrix([[f'{t}*k' for t in row] for row in chain])}\n")
    case = parse_case(text, "chain.toml")
    m, k, c = sp.symbols("m k c")
    w, d = m * S**2, c * S + k
    closed_form = w**3 + 5 * w**2 * d + 6 * w * d**2 + d**3
    for point in _points(case.family, 5, "chain"):
        at = dict(zip(case.family.names, point, strict=True))
        expected = sp.Poly(closed_form.subs({m: sp.Rational(at["m"].numerator, at["m"].denominator),
                                             k: sp.Rational(at["k"].numerator, at["k"].denominator),
                                             c: sp.Rational(at["c"].numerator, at["c"].denominator)}), S)
        reference = [F(int(v.p), int(v.q)) for v in expected.all_coeffs()]
        got = list(case.family.written_at(point))
        factor = got[0] / reference[0]
        assert factor > 0 and got == [factor * v for v in reference]


def test_mechanical_entries_with_parameter_denominators_are_cleared():
    """A stiffness written per unit mass (k/m) is brought to a common row denominator and the
    family is the polynomial one would write by hand: det([[s^2 + k/m]]) -> m s^2 + k."""
    text = _head(("m", "2", "5%"), ("k", "8", "5%")) + '[polynomial.mechanical]\nM = [[1]]\nK = [["k/m"]]\n'
    case = parse_case(text, "m.toml")
    assert case.family.formulas() == ("m", "0", "k")
    assert case.formulas[0] == ("polynomial", "det(M*s^2 + K)")


# -- the determinant against sympy ------------------------------------------------------------


@st.composite
def _polynomial_matrices(draw):
    """A square matrix (size 1..4) of small integer polynomials in two variables, some zero."""
    n = draw(st.integers(1, 4))
    monomial = st.tuples(st.integers(0, 2), st.integers(0, 2))
    entry = st.dictionaries(monomial, st.integers(-5, 5).filter(bool), max_size=3)
    return [[draw(entry) for _ in range(n)] for _ in range(n)]


def _packed(terms: dict) -> dict:
    return {e0 + (e1 << sparse.BITS): c for (e0, e1), c in terms.items()}


@given(_polynomial_matrices())
def test_determinant_equals_sympys(matrix):
    """determinant() equals sympy's Matrix.det() on small integer-polynomial matrices
    (Meurer et al. 2017)."""
    x, y = sp.symbols("x y")
    reference = sp.expand(sp.Matrix([[sum(c * x**a * y**b for (a, b), c in e.items()) for e in row]
                                     for row in matrix]).det(method="berkowitz"))
    got = determinant([[_packed(e) for e in row] for row in matrix], sparse.Work(10**6))
    mask = (1 << sparse.BITS) - 1
    assert sp.expand(sum(c * x ** (m & mask) * y ** (m >> sparse.BITS) for m, c in got.items())) == reference


@given(st.integers(1, 7), st.randoms(use_true_random=False))
def test_determinant_pays_at_most_n_times_half_the_subsets(n, rng):
    """A dense matrix of constants costs at most n * 2^(n-1) products (each minor of the
    bottom rows formed once), not n!; the value is sympy's (Meurer et al. 2017)."""
    values = [[rng.randint(-9, 9) or 1 for _ in range(n)] for _ in range(n)]
    work = sparse.Work(10**6)
    got = determinant([[sparse.constant(v) for v in row] for row in values], work)
    assert work.spent <= n * 2 ** (n - 1)
    assert got.get(0, 0) == sp.Matrix(values).det()


def test_determinant_refuses_what_its_account_cannot_pay():
    """A dense matrix of many-term entries runs the work account out: one InputError."""
    rng = random.Random(8)
    entries = [[{1 << v * sparse.BITS: rng.randint(1, 9) for v in range(4)} for _ in range(8)]
               for _ in range(8)]
    with pytest.raises(InputError, match="term products"):
        determinant(entries, sparse.Work(10_000))


# -- errors, through the command line ----------------------------------------------------------

HEAD = _head(("k", "100", "10%"), ("m", "2", "5%"))  # lines 1-7
SQUARE = 'A = [["0", "1"], ["-k/m", "-1"]]'
_BIG = json.dumps([["0"] * 13] * 13)
_DENSE = json.dumps([[f"{i + 1}*k + {j + 2}*m - {(i * j) % 7 + 1}*k*m + {i * j + 3}" for j in range(12)]
                     for i in range(12)])

# (id, text after the parameters, field, line, words of the problem)
BAD = [
    ("not_square", '[polynomial.state_space]\nA = [["0", "1", "2"], ["-k/m", "-1", "3"]]',
     "polynomial.state_space.A", 9, "A is 2 x 3, not square"),
    ("ragged", '[polynomial.state_space]\nA = [["0", "1"], ["-k/m"]]', "polynomial.state_space.A", 9,
     "ragged rows: row 1 has 1 entry"),
    ("b_rows", f"[polynomial.state_space]\n{SQUARE}\nB = [[0], [1], [2]]", "polynomial.state_space.B", 10,
     "one row per state of A (2)"),
    ("c_columns", f"[polynomial.state_space]\n{SQUARE}\nC = [[1, 0, 0]]", "polynomial.state_space.C", 10,
     "one column per state of A (2)"),
    ("k_shape", f'[polynomial.state_space]\n{SQUARE}\nB = [[0], ["1/m"]]\nK = [[1, 2], [3, 4]]',
     "polynomial.state_space.K", 11, "one row per input of B (1)"),
    ("k_without_b", f"[polynomial.state_space]\n{SQUARE}\nK = [[1, 2]]", "polynomial.state_space.K", 10,
     "state feedback K needs the input matrix B"),
    ("mechanical_shape", '[polynomial.mechanical]\nM = [["m", 0], [0, "m"]]\nK = [["k"]]',
     "polynomial.mechanical.K", 10, "the 2 x 2 shape of M"),
    ("entry_type", '[polynomial.state_space]\nA = [["0", "1"], ["-k/m", true]]',
     "polynomial.state_space.A[1][1]", 9, "a matrix entry must be a formula (text) or a number"),
    ("entry_table", '[polynomial.mechanical]\nM = [[{x = 1}]]\nK = [["k"]]', "polynomial.mechanical.M[0][0]",
     9, "a matrix entry must be a formula (text) or a number"),
    ("entry_in_s", '[polynomial.state_space]\nA = [["0", "1"], ["-k/m", "-m*s"]]',
     "polynomial.state_space.A[1][1]", 9, "a matrix entry depends on s"),
    ("entry_formula", '[polynomial.mechanical]\nM = [["m", 0], [0, "m"]]\nK = [["k", 0], [0, "k +"]]',
     "polynomial.mechanical.K[1][1]", 10, "formula ends too early"),
    ("two_forms", f'[polynomial]\nexpression = "s + k"\n[polynomial.state_space]\n{SQUARE}', "polynomial", 8,
     "give exactly one of expression, coefficients, loop, state_space, mechanical and diagram"),
    ("unknown_key", '[polynomial.state_space]\na = [["-k"]]', "polynomial.state_space.a", 9,
     "unknown key (did you mean A?)"),
    ("unknown_key_mechanical", '[polynomial.mechanical]\nM = [["m"]]\nK = [["k"]]\nDamping = [["1"]]',
     "polynomial.mechanical.Damping", 11, "unknown key"),
    ("too_large", f"[polynomial.state_space]\nA = {_BIG}", "polynomial.state_space.A", 9,
     "the matrix is 13 x 13, larger than 12 x 12"),
    ("missing_matrix", '[polynomial.mechanical]\nM = [["m"]]', "polynomial.mechanical", 8,
     "the matrix K is missing"),
    ("not_a_table", "[polynomial]\nstate_space = 3", "polynomial.state_space", 9, "must be a table"),
    ("hostile_dense", f"[polynomial.state_space]\nA = {_DENSE}", "polynomial.state_space", 8,
     "term products"),
    ("denominator_vanishes", '[parameters.q]\nrange = [-1, 1]\n[polynomial.state_space]\nA = [["-1/q"]]',
     "polynomial.state_space", 10, "the factor q may vanish inside the parameter box"),
    ("mechanical_in_z", '[polynomial.mechanical]\nM = [["m"]]\nK = [["k"]]', "variable", 2,
     "describe continuous time"),
]


@pytest.mark.parametrize("name, body, field, line, words", BAD, ids=[b[0] for b in BAD])
def test_bad_matrix_form_exits_2_with_one_line(tmp_path, name, body, field, line, words):
    """Each malformed matrix form gives exit code 2 and one line naming file, field and line."""
    head = HEAD.replace('title = "t"\n', 'title = "t"\nvariable = "z"\n') if name.endswith("_in_z") else HEAD
    path = tmp_path / f"{name}.toml"
    path.write_text(head + body + "\n", encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2, (result.stdout, result.stderr)
    message = result.stderr.strip()
    assert "\n" not in message and "Traceback" not in message and result.stdout == ""
    where = f"{path}:{line}: " if line is not None else f"{path}: "
    assert message.startswith(f"robust: error: {where}{field}: "), message
    assert words in message
