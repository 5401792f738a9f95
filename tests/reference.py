"""Independent reference computations for the tests (never used by the package).

Root counts relative to the imaginary axis come from sympy's exact real-root isolation and
complex root isolation (``Poly.sqf_list``, ``Poly.count_roots``, ``Poly.all_roots``): sympy is a
general-purpose computer-algebra library (Meurer et al., "SymPy: symbolic computing in
Python", PeerJ Computer Science, 2017), independent of our Routh recurrence and of our
Cauchy-index counts.

``reference_counts`` evaluates every root to 60 digits (polynomials built from known factors);
``isolated_counts`` counts in a rectangle instead, which stays fast on random polynomials whose
irreducible factors make the root evaluation far too slow.
"""

from __future__ import annotations

from fractions import Fraction

import sympy as sp

S = sp.Symbol("s")
X = sp.Symbol("x")


def reference_counts(coefficients) -> tuple[int, int, int]:
    """(open_right, imaginary_axis, open_left) with multiplicity, by exact root isolation."""
    poly = sp.Poly([sp.Rational(Fraction(c).numerator, Fraction(c).denominator)
                    for c in coefficients], S)
    right = axis = left = 0
    for factor, mult in poly.sqf_list()[1]:
        if factor.degree() == 0:
            continue
        if factor.eval(0) == 0:  # root at the origin (square-free: factor is c*s times more)
            axis += mult
            factor = sp.Poly(sp.quo(factor.as_expr(), S), S)
            if factor.degree() == 0:
                continue
        mirrored = sp.Poly(factor.as_expr().subs(S, -S), S)
        sym = sp.gcd(factor, mirrored)
        on_axis = 0
        if sym.degree() > 0:
            x = sp.Symbol("x")
            # sym is even with sym(0) != 0: sym(s) = G(s^2); s = jw <-> x = -w^2 < 0
            even = sp.Poly(sym.as_expr().subs(S, sp.sqrt(x)).expand(), x)
            bound = 1 + max(abs(c) for c in even.all_coeffs()) / abs(even.LC())
            on_axis = 2 * even.count_roots(-bound, 0)
        off = []
        for r in factor.all_roots():
            re = sp.re(r.evalf(60))
            off.append(re)
        near_zero = sum(1 for v in off if abs(v) < sp.Float("1e-40"))
        assert near_zero == on_axis, (factor, near_zero, on_axis)
        right += mult * sum(1 for v in off if v > sp.Float("1e-40"))
        left += mult * sum(1 for v in off if v < -sp.Float("1e-40"))
        axis += mult * on_axis
    return right, axis, left


def isolated_counts(coefficients) -> tuple[int, int, int]:
    """(open_right, imaginary_axis, open_left) from sympy's exact root isolation.

    Per square-free factor f (sympy ``sqf_list``): roots at the origin are divided out; the
    part g = gcd(f(s), f(-s)) is even, g(s) = G(s^2), and each negative real root of G gives
    an imaginary pair while every other root of g pairs off as r, -r; the rest h has no root
    on the axis, so sympy's exact count of roots in the rectangle 0 <= Re <= R, |Im| <= R
    (R above the Cauchy bound 1 + max |a_i / a_n|, from memory) is its right count.
    """
    poly = sp.Poly([sp.Rational(Fraction(c).numerator, Fraction(c).denominator)
                    for c in coefficients], S, domain=sp.QQ)
    right = axis = left = 0
    for factor, mult in poly.sqf_list()[1]:
        if factor.degree() <= 0:
            continue
        if factor.eval(0) == 0:
            axis += mult
            factor = sp.quo(factor, sp.Poly(S, S, domain=sp.QQ))
        symmetric = sp.gcd(factor, factor.compose(sp.Poly(-S, S, domain=sp.QQ)))
        rest = sp.quo(factor, symmetric)
        if symmetric.degree() > 0:
            even = sp.Poly(symmetric.all_coeffs()[::-1][0::2][::-1], X, domain=sp.QQ)
            negative = even.count_roots(None, 0)  # G(0) != 0, so these are all below 0
            axis += mult * 2 * negative
            right += mult * (symmetric.degree() - 2 * negative) // 2
            left += mult * (symmetric.degree() - 2 * negative) // 2
        if rest.degree() > 0:
            coeffs = rest.all_coeffs()
            bound = sp.Integer(int(1 + max(abs(c) for c in coeffs[1:]) / abs(coeffs[0])) + 1)
            in_right = rest.count_roots(-bound * sp.I, bound + bound * sp.I)
            right += mult * in_right
            left += mult * (rest.degree() - in_right)
    return right, axis, left
