"""Tests for robust.exact.polynomials: exact sparse polynomials in the parameters and their bounds.

Truth comes from outside the project: values, derivatives and substitutions are compared with
sympy (Meurer et al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017); ranges
are compared with brute force over box corners and grids, using the facts that a function
monotone in each variable, or multilinear, takes its extremes over a box at corners (common
practice, no source), and that the natural interval extension encloses the range (Moore,
"Interval Analysis", 1966, ch. 3).
"""

from __future__ import annotations

import itertools
from fractions import Fraction

import gmpy2
import numpy as np
import pytest
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from robust.exact.polynomials import Bound, MultiPoly, as_intervals, interval_power

F = Fraction
mpq = gmpy2.mpq


def to_fraction(q) -> Fraction:
    return Fraction(int(q.numerator), int(q.denominator))


def to_sympy(poly: MultiPoly, symbols) -> sp.Expr:
    """The same polynomial rebuilt as a sympy expression from its terms."""
    expr = sp.Integer(0)
    for exps, c in poly.terms:
        c = to_fraction(c)
        term = sp.Rational(c.numerator, c.denominator)
        for x, k in zip(symbols, exps, strict=True):
            term *= x**k
        expr += term
    return expr


def corners(box):
    return list(itertools.product(*box))


def grid(box, steps=4):
    axes = [[lo + (hi - lo) * F(j, steps) for j in range(steps + 1)] for lo, hi in box]
    return list(itertools.product(*axes))


# -- strategies -------------------------------------------------------------------------------

small_rationals = st.builds(F, st.integers(-6, 6), st.sampled_from([1, 2, 3]))


@st.composite
def polynomials(draw, max_vars=3, max_exponent=3):
    """Random MultiPoly: 1-3 parameters, small integer coefficients, exponents up to 3."""
    nvars = draw(st.integers(1, max_vars))
    mapping = draw(st.dictionaries(
        st.tuples(*[st.integers(0, max_exponent)] * nvars),
        st.integers(-5, 5).filter(bool), min_size=1, max_size=6))
    return MultiPoly.from_mapping(nvars, mapping)


@st.composite
def boxes(draw, nvars):
    """Random boxes, some straddling 0, some degenerate in a direction."""
    out = []
    for _ in range(nvars):
        lo = draw(small_rationals)
        width = F(draw(st.integers(0, 6)), draw(st.sampled_from([1, 2, 3])))
        out.append((lo, lo + width))
    return out


@st.composite
def polys_with_boxes(draw, multilinear=False):
    poly = draw(polynomials(max_exponent=1 if multilinear else 3))
    return poly, draw(boxes(poly.nvars))


# -- structure, evaluation, algebra -----------------------------------------------------------


def test_from_mapping_drops_zeros_and_sorts():
    """Zero coefficients vanish and the terms are kept in one canonical order."""
    a = MultiPoly.from_mapping(2, {(1, 0): 3, (0, 1): 0, (0, 0): F(1, 2)})
    b = MultiPoly.from_mapping(2, {(0, 0): F(1, 2), (1, 0): 3})
    assert a == b
    assert [e for e, _ in a.terms] == [(0, 0), (1, 0)]
    assert MultiPoly.from_mapping(2, {(1, 1): 0}).is_zero


def test_structure_queries():
    """variables, degrees and multilinearity are read off the exponents."""
    p = MultiPoly.from_mapping(3, {(1, 1, 0): 2, (0, 0, 2): -1, (0, 0, 0): 7})
    assert p.variables() == frozenset({0, 1, 2})
    assert p.total_degree() == 2
    assert (p.degree_in(0), p.degree_in(2)) == (1, 2)
    assert not p.is_multilinear()
    assert MultiPoly.from_mapping(2, {(1, 1): 1, (1, 0): 1}).is_multilinear()
    assert MultiPoly.constant(2, 5).variables() == frozenset()


@given(polys_with_boxes())
@settings(max_examples=80, deadline=None)
def test_evaluate_derivative_substitute_match_sympy(data):
    """evaluate, derivative and substitute agree with sympy on the same polynomial."""
    poly, box = data
    symbols = sp.symbols(f"x0:{poly.nvars}")
    expr = to_sympy(poly, symbols)
    point = [lo for lo, _ in box]
    subs = {x: sp.Rational(v.numerator, v.denominator) for x, v in zip(symbols, point, strict=True)}
    # sympy reference (Meurer et al. 2017)
    assert poly.evaluate(point) == F(str(expr.subs(subs)))
    for i, x in enumerate(symbols):
        assert sp.expand(to_sympy(poly.derivative(i), symbols) - sp.diff(expr, x)) == 0
    fixed = poly.substitute({0: point[0]})
    assert sp.expand(to_sympy(fixed, symbols) - expr.subs(symbols[0], subs[symbols[0]])) == 0


