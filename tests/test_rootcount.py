"""Tests for robust.exact.rootcount: root counts by the Cauchy index and the pair factor.

Truth comes from outside the project:

* sympy's exact root isolation (Meurer et al., "SymPy: symbolic computing in Python", PeerJ
  Comput. Sci., 2017), ``tests/reference.py``;
* the counts known by construction for products of known factors (a root's half-plane is the
  sign of its real part; common practice, no source);
* sympy's gcd and square-free decomposition (``Poly.gcd``, ``Poly.sqf_list``) for the
  integer polynomial helpers underneath.
"""

from __future__ import annotations

from fractions import Fraction

import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from reference import isolated_counts
from strategies import RootSpec, integer_coefficients, known_root_polynomials

from robust.exact import intpoly
from robust.exact.rootcount import count_roots, square_free

S = sp.Symbol("s")


def exact(coefficients) -> list[Fraction]:
    return [Fraction(c) for c in coefficients]


def sympy_poly(p: intpoly.Poly) -> sp.Poly:
    return sp.Poly([int(c) for c in reversed(p)] or [0], S, domain=sp.ZZ)


small_polynomials = st.lists(st.integers(-6, 6), min_size=1, max_size=9).map(intpoly.trim)


@settings(max_examples=60)
@given(known_root_polynomials())
def test_counts_of_known_root_polynomials_match_the_construction(spec: RootSpec):
    """Products of known factors (axis pairs, origin, quadrantal quartics) count as built."""
    right, axis, left, _ = count_roots(spec.coefficients())
    assert (right, axis, left) == spec.counts()  # by construction (common practice, no source)


@settings(max_examples=60)
@given(integer_coefficients(min_degree=1, max_degree=12))
def test_counts_of_random_polynomials_match_sympy(c):
    """Random integer polynomials count like sympy's exact root isolation."""
    right, axis, left, _ = count_roots(exact(c))
    assert (right, axis, left) == isolated_counts(c)  # sympy (Meurer et al., 2017)


def test_paired_is_the_degree_of_the_pair_factor():
    """``paired`` counts the roots in pairs r, -r: (s^2 + 1)(s^2 - 4)(s + 3) has four."""
    c = [int(x) for x in sp.Poly(sp.expand((S**2 + 1) * (S**2 - 4) * (S + 3)), S).all_coeffs()]
    assert count_roots(exact(c)) == (1, 2, 2, 4)  # roots ±j, ±2, -3 by construction


def test_roots_at_the_origin_count_on_the_axis():
    """s^3 (s + 1) has three roots on the axis (at the origin) and one on the left."""
    assert count_roots(exact([1, 1, 0, 0, 0])) == (0, 3, 1, 3)


@given(small_polynomials, small_polynomials)
def test_integer_gcd_matches_sympy(p, q):
    """gcd_poly agrees with sympy's gcd over the integers (up to the sign sympy picks)."""
    ours = intpoly.gcd_poly(p, q)
    theirs = sp.gcd(sympy_poly(p), sympy_poly(q))  # sympy (Meurer et al., 2017)
    if not p and not q:
        assert ours == ()
        return
    assert sympy_poly(ours) in (theirs, -theirs)
    assert not ours or ours[-1] > 0


@given(small_polynomials, small_polynomials.filter(bool))
def test_pseudo_remainder_is_a_positive_multiple_of_the_remainder(p, q):
    """pseudo_remainder(p, q) is c * rem(p, q) with c > 0 (the signs Sturm sequences need)."""
    ours = sympy_poly(intpoly.pseudo_remainder(p, q)).as_expr()
    theirs = sp.rem(sympy_poly(p).as_expr(), sympy_poly(q).as_expr(), S)  # sympy
    if theirs == 0:
        assert ours == 0
    else:
        ratio = sp.cancel(ours / theirs)
        assert ratio.is_Rational and ratio > 0


@given(st.lists(small_polynomials.filter(lambda p: len(p) > 1), min_size=1, max_size=3),
       st.lists(st.integers(1, 3), min_size=3, max_size=3))
def test_square_free_decomposition_matches_sympy(factors, powers):
    """Yun's decomposition gives sympy's square-free factors with their multiplicities."""
    p = (1,)
    for f, k in zip(factors, powers, strict=False):
        for _ in range(k):
            p = intpoly.mul(p, f)
    ours = {(tuple(sympy_poly(f).monic().all_coeffs()), k) for f, k in square_free(p)}
    theirs = {(tuple(f.monic().all_coeffs()), k)
              for f, k in sympy_poly(p).sqf_list()[1] if f.degree() > 0}  # sympy
    assert ours == theirs
