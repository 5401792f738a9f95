"""Root regions other than the open left half-plane, mapped exactly onto Hurwitz questions.

The disk |z| < r (discrete time: r = 1). The Moebius map z = r (1 + w) / (1 - w) takes the open
disk onto the open left half-plane Re w < 0, its circle onto the imaginary axis (z = -r onto
w = infinity) and the outside onto Re w > 0, so

    q(w) = (1 - w)^n p(r (1 + w) / (1 - w)) = sum_k a_k r^k (1 + w)^k (1 - w)^(n - k)

has as many roots left of, on and right of the imaginary axis as p has inside, on and outside
the circle, except that each root of p at z = -r lowers the degree of q by one (the standard
bilinear transformation; e.g. Jury, "Theory and Application of the z-Transform Method", 1964,
from memory). Its coefficients are linear in p's, so an affine or multilinear family stays so.

The Schur-Cohn reduction (Schur 1917; Cohn 1922; from memory) gives the table that the trade
prints for the unit circle: p_n = p and, with c_k the leading and c_0 the constant coefficient
of p_k, p_(k-1)(z) = (c_k p_k(z) - c_0 p_k*(z)) / z, where p_k* is p_k with its coefficients
reversed. p has every root inside the unit circle exactly when |c_k| > |c_0| at every step.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import comb

from . import intpoly
from .routh import routh_table

__all__ = ["DiskCounts", "SchurCohnTable", "disk_counts", "disk_to_half_plane", "schur_cohn_table"]


@dataclass(frozen=True, slots=True)
class DiskCounts:
    """Roots (with multiplicity) inside, on and outside the circle |z| = radius."""

    inside: int
    on_circle: int
    outside: int

    def as_dict(self) -> dict[str, int]:
        """JSON: inside, on_circle, outside (DESIGN.md section 5)."""
        return {"inside": self.inside, "on_circle": self.on_circle, "outside": self.outside}


def _binomial_row(k: int, sign: int) -> tuple:
    """(1 + sign w)^k, ascending powers."""
    return intpoly.trim(comb(k, j) * sign**j for j in range(k + 1))


def disk_to_half_plane(coefficients: Sequence[Fraction], radius: Fraction = Fraction(1)) -> list[Fraction]:
    """q(w) = (1 - w)^n p(radius (1 + w) / (1 - w)), highest power first (exact; it may have
    leading zeros, one per root of p at z = -radius)."""
    coeffs = [Fraction(c) for c in coefficients]
    n = len(coeffs) - 1
    total = [Fraction(0)] * (n + 1)  # lowest power first
    for i, a in enumerate(coeffs):
        k = n - i  # a is the coefficient of z^k
        if not a:
            continue
        term = intpoly.mul(_binomial_row(k, 1), _binomial_row(n - k, -1))
        scale = a * Fraction(radius) ** k
        for j, c in enumerate(term):
            total[j] += scale * int(c)
    return total[::-1]


def disk_counts(coefficients: Sequence[Fraction], radius: Fraction = Fraction(1)) -> DiskCounts:
    """Exact root counts of p (highest power first, leading coefficient non-zero) relative to
    the circle |z| = radius, by the exact Routh array of the mapped polynomial."""
    coeffs = [Fraction(c) for c in coefficients]
    if not coeffs or coeffs[0] == 0:
        raise ValueError("the leading coefficient must be non-zero")
    n = len(coeffs) - 1
    q = disk_to_half_plane(coeffs, radius)
    at_minus_r = 0
    while q and q[0] == 0:  # each such zero: a root of p at z = -radius
        q.pop(0)
        at_minus_r += 1
    if len(q) <= 1:
        return DiskCounts(0, at_minus_r, 0)
    roots = routh_table(q).roots
    assert roots.open_right + roots.imaginary_axis + roots.open_left + at_minus_r == n
    return DiskCounts(roots.open_left, roots.imaginary_axis + at_minus_r, roots.open_right)


@dataclass(frozen=True, slots=True)
class SchurCohnTable:
    """The Schur-Cohn reduction: ``rows[i]`` holds p_(n-i)'s coefficients, highest power first;
    ``conditions[i]`` whether |leading| > |constant| for that row (none for the last row, a
    constant). ``stopped`` is the degree at
    which a condition first failed (the reduction stops there: the polynomial then has a root
    on or outside the circle), or None when every condition holds."""

    rows: tuple[tuple[Fraction, ...], ...]
    conditions: tuple[bool, ...]
    stopped: int | None

    @property
    def schur_stable(self) -> bool:
        """Every root strictly inside the unit circle."""
        return self.stopped is None


def schur_cohn_table(coefficients: Sequence[Fraction]) -> SchurCohnTable:
    """The Schur-Cohn reduction of p (highest power first) for the unit circle, exactly; the
    rows are the reduced polynomials themselves."""
    row = [Fraction(c) for c in coefficients]
    if not row or row[0] == 0:
        raise ValueError("the leading coefficient must be non-zero")
    rows, conditions = [], []
    while True:
        rows.append(tuple(row))
        k = len(row) - 1
        if k == 0:  # a non-zero constant: no root left to place
            return SchurCohnTable(tuple(rows), tuple(conditions), None)
        holds = abs(row[0]) > abs(row[-1])
        conditions.append(holds)
        if not holds:
            return SchurCohnTable(tuple(rows), tuple(conditions), k)
        lead, const = row[0], row[-1]
        reversed_row = row[::-1]
        # (lead * p - const * p*) / z: the constant term cancels; highest power first
        row = [lead * a - const * b for a, b in zip(row, reversed_row, strict=True)][:-1]