@given(polys_with_boxes())
@settings(max_examples=40, deadline=None)
def test_float_evaluations_track_the_exact_value(data):
    """evaluate_float and evaluate_many agree (to float accuracy) with the exact value."""
    poly, box = data
    pts = grid(box, 2)
    exact = [float(poly.evaluate(p)) for p in pts]
    many = poly.evaluate_many(np.array([[float(x) for x in p] for p in pts]))
    single = [poly.evaluate_float([float(x) for x in p]) for p in pts]
    assert np.allclose(many, exact, rtol=1e-12, atol=1e-9)
    assert np.allclose(single, exact, rtol=1e-12, atol=1e-9)


def test_linear_combination_matches_sympy():
    """A weighted sum of polynomials equals the sympy sum of the same weights."""
    x, y = sp.symbols("x y")
    p = MultiPoly.from_mapping(2, {(1, 0): 2, (0, 1): -1})
    q = MultiPoly.from_mapping(2, {(1, 0): 1, (1, 1): 3})
    combo = MultiPoly.linear_combination(2, [p, q], [F(1, 2), F(-1)])
    ref = sp.Rational(1, 2) * to_sympy(p, (x, y)) - to_sympy(q, (x, y))
    assert sp.expand(to_sympy(combo, (x, y)) - ref) == 0


@given(polynomials())
@settings(max_examples=60, deadline=None)
def test_to_text_reads_back_as_the_same_polynomial(poly):
    """to_text writes a formula that sympy reads back as the same polynomial."""
    names = [f"p{i}" for i in range(poly.nvars)]
    symbols = sp.symbols(names)
    text = poly.to_text(names).replace("^", "**")
    # our own generated text, read by sympy's parser (Meurer et al. 2017)
    back = sp.sympify(text, locals=dict(zip(names, symbols, strict=True)))
    assert sp.expand(back - to_sympy(poly, symbols)) == 0


def test_to_text_examples():
    """Readable text: coefficients, powers, signs and the zero polynomial."""
    p = MultiPoly.from_mapping(2, {(1, 1): 2, (0, 0): F(1, 10), (0, 2): -1})
    assert p.to_text(["R1", "C1"]) == "2*R1*C1 - C1^2 + 1/10"
    assert MultiPoly.from_mapping(1, {}).to_text(["R"]) == "0"
    assert MultiPoly.from_mapping(1, {(1,): -1}).to_text(["R"]) == "-R"


# -- interval arithmetic ----------------------------------------------------------------------


@given(small_rationals, st.integers(0, 6).map(lambda k: F(k, 2)), st.integers(0, 6))
@settings(max_examples=100, deadline=None)
def test_interval_power_is_the_exact_range(low, width, k):
    """interval_power gives the exact range of x^k on [low, high], also across zero."""
    # Moore 1966: x^k is monotone on each side of 0; its range over an interval is attained at
    # the ends or, for even k across zero, at 0.
    high = low + width
    lo, hi = interval_power(mpq(low.numerator, low.denominator), mpq(high.numerator, high.denominator), k)
    candidates = [low**k, high**k] + ([F(0) ** k if k else F(1)] if low <= 0 <= high else [])
    dense = [(low + width * F(j, 50)) ** k for j in range(51)]
    assert to_fraction(lo) == min(candidates) <= min(dense)
    assert to_fraction(hi) == max(candidates) >= max(dense)


@given(polys_with_boxes())
@settings(max_examples=150, deadline=None)
def test_outer_interval_contains_every_sampled_value(data):
    """The natural interval extension encloses every value on a grid of the box."""
    # Moore 1966 (inclusion property of interval extensions).
    poly, box = data
    lo, hi = poly.outer_interval(as_intervals(box))
    values = [poly.evaluate(p) for p in grid(box, 4)]
    assert to_fraction(lo) <= min(values) and max(values) <= to_fraction(hi)


# -- bounds -----------------------------------------------------------------------------------


@given(polys_with_boxes())
@settings(max_examples=200, deadline=None)
def test_bound_is_sound_and_exact_where_claimed(data):
    """Every bound contains the sampled values; an exact one equals the extreme over the corners."""
    poly, box = data
    (lo, hi), exact = poly.bound(as_intervals(box))
    lo, hi = to_fraction(lo), to_fraction(hi)
    values = [poly.evaluate(p) for p in grid(box, 4)]
    assert lo <= min(values) and max(values) <= hi
    if exact:
        # extremes of a per-variable monotone or multilinear function sit at corners
        at_corners = [poly.evaluate(p) for p in corners(box)]
        assert (lo, hi) == (min(at_corners), max(at_corners))


