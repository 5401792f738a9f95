"""Hurwitz matrices and their leading minors (Hurwitz 1895).

:func:`hurwitz_minor_polynomial` gives Delta_(order) of a polynomial whose coefficients are
themselves polynomials in one variable r, exactly: the minor is a polynomial in r of known
degree bound, so it is evaluated at that many + 1 integer points (an exact determinant of
rationals each, by Gaussian elimination on GMP rationals) and interpolated (Newton's divided
differences). At degree 10 this is about fifty times faster than a determinant over QQ[r].

:func:`hurwitz_determinant_terms` gives Delta_(order) of a generic polynomial as a polynomial
in its coefficients, for multiplying out in many parameters (the Bernstein test of the
Hurwitz conditions and the certificate checker).
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction
from functools import lru_cache
from typing import TYPE_CHECKING, Any

from .numbers import from_mpq, mpq, to_mpq

if TYPE_CHECKING:
    import sympy as sp

    from .polynomials import MultiPoly

__all__ = ["MAX_DELTA_DEGREE", "MAX_DELTA_PRODUCTS", "delta_products", "determinant",
           "hurwitz_determinant_in", "hurwitz_determinant_terms", "hurwitz_matrix",
           "hurwitz_minor_polynomial", "with_fixed_parts"]


def hurwitz_matrix(coefficients: Sequence[sp.Expr], order: int) -> sp.Matrix:
    """The leading ``order`` x ``order`` block of the Hurwitz matrix of a_n .. a_0.

    Entry (i, j) is a_(n - (2j - i + 1)) in descending-index form (Hurwitz 1895).
    """
    import sympy as sp

    n = len(coefficients) - 1

    def a(k: int) -> sp.Expr:  # a_k with a_n the leading coefficient
        return coefficients[n - k] if 0 <= k <= n else sp.Integer(0)

    return sp.Matrix(order, order, lambda i, j: a(n - (2 * (j + 1) - (i + 1))))


Terms = tuple[tuple[tuple[int, ...], int], ...]

#: Limits for multiplying the generic Delta_(n-1) out in many parameters, shared by the
#: Bernstein test and the certificate checker: the generic determinant has 4605 terms at
#: degree 12 and grows about threefold per degree (441145 at 16, 19 s to expand), and a
#: multiplication of more than MAX_DELTA_PRODUCTS term products is not attempted.
MAX_DELTA_DEGREE = 12
MAX_DELTA_PRODUCTS = 2_000_000


@lru_cache(maxsize=32)
def hurwitz_determinant_terms(n: int, order: int) -> Terms:
    """The Hurwitz determinant Delta_order of a generic degree-n polynomial, as a polynomial
    in its coefficients: ((exponents of a_n .. a_0, integer coefficient), ...).

    Exact Laplace expansion along the rows of :func:`hurwitz_matrix`'s pattern, memoised on
    the set of columns left (at most 2^order minors; the matrix is sparse, a_k = 0 outside
    0 <= k <= n). ``order`` 0 gives the constant 1.
    """
    if not 0 <= order <= n:
        raise ValueError(f"order {order} outside 0..{n}")

    def entry(i: int, j: int) -> int | None:  # index into a_n .. a_0, None for a zero entry
        k = 2 * j - i + 1
        return k if 0 <= k <= n else None

    def unit(k: int) -> tuple[int, ...]:
        return tuple(1 if m == k else 0 for m in range(n + 1))

    memo: dict[int, dict[tuple[int, ...], int]] = {}

    def minor(columns: int) -> dict[tuple[int, ...], int]:
        # rows order - popcount(columns) .. order - 1 against the columns in the mask
        if columns == 0:
            return {(0,) * (n + 1): 1}
        if columns in memo:
            return memo[columns]
        row = order - columns.bit_count()
        out: dict[tuple[int, ...], int] = {}
        position = 0
        for j in range(order):
            if not columns >> j & 1:
                continue
            k = entry(row, j)
            if k is not None:
                sign = -1 if position % 2 else 1
                step = unit(k)
                for exps, c in minor(columns & ~(1 << j)).items():
                    key = tuple(a + b for a, b in zip(exps, step, strict=True))
                    total = out.get(key, 0) + sign * c
                    if total:
                        out[key] = total
                    else:
                        out.pop(key, None)
            position += 1
        memo[columns] = out
        return out

    return tuple(sorted(minor((1 << order) - 1).items()))


def determinant(rows: list[list]) -> Any:
    """The exact determinant of a square matrix of GMP rationals (Gaussian elimination;
    the rows are consumed)."""
    size = len(rows)
    sign = 1
    result = mpq(1)
    for col in range(size):
        pivot = next((r for r in range(col, size) if rows[r][col] != 0), None)
        if pivot is None:
            return mpq(0)
        if pivot != col:
            rows[col], rows[pivot] = rows[pivot], rows[col]
            sign = -sign
        top = rows[col]
        lead = top[col]
        result *= lead
        for r in range(col + 1, size):
            row = rows[r]
            if row[col] != 0:
                factor = row[col] / lead
                for c in range(col + 1, size):
                    row[c] -= factor * top[c]
    return result * sign


def _evaluate(coefficients: Sequence, x: Any) -> Any:
    total = mpq(0)
    for c in coefficients:
        total = total * x + c
    return total


def hurwitz_minor_polynomial(coefficients: Sequence[Sequence[Fraction]], order: int) -> list[Fraction]:
    """Delta_(order)(r): the leading minor of the Hurwitz matrix of a_n(r) .. a_0(r).

    Parameters
    ----------
    coefficients
        a_n .. a_0, each a polynomial in r given by its coefficients, highest power first.
    order
        The size of the minor (n - 1 for the minor that decides a crossing of the axis).

    Returns
    -------
    The minor's coefficients in r, highest power first (``[0]`` when it vanishes).

    Examples
    --------
    >>> # s^3 + (2 + r) s^2 + 3 s + 1: Delta_2 = (2 + r) * 3 - 1 * 1 = 3 r + 5
    >>> hurwitz_minor_polynomial([[1], [1, 2], [3], [1]], 2)
    [Fraction(3, 1), Fraction(5, 1)]
    """
    polys = [[to_mpq(Fraction(c)) for c in p] or [mpq(0)] for p in coefficients]
    n = len(polys) - 1
    # every entry has degree <= the largest coefficient degree; a minor of order k then <= k times it
    bound = order * max(len(p) - 1 for p in polys)
    xs = [mpq(x) for x in range(bound + 1)]
    ys = []
    for x in xs:
        values = [_evaluate(p, x) for p in polys]
        rows = [[values[n - k] if 0 <= (k := n - (2 * (j + 1) - (i + 1))) <= n else mpq(0)
                 for j in range(order)] for i in range(order)]
        ys.append(determinant(rows))
    # Newton's divided differences, then the Newton form expanded into powers of r
    table = list(ys)
    for level in range(1, len(xs)):
        for i in range(len(xs) - 1, level - 1, -1):
            table[i] = (table[i] - table[i - 1]) / (xs[i] - xs[i - level])
    result = [table[-1]]  # highest power first
    for i in range(len(xs) - 2, -1, -1):
        # result = result * (r - xs[i]) + table[i]
        shifted = [*result, mpq(0)]
        for k in range(len(result)):
            shifted[k + 1] -= xs[i] * result[k]
        shifted[-1] += table[i]
        result = shifted
    while len(result) > 1 and result[0] == 0:
        result = result[1:]
    return [from_mpq(c) for c in result]


def delta_products(coefficients: Sequence[MultiPoly]) -> int:
    """An upper bound on the term products of multiplying Delta_(n-1) out in the parameters,
    from the number of terms of each coefficient alone (known before anything is multiplied)."""
    n = len(coefficients) - 1
    sizes = [len(c.terms) for c in coefficients]
    total = 0
    for exps, _ in hurwitz_determinant_terms(n, n - 1):
        count = 1
        for k, e in enumerate(exps):
            count *= sizes[k] ** e
        total += count
    return total


def hurwitz_determinant_in(coefficients: Sequence[MultiPoly], nvars: int) -> MultiPoly | None:
    """Delta_(n-1) of a polynomial whose coefficients a_n .. a_0 are exact polynomials in
    ``nvars`` parameters, multiplied out exactly; None above MAX_DELTA_DEGREE or when it
    would take more than MAX_DELTA_PRODUCTS term products (decided before multiplying).

    Products of the coefficients are shared between the generic determinant's terms (each
    monomial in a_n .. a_0 built from a smaller one times one coefficient)."""
    from ..errors import InputError
    from . import sparse

    n = len(coefficients) - 1
    if n > MAX_DELTA_DEGREE or n < 1 or delta_products(coefficients) > MAX_DELTA_PRODUCTS:
        return None
    work = sparse.Work(MAX_DELTA_PRODUCTS)
    packed = [sparse.from_multipoly(c) for c in coefficients]
    products: dict[tuple[int, ...], dict] = {(0,) * (n + 1): sparse.constant(1)}

    def product(exps: tuple[int, ...]) -> dict:
        cached = products.get(exps)
        if cached is None:
            k = max(i for i, e in enumerate(exps) if e)
            smaller = list(exps)
            smaller[k] -= 1
            cached = sparse.multiply(product(tuple(smaller)), packed[k], work)
            products[exps] = cached
        return cached

    total: dict = {}
    try:
        for exps, c in hurwitz_determinant_terms(n, n - 1):
            sparse.add_into(total, sparse.scale(product(exps), c))
    except InputError:  # the work account refused (the bound above is not exact)
        return None
    return sparse.to_multipoly(total, nvars)


def with_fixed_parts(coefficients: Sequence[MultiPoly], low: Sequence[Fraction], high: Sequence[Fraction]
                     ) -> tuple[MultiPoly, ...]:
    """The coefficients with every parameter that the box [low, high] holds at one value
    (low == high: a part taken exactly) replaced by that value, so that Delta_(n-1) is
    multiplied out in the parameters that vary only. Valid on every sub-box of that box."""
    fixed = {i: a for i, (a, b) in enumerate(zip(low, high, strict=True)) if a == b}
    if not fixed:
        return tuple(coefficients)
    return tuple(c.substitute(fixed) for c in coefficients)
