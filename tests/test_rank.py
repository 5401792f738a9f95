"""Tests for robust.analysis.rank: per-parameter margins, the ranking and the tightened tolerances.

Truth comes from outside the project: for one parameter entering a degree-3 family linearly,
the polynomial stays Hurwitz while every coefficient is positive and a2*a1 > a3*a0 (degree-3
Hurwitz condition; Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV, from memory),
so its margin is the least positive root of linear and quadratic equations in the scale,
solved here with fractions and sympy (Meurer et al., "SymPy: symbolic computing in Python",
PeerJ Comput. Sci. 2017). Which coefficients a parameter acts through is read off sympy's
expansion of the case text.
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy as sp
from hypothesis import HealthCheck, assume, event, given, settings
from hypothesis import strategies as st
from strategies import case_toml

from robust.analysis.rank import rank
from robust.analysis.verdict import decide
from robust.model.case import parse_case
from robust.render.text import render_rank


def _case_text(parameters: dict[str, dict[str, str]], coefficients: list[str] | None = None,
               expression: str | None = None) -> str:
    """TOML text of a case (see strategies.case_toml)."""
    return case_toml(parameters, coefficients, expression, title="rank test case")


def _q(x: Fraction) -> sp.Rational:
    return sp.Rational(x.numerator, x.denominator)


def _by_name(result):
    return {p.name: p for p in result.parameters}


# -- margin_alone in closed form ----------------------------------------------------------


def _alone_closed_form(base: list[int], slopes: list[int], tol: Fraction) -> sp.Expr | None:
    """Least positive r where a_i(r) = base_i + slope_i * (+-tol * r) loses the degree-3
    Hurwitz condition (some a_i = 0, or a2 a1 = a3 a0: Gantmacher 1959, ch. XV, from memory),
    over both directions of the range, or where K = 1 - tol * r reaches its physical limit 0
    (r = 1 / tol: the default limit of a positive part, DESIGN.md section 4); None when
    neither happens."""
    r = sp.Symbol("r", positive=True)
    best = 1 / _q(tol)
    for direction in (1, -1):
        a3, a2, a1, a0 = (b + d * direction * _q(tol) * r for b, d in zip(base, slopes, strict=True))
        equations = [a3, a2, a1, a0, sp.expand(a2 * a1 - a3 * a0)]
        for eq in equations:
            if not eq.free_symbols:
                continue
            for root in sp.solve(sp.Eq(eq, 0), r):
                if root.is_real and root > 0 and (best is None or sp.N(root, 40) < sp.N(best, 40)):
                    best = root
    return best


def _one_parameter_case(base, slopes, other, tol: Fraction):
    """a_i = base_i + slopes_i (K - 1) + other_i (J - 1); K, J nominal 1, K tolerance tol."""
    formulas = []
    for b, d, e in zip(base, slopes, other, strict=True):
        text = str(b)
        if d:
            text += f" + {d}*(K - 1)"
        if e:
            text += f" + {e}*(J - 1)"
        formulas.append(text)
    params = {"K": {"nominal": "1", "tolerance": f"{float(tol):g}"},
              "J": {"nominal": "1", "tolerance": "0.05"}}
    assert Fraction(params["K"]["tolerance"]) == tol
    return parse_case(_case_text(params, coefficients=formulas))


def _assert_alone_is(bracket, expected: sp.Expr | None, cap: int = 100) -> None:
    if expected is None or sp.N(expected) > cap:
        assert bracket.upper is None and bracket.lower == cap
        return
    assert _q(bracket.lower) <= expected
    assert bracket.upper is not None and expected <= _q(bracket.upper)
    assert bracket.exact is not None
    assert abs(sp.N(sp.sympify(bracket.exact), 30) - sp.N(expected, 30)) <= 1e-12 * abs(sp.N(expected, 30))


def test_margin_alone_of_a_parameter_in_three_coefficients():
    """K = 1 +- 0.2 moves a_i = 1, 4, 5, 6 by (1, 2, -3, 4) x: lost at (4+2x)(5-3x) = (1+x)(6+4x)."""
    base, slopes = [1, 4, 5, 6], [1, 2, -3, 4]
    case = _one_parameter_case(base, slopes, [0, 0, 0, 0], Fraction(1, 5))
    expected = _alone_closed_form(base, slopes, Fraction(1, 5))
    # -10 x^2 - 12 x + 14 = 0 by hand: x = (-3 + sqrt(44)) / 5, r = x / 0.2 = sqrt(44) - 3
    assert sp.simplify(expected - (sp.sqrt(44) - 3)) == 0
    result = rank(case)
    _assert_alone_is(_by_name(result)["K"].margin_alone, expected)


_row = st.lists(st.integers(-3, 3), min_size=4, max_size=4)


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                  HealthCheck.filter_too_much])
@given(st.lists(st.integers(1, 4), min_size=3, max_size=3), _row, _row,
       st.sampled_from([Fraction(1, 10), Fraction(1, 4), Fraction(1, 2), Fraction(3, 4)]))
def test_margin_alone_matches_the_closed_form(roots, slopes, other, tol):
    """For generated cubics with K entering every coefficient linearly, margin_alone of K holds
    the least positive root of the linear and quadratic crossing equations."""
    a, b, c = roots  # nominal polynomial (s + a)(s + b)(s + c): Hurwitz
    base = [1, a + b + c, a * b + b * c + a * c, a * b * c]
    assume(any(slopes))
    result = rank(_one_parameter_case(base, slopes, other, tol))
    _assert_alone_is(_by_name(result)["K"].margin_alone, _alone_closed_form(base, slopes, tol))


# -- order --------------------------------------------------------------------------------


def _tie_case():
    """s^3 + A s^2 + B s + C with A = 2 +- 0.5, B = 4 +- 0.4, C = 4 +- 2.

    Alone (others nominal, A B > C): A: (2 - r/2) 4 = 4 -> 2; B: 2 (4 - 0.4 r) = 4 -> 5;
    C: 8 = 4 + 2 r -> 2. Others over their range: A: (2 - r/2) 3.6 = 6 -> 2/3;
    C: 1.5 * 3.6 = 4 + 2 r -> 0.7. (Worked by hand from the degree-3 condition.)
    """
    params = {"A": {"nominal": "2", "tolerance": "0.5"}, "B": {"nominal": "4", "tolerance": "0.4"},
              "C": {"nominal": "4", "tolerance": "2"}}
    return parse_case(_case_text(params, coefficients=["1", "A", "B", "C"]))


def test_parameters_are_sorted_most_critical_first_with_ties_broken_by_the_others():
    """A and C tie alone at 2; A stands less with the others at full range, so A, C, B."""
    result = rank(_tie_case())
    assert [p.name for p in result.parameters] == ["A", "C", "B"]
    by = _by_name(result)
    assert by["A"].margin_alone.lower == by["C"].margin_alone.lower == 2
    assert by["B"].margin_alone.lower == 5
    assert by["A"].margin_given_others.lower <= Fraction(2, 3) <= by["A"].margin_given_others.upper
    assert by["C"].margin_given_others.lower <= Fraction(7, 10) <= by["C"].margin_given_others.upper
    keys = [(p.margin_alone.lower, p.margin_given_others.lower) for p in result.parameters]
    assert keys == sorted(keys)


# -- failing designs: the tightened tolerance ---------------------------------------------


def _failing_case():
    """s^3 + a2 s^2 + a1 s + a0, a2 = 2 +- 1, a1 = 2 +- 0.1, a0 = 3 +- 0.5: over the box
    a2 a1 >= 1.9 < 3.5, so unstable. a2 alone restores it: (2 - r) 1.9 = 3.5 -> r = 3/19;
    a1 at nominal: 1 * 2 < 3.5, a0 at nominal: 1.9 < 3 (degree-3 condition, by hand)."""
    params = {"a2": {"nominal": "2", "tolerance": "1"}, "a1": {"nominal": "2", "tolerance": "0.1"},
              "a0": {"nominal": "3", "tolerance": "0.5"}}
    return parse_case(_case_text(params, coefficients=["1", "a2", "a1", "a0"]))


def test_tightened_tolerance_restores_stability():
    """For the failing design, a2's tightened scale is just below 3/19 and decides stable."""
    case = _failing_case()
    result = rank(case)
    assert result.robustly_stable is False
    a2 = _by_name(result)["a2"]
    assert a2.restores is True
    assert Fraction(3, 19) * (1 - Fraction(1, 500)) <= a2.tightened <= Fraction(3, 19)
    family = case.family
    i = family.names.index("a2")
    tightened = family.box.scaled(family.nominal, a2.tightened, only=i)
    assert decide(family, tightened).verdict == "stable"
    beyond = family.box.scaled(family.nominal, Fraction(3, 19) * Fraction(101, 100), only=i)
    assert decide(family, beyond).verdict == "unstable"


