"""Tests for robust.exact.routh: the exact Routh array, its special rows and its root counts.

Truth comes from outside the project:

* sympy's exact root isolation (Meurer et al., "SymPy: symbolic computing in Python", PeerJ
  Comput. Sci., 2017): ``tests/reference.py``, ``reference_counts`` for polynomials built from
  known factors and ``isolated_counts`` (complex root counting in a rectangle) for random ones;
* the ε rows recomputed in sympy's field of rational functions QQ(ε) (the textbook recurrence
  with the ε rule, Gantmacher 1959, ch. XV; from memory), for the tables with ε rows;
* the roots of s^n + 1 and s^n - 1, which are roots of unity (de Moivre; common practice, no
  source), for sparse polynomials of degree 200;
* the counts known by construction (a root's half-plane is the sign of its real part; common
  practice, no source);
* the closed-form Hurwitz conditions for degree 2, 3, 4 (Gantmacher, "The Theory of
  Matrices", vol. 2, 1959, ch. XV; from memory);
* the reciprocal polynomial s^n p(1/s) having the same counts when p(0) != 0 (r -> 1/r keeps
  the sign of the real part; common practice, no source);
* a plain ``fractions.Fraction`` Routh loop written here (the textbook recurrence, common
  practice, no source) for the rows.

All polynomials are our own numbers.
"""

from __future__ import annotations

import json
from fractions import Fraction

import pytest
import sympy as sp
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st
from reference import isolated_counts, reference_counts
from strategies import (
    RootSpec,
    integer_coefficients,
    known_root_polynomials,
    rational_coefficients,
    small_fractions,
)

from robust import InputError, RootCounts, RouthTable, is_hurwitz, routh_table
from robust.exact.routh import EPSILON, RouthRow, SpecialRow, format_entry

S = sp.Symbol("s")


# -- independent helpers --------------------------------------------------------------------


