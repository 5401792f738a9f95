"""Tests for robust.model.expr: the safe formula parser and polynomial coefficients.

Truth comes from outside the project: expected expressions are built programmatically with
sympy objects and Python operators (sp.Symbol, +, *, **; Meurer et al., "SymPy: symbolic
computing in Python", PeerJ Comput. Sci., 2017), never by handing formula text to sympy;
decimal literals are checked against sympy's exact ``Rational`` of the same digits; operator
precedence and associativity are those of ordinary algebra (common practice, no source).
"""

from __future__ import annotations

import builtins
import time
from fractions import Fraction

import pytest
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from robust.errors import FormulaError, InputError
from robust.exact.numbers import parse_number
from robust.model.expr import MAX_EXPONENT, parse_formula, polynomial_coefficients

S = sp.Symbol("s")
R1, C1, K = sp.symbols("R1 C1 K")
NAMES = ("R1", "C1", "K")


def parsed(text: str, **kwargs) -> sp.Expr:
    return parse_formula(text, names=NAMES, **kwargs).expression


def same(a: sp.Expr, b: sp.Expr) -> bool:
    return sp.expand(a - b) == 0


# -- values and precedence ----------------------------------------------------------------


def test_decimals_are_exact_rationals():
    """0.1 and 0.2 are read as exactly 1/10 and 1/5, so their product is exactly 1/50."""
    assert polynomial_coefficients("0.1*s + 0.2") == [Fraction(1, 10), Fraction(1, 5)]
    assert polynomial_coefficients("0.1*0.2") == [Fraction(1, 50)]
    # sympy's Rational of the same digits (Meurer et al., 2017)
    assert parsed("4.7e-3*K") == sp.Rational("4.7e-3") * K
    assert parsed(".5 + 12.") == sp.Rational(25, 2)


def test_unary_minus_binds_looser_than_power():
    """-s^2 is -(s^2), not (-s)^2, and -2^2 is -4 (ordinary algebra)."""
    assert parsed("-s^2") == -(S**2)
    assert parsed("-2^2") == -4
    assert parsed("(-2)^2") == 4
    assert parsed("--s") == S
    assert parsed("s - -1") == S + 1


def test_caret_and_double_star_are_the_same_power():
    """2^3 and 2**3 are both 8; s**2 and s^2 are the same expression."""
    assert parsed("2^3") == parsed("2**3") == 8
    assert parsed("s**2 + K**3") == parsed("s^2 + K^3") == S**2 + K**3


def test_products_bind_tighter_than_sums_and_division_is_left_associative():
    """a + b*c is a + (b*c); 2/3/4 is (2/3)/4; 1/2*s is s/2."""
    assert parsed("1 + 2*3") == 7
    assert parsed("2/3/4") == sp.Rational(1, 6)
    assert parsed("1/2*s") == S / 2
    assert parsed("10 - 4 - 3") == 3
    assert parsed("2*s^2*3") == 6 * S**2


def test_negative_and_parenthesised_integer_exponents():
    """R1^-1 is 1/R1 and s^(2) is s^2 when the formula is not a polynomial in s."""
    assert parsed("R1^-1") == 1 / R1
    assert parsed("R1^(-2)") == R1**-2
    assert parsed("s^(2)") == S**2
    assert parsed("1/s") == 1 / S  # allowed outside polynomial mode
    assert parsed("s^-0") == 1


def test_names_lists_the_declared_names_used_without_the_variable():
    """``names`` is the sorted set of declared parameters that occur, the variable excluded."""
    result = parse_formula("R1*C1*s^2 + (R1 + 2)*s + 1", names=NAMES)
    assert result.names == ("C1", "R1")
    assert same(result.expression, R1 * C1 * S**2 + (R1 + 2) * S + 1)
    assert result.text == "R1*C1*s^2 + (R1 + 2)*s + 1"


def test_polynomial_coefficients_are_highest_power_first():
    """(s + 1)^2 (s + 0.5) expands to 1, 2.5, 2, 0.5, exactly."""
    # expanded by hand: (s^2 + 2s + 1)(s + 1/2) (common practice, no source)
    assert polynomial_coefficients("(s + 1)^2*(s + 0.5)") == [
        Fraction(1), Fraction(5, 2), Fraction(2), Fraction(1, 2)
    ]
    assert polynomial_coefficients("x^2 - 1", variable="x") == [1, 0, -1]
    assert polynomial_coefficients("7") == [7]


