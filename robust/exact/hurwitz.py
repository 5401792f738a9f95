"""Hurwitz matrices and their leading minors (Hurwitz 1895)."""

from __future__ import annotations

from collections.abc import Sequence

import sympy as sp

__all__ = ["hurwitz_matrix"]


def hurwitz_matrix(coefficients: Sequence[sp.Expr], order: int) -> sp.Matrix:
    """The leading ``order`` x ``order`` block of the Hurwitz matrix of a_n .. a_0.

    Entry (i, j) is a_(n - (2j - i + 1)) in descending-index form (Hurwitz 1895).
    """
    n = len(coefficients) - 1

    def a(k: int) -> sp.Expr:  # a_k with a_n the leading coefficient
        return coefficients[n - k] if 0 <= k <= n else sp.Integer(0)

    return sp.Matrix(order, order, lambda i, j: a(n - (2 * (j + 1) - (i + 1))))
