"""The common factor of several exact polynomials in the parameters (their content).

A factor shared by every coefficient of a characteristic polynomial, and depending on the
parameters, multiplies every root condition by the same expression: it is divided out when
it keeps one sign over the box, and refused when it may vanish (then the whole polynomial
vanishes there). Finding it must stay cheap on large formulas, so the usual answer, "no
common factor", is proven without a multivariate gcd:

* a non-zero constant among the polynomials, or a parameter missing from one of them,
  rules that parameter (or every parameter) out at once;
* for a parameter x present in all of them, fix the others at a rational point a where the
  leading coefficient in x of one polynomial does not vanish. A common factor g involving x
  keeps its degree in x there (its leading coefficient divides that one), and g(a, x)
  divides every p(a, x); so when the univariate gcd of the p(a, x) is constant, g does not
  involve x.

Only when that proof fails is sympy's multivariate gcd asked (Meurer et al., "SymPy:
symbolic computing in Python", PeerJ Comput. Sci., 2017).
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction
from math import lcm
from typing import TYPE_CHECKING, Any

from . import intpoly
from .numbers import mpq
from .polynomials import MultiPoly

if TYPE_CHECKING:
    import sympy as sp

__all__ = ["common_factor", "divide"]

_POINTS = (Fraction(2), Fraction(3), Fraction(5), Fraction(7), Fraction(11), Fraction(13))


def _leading_in(poly: MultiPoly, i: int) -> MultiPoly:
    top = poly.degree_in(i)
    return MultiPoly.from_mapping(poly.nvars, {e: c for e, c in poly.terms if e[i] == top})


def _univariate(poly: MultiPoly, i: int, point: Sequence) -> intpoly.Poly:
    """poly with every parameter but x_i fixed at ``point``, as an integer polynomial in x_i."""
    values: dict[int, Any] = {}  # GMP rationals
    for e, c in poly.terms:
        term: Any = c
        for j, (k, x) in enumerate(zip(e, point, strict=True)):
            if k and j != i:
                term = term * x**k
        values[e[i]] = values.get(e[i], mpq(0)) + term
    scale = lcm(*(int(v.denominator) for v in values.values()))
    top = max(values)
    return intpoly.trim(int(values.get(k, 0) * scale) for k in range(top + 1))


def _excluded(polys: Sequence[MultiPoly], i: int) -> bool:
    """True when no common factor of ``polys`` can involve parameter i (proof above)."""
    for shift in range(len(_POINTS)):
        point = [mpq(_POINTS[(j + shift) % len(_POINTS)]) for j in range(polys[0].nvars)]
        if all(_leading_in(p, i)._evaluate_q(point) == 0 for p in polys):
            continue  # every leading coefficient vanishes here: try another point
        common: intpoly.Poly = ()
        for p in polys:
            common = intpoly.gcd_poly(common, _univariate(p, i, point))
            if len(common) == 1:
                return True
        return False
    return False


def _to_sympy(poly: MultiPoly, gens: Sequence[sp.Symbol]) -> sp.Poly:
    import sympy as sp  # the rare fallback: not loaded when the cheap proof settles it

    mapping = {e: sp.QQ(int(c.numerator), int(c.denominator))  # type: ignore[attr-defined]
               for e, c in poly.terms}
    return sp.Poly.from_dict(mapping, *gens, domain=sp.QQ)


def _from_sympy(poly: sp.Poly, nvars: int) -> MultiPoly:
    return MultiPoly.from_mapping(nvars, {tuple(int(k) for k in e): mpq(int(c.numerator), int(c.denominator))
                                          for e, c in zip(poly.monoms(), poly.coeffs(), strict=True)})


def common_factor(polys: Sequence[MultiPoly]) -> MultiPoly | None:
    """The non-constant common factor of ``polys`` (their gcd), or None when it is constant."""
    nonzero = [p for p in polys if not p.is_zero]
    if not nonzero or any(p.total_degree() == 0 for p in nonzero):
        return None
    shared = frozenset.intersection(*(p.variables() for p in nonzero))
    if all(_excluded(nonzero, i) for i in sorted(shared)):
        return None
    import sympy as sp

    gens = sp.symbols(f"x0:{nonzero[0].nvars}")
    g = None
    for p in sorted(nonzero, key=lambda q: len(q.terms)):
        q = _to_sympy(p, gens)
        g = q if g is None else g.gcd(q)
        if g.is_ground:
            return None
    return _from_sympy(g, nonzero[0].nvars)


def divide(poly: MultiPoly, factor: MultiPoly) -> MultiPoly:
    """poly / factor, when factor divides poly exactly."""
    import sympy as sp

    gens = sp.symbols(f"x0:{poly.nvars}")
    quotient = _to_sympy(poly, gens).exquo(_to_sympy(factor, gens))
    return _from_sympy(quotient, poly.nvars)
