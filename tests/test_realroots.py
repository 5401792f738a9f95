"""Exact root isolation (Sturm counts, bisection) and Hurwitz minors in one variable.

References outside the project: sympy's exact real roots (``Poly.real_roots``, algebraic
numbers compared exactly) and sympy's determinant of the symbolic Hurwitz matrix (Meurer et
al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci., 2017); the Hurwitz matrix
layout is Hurwitz, "Ueber die Bedingungen, unter welchen eine Gleichung nur Wurzeln mit
negativen reellen Theilen besitzt", Math. Annalen 46, 1895.
"""

from __future__ import annotations

from fractions import Fraction

import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.exact.hurwitz import hurwitz_matrix, hurwitz_minor_polynomial
from robust.exact.realroots import least_root_in

R = sp.Symbol("r")
rationals = st.fractions(min_value=-20, max_value=20, max_denominator=12)


def expand(roots, quadratic):
    """Coefficients (highest first) of prod (r - root) * (r^2 + b r + c)."""
    b, c = quadratic
    q = [sp.Rational(x.numerator, x.denominator) for x in (b, c)]
    poly = sp.Poly(R**2 + q[0] * R + q[1], R)
    for root in roots:
        poly *= sp.Poly(R - sp.Rational(root.numerator, root.denominator), R)
    return poly, [Fraction(int(x.p), int(x.q)) for x in poly.all_coeffs()]


@settings(max_examples=60, deadline=None)
@given(st.lists(rationals, min_size=0, max_size=5), st.tuples(rationals, rationals),
       st.fractions(min_value=0, max_value=5, max_denominator=4), st.fractions(min_value=1, max_value=30))
def test_least_root_matches_sympys_exact_roots(roots, quadratic, low, span):
    """The bracket holds the least real root in (low, high], the one sympy finds; None when
    sympy finds none there."""
    high = low + span
    poly, coefficients = expand(roots, quadratic)
    inside = sorted({x for x in poly.real_roots() if low < x <= high}, key=lambda x: float(x))
    found = least_root_in(coefficients, low, high, Fraction(1, 10**12))
    if not inside:
        assert found is None
        return
    lo, hi = found
    least = inside[0]
    assert sp.Rational(lo.numerator, lo.denominator) <= least <= sp.Rational(hi.numerator, hi.denominator)
    assert hi - lo <= hi * Fraction(1, 10**12)


def test_least_root_of_an_irrational_crossing():
    """sqrt(3) (of r^2 - 3) is bracketed to the asked width."""
    lo, hi = least_root_in([1, 0, -3], Fraction(0), Fraction(100), Fraction(1, 10**20))
    assert lo * lo < 3 < hi * hi and hi - lo <= hi / 10**20


coefficient_polys = st.lists(st.lists(st.integers(-5, 5), min_size=1, max_size=3), min_size=3, max_size=7)


@settings(max_examples=40, deadline=None)
@given(coefficient_polys)
def test_hurwitz_minor_in_r_equals_sympys_determinant(polys):
    """Delta_(n-1)(r) by evaluation and interpolation equals sympy's determinant of the
    symbolic Hurwitz matrix, expanded."""
    exprs = [sum(c * R**(len(p) - 1 - k) for k, c in enumerate(p)) for p in polys]
    n = len(polys) - 1
    expected = sp.Poly(sp.expand(hurwitz_matrix(exprs, n - 1).det(method="berkowitz")), R)
    got = hurwitz_minor_polynomial([[Fraction(c) for c in p] for p in polys], n - 1)
    assert [Fraction(int(c.p), int(c.q)) for c in expected.all_coeffs()] == got