@given(polys_with_boxes(multilinear=True))
@settings(max_examples=150, deadline=None)
def test_multilinear_bounds_are_exact_corner_extremes(data):
    """A multilinear polynomial always gets an exact bound equal to its corner extremes."""
    poly, box = data
    (lo, hi), exact = poly.bound(as_intervals(box))
    at_corners = [poly.evaluate(p) for p in corners(box)]
    assert exact
    assert (to_fraction(lo), to_fraction(hi)) == (min(at_corners), max(at_corners))


@given(polys_with_boxes())
@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.filter_too_much])
def test_attaining_point_attains_the_exact_bound(data):
    """attaining_point returns a box corner with the bound's value exactly when it is exact."""
    poly, box = data
    ivs = as_intervals(box)
    (lo, hi), exact = poly.bound(ivs)
    for high, target in ((False, lo), (True, hi)):
        point = poly.attaining_point(ivs, high)
        if not exact:
            assert point is None
            continue
        point = [to_fraction(x) for x in point]
        assert all(a <= x <= b for x, (a, b) in zip(point, box, strict=True))
        assert poly.evaluate(point) == to_fraction(target)


def test_monotone_non_multilinear_bound_is_exact():
    """R^3 + R^2*C on a positive box is monotone in each parameter: exact, at the corners."""
    p = MultiPoly.from_mapping(2, {(3, 0): 1, (2, 1): 1})
    box = [(F(1), F(2)), (F(1, 2), F(3))]
    (lo, hi), exact = p.bound(as_intervals(box))
    assert exact
    assert to_fraction(lo) == 1 + F(1, 2) and to_fraction(hi) == 8 + 12  # hand arithmetic


def test_non_monotone_square_falls_back_to_an_outer_bound():
    """(R - 1)^2 on [0, 2] is neither monotone nor multilinear: an outer bound around [0, 1]."""
    p = MultiPoly.from_mapping(1, {(2,): 1, (1,): -2, (0,): 1})
    box = [(F(0), F(2))]
    (lo, hi), exact = p.bound(as_intervals(box))
    assert not exact
    assert to_fraction(lo) <= 0 and to_fraction(hi) >= 1
    assert p.attaining_point(as_intervals(box), high=True) is None


def test_derivative_signs_are_sound():
    """Signs: + for increasing, - for decreasing, 0 for absent or fixed, None for mixed."""
    # p = x*y - z^2 + w, on x in [1, 2], y in [-1, 1], z in [1, 2], w fixed at 3
    p = MultiPoly.from_mapping(4, {(1, 1, 0, 0): 1, (0, 0, 2, 0): -1, (0, 0, 0, 1): 1})
    box = [(F(1), F(2)), (F(-1), F(1)), (F(1), F(2)), (F(3), F(3))]
    assert p.derivative_signs(as_intervals(box)) == (None, 1, -1, 0)


def test_zero_and_constant_bounds():
    """The zero polynomial and a constant have exact point bounds."""
    box = [(F(1), F(2))]
    assert MultiPoly.from_mapping(1, {}).bound(as_intervals(box)) == ((0, 0), True)
    (lo, hi), exact = MultiPoly.constant(1, F(7, 3)).bound(as_intervals(box))
    assert (to_fraction(lo), to_fraction(hi), exact) == (F(7, 3), F(7, 3), True)


def test_mixed_multilinear_bound_beyond_vertex_limit_is_outer():
    """With more mixed parameters than the vertex budget, the bound is an honest outer one."""
    # x0*x1 - x1*x2 on boxes straddling 0: every direction mixed
    p = MultiPoly.from_mapping(3, {(1, 1, 0): 1, (0, 1, 1): -1})
    box = [(F(-1), F(1))] * 3
    (lo, hi), exact = p.bound(as_intervals(box), max_vertices=2)
    assert not exact
    values = [p.evaluate(c) for c in corners(box)]
    assert to_fraction(lo) <= min(values) and max(values) <= to_fraction(hi)
    (lo, hi), exact = p.bound(as_intervals(box))
    assert exact and (to_fraction(lo), to_fraction(hi)) == (min(values), max(values))


def test_bound_contains_is_closed():
    """Bound.contains includes both ends."""
    b = Bound(F(1), F(2), True)
    assert b.contains(F(1)) and b.contains(F(2)) and not b.contains(F(5, 2))


@pytest.mark.parametrize("value", [F(3, 7), 4])
def test_constant_accepts_fractions_and_integers(value):
    """MultiPoly.constant stores an exact rational and evaluates to it."""
    assert MultiPoly.constant(2, value).evaluate([F(0), F(0)]) == value