def test_parser_never_calls_eval_or_exec(monkeypatch):
    """Parsing valid formulas does not call the builtins eval or exec."""
    def refuse(*args, **kwargs):
        raise AssertionError("eval/exec must not be used")

    monkeypatch.setattr(builtins, "eval", refuse)
    monkeypatch.setattr(builtins, "exec", refuse)
    assert same(parsed("R1*C1*s^2 + (R1 + K)*C1*s + 1"), R1 * C1 * S**2 + (R1 + K) * C1 * S + 1)
    assert polynomial_coefficients("(s + 2)^3") == [1, 6, 12, 8]


# -- property: formulas built alongside their sympy expressions ------------------------------

_number = st.one_of(
    st.integers(0, 99).map(str),
    st.tuples(st.integers(0, 99), st.integers(0, 999)).map(lambda t: f"{t[0]}.{t[1]}"),
    st.tuples(st.integers(1, 9), st.integers(-3, 3)).map(lambda t: f"{t[0]}e{t[1]}"),
)
_atom = st.one_of(
    _number.map(lambda text: (text, sp.Rational(text))),  # sympy's exact decimal reading
    st.sampled_from([("s", S), ("R1", R1), ("C1", C1), ("K", K)]),
)


def _extend(children):
    binary = st.tuples(children, st.sampled_from(["+", "-", "*"]), children).map(
        lambda t: (f"({t[0][0]} {t[1]} {t[2][0]})",
                   {"+": t[0][1] + t[2][1], "-": t[0][1] - t[2][1], "*": t[0][1] * t[2][1]}[t[1]])
    )
    divided = st.tuples(children, st.sampled_from([("R1", R1), ("K", K), ("4", 4)])).map(
        lambda t: (f"({t[0][0]})/{t[1][0]}", t[0][1] / t[1][1])
    )
    powered = st.tuples(children, st.integers(0, 3), st.sampled_from(["^", "**"])).map(
        lambda t: (f"({t[0][0]}){t[2]}{t[1]}", t[0][1] ** t[1])
    )
    negated = children.map(lambda t: (f"-({t[0]})", -t[1]))
    return st.one_of(binary, divided, powered, negated)


formulas = st.recursive(_atom, _extend, max_leaves=12)


@given(formulas)
def test_random_formulas_parse_to_the_expression_they_were_built_from(pair):
    """A formula written from a random syntax tree parses to that tree's sympy expression."""
    text, expected = pair
    assert same(parsed(text), expected)  # sympy arithmetic (Meurer et al., 2017)


_factor = st.one_of(
    _atom,
    st.tuples(_atom, st.integers(0, 4)).map(lambda t: (f"{t[0][0]}^{t[1]}", t[0][1] ** t[1])),
)
_term = st.lists(_factor, min_size=1, max_size=3).map(
    lambda fs: ("*".join(f[0] for f in fs), sp.Mul(*[f[1] for f in fs]))
)


@given(_term, st.lists(st.tuples(st.sampled_from(["+", "-"]), _term), max_size=4))
def test_unparenthesised_sums_of_products_follow_ordinary_precedence(first, rest):
    """a*b^k + c - d*e without parentheses means (a*(b^k)) + c - (d*e)."""
    text, expected = first
    for op, (term_text, term) in rest:
        text += f" {op} {term_text}"
        expected = expected + term if op == "+" else expected - term
    assert same(parsed(text), expected)  # ordinary precedence, built with sympy arithmetic


# -- rejections -------------------------------------------------------------------------------

REJECTED = [
    # (text, column, fragment of the problem)
    ("R2*s + 1", 1, "unknown name 'R2'"),
    ("s + foo", 5, "unknown name 'foo'"),
    ("sin(s)", 1, "function calls are not allowed"),
    ("exit(0)", 1, "function calls are not allowed"),
    ("__import__('os').system('x')", 12, "not part of a formula"),
    ("s.real", 2, "attribute access"),
    ("(s + 1).conjugate", 8, "attribute access"),
    ("s^2^3", 4, "exponent towers"),
    ("s**2**3", 5, "exponent towers"),
    ("s^K", 3, "integer constants"),
    ("s^x", 3, "integer constants"),
    ("s^0.5", 3, "integer constants"),
    ("s^(1+1)", 5, "integer constants"),
    (f"s^{MAX_EXPONENT + 1}", 3, "exponent too large"),
    ("2s + 1", 2, "missing operator after a number"),
    ("10k*s", 3, "missing operator after a number"),
    ("2 (s + 1)", 3, "missing operator"),
    ("s (s + 1)", 1, "function calls are not allowed"),
    ("s*(s + 1", 3, "unbalanced '('"),
    ("s + 1)", 6, "unbalanced ')'"),
    ("s + ()", 6, "empty parentheses"),
    ("s +", 4, "ends too early"),
    ("s // 2", 4, "unexpected '/'"),
    ("s $ 2", 3, "unexpected character"),
    ("s[0]", 2, "not part of a formula"),
    ("1/0", 2, "division by zero"),
    ("1e401*s", 1, "decimal exponent out of range"),
    ("((9^200)^200)^200", 9, "number too large"),
]


