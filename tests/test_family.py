"""Tests for robust.model.family: the uncertain polynomial over a parameter box.

Truth comes from outside the project: coefficients are compared with sympy expansions of the
same formulas (Meurer et al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017);
coefficient ranges with brute force over the box corners (the extremes of a multilinear or
per-variable monotone function over a box sit at corners: common practice, no source) and with
dense random sampling (an outer bound must contain every value; Moore, "Interval Analysis",
1966).
"""

from __future__ import annotations

import random
from fractions import Fraction
from pathlib import Path

import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.errors import InputError
from robust.exact.polynomials import MultiPoly
from robust.model.case import load_case
from robust.model.family import Box, UncertainPolynomial, box_from, build_family, classify

F = Fraction
CASES = Path(__file__).resolve().parent.parent / "cases"
S = sp.Symbol("s")


def rational(x: Fraction) -> sp.Rational:
    return sp.Rational(x.numerator, x.denominator)


def make_family(expr, names, low, high, nominal=None) -> UncertainPolynomial:
    box = Box(tuple(names), tuple(F(x) for x in low), tuple(F(x) for x in high))
    nominal = tuple(F(x) for x in nominal) if nominal is not None else box.center
    numerator, denominator = sp.fraction(sp.together(expr))
    return build_family(numerator, denominator, S, names, box, nominal)


def sympy_coefficients(expr, names, point) -> list[Fraction]:
    """Coefficients (highest power first) of expr at a point, by sympy alone."""
    subs = {sp.Symbol(n): rational(v) for n, v in zip(names, point, strict=True)}
    poly = sp.Poly(sp.expand(sp.together(expr.subs(subs))), S)
    return [F(int(c.p), int(c.q)) for c in poly.all_coeffs()]


def random_point(rng: random.Random, box: Box) -> tuple[Fraction, ...]:
    return tuple(lo + (hi - lo) * F(rng.randint(0, 100), 100) for lo, hi in box.intervals)


# -- Box --------------------------------------------------------------------------------------


def test_box_geometry():
    """center, widths, contains and vertices describe the closed box."""
    box = Box(("a", "b", "c"), (F(0), F(1), F(2)), (F(2), F(3), F(2)))
    assert box.center == (F(1), F(2), F(2))
    assert box.widths() == (F(2), F(2), F(0))
    assert box.contains((F(0), F(3), F(2))) and not box.contains((F(0), F(3), F(5, 2)))
    verts = box.vertices()
    assert len(verts) == 4 and len(set(verts)) == 4  # the degenerate direction counts once
    assert all(box.contains(v) for v in verts)
    assert box.intervals == ((F(0), F(2)), (F(1), F(3)), (F(2), F(2)))


def test_box_split_halves_cover_the_box():
    """split cuts one direction at the midpoint (or a given point); volumes add up."""
    box = Box(("a", "b"), (F(0), F(0)), (F(4), F(2)))
    left, right = box.split(0)
    assert left.high[0] == right.low[0] == 2
    assert left.relative_volume(box) + right.relative_volume(box) == 1
    left, right = box.split(1, at=F(1, 2))
    assert (left.high[1], right.low[1]) == (F(1, 2), F(1, 2))
    assert left.relative_volume(box) == F(1, 4)


def test_box_scaled_about_nominal():
    """scaled(rho) scales every half-width (or one parameter's) about the nominal."""
    box = Box(("a", "b"), (F(8), F(1)), (F(12), F(3)))
    nominal = (F(10), F(2))
    assert box.scaled(nominal, F(1, 2)).intervals == ((F(9), F(11)), (F(3, 2), F(5, 2)))
    assert box.scaled(nominal, F(2), only=1).intervals == ((F(8), F(12)), (F(0), F(4)))


def test_box_as_dict_and_box_from():
    """as_dict writes exact strings; box_from builds a box from a name -> range map."""
    box = box_from(["x", "y"], {"y": (F(1, 3), F(1)), "x": (F(-2), F(5, 2))})
    assert box.names == ("x", "y")
    assert box.as_dict() == {"x": ["-2", "5/2"], "y": ["1/3", "1"]}


# -- classification ---------------------------------------------------------------------------


def _poly(nvars, mapping):
    return MultiPoly.from_mapping(nvars, mapping)


@pytest.mark.parametrize("coefficients, kind", [
    ([_poly(2, {(1, 0): 1}), _poly(2, {(0, 1): 3}), _poly(2, {(0, 0): 1})], "independent"),
    ([_poly(2, {(1, 0): 1, (0, 1): 1}), _poly(2, {(0, 1): 3, (0, 0): 1})], "affine"),
    ([_poly(2, {(1, 1): 1}), _poly(2, {(1, 0): 1})], "multilinear"),
    ([_poly(2, {(2, 0): 1}), _poly(2, {(1, 0): 1})], "polynomial"),
    ([_poly(1, {(2,): 1}), _poly(1, {(0,): 1})], "independent"),  # one parameter, one place
])
def test_classify_names_the_dependence(coefficients, kind):
    """classify returns the most structured class the coefficients fit."""
    assert classify(coefficients) == kind


