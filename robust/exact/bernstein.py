"""Bernstein expansion of a polynomial in several parameters over a box, exactly.

Over a box, a polynomial f of degree d_i in parameter i can be written in the tensor
Bernstein basis of the box; its Bernstein coefficients b_I enclose the range:

    min_I b_I <= f(x) <= max_I b_I   for every x in the box,

the coefficients at the multi-indices of the box's corners equal the values of f at those
corners, and halving the box (de Casteljau's algorithm along one parameter) gives the
coefficients of both halves, whose enclosure error shrinks quadratically with the width
(Garloff, "Convergent bounds for the range of multivariate polynomials", 1986; Zettler and
Garloff, "Robustness analysis of polynomials with polynomial parameter dependency using
Bernstein expansion", IEEE TAC 43(3), 1998).

Everything here is exact: a :class:`Patch` keeps integer coefficients and one positive
integer ``scale`` (the true coefficient is ``entry / scale``), so a sign is never a
rounding question. Tensors are numpy object arrays of Python integers: numpy only
organises the loops.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache
from math import comb, gcd, lcm
from typing import Any

import numpy as np

from .polynomials import MultiPoly

__all__ = ["Patch", "bernstein_patch", "tensor_size"]


def tensor_size(poly: MultiPoly, free: Sequence[int] | None = None) -> int:
    """Number of Bernstein coefficients of ``poly`` (over the parameters in ``free``)."""
    size = 1
    for i in (range(poly.nvars) if free is None else free):
        size *= poly.degree_in(i) + 1
    return size


@dataclass(frozen=True, slots=True)
class Patch:
    """The Bernstein coefficients of one polynomial over one box.

    Attributes
    ----------
    tensor
        Integer coefficients, one axis per parameter in ``axes`` (length degree + 1);
        the true coefficients are ``tensor / scale``.
    axes
        The parameter index of each tensor axis (parameters the polynomial does not
        depend on over this box have no axis).
    scale
        A positive integer.
    """

    tensor: np.ndarray
    axes: tuple[int, ...]
    scale: int

    # -- enclosure ------------------------------------------------------------------------
    def low(self) -> Fraction:
        """The least Bernstein coefficient: a lower bound of the polynomial over the box."""
        return Fraction(int(self.tensor.min()), self.scale)

    def high(self) -> Fraction:
        """The greatest Bernstein coefficient: an upper bound over the box."""
        return Fraction(int(self.tensor.max()), self.scale)

    def positive(self) -> bool:
        """True when every coefficient is positive: the polynomial is > 0 on the whole box."""
        return bool(self.tensor.min() > 0)

    def corners(self) -> list[tuple[dict[int, bool], Fraction]]:
        """The coefficients at the box's corners, which are the polynomial's values there:
        [({parameter: at its high end}, value)] over the axes' corners."""
        return [(self._ends(code), Fraction(int(value), self.scale))
                for code, value in enumerate(self._corner_values())]

    def least_corner(self) -> tuple[dict[int, bool], Fraction]:
        """The corner with the least value (ties: the first in corner order)."""
        values = self._corner_values()
        code = min(range(len(values)), key=values.__getitem__)
        return self._ends(code), Fraction(int(values[code]), self.scale)

    def _ends(self, code: int) -> dict[int, bool]:
        return {i: bool(code >> j & 1) for j, i in enumerate(self.axes)}

    def _corner_values(self) -> list[Any]:
        # corner code bit j set: axis j at its high end; the corner sub-tensor in C order
        # has axis 0 as the most significant index, so reverse the bits
        # (every axis has length degree + 1 >= 2, so each slice keeps exactly two ends)
        k = len(self.axes)
        if not k:
            return [self.tensor[()]]
        block = self.tensor[tuple(slice(None, None, n - 1) for n in self.tensor.shape)]
        values = [0] * (2**k)
        for position, value in enumerate(block.reshape(-1).tolist()):
            code = 0
            for j in range(k):
                code |= (position >> (k - 1 - j) & 1) << j
            values[code] = value
        return values

    def spread(self) -> dict[int, int]:
        """Per parameter: the largest change of the coefficients between neighbours along its
        axis (a bound on the polynomial's variation in that parameter over the box, times
        its degree and the scale): where a split does the most good."""
        out = {}
        for j, i in enumerate(self.axes):
            if self.tensor.shape[j] > 1:
                out[i] = int(np.abs(np.diff(self.tensor, axis=j)).max())
        return out

    # -- subdivision ----------------------------------------------------------------------
    def halves(self, parameter: int) -> tuple[Patch, Patch]:
        """The patches of the two halves of the box split at the midpoint of ``parameter``
        (de Casteljau's algorithm along that axis); unchanged when there is no such axis."""
        if parameter not in self.axes:
            return self, self
        j = self.axes.index(parameter)
        d = self.tensor.shape[j] - 1
        left, right = _casteljau_matrices(d)
        out = []
        for matrix in (left, right):
            tensor = np.moveaxis(np.tensordot(matrix, self.tensor, axes=([1], [j])), 0, j)
            out.append(_normalised(tensor, self.axes, self.scale << d))
        return out[0], out[1]