@pytest.mark.parametrize(("text", "column", "fragment"), REJECTED)
def test_bad_formulas_raise_formula_error_naming_the_column(text, column, fragment):
    """Each forbidden or malformed construct raises FormulaError with its 1-based column."""
    with pytest.raises(FormulaError) as info:
        parse_formula(text, names=NAMES)
    assert info.value.position == column
    assert fragment in str(info.value)
    assert f"at column {column} of" in str(info.value)
    assert isinstance(info.value, ValueError) and isinstance(info.value, InputError)


POLYNOMIAL_ONLY = [
    ("1/s", 2, "division by an expression in s"),
    ("(s + 1)/(s + 2)", 8, "division by an expression in s"),
    ("s^-1 + 1", 2, "negative power of an expression in s"),
    ("(s + 1)^(-2)", 8, "negative power of an expression in s"),
    ("K*s", 1, "unknown name 'K'"),
]


@pytest.mark.parametrize(("text", "column", "fragment"), POLYNOMIAL_ONLY)
def test_non_polynomial_forms_are_rejected_in_polynomial_mode(text, column, fragment):
    """Division by s, negative powers of s and parameter names are refused for polynomials."""
    with pytest.raises(FormulaError) as info:
        polynomial_coefficients(text)
    assert info.value.position == column
    assert fragment in str(info.value)


@pytest.mark.parametrize("text", ["", "   ", "\t"])
def test_empty_formula_is_rejected(text):
    """An empty or blank formula raises FormulaError ('empty formula')."""
    with pytest.raises(FormulaError, match="empty formula"):
        parse_formula(text)


def test_variable_none_makes_s_an_unknown_name():
    """With variable=None the letter s is just an undeclared name."""
    with pytest.raises(FormulaError, match="unknown name 's'"):
        parse_formula("s + 1", variable=None)


def test_non_text_formula_is_rejected():
    """A formula that is not a string raises FormulaError instead of being converted."""
    with pytest.raises(FormulaError, match="must be text"):
        parse_formula(12)  # type: ignore[arg-type]


def test_code_in_a_formula_is_rejected_without_running(tmp_path, monkeypatch):
    """Python code in a formula is refused before anything could run: no file appears."""
    monkeypatch.chdir(tmp_path)
    sentinel = tmp_path / "SENTINEL"
    attempts = [
        "__import__('os').system('touch SENTINEL')",
        "open('SENTINEL', 'w')",
        "__import__(s)",
        "s.__class__",
        "[c for c in ()]",
        "lambda: 1",
    ]
    for text in attempts:
        with pytest.raises(FormulaError):
            parse_formula(text)
    assert not sentinel.exists()


# -- hostile sizes are refused quickly ------------------------------------------------------


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ("(" * 500 + "s" + ")" * 500, "nested too deeply"),
        ("-" * 5000 + "s", "nested too deeply"),
        ("s+" * 15000 + "s", "too long"),
        ("(s + 1)^200*(s + 1)^200", "degree in s too high"),
        ("((s + 1)^100)^3", "degree in s too high"),
        ("s" + "*s" * 300, "degree in s too high"),
        ("(" + " + ".join(f"R{i}" for i in range(20)) + ")^10", "absurd size"),
        ("(((9^200)^200)^200)^200*s", "number too large"),
    ],
)
def test_hostile_formulas_are_refused_fast(text, fragment):
    """Deep nesting, huge length and absurd expanded sizes are refused in well under a second."""
    names = [f"R{i}" for i in range(20)]
    start = time.perf_counter()
    with pytest.raises(FormulaError, match=fragment):
        parse_formula(text, names=names)
    assert time.perf_counter() - start < 1.0


def test_largest_allowed_degree_is_accepted():
    """Degree 200 (the limit) is accepted and expanded exactly: (s + 1)^200 has C(200, k)."""
    coefficients = polynomial_coefficients("(s + 1)^200")
    assert len(coefficients) == 201
    assert coefficients[100] == sp.binomial(200, 100)  # binomial theorem (common practice)


# -- expansion: exact, bounded, and what is zero once expanded -----------------------------------