# -- building the family ----------------------------------------------------------------------


@st.composite
def random_families(draw):
    """A characteristic polynomial in s of degree 1-4 with coefficients random polynomials in
    two parameters (small integers), and a box; the leading coefficient is kept non-zero."""
    x, y = sp.symbols("x y")
    degree = draw(st.integers(1, 4))
    expr = sp.Integer(0)
    for k in range(degree + 1):
        c = sp.Integer(draw(st.integers(-4, 4)))
        for _ in range(draw(st.integers(0, 3))):
            c += draw(st.integers(-3, 3)) * x ** draw(st.integers(0, 2)) * y ** draw(st.integers(0, 2))
        if k == degree:
            c += 5  # never identically zero
        expr += c * S**k
    lows = [F(draw(st.integers(-3, 3)), 2) for _ in range(2)]
    highs = [lo + F(draw(st.integers(0, 4)), 2) for lo in lows]
    return expr, lows, highs


@given(random_families(), st.randoms(use_true_random=False))
@settings(max_examples=40, deadline=None)
def test_coefficients_at_points_match_sympy(data, rng):
    """coefficients_at equals sympy's expansion of the formula at random points of the box."""
    expr, lows, highs = data
    degree = sp.degree(expr, S)
    if degree < 1 or sp.expand(expr).coeff(S, degree) == 0:
        return  # not a polynomial in s of degree >= 1 (refused on input, tested elsewhere)
    fam = make_family(expr, ["x", "y"], lows, highs)
    for _ in range(4):
        point = random_point(rng, fam.box)
        ref = sympy_coefficients(expr, ["x", "y"], point)  # sympy (Meurer et al. 2017)
        got = list(fam.coefficients_at(point))
        # a common factor of one sign over the box is divided out: the family is the written
        # polynomial divided by that factor's value here
        factor = fam.factors[0].evaluate(point) if fam.factors and not fam.rational else 1
        ref = [c / factor for c in ref]
        # the family may carry leading coefficients that vanish at this point only
        assert got[len(got) - len(ref):] == ref
        assert all(c == 0 for c in got[: len(got) - len(ref)])


@given(random_families(), st.randoms(use_true_random=False))
@settings(max_examples=40, deadline=None)
def test_family_bounds_contain_samples_and_exact_ones_equal_corner_extremes(data, rng):
    """bounds() contains every sampled coefficient value; an exact bound is the corner extreme."""
    # corners: common practice for monotone/multilinear functions; containment: Moore 1966
    expr, lows, highs = data
    fam = make_family(expr, ["x", "y"], lows, highs)
    samples = [random_point(rng, fam.box) for _ in range(30)]
    at_corners = [fam.coefficients_at(v) for v in fam.box.vertices()]
    for k, bound in enumerate(fam.bounds()):
        assert all(bound.contains(fam.coefficients_at(p)[k]) for p in samples)
        assert all(bound.contains(c[k]) for c in at_corners)
        if bound.exact:
            assert (bound.low, bound.high) == (min(c[k] for c in at_corners), max(c[k] for c in at_corners))


def test_formulas_and_degree_of_a_simple_family():
    """formulas() writes each coefficient, highest power first; degree counts them."""
    R, C = sp.symbols("R C")
    fam = make_family(R * C * S**2 + (R + C) * S + 1, ["R", "C"], [1, 1], [2, 2])
    assert fam.degree == 2
    assert fam.formulas() == ("R*C", "R + C", "1")
    assert fam.kind == "multilinear"  # R*C is a product of two parameters
    assert fam.point_dict((F(1), F(2))) == {"R": F(1), "C": F(2)}


def test_sign_definite_denominator_is_cleared():
    """A denominator that keeps one sign over the box is multiplied out without moving roots."""
    R = sp.Symbol("R")
    expr = S**2 + S / R + 1  # R in [1, 2]
    fam = make_family(expr, ["R"], [1], [2])
    assert fam.rational and fam.kind == "rational"
    assert fam.cleared == "R"
    assert fam.factor_signs(fam.box) == (1,)
    # proportional to sympy's coefficients at every point (same roots)
    for r in (F(1), F(3, 2), F(2)):
        got, ref = fam.coefficients_at((r,)), sympy_coefficients(expr, ["R"], (r,))
        ratio = got[0] / ref[0]
        assert ratio > 0 and all(g == ratio * x for g, x in zip(got, ref, strict=True))