def test_parameter_that_cannot_restore_alone_says_so():
    """Neither a1 nor a0 at nominal makes the failing design stable: restores is False."""
    result = rank(_failing_case())
    by = _by_name(result)
    for name in ("a1", "a0"):
        assert by[name].restores is False
        assert by[name].tightened is None
        assert (by[name].margin_given_others.lower, by[name].margin_given_others.upper) == (0, 0)
    text = render_rank(_failing_case(), result)
    assert "a1: no tightening of this part alone restores stability" in text
    assert "a2: scale its tolerance to at most" in text


@pytest.mark.slow
@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.integers(1, 3), min_size=3, max_size=3), _row, _row)
def test_every_restoring_tightening_decides_stable(roots, slopes, other):
    """For generated designs that fail over the box, each tightened scale gives a stable box."""
    a, b, c = roots
    base = [1, a + b + c, a * b + b * c + a * c, a * b * c]
    params = {"K": {"nominal": "1", "tolerance": "0.9"}, "J": {"nominal": "1", "tolerance": "0.9"}}
    formulas = [f"{v} + {d}*(K - 1) + {e}*(J - 1)" for v, d, e in zip(base, slopes, other, strict=True)]
    case = parse_case(_case_text(params, coefficients=formulas))
    result = rank(case)
    assume(result.robustly_stable is False)
    family = case.family
    event(f"parameters that restore stability alone: {sum(bool(p.restores) for p in result.parameters)}")
    for p in result.parameters:
        if p.restores:
            box = family.box.scaled(family.nominal, p.tightened, only=family.names.index(p.name))
            assert decide(family, box).verdict == "stable"


