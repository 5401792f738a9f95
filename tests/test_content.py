"""Tests for robust.exact.content: the common factor of a family's coefficients.

Truth comes from sympy's multivariate gcd (``Poly.gcd``; Meurer et al., "SymPy: symbolic
computing in Python", PeerJ Comput. Sci., 2017) of the same polynomials.
"""

from __future__ import annotations

import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.exact.content import common_factor, divide
from robust.exact.polynomials import MultiPoly

GENS = sp.symbols("x0:3")

terms = st.dictionaries(st.tuples(*(st.integers(0, 2),) * 3), st.integers(-4, 4).filter(bool),
                        min_size=1, max_size=4)


def to_sympy(poly: MultiPoly) -> sp.Poly:
    return sp.Poly.from_dict({e: sp.QQ(int(c.numerator), int(c.denominator)) for e, c in poly.terms},
                             *GENS, domain=sp.QQ)


def product(a: dict, b: dict) -> MultiPoly:
    p = to_sympy(MultiPoly.from_mapping(3, a)) * to_sympy(MultiPoly.from_mapping(3, b))
    return MultiPoly.from_mapping(3, {e: int(c) for e, c in zip(p.monoms(), p.coeffs(), strict=True)})


@settings(max_examples=60)
@given(terms, st.lists(terms, min_size=1, max_size=3))
def test_common_factor_matches_sympys_gcd(shared, others):
    """The common factor of g*q_1, ..., g*q_k is sympy's gcd of them (up to a constant)."""
    polys = [product(shared, q) for q in others]
    gcd = to_sympy(polys[0])
    for p in polys[1:]:
        gcd = gcd.gcd(to_sympy(p))  # sympy (Meurer et al., 2017)
    ours = common_factor(polys)
    if gcd.total_degree() == 0:
        assert ours is None
    else:
        assert ours is not None
        ratio = sp.cancel(to_sympy(ours).as_expr() / gcd.as_expr())
        assert ratio.is_Rational and ratio != 0
        for p in polys:
            assert to_sympy(divide(p, ours)) * to_sympy(ours) == to_sympy(p)


def test_a_constant_coefficient_means_no_common_factor():
    """With a non-zero constant among the coefficients there is no common factor."""
    x = MultiPoly.from_mapping(3, {(1, 0, 0): 1})
    assert common_factor([x, MultiPoly.constant(3, 5)]) is None