def test_vanishing_denominator_is_refused():
    """A denominator that can vanish inside the box is an error."""
    R = sp.Symbol("R")
    with pytest.raises(InputError, match="may vanish"):
        make_family(S / (R - 1) + 1, ["R"], [F(1, 2)], [F(3, 2)])


def test_common_parameter_factor_is_divided_out_when_sign_definite():
    """A factor common to all coefficients is divided out when it keeps one sign."""
    R = sp.Symbol("R")
    fam = make_family((R - 1) * S + 2 * (R - 1), ["R"], [2], [3])
    assert fam.coefficients_at((F(5, 2),)) == (F(1), F(2))
    assert fam.factors and fam.factor_signs(fam.box) == (1,)
    wider = Box(("R",), (F(0),), (F(3),))
    assert fam.factor_signs(wider) == (0,)  # R - 1 = 0 at R = 1, inside the wider box (by hand)
    with pytest.raises(InputError, match="may vanish"):
        make_family((R - 1) * S + 2 * (R - 1), ["R"], [F(1, 2)], [F(3, 2)])


@pytest.mark.parametrize("expr, message", [
    (sp.Integer(0), "identically zero"),
    (sp.Symbol("R") + 1, "does not depend on s"),
])
def test_degenerate_polynomials_are_refused(expr, message):
    """The zero polynomial and one free of s are input errors."""
    with pytest.raises(InputError, match=message):
        make_family(expr, ["R"], [1], [2])


def test_with_box_and_with_coefficients_keep_the_rest():
    """with_box changes only the box; with_coefficients only the coefficients."""
    R = sp.Symbol("R")
    fam = make_family(R * S + 1, ["R"], [1], [3])
    small = Box(("R",), (F(1),), (F(2),))
    moved = fam.with_box(small)
    assert moved.box == small and moved.coefficients == fam.coefficients
    assert moved.bounds()[0].high == 2 and fam.bounds()[0].high == 3
    other = fam.with_coefficients([MultiPoly.constant(1, 1), MultiPoly.constant(1, 2)])
    assert other.coefficients_at((F(2),)) == (F(1), F(2)) and other.box == fam.box


def test_derivatives_and_directions_shape():
    """derivatives()[k][i] is d a_(n-k) / d p_i; directions() gives its sign over the box."""
    R, C = sp.symbols("R C")
    fam = make_family(R * S**2 - C * S + R * C, ["R", "C"], [1, 1], [2, 2])
    d = fam.derivatives()
    assert d[0][0] == MultiPoly.constant(2, 1) and d[0][1].is_zero
    assert fam.directions() == ((1, 0), (0, -1), (1, 1))


# -- bounds against brute force ---------------------------------------------------------------


@pytest.mark.parametrize("name", ["active_filter", "maglev_lead", "thermal_pi_affine",
                                  "buck_voltage_loop", "interval_unstable"])
def test_exact_case_bounds_equal_corner_extremes(name):
    """For the multilinear/affine/interval cases every exact bound equals the corner extremes."""
    fam = load_case(CASES / f"{name}.toml").family
    values = [fam.coefficients_at(v) for v in fam.box.vertices()]
    for k, bound in enumerate(fam.bounds()):
        column = [v[k] for v in values]
        assert bound.exact
        assert (bound.low, bound.high) == (min(column), max(column))


def test_polynomial_case_bounds_contain_samples():
    """The servo case (Kt squared) has bounds containing every sampled coefficient value."""
    fam = load_case(CASES / "servo_pid.toml").family
    rng = random.Random(3)
    points = fam.box.vertices() + [random_point(rng, fam.box) for _ in range(300)]
    bounds = fam.bounds()
    for point in points:
        for value, bound in zip(fam.coefficients_at(point), bounds, strict=True):
            assert bound.contains(value)
    # Kt^2 is monotone for Kt > 0, so the bounds are exact and attained at corners too
    at_corners = [fam.coefficients_at(v) for v in fam.box.vertices()]
    for k, bound in enumerate(bounds):
        if bound.exact:
            assert bound.low == min(c[k] for c in at_corners)
            assert bound.high == max(c[k] for c in at_corners)


def test_outer_bound_of_a_non_monotone_family_contains_samples():
    """(R - 1)^2 as a coefficient over R in [0, 2]: an outer bound that still contains [0, 1]."""
    R = sp.Symbol("R")
    fam = make_family(S**2 + ((R - 1) ** 2 + 1) * S + 1, ["R"], [0], [2])
    bound = fam.bounds()[1]
    assert not bound.exact
    for j in range(41):
        assert bound.contains(fam.coefficients_at((F(j, 20),))[1])
