"""Tests for robust.exact.epsilon: the rational functions of ε in the Routh array's ε rows.

Truth comes from sympy's field of rational functions QQ(ε) (Meurer et al., "SymPy: symbolic
computing in Python", PeerJ Comput. Sci., 2017): its arithmetic, its printed text and its
leading term as ε -> 0+ (``as_leading_term``).
"""

from __future__ import annotations

import sympy as sp
from hypothesis import example, given
from hypothesis import strategies as st

from robust.exact import epsilon, intpoly
from robust.exact.epsilon import EpsilonFraction
from robust.exact.numbers import mpq

EPS = sp.Symbol("ε", positive=True)
FIELD, _ = sp.field([EPS], sp.QQ)

coefficients = st.lists(st.sampled_from([0, 0, 1, -1, 2, -3, 8, -16, 64]), min_size=1, max_size=5)


@st.composite
def entries(draw):
    """An entry: a rational constant or a rational function of ε in canonical form."""
    if draw(st.booleans()):
        return mpq(draw(st.integers(-20, 20)), draw(st.integers(1, 9)))
    num = intpoly.trim(draw(coefficients))
    den = intpoly.trim(draw(coefficients))
    if draw(st.booleans()):  # a monomial denominator, as the ε rows have
        den = intpoly.trim([0] * draw(st.integers(0, 3)) + [draw(st.sampled_from([1, 2, 8]))])
    if not num or not den:
        return mpq(draw(st.integers(-5, 5)))
    return epsilon._make(num, den)


def to_field(entry):
    if isinstance(entry, EpsilonFraction):
        ring = FIELD.ring

        def poly(cs):
            return ring.from_dict({(k,): sp.QQ(int(c)) for k, c in enumerate(cs) if c})

        return FIELD(poly(entry.numerator)) / FIELD(poly(entry.denominator))
    return FIELD(sp.Rational(int(entry.numerator), int(entry.denominator)))


@given(entries())
@example(epsilon._make((1,), (0, 0, 1)))
@example(epsilon._make((64, 0, -8, -1), (0, 8)))
@example(epsilon._make((1, -1), (1,)))
def test_text_is_what_sympy_prints(entry):
    """An ε entry reads exactly as sympy prints the same rational function."""
    if isinstance(entry, EpsilonFraction):
        assert str(entry) == str(to_field(entry).as_expr())  # sympy (Meurer et al., 2017)


@given(entries(), entries(), entries().filter(lambda e: not epsilon.is_zero(e)), entries())
def test_routh_step_matches_sympys_field(a0, a1, b0, b1):
    """(b0*a1 - a0*b1)/b0 equals the same step in sympy's QQ(ε)."""
    ours = epsilon.routh_step(a0, a1, b0, b1)
    fa0, fa1, fb0, fb1 = (to_field(x) for x in (a0, a1, b0, b1))
    assert to_field(ours) == (fb0 * fa1 - fa0 * fb1) / fb0  # sympy (Meurer et al., 2017)
    if isinstance(ours, EpsilonFraction):  # canonical: coprime, positive leading denominator
        assert intpoly.gcd_poly(ours.numerator, ours.denominator) == (1,)
        assert ours.denominator[-1] > 0


@given(entries().filter(lambda e: not epsilon.is_zero(e)))
def test_sign_at_zero_plus_is_the_sign_of_the_leading_term(entry):
    """The sign as ε -> 0+ is that of sympy's leading term in ε."""
    lead = to_field(entry).as_expr().as_leading_term(EPS)  # sympy (Meurer et al., 2017)
    assert epsilon.sign_at_zero_plus(entry) == (1 if lead.subs(EPS, 1) > 0 else -1)


@given(st.integers(-5, 5), entries())
def test_times_an_integer_matches_sympy(k, entry):
    """k * entry equals the product in sympy's field."""
    assert to_field(epsilon.times(k, entry)) == k * to_field(entry)  # sympy
