"""Tests for robust.exact.bernstein (Bernstein expansion over a box) and the generic Hurwitz
determinant of robust.exact.hurwitz.

Outside references:
- the range enclosure min b_I <= f <= max b_I and the corner property b_corner = f(corner)
  (Garloff, "Convergent bounds for the range of multivariate polynomials", 1986), checked
  against exact evaluation of the polynomial on a dense rational grid;
- quadratic convergence of the enclosure under subdivision (Garloff 1986), on a quadratic
  whose Bernstein form over [a, a + h] we derive by hand;
- the Hurwitz determinants against sympy's determinant of the Hurwitz matrix (Meurer et al.,
  "SymPy: symbolic computing in Python", PeerJ Comput. Sci. 2017), and against Orlando's
  formula Delta_(n-1) = (-1)^(n(n-1)/2) a_n^(n-1) prod_(i<j) (r_i + r_j) on polynomials with
  known roots (Gantmacher, "The Theory of Matrices", vol. 2, 1959, ch. XV, from memory).
"""

from __future__ import annotations

import itertools
from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from robust.exact.bernstein import bernstein_patch, tensor_size
from robust.exact.hurwitz import hurwitz_determinant_terms, hurwitz_matrix
from robust.exact.polynomials import MultiPoly

coefficient = st.fractions(min_value=-20, max_value=20, max_denominator=7)
ends = st.fractions(min_value=-3, max_value=3, max_denominator=4)


@st.composite
def polys_and_boxes(draw, nvars: int = 2, max_degree: int = 3):
    terms = draw(st.dictionaries(
        st.tuples(*[st.integers(0, max_degree)] * nvars), coefficient, min_size=0, max_size=6))
    box = []
    for _ in range(nvars):
        a, b = sorted((draw(ends), draw(ends)))
        box.append((a, b))
    return MultiPoly.from_mapping(nvars, terms), box


def _grid(box, per_side: int):
    axes = [[lo + (hi - lo) * Fraction(j, per_side - 1) for j in range(per_side)] for lo, hi in box]
    return itertools.product(*axes)


@given(polys_and_boxes())
def test_the_coefficients_enclose_the_range_and_equal_it_at_the_corners(data):
    poly, box = data
    patch = bernstein_patch(poly, box)
    values = [poly.evaluate(x) for x in _grid(box, 9)]
    assert patch.low() <= min(values) and max(values) <= patch.high()
    for ends_, value in patch.corners():
        corner = tuple(box[i][1] if ends_.get(i) else box[i][0] for i in range(len(box)))
        assert value == poly.evaluate(corner)
    assert patch.least_corner()[1] == min(v for _, v in patch.corners())
    if patch.positive():
        assert min(values) > 0


@given(polys_and_boxes(nvars=3, max_degree=2), st.integers(0, 2))
def test_halves_enclose_their_own_boxes_and_tighten(data, axis):
    poly, box = data
    patch = bernstein_patch(poly, box)
    left, right = patch.halves(axis)
    middle = (box[axis][0] + box[axis][1]) / 2
    for half, (lo, hi) in ((left, (box[axis][0], middle)), (right, (middle, box[axis][1]))):
        sub = list(box)
        sub[axis] = (lo, hi)
        values = [poly.evaluate(x) for x in _grid(sub, 5)]
        assert half.low() <= min(values) and max(values) <= half.high()
        # a sub-box's enclosure lies inside the parent's (Garloff 1986)
        assert patch.low() <= half.low() and half.high() <= patch.high()
        # de Casteljau's halves are the expansion over the half box
        direct = bernstein_patch(poly, sub)
        assert np.array_equal(half.tensor * direct.scale, direct.tensor * half.scale)


def test_enclosure_error_shrinks_quadratically():
    """f(x) = (x - 1/3)^2 on [0, 1] split into 2^k equal pieces. Over [a, a + h] the Bernstein
    coefficients of a quadratic are f(a), f(a) + h f'(a)/2, f(a + h) (derived by hand), so the
    worst gap between the least coefficient and the true minimum over the pieces is O(h^2):
    each halving divides it by about 4."""
    poly = MultiPoly.from_mapping(1, {(2,): 1, (1,): Fraction(-2, 3), (0,): Fraction(1, 9)})
    gaps = []
    for k in range(2, 9):
        h = Fraction(1, 2**k)
        worst = Fraction(0)
        for j in range(2**k):
            a = j * h
            patch = bernstein_patch(poly, [(a, a + h)])
            ends = min(poly.evaluate((a,)), poly.evaluate((a + h,)))
            true_min = 0 if a <= Fraction(1, 3) <= a + h else ends
            worst = max(worst, true_min - patch.low())
        gaps.append(worst)
    ratios = [float(gaps[i] / gaps[i + 1]) for i in range(len(gaps) - 1)]
    assert all(r > 3.5 for r in ratios), ratios


def test_a_constant_and_a_zero_width_parameter_have_no_axis():
    poly = MultiPoly.from_mapping(2, {(1, 1): 3, (0, 0): -1})
    patch = bernstein_patch(poly, [(Fraction(2), Fraction(2)), (Fraction(0), Fraction(1))])
    assert patch.axes == (1,)
    assert patch.low() == -1 and patch.high() == 5  # -1 + 6y on [0, 1]
    constant = bernstein_patch(MultiPoly.constant(2, Fraction(-7, 3)), [(0, 1), (0, 1)])
    assert constant.axes == () and constant.low() == constant.high() == Fraction(-7, 3)
    assert not constant.positive()
    assert tensor_size(poly) == 4


@pytest.mark.parametrize("n", range(1, 9))
def test_hurwitz_determinant_terms_match_sympy(n):
    a = sp.symbols(f"a0:{n + 1}")
    for order in range(n + 1):
        ours = sum(c * sp.prod([x**e for x, e in zip(a, exps, strict=True)])
                   for exps, c in hurwitz_determinant_terms(n, order))
        reference = hurwitz_matrix(list(a), order).det(method="berkowitz") if order else 1
        assert sp.expand(ours - reference) == 0


@given(st.lists(st.fractions(min_value=-5, max_value=5, max_denominator=3), min_size=2, max_size=6),
       st.fractions(min_value=Fraction(1, 2), max_value=3, max_denominator=2))
def test_orlando_formula(roots, lead):
    n = len(roots)
    s = sp.Symbol("s")
    poly = sp.Poly(sp.Rational(lead.numerator, lead.denominator)
                   * sp.prod([s - sp.Rational(r.numerator, r.denominator) for r in roots]), s)
    coeffs = [Fraction(int(sp.numer(c)), int(sp.denom(c))) for c in poly.all_coeffs()]
    delta = sum(c * _prod(x**e for x, e in zip(coeffs, exps, strict=True))
                for exps, c in hurwitz_determinant_terms(n, n - 1))
    pairs = _prod(roots[i] + roots[j] for i in range(n) for j in range(i + 1, n))
    assert delta == (-1) ** (n * (n - 1) // 2) * lead ** (n - 1) * pairs


def _prod(values) -> Fraction:
    out = Fraction(1)
    for v in values:
        out *= v
    return out
