"""The forms a polynomial is written in, read into exact coefficients.

Today: a polynomial in ``s`` written as text, or its coefficients. (The case-file forms,
expression, coefficients and loop, are read in :mod:`robust.model.case`.)
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction

from ..errors import InputError
from ..exact import routh as _routh
from ..exact.routh import RouthTable
from .expr import polynomial_coefficients

__all__ = ["as_coefficients", "routh_table"]


def as_coefficients(poly_or_coeffs: object, variable: str = "s") -> tuple[Fraction, ...]:
    """Exact coefficients, highest power first, with leading zeros removed.

    Accepts a polynomial written in ``variable`` (text) or a sequence of ints, Fractions,
    decimal strings or floats (floats through their shortest repr).

    Raises
    ------
    InputError
        When nothing usable is given or every coefficient is zero.
    """
    if isinstance(poly_or_coeffs, str):
        return _routh.as_coefficients(polynomial_coefficients(poly_or_coeffs, variable))
    if isinstance(poly_or_coeffs, Sequence):
        return _routh.as_coefficients(poly_or_coeffs)
    raise InputError("polynomial", "not a polynomial", "text in s or a list of coefficients",
                     poly_or_coeffs)


def routh_table(poly_or_coeffs: object, shift: object = 0, variable: str = "s") -> RouthTable:
    """The exact Routh array of a polynomial given as text or as coefficients.

    Parameters
    ----------
    poly_or_coeffs
        Text in ``variable`` (``"s^3 + 2*s^2 + 3*s + 1"``) or coefficients highest power first
        (ints, Fractions, decimal strings such as ``"0.1"`` taken exactly).
    shift
        ``sigma``: count relative to the line Re(s) = -sigma.

    Examples
    --------
    >>> routh_table("(s^2 + 1)^2*(s + 1)").roots
    RootCounts(open_right=0, imaginary_axis=4, open_left=1)
    >>> routh_table([1, "0.5", "0.06"]).is_hurwitz
    True
    """
    return _routh.routh_table(as_coefficients(poly_or_coeffs, variable), shift)
