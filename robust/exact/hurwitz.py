"""Hurwitz matrices and their leading minors (Hurwitz 1895)."""

from __future__ import annotations

from collections.abc import Sequence
from functools import lru_cache

import sympy as sp

__all__ = ["hurwitz_determinant_terms", "hurwitz_matrix"]


def hurwitz_matrix(coefficients: Sequence[sp.Expr], order: int) -> sp.Matrix:
    """The leading ``order`` x ``order`` block of the Hurwitz matrix of a_n .. a_0.

    Entry (i, j) is a_(n - (2j - i + 1)) in descending-index form (Hurwitz 1895).
    """
    n = len(coefficients) - 1

    def a(k: int) -> sp.Expr:  # a_k with a_n the leading coefficient
        return coefficients[n - k] if 0 <= k <= n else sp.Integer(0)

    return sp.Matrix(order, order, lambda i, j: a(n - (2 * (j + 1) - (i + 1))))


Terms = tuple[tuple[tuple[int, ...], int], ...]


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
