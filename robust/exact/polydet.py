"""The determinant of a square matrix of exact sparse polynomials, without division.

Laplace expansion along the rows, top to bottom, with each minor remembered by the set of
columns it keeps (the rows are always the last ones): a minor of the bottom ``k`` rows is
used by every minor above it that keeps its columns, so an ``n x n`` determinant costs at
most ``n * 2**(n-1)`` polynomial products instead of ``n!`` (cofactor expansion with its
minors memoised: common practice, no source). Only minors reachable through non-zero entries
are formed, so a sparse matrix costs far less.

Every product is paid from a :class:`robust.exact.sparse.Work` account, so a matrix whose
determinant would take too long is refused with the account's one clear error.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..errors import InputError
from . import sparse

__all__ = ["determinant"]


def _degree_bound(matrix: Sequence[Sequence[sparse.Sparse]]) -> int:
    """An upper bound on the determinant's degree in any one variable: per variable, the sum
    over the rows of the row's largest degree."""
    top = max((m.bit_length() for row in matrix for entry in row for m in entry), default=0)
    nvars = top // sparse.BITS + 1
    return max(sum(max(sparse.degree_in(entry, v) for entry in row) for row in matrix)
               for v in range(nvars))


def determinant(matrix: Sequence[Sequence[sparse.Sparse]], work: sparse.Work) -> sparse.Sparse:
    """det(matrix) of a square matrix whose entries are sparse polynomials.

    Parameters
    ----------
    matrix
        Rows of entries (packed sparse polynomials, see :mod:`robust.exact.sparse`).
    work
        The account every product is paid from.

    Raises
    ------
    InputError
        When the matrix is not square, when the account runs out, or when the determinant
        could reach a degree the packed monomials cannot hold.

    Examples
    --------
    >>> s = sparse.variable(0)
    >>> det = determinant([[s, sparse.constant(-1)], [sparse.constant(2), sparse.add(s, s)]],
    ...                   sparse.Work(100))
    >>> sorted(det.items())   # 2*s^2 + 2
    [(0, 2), (2, 2)]
    """
    n = len(matrix)
    if any(len(row) != n for row in matrix):
        raise InputError("matrix", "not square", "n rows of n entries each")
    if n == 0:
        return sparse.constant(1)
    bound = _degree_bound(matrix)
    if bound >= 1 << sparse.BITS:
        raise InputError("matrix", f"its determinant could reach degree {bound:,} in one variable",
                         f"degrees below {1 << sparse.BITS:,}: simpler entries")
    full = (1 << n) - 1
    # the column sets of the minors reached from the whole matrix, row by row
    levels: list[set[int]] = [{full}]
    for r in range(n - 1):
        reached = set()
        for mask in levels[-1]:
            for j in range(n):
                if mask >> j & 1 and matrix[r][j]:
                    reached.add(mask & ~(1 << j))
        levels.append(reached)
    minors: dict[int, sparse.Sparse] = {0: sparse.constant(1)}
    for r in range(n - 1, -1, -1):
        row = matrix[r]
        current: dict[int, sparse.Sparse] = {}
        for mask in levels[r]:
            total: sparse.Sparse = {}
            sign = 1
            for j in range(n):
                if not mask >> j & 1:
                    continue
                below = minors.get(mask & ~(1 << j))
                if row[j] and below:
                    sparse.add_into(total, sparse.multiply(row[j], below, work), sign)
                sign = -sign
            if total:
                current[mask] = total
        minors = current
    return minors.get(full, {})