# -- acts_through -------------------------------------------------------------------------


def test_acts_through_names_exactly_the_coefficients_containing_the_parameter():
    """acts_through lists the powers whose expanded coefficient contains the parameter, with the
    sign of its partial derivative (sympy expansion of the case text)."""
    expression = "(s + a)*(s^2 + b*s + 5) + c*(s + 2) - c*s"  # c cancels out of s^1
    params = {"a": {"nominal": "2", "tolerance": "10%"}, "b": {"nominal": "3", "tolerance": "10%"},
              "c": {"nominal": "1", "tolerance": "10%"}}
    case = parse_case(_case_text(params, expression=expression))
    result = rank(case)
    s = sp.Symbol("s")
    symbols = {n: sp.Symbol(n) for n in params}
    poly = sp.Poly(sp.expand(sp.sympify(expression.replace("^", "**"), locals={**symbols, "s": s})), s)
    degree = poly.degree()
    nominal = {symbols[n]: sp.Rational(p["nominal"]) for n, p in params.items()}
    for p in result.parameters:
        expected = {}
        for k, coeff in enumerate(poly.all_coeffs()):
            if symbols[p.name] in coeff.free_symbols:
                slope = sp.diff(coeff, symbols[p.name]).subs(nominal)  # affine here: constant sign
                expected[degree - k] = "+" if slope > 0 else "-"
        assert dict(p.coefficients) == expected
        assert [item["power"] for item in p.as_dict()["acts_through"]] == sorted(expected, reverse=True)
    assert dict(_by_name(result)["c"].coefficients) == {0: "+"}  # 2c only; c s - c s cancelled


def test_rank_json_has_name_and_margin_alone():
    """as_dict: parameters, a non-empty list of {name, margin_alone (number), ...}."""
    data = rank(_tie_case()).as_dict()
    assert [p["name"] for p in data["parameters"]] == ["A", "C", "B"]
    assert all(isinstance(p["margin_alone"], float) for p in data["parameters"])
    assert data["parameters"][0]["margin_alone"] == 2.0


def test_fixed_parameter_has_no_tolerance_to_rank():
    """A parameter with zero tolerance is reported at the cap, never as critical."""
    params = {"a": {"nominal": "3", "tolerance": "0"}, "b": {"nominal": "4", "tolerance": "0.5"}}
    result = rank(parse_case(_case_text(params, coefficients=["1", "a", "b", "5"])))
    assert [p.name for p in result.parameters] == ["b", "a"]
    fixed = _by_name(result)["a"]
    assert fixed.margin_alone.lower == 100 and fixed.margin_alone.upper is None
    # b alone: 3 (4 - 0.5 r) = 5 -> r = 14/3 (degree-3 condition, by hand)
    b = _by_name(result)["b"].margin_alone
    assert b.lower <= Fraction(14, 3) <= b.upper


def test_margin_given_others_of_a_correlated_family_matches_the_hand_derivation():
    """s^3 + (2 + x) s^2 + (2 + y) s + (3 + x + y + xy), x and y in [-1/4, 1/4]:
    a2*a1 - a3*a0 = 1 + x + y (by hand), and a0, a2 stay positive for |x| <= 1, |y| <= 1/4.
    With y over its full range, x's tolerance scaled by r keeps the family stable exactly
    while 1 - r/4 - 1/4 > 0: r* = 3 for x, and likewise for y."""
    params = {n: {"nominal": "0", "range": ["-0.25", "0.25"]} for n in ("x", "y")}
    case = parse_case(_case_text(params, coefficients=["1", "2 + x", "2 + y", "3 + x + y + x*y"]))
    for p in rank(case).parameters:
        bracket = p.margin_given_others
        assert bracket.lower <= 3 <= bracket.upper, (p.name, bracket)
        assert bracket.relative_width <= 1e-6
        # the witness at the upper end: 1 + x + y <= 0 there (the closed form above)
        point = bracket.witness.parameters
        assert 1 + point["x"] + point["y"] <= 0