def _normalised(tensor: np.ndarray, axes: tuple[int, ...], scale: int) -> Patch:
    """Divide tensor and scale by their common factor (keeps the integers small)."""
    g = gcd(scale, *tensor.flat)
    if g > 1:
        tensor = np.asarray(tensor // g, dtype=object)  # (a 0-d array's quotient is a scalar)
        scale //= g
    return Patch(tensor, axes, scale)


@lru_cache(maxsize=64)
def _casteljau_matrices(d: int) -> tuple[np.ndarray, np.ndarray]:
    """Integer matrices L, R with L @ b = 2^d * (coefficients over [0, 1/2]) and
    R @ b = 2^d * (coefficients over [1/2, 1]) for Bernstein coefficients b over [0, 1]."""
    left = np.zeros((d + 1, d + 1), dtype=object)
    right = np.zeros((d + 1, d + 1), dtype=object)
    for k in range(d + 1):
        for j in range(k + 1):
            left[k, j] = comb(k, j) << (d - k)
        for j in range(d - k + 1):
            right[k, k + j] = comb(d - k, j) << k
    return left, right


@lru_cache(maxsize=64)
def _power_to_bernstein(d: int) -> tuple[np.ndarray, int]:
    """(P, L): L * (Bernstein coefficients over [0, 1]) = P @ (power coefficients), P integer:
    b_I = sum_{k <= I} C(I, k) / C(d, k) g_k (Garloff 1986)."""
    big = lcm(*(comb(d, k) for k in range(d + 1)))
    matrix = np.zeros((d + 1, d + 1), dtype=object)
    for i in range(d + 1):
        for k in range(d + 1):
            matrix[i, k] = comb(i, k) * (big // comb(d, k)) if k <= i else 0
    return matrix, big


def _shift_matrix(d: int, low: Fraction, width: Fraction) -> tuple[np.ndarray, int]:
    """(M, D^d) with D^d * g(t) coefficients = M @ f coefficients, for x = low + width * t
    written as (a + b t) / D with integers a, b, D (f and g in the power basis, degree d)."""
    denominator = lcm(low.denominator, width.denominator)
    a, b = int(low * denominator), int(width * denominator)
    matrix = np.zeros((d + 1, d + 1), dtype=object)
    for j in range(d + 1):  # column j: (a + b t)^j * D^(d - j)
        rest = denominator ** (d - j)
        for k in range(j + 1):
            matrix[k, j] = comb(j, k) * a ** (j - k) * b**k * rest
    return matrix, denominator**d


def bernstein_patch(poly: MultiPoly, box: Sequence[tuple[Fraction, Fraction]],
                    degrees: Sequence[int] | None = None) -> Patch:
    """The Bernstein coefficients of ``poly`` over ``box`` ((low, high) per parameter).

    Parameters of zero width are substituted first; parameters the polynomial does not
    depend on get no axis, so the tensor has prod(d_i + 1) entries over the rest.
    ``degrees`` (per parameter, at least the polynomial's own) expands it in the basis of
    those degrees instead (degree elevation), so that two polynomials' patches align entry
    by entry; a parameter of zero width still gets no axis.
    """
    fixed = {i: lo for i, (lo, hi) in enumerate(box) if lo == hi and poly.degree_in(i)}
    if fixed:
        poly = poly.substitute(fixed)
    if degrees is None:
        degrees = [poly.degree_in(i) for i in range(poly.nvars)]
    assert all(d >= poly.degree_in(i) for i, d in enumerate(degrees))
    axes = tuple(i for i in range(poly.nvars) if degrees[i] and box[i][0] != box[i][1])
    degrees = [degrees[i] for i in axes]
    tensor = np.zeros([d + 1 for d in degrees], dtype=object)
    denominators = 1
    terms: list[tuple[tuple[int, ...], Any]] = list(poly.terms)  # exact rationals (mpq)
    for _, c in terms:
        denominators = lcm(denominators, int(c.denominator))
    for exponents, c in terms:
        tensor[tuple(exponents[i] for i in axes)] += int(c * denominators)
    scale = denominators
    for j, (i, d) in enumerate(zip(axes, degrees, strict=True)):
        low, high = Fraction(box[i][0]), Fraction(box[i][1])
        shift, shift_scale = _shift_matrix(d, low, high - low)
        convert, convert_scale = _power_to_bernstein(d)
        matrix = convert.dot(shift)
        tensor = np.moveaxis(np.tensordot(matrix, tensor, axes=([1], [j])), 0, j)
        scale *= shift_scale * convert_scale
    return _normalised(tensor, axes, scale)