def test_division_by_an_expression_that_expands_to_zero_is_refused():
    """(s+1)/((s+1)^2 - s^2 - 2s - 1) divides by zero once expanded: refused at the '/'."""
    with pytest.raises(FormulaError, match="identically zero once expanded") as caught:
        parse_formula("(s+1)/((s+1)^2-s^2-2*s-1)")
    assert caught.value.position == 6
    with pytest.raises(FormulaError, match="identically zero once expanded"):
        parse_formula("s + (K - K)^-2", names=NAMES)
    with pytest.raises(FormulaError, match="division by zero"):
        parse_formula("s/0")


def test_power_of_a_sum_expands_like_sympy():
    """(R1 + C1 + 1)^40 * s + 1 expands exactly as sympy's expand of the same product."""
    got = parse_formula("(R1 + C1 + 1)^40*s + 1", names=NAMES).expression
    assert sp.expand(got - ((R1 + C1 + 1) ** 40 * S + 1)) == 0  # sympy (Meurer et al., 2017)


def test_numerator_and_denominator_are_kept_as_written():
    """(s + 1)/(s + 1) keeps both factors: a cancellation must not hide a mode."""
    result = parse_formula("(s + 1)/(s + 1)")
    assert result.numerator == S + 1 and result.denominator == S + 1


def test_expansion_over_the_work_limit_is_refused_with_the_limit():
    """A product whose expansion needs more term products than the limit says so."""
    from robust.model.expr import MAX_WORK

    with pytest.raises(FormulaError, match=f"{MAX_WORK:,} term products"):
        parse_formula("(R1+s+1)^60*(R1+s+2)^60", names=NAMES)


def test_one_work_account_spans_several_formulas():
    """Formulas that share a work account draw on one limit together."""
    from robust.exact.sparse import Work

    work = Work(1_000)
    parse_formula("(R1 + K + 1)^10", names=NAMES, work=work)  # 3 * (1 + 3 + ... ) products
    spent = work.spent
    assert 0 < spent < 1_000
    with pytest.raises(FormulaError, match="term products"):
        parse_formula("(R1 + K + 1)^10", names=NAMES, work=work)


def test_unicode_digits_are_not_numbers():
    """An Arabic-Indic three is not the number 3 (only ASCII digits are)."""
    with pytest.raises(FormulaError, match="unexpected character"):
        parse_formula("s + \u0663")
    with pytest.raises(InputError):
        parse_number("\u0663")


def test_literals_of_thousands_of_digits_are_exact():
    """A 5000-digit integer literal is read exactly (past Python's int-string limit)."""
    digits = "7" * 5000
    assert parse_number(digits) == Fraction(int(digits[:2000]) * 10**3000 + int(digits[2000:]))
    assert polynomial_coefficients(f"{digits}*s + 1")[0] == parse_number(digits)


# -- the formula as written (keep_tree) ----------------------------------------------------------

_ATOMS = st.sampled_from(["R1", "C1", "K", "s", "2", "0.5", "1"])
_FORMULAS = st.recursive(
    _ATOMS,
    lambda inner: st.one_of(
        st.tuples(inner, st.sampled_from([" + ", " - ", "*", "/"]), inner).map("".join),
        st.tuples(inner, st.sampled_from(["^2", "^-1"])).map(lambda t: f"({t[0]}){t[1]}"),
        inner.map(lambda t: f"-({t})"),
    ),
    max_leaves=8,
)


@given(_FORMULAS)
def test_keeping_the_tree_changes_nothing_and_each_node_reads_as_a_formula(text):
    """With keep_tree the expansion is the same; every node's span is itself a formula whose
    value is that node's (a product or sum rebuilt from its children's spans by ordinary
    algebra, common practice, no source)."""
    try:
        plain = parse_formula(text, NAMES)
    except FormulaError:  # a division by zero the strategy may write
        return
    kept = parse_formula(text, NAMES, keep_tree=True)
    assert plain.tree is None and kept.tree is not None
    assert dict(kept.expanded_numerator) == dict(plain.expanded_numerator)
    assert dict(kept.expanded_denominator) == dict(plain.expanded_denominator)

    def value(node):
        return parsed(text[node.start:node.end])

    stack = [kept.tree]
    while stack:
        node = stack.pop()
        stack.extend(node.children)
        if node.kind == "name":
            assert text[node.start:node.end] == node.name
        elif node.kind == "product":
            rebuilt = sp.Integer(1)
            for child, inverted in zip(node.children, node.inverted, strict=True):
                rebuilt = rebuilt / value(child) if inverted else rebuilt * value(child)
            assert same(sp.cancel(value(node) ** 2), sp.cancel(rebuilt**2))  # a leading sign aside
        elif node.kind == "power":
            assert same(sp.cancel(value(node)), sp.cancel(value(node.children[0]) ** node.exponent))