def plain_routh_rows(coefficients):
    """The textbook Fraction recurrence, or None when it meets a zero leading entry."""
    c = [Fraction(x) for x in coefficients]
    n = len(c) - 1
    width = n // 2 + 1
    rows = [c[0::2] + [Fraction(0)] * (width - len(c[0::2])),
            c[1::2] + [Fraction(0)] * (width - len(c[1::2]))][: n + 1]
    for m in range(2, n + 1):
        a, b = rows[m - 2], rows[m - 1]
        if b[0] == 0:
            return None
        rows.append([(b[0] * a[j + 1] - a[0] * b[j + 1]) / b[0] for j in range(width - 1)]
                    + [Fraction(0)])
    if any(row[0] == 0 for row in rows):
        return None
    return [tuple(row[: (n - i) // 2 + 1]) for i, row in enumerate(rows)]


def counts_of(table: RouthTable) -> tuple[int, int, int]:
    r = table.roots
    return r.open_right, r.imaginary_axis, r.open_left


def expand(expr) -> list[int]:
    return [int(c) for c in sp.Poly(sp.expand(expr), S).all_coeffs()]


# -- special cases, each with its reference -------------------------------------------------

SPECIAL_CASES = [
    # (s^2+1)^2 (s+1): two zero rows (repeated imaginary pair); by construction (0, 4, 1)
    pytest.param(expand((S**2 + 1) ** 2 * (S + 1)), (0, 4, 1), id="repeated-imaginary-pair"),
    # s^5+2s^4+3s^3+6s^2+5s+3: a zero leading entry in the s^3 row (epsilon rule)
    pytest.param([1, 2, 3, 6, 5, 3], None, id="epsilon-s3-row"),
    pytest.param([-1, -2, -3, -6, -5, -3], None, id="epsilon-negative-leading"),
    # s^3 + 2s + 7: a_{n-1} = 0, so the second row already starts with 0
    pytest.param([1, 0, 2, 7], None, id="epsilon-second-row"),
    # s^4 + s^3 + s^2 + s + 1: the fifth roots of unity but 1 (two pairs at cos 72 deg > 0)
    pytest.param([1, 1, 1, 1, 1], (2, 0, 2), id="epsilon-cyclotomic"),
    # (s^2-2s+5)(s^2+2s+5): zero row, auxiliary without imaginary roots; roots +-1 +- 2j
    pytest.param(expand((S**2 - 2 * S + 5) * (S**2 + 2 * S + 5)), (2, 0, 2), id="quadrantal"),
    # (s^2+2)^3: three zero rows in one table
    pytest.param(expand((S**2 + 2) ** 3), (0, 6, 0), id="triple-imaginary-pair"),
    # (s^2+3)(s^2+1/4... ) with a root at the origin: s^2 (s^2+3)(s-2)
    pytest.param(expand(S**2 * (S**2 + 3) * (S - 2)), (1, 4, 0), id="origin-and-axis"),
    # epsilon rows meeting imaginary-axis roots (counts taken from the factors)
    pytest.param(expand((S**2 + 1) * (S - 1) ** 2 * (S + 2)), (2, 2, 1), id="epsilon-then-axis"),
    pytest.param(expand(-((S**2 + 4) ** 2) * (S - 2) ** 2 * (S + 2) ** 2), (2, 4, 2),
                 id="zero-row-epsilon-negative-leading"),
    pytest.param(expand((S**2 + 3) ** 2 * (S**2 - S + 2) * S * (S + 1)), (2, 5, 1),
                 id="epsilon-repeated-axis-and-origin"),
    pytest.param(expand((S**4 + 1) ** 2 * (S**2 + 1)), (4, 2, 4), id="squared-quartic-and-axis"),
    # degree 0 and 1
    pytest.param([5], (0, 0, 0), id="degree-0"),
    pytest.param([-3], (0, 0, 0), id="degree-0-negative"),
    pytest.param([1, 2], (0, 0, 1), id="degree-1-left"),
    pytest.param([2, -7], (1, 0, 0), id="degree-1-right"),
    pytest.param([-1, -3], (0, 0, 1), id="degree-1-negative-leading"),
    pytest.param([4, 0], (0, 1, 0), id="degree-1-origin"),
    pytest.param([1, 0, 0, 0], (0, 3, 0), id="triple-origin"),
]


@pytest.mark.parametrize(("coefficients", "known"), SPECIAL_CASES)
def test_special_case_counts_match_sympy_root_isolation(coefficients, known):
    """Counts of the special-case polynomials equal sympy's exact counts (and the construction)."""
    got = counts_of(routh_table(coefficients))
    assert got == isolated_counts(coefficients)  # sympy exact isolation (Meurer et al., 2017)
    if known is not None:
        assert got == known  # by construction (common practice, no source)


def test_repeated_imaginary_pair_reports_two_zero_rows_with_their_auxiliaries():
    """(s^2+1)^2 (s+1) gives zero rows at s^3 and s^1 with auxiliaries (s^2+1)^2 and s^2+1."""
    table = routh_table("(s^2 + 1)^2*(s + 1)")
    assert counts_of(table) == (0, 4, 1)
    assert [(r.power, r.kind) for r in table.special_rows] == [(3, "zero_row"), (1, "zero_row")]
    # the auxiliaries are the even polynomials (s^2+1)^2 and s^2+1 (by construction)
    assert table.special_rows[0].auxiliary == tuple(Fraction(c) for c in [1, 0, 2, 0, 1])
    assert table.special_rows[1].auxiliary == tuple(Fraction(c) for c in [1, 0, 1])


def test_quadrantal_quartic_zero_row_auxiliary_is_the_polynomial_itself():
    """(s^2-2s+5)(s^2+2s+5) = s^4+6s^2+25 is even: its s^3 row is zero and the auxiliary is p."""
    table = routh_table("(s^2 - 2*s + 5)*(s^2 + 2*s + 5)")
    (special,) = table.special_rows
    assert (special.power, special.kind) == (3, "zero_row")
    assert special.auxiliary == tuple(Fraction(c) for c in [1, 0, 6, 0, 25])
    # roots +-1 +- 2j: two right, two left (by construction; sympy agrees)
    assert counts_of(table) == (2, 0, 2) == reference_counts(table.coefficients)
    assert table.sign_changes == 2


def test_epsilon_row_is_marked_and_shown_as_epsilon():
    """A zero leading entry in a non-zero row becomes ε and is reported as 'zero_leading'."""
    table = routh_table([1, 2, 3, 6, 5, 3])
    assert [(r.power, r.kind) for r in table.special_rows] == [(3, "zero_leading")]
    row = next(r for r in table.rows if r.power == 3)
    assert row.entries[0] == EPSILON
    assert format_entry(row.entries[0]) == "ε"
    assert counts_of(table) == isolated_counts([1, 2, 3, 6, 5, 3])  # sympy (Meurer et al.)
    assert table.sign_changes == table.roots.open_right


def test_epsilon_meeting_axis_roots_is_counted_from_the_factors():
    """When an ε row meets roots symmetric about the origin the counts come from the factors."""
    coefficients = expand((S**2 + 1) * (S - 1) ** 2 * (S + 2))
    table = routh_table(coefficients)
    assert table.counted_by_factors
    assert counts_of(table) == (2, 2, 1) == reference_counts(coefficients)  # sympy; by construction
    assert table.as_dict()["counted_by_factors"] is True


def test_zero_polynomial_is_refused():
    """The all-zero polynomial (in any spelling) raises InputError, in both entry points."""
    for value in ([0, 0, 0], [0], [], "0*s^3", "s - s", ["0", "0.0"]):
        with pytest.raises(InputError):
            routh_table(value)
    for value in ([0, 0], []):
        with pytest.raises(InputError):
            is_hurwitz(value)


def test_non_polynomial_input_is_refused():
    """Something that is neither text nor a sequence raises InputError."""
    with pytest.raises(InputError):
        routh_table(42)
    with pytest.raises(InputError):
        routh_table([1, "two", 3])


def test_leading_zeros_are_dropped():
    """Leading zero coefficients do not count as roots at infinity: [0, 0, 1, 3] is s + 3."""
    table = routh_table([0, 0, 1, 3])
    assert table.degree == 1
    assert counts_of(table) == (0, 0, 1)


def test_decimal_strings_are_exact_so_a_boundary_case_stays_on_the_axis():
    """s^3 + 0.1 s^2 + 0.2 s + 0.02 = (s + 0.1)(s^2 + 0.2) has two imaginary roots, exactly."""
    # a2*a1 = a3*a0 exactly (1/50), the degree-3 boundary (Gantmacher 1959, ch. XV, from memory)
    for coefficients in (["1", "0.1", "0.2", "0.02"], [1, 0.1, 0.2, 0.02], "s^3 + 0.1*s^2 + 0.2*s + 0.02"):
        table = routh_table(coefficients)
        assert table.coefficients == (1, Fraction(1, 10), Fraction(1, 5), Fraction(1, 50))
        assert counts_of(table) == (0, 2, 1)  # by construction
        assert not table.is_hurwitz
    assert not is_hurwitz([1, 0.1, 0.2, 0.02])  # floats through their repr, as routh_table
    assert not is_hurwitz(["1", "0.1", "0.2", "0.02"])


def test_decimal_product_with_a_tenth_more_is_hurwitz():
    """Raising a1 from 0.2 to 0.21 in the case above makes it Hurwitz, exactly."""
    # 0.1 * 0.21 = 0.021 > 0.02 (degree-3 condition, Gantmacher 1959, ch. XV, from memory)
    assert routh_table(["1", "0.1", "0.21", "0.02"]).is_hurwitz
    assert is_hurwitz(["1", "0.1", "0.21", "0.02"])


# -- RouthTable API ---------------------------------------------------------------------------


def test_rows_are_routh_rows_with_powers_from_n_down_to_zero():
    """``rows`` lists RouthRow objects for s^n .. s^0 with (n - i) // 2 + 1 exact entries."""
    table = routh_table([2, 3, 5, 7, 11])
    assert [r.power for r in table.rows] == [4, 3, 2, 1, 0]
    assert all(isinstance(r, RouthRow) for r in table.rows)
    assert [len(r.entries) for r in table.rows] == [3, 2, 2, 1, 1]
    assert table.rows[0].entries == (2, 5, 11)
    assert table.rows[1].entries == (3, 7)
    # the textbook recurrence (common practice, no source)
    assert [r.entries for r in table.rows] == plain_routh_rows([2, 3, 5, 7, 11])
    assert table.first_column == tuple(r.entries[0] for r in table.rows)


def test_first_column_signs_and_sign_changes_follow_the_first_column():
    """``first_column_signs`` are the signs of ``first_column``; sign_changes counts their flips."""
    table = routh_table([1, -4, 1, 6])  # (s + 1)(s - 2)(s - 3): two right, one left
    assert table.first_column_signs == tuple(1 if e > 0 else -1 for e in table.first_column)
    assert table.sign_changes == 2 == table.roots.open_right
    assert counts_of(table) == (2, 0, 1)  # by construction


def test_as_dict_follows_the_json_contract():
    """as_dict has degree, rows [{power, entries:[str]}], sign_changes, roots and special_rows."""
    data = routh_table("(s^2 + 1)*(s + 2)").as_dict()
    assert json.loads(json.dumps(data)) == data
    assert data["degree"] == 3
    assert data["rows"][0] == {"power": 3, "entries": ["1", "1"]}
    assert all(isinstance(e, str) for row in data["rows"] for e in row["entries"])
    assert [row["power"] for row in data["rows"]] == [3, 2, 1, 0]
    assert data["roots"] == {"open_right": 0, "imaginary_axis": 2, "open_left": 1}
    assert data["sign_changes"] == 0
    assert data["special_rows"] == [{"power": 1, "kind": "zero_row", "auxiliary": ["2", "0", "2"]}]


def test_as_dict_writes_epsilon_entries_as_text():
    """An ε entry is written as text mentioning ε; the special row has no auxiliary key."""
    data = routh_table([1, 0, 2, 7]).as_dict()
    assert data["rows"][1]["entries"][0] == "ε"
    assert data["special_rows"] == [{"power": 2, "kind": "zero_leading"}]
    assert json.loads(json.dumps(data, ensure_ascii=False)) == data


def test_value_objects_are_frozen():
    """RouthTable, RootCounts and SpecialRow cannot be changed after construction."""
    table = routh_table([1, 2, 3])
    for obj, field in ((table, "roots"), (table.roots, "open_left"),
                       (SpecialRow(1, "zero_leading"), "power")):
        with pytest.raises(AttributeError):
            setattr(obj, field, None)
    assert table.roots == RootCounts(0, 0, 2)
    assert table.roots.total == 2


def test_shift_tabulates_the_shifted_polynomial():
    """shift=1 tabulates p(s - 1): s^2 + 2s + 5 (roots -1 +- 2j) becomes s^2 + 4."""
    table = routh_table("s^2 + 2*s + 5", shift=1)
    assert table.shift == 1
    assert table.coefficients == (1, 0, 4)
    assert counts_of(table) == (0, 2, 0)  # both roots on the line Re(s) = -1 (by construction)
    assert routh_table("s^2 + 2*s + 5", shift="1/2").is_hurwitz
    assert not routh_table("s^2 + 2*s + 5", shift="1.5").is_hurwitz


# -- closed-form Hurwitz conditions ------------------------------------------------------------

coefficient = st.integers(-6, 6)
leading = coefficient.filter(lambda v: v != 0)


def closed_form_hurwitz(c: list[int]) -> bool:
    """Hurwitz conditions in closed form (Gantmacher, 1959, ch. XV; from memory)."""
    if c[0] < 0:
        c = [-x for x in c]
    if len(c) == 3:  # degree 2: all coefficients of one sign
        return all(x > 0 for x in c)
    if len(c) == 4:  # degree 3: all a_i > 0 and a2*a1 > a3*a0
        a3, a2, a1, a0 = c
        return all(x > 0 for x in c) and a2 * a1 > a3 * a0
    a4, a3, a2, a1, a0 = c  # degree 4: all a_i > 0 and a3*a2*a1 > a4*a1^2 + a3^2*a0
    return all(x > 0 for x in c) and a3 * a2 * a1 > a4 * a1**2 + a3**2 * a0


@given(st.tuples(leading, coefficient, coefficient).map(list))
@example([1, 1, 1])
@example([-2, -1, -3])
@example([1, 0, 1])
def test_degree_two_hurwitz_matches_closed_form(c):
    """For degree 2 both Hurwitz tests agree with 'all coefficients of one sign'."""
    assert is_hurwitz(c) == closed_form_hurwitz(c) == routh_table(c).is_hurwitz


@given(st.tuples(leading, coefficient, coefficient, coefficient).map(list))
@example([1, 1, 1, 1])  # a2*a1 = a3*a0: the boundary (imaginary pair)
@example([1, 2, 3, 5])
@example([-1, -2, -3, -5])
@example([2, 3, 4, 6])
def test_degree_three_hurwitz_matches_closed_form(c):
    """For degree 3 both Hurwitz tests agree with a_i > 0 and a2*a1 > a3*a0."""
    assert is_hurwitz(c) == closed_form_hurwitz(c) == routh_table(c).is_hurwitz


@given(st.tuples(leading, coefficient, coefficient, coefficient, coefficient).map(list))
@example([1, 2, 3, 2, 1])  # 2*3*2 = 12 = 1*4 + 4*1 + 4: boundary
@example([1, 2, 4, 2, 1])
@example([1, 1, 3, 1, 1])  # 3 = 1 + 1 + ... below the boundary
@example([-1, -3, -5, -4, -2])
def test_degree_four_hurwitz_matches_closed_form(c):
    """For degree 4 both tests agree with a_i > 0 and a3*a2*a1 > a4*a1^2 + a3^2*a0."""
    assert is_hurwitz(c) == closed_form_hurwitz(c) == routh_table(c).is_hurwitz


# -- properties ---------------------------------------------------------------------------------


@pytest.mark.slow
@settings(max_examples=40)
@given(known_root_polynomials())
def test_known_root_polynomials_match_sympy_and_construction(spec: RootSpec):
    """Products of known factors (axis pairs, origin, quadrantal quartics...) count correctly."""
    coefficients = spec.coefficients()
    got = counts_of(routh_table(coefficients))
    assert got == spec.counts()  # by construction (common practice, no source)
    assert got == reference_counts(coefficients)  # sympy exact isolation (Meurer et al., 2017)
    assert got == isolated_counts(coefficients)  # the same library, by rectangle counting


@pytest.mark.slow
@settings(max_examples=30)
@given(integer_coefficients())
def test_random_integer_polynomials_match_sympy(c):
    """Random integer polynomials up to degree 15 count like sympy's exact root isolation."""
    assert counts_of(routh_table(c)) == isolated_counts(c)  # sympy (Meurer et al., 2017)


@pytest.mark.slow
@settings(max_examples=25)
@given(rational_coefficients())
def test_random_rational_polynomials_match_sympy(c):
    """Random rational polynomials up to degree 15 count like sympy's exact root isolation."""
    assert counts_of(routh_table(c)) == isolated_counts(c)  # sympy (Meurer et al., 2017)


@settings(max_examples=50)
@given(st.one_of(integer_coefficients(min_degree=1), rational_coefficients(min_degree=1)))
def test_reciprocal_polynomial_has_the_same_counts(c):
    """s^n p(1/s) has the counts of p when p(0) != 0 (r -> 1/r keeps Re's sign)."""
    assume(c[-1] != 0)  # common practice, no source
    assert counts_of(routh_table(c[::-1])) == counts_of(routh_table(c))


@settings(max_examples=40)
@given(known_root_polynomials(origin=False))
def test_reciprocal_of_known_root_polynomials_has_the_same_counts(spec: RootSpec):
    """The reciprocal-polynomial rule holds also through zero rows and ε rows."""
    c = spec.coefficients()
    assert counts_of(routh_table(c[::-1])) == counts_of(routh_table(c))  # common practice


@pytest.mark.slow
@settings(max_examples=25)
@given(known_root_polynomials(max_degree=10), small_fractions)
def test_shift_counts_relative_to_the_shifted_line(spec: RootSpec, sigma):
    """routh_table(p, shift=σ) counts like the polynomial whose roots are moved by +σ."""
    moved = spec.shifted(sigma)
    got = counts_of(routh_table(spec.coefficients(), shift=sigma))
    assert got == reference_counts(moved.coefficients())  # sympy exact isolation (Meurer et al.)
    assert got == moved.counts()  # by construction (common practice, no source)


@given(st.one_of(integer_coefficients(), rational_coefficients()))
def test_fast_hurwitz_test_agrees_with_the_table(c):
    """is_hurwitz(c) equals routh_table(c).is_hurwitz on random polynomials."""
    assert is_hurwitz(c) == routh_table(c).is_hurwitz


@settings(max_examples=40)
@given(known_root_polynomials())
def test_fast_hurwitz_test_agrees_with_the_table_on_known_roots(spec: RootSpec):
    """is_hurwitz agrees with the table and the construction on products of known factors."""
    c = spec.coefficients()
    _, _, left = spec.counts()
    assert is_hurwitz(c) == routh_table(c).is_hurwitz == (left == len(c) - 1)  # by construction


@given(st.one_of(integer_coefficients(), rational_coefficients()))
def test_rows_equal_the_plain_fraction_recurrence(c):
    """Without a zero leading entry the rows equal a plain Fraction Routh loop."""
    plain = plain_routh_rows(c)  # the textbook recurrence (common practice, no source)
    assume(plain is not None)
    table = routh_table(c)
    assert [r.entries for r in table.rows] == plain
    assert [r.power for r in table.rows] == list(range(len(c) - 1, -1, -1))
    assert table.special_rows == ()


@given(st.one_of(integer_coefficients(), rational_coefficients()))
def test_sign_changes_equal_the_right_half_plane_count(c):
    """The first column's sign changes equal roots.open_right (Routh's theorem)."""
    table = routh_table(c)  # Routh 1877 via Gantmacher 1959, ch. XV (from memory)
    assert table.sign_changes == table.roots.open_right
    assert table.roots.total == table.degree


@settings(max_examples=40)
@given(known_root_polynomials())
def test_sign_changes_equal_right_count_through_special_rows(spec: RootSpec):
    """Through zero rows and ε rows the sign changes count the right half-plane roots, unless the
    counts had to come from the factors."""
    table = routh_table(spec.coefficients())
    if not table.counted_by_factors:
        assert table.sign_changes == spec.counts()[0]  # by construction


@given(integer_coefficients(min_degree=1), st.sampled_from([-1, 3, Fraction(-2, 7)]))
def test_scaling_and_negation_do_not_change_counts(c, factor):
    """Multiplying every coefficient by a non-zero constant (negative too) keeps the counts."""
    assert counts_of(routh_table([factor * x for x in c])) == counts_of(routh_table(c))


def test_text_and_coefficient_forms_give_the_same_table():
    """A polynomial as text and as its coefficient list give the same table."""
    text = routh_table("(s + 0.5)*(s^2 + s + 2.5)")
    coefficients = routh_table([1, "1.5", "3", "1.25"])
    assert text.coefficients == coefficients.coefficients
    assert [r.entries for r in text.rows] == [r.entries for r in coefficients.rows]


# -- special cases at high degree and the tables with ε rows -----------------------------------

EPS = sp.Symbol("ε", positive=True)
FIELD, FIELD_EPS = sp.field([EPS], sp.QQ)


def field_rows(coefficients) -> list[list[str]]:
    """The special-case table recomputed in sympy's QQ(ε): the textbook recurrence with the ε
    rule and the auxiliary-polynomial rule (Gantmacher, 1959, ch. XV; from memory)."""
    n = len(coefficients) - 1
    width = n // 2 + 1
    entries = [FIELD(sp.Rational(Fraction(c).numerator, Fraction(c).denominator)) for c in coefficients]
    zero = FIELD(0)
    rows = [entries[0::2] + [zero] * (width - len(entries[0::2])),
            entries[1::2] + [zero] * (width - len(entries[1::2]))][: n + 1]
    for m in range(1, n + 1):
        if m >= 2:
            a, b = rows[m - 2], rows[m - 1]
            rows.append([(b[0] * a[j + 1] - a[0] * b[j + 1]) / b[0] for j in range(width - 1)] + [zero])
        if all(e == 0 for e in rows[m]):
            k = n - m + 1
            rows[m] = [(k - 2 * j) * rows[m - 1][j] for j in range(k // 2 + 1)]
            rows[m] += [zero] * (width - len(rows[m]))
        if rows[m][0] == 0:
            rows[m][0] = FIELD_EPS
    out = []
    for i, row in enumerate(rows):
        texts = []
        for e in row[: (n - i) // 2 + 1]:
            value = e.as_expr()
            texts.append(str(value) if not value.is_Rational else str(Fraction(int(value.p), int(value.q))))
        out.append(texts)
    return out


def roots_of_unity_counts(n: int, offset: int, denominator: int, skip_one: bool = False):
    """Counts of the roots e^(2πi t), t = (2k + offset) / (2 * denominator), k < denominator:
    Re > 0 exactly when t mod 1 lies in [0, 1/4) or (3/4, 1) (de Moivre; common practice,
    no source). s^n + 1 has offset 1, s^n - 1 offset 0; ``skip_one`` leaves out the root 1."""
    right = axis = left = 0
    for k in range(denominator):
        t = Fraction(2 * k + offset, 2 * denominator) % 1
        if skip_one and t == 0:
            continue
        if t in (Fraction(1, 4), Fraction(3, 4)):
            axis += 1
        elif t < Fraction(1, 4) or t > Fraction(3, 4):
            right += 1
        else:
            left += 1
    return right, axis, left


sparse_special = st.lists(st.sampled_from([0, 0, 0, 1, -1, 2, -3]), min_size=2, max_size=13).filter(
    lambda c: c[0] != 0 and any(c[1:]))


@settings(max_examples=60)
@given(sparse_special)
@example([1, 0, 0, 0, 0, 0, 0, 0, 1])
@example([1, 1, 1, 1, 1, 1, 1, 1, 1])
@example([1, 2, 3, 6, 5, 3])
def test_special_tables_equal_the_recurrence_in_sympys_field(c):
    """Tables with zero rows and ε rows are entry for entry those of the recurrence in QQ(ε)."""
    table = routh_table(c)
    assert table.omitted_rows == 0
    shown = [[format_entry(e) for e in row.entries] for row in table.rows]
    assert shown == field_rows(c)  # sympy's field of rational functions (Meurer et al., 2017)


@settings(max_examples=60)
@given(sparse_special)
def test_special_case_counts_of_sparse_polynomials_match_sympy(c):
    """Sparse polynomials (zero rows, ε rows, root pairs) count like sympy's root isolation."""
    table = routh_table(c)
    assert counts_of(table) == isolated_counts(c)  # sympy (Meurer et al., 2017)
    if not table.counted_by_factors:  # the ε table and the Cauchy-index count agree
        assert table.sign_changes == table.roots.open_right


@pytest.mark.parametrize("n", [7, 40, 199, 200])
def test_sparse_polynomials_of_high_degree_count_as_roots_of_unity(n):
    """s^n + 1, s^n - 1 and 1 + s + ... + s^n count as the roots of unity they have as roots."""
    assert counts_of(routh_table([1] + [0] * (n - 1) + [1])) == roots_of_unity_counts(n, 1, n)
    assert counts_of(routh_table([1] + [0] * (n - 1) + [-1])) == roots_of_unity_counts(n, 0, n)
    ones = roots_of_unity_counts(n, 0, n + 1, skip_one=True)  # (s^(n+1) - 1) / (s - 1)
    assert counts_of(routh_table([1] * (n + 1))) == ones
    assert counts_of(routh_table(expand((S**2 + 1) ** (n // 2)))) == (0, 2 * (n // 2), 0)


def test_a_table_whose_epsilon_entries_outgrow_the_bound_is_cut_and_says_so():
    """s^200 + 1 shows its top rows only; the counts come from the Cauchy index, and say so."""
    table = routh_table([1] + [0] * 199 + [1])
    assert 0 < table.omitted_rows < 200
    assert len(table.rows) == len(table.first_column_signs) == 201 - table.omitted_rows
    assert table.rows[-1].power == table.omitted_rows
    assert counts_of(table) == (100, 0, 100)  # roots exp(iπ(2k+1)/200) (de Moivre)
    assert "left out" in table.count_note
    data = table.as_dict()
    assert data["omitted_rows"] == table.omitted_rows
    assert len(data["rows"]) == 201 - table.omitted_rows


def test_a_small_table_with_epsilon_rows_is_complete():
    """Below the display bound (s^16 + 1) every row is shown and nothing is left out."""
    table = routh_table([1] + [0] * 15 + [1])
    assert table.omitted_rows == 0
    assert [r.power for r in table.rows] == list(range(16, -1, -1))
    assert table.as_dict()["omitted_rows"] == 0
