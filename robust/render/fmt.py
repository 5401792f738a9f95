"""Number formatting for people: short, and rounded outwards where a bound is shown."""

from __future__ import annotations

import math
from decimal import ROUND_CEILING, ROUND_FLOOR, Decimal, localcontext
from fractions import Fraction

from ..exact.numbers import approx_text, format_fraction, to_float
from ..exact.routh import Entry, format_entry
from .blocks import Cell

__all__ = ["bound_text", "entry_cell", "exact_cell", "short"]

#: Exact texts longer than this are shown as a float, the exact text kept beside it.
LONG = 14


def short(x: float, digits: int = 6) -> str:
    """``x`` with ``digits`` significant digits (``-`` for a missing value)."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "-"
    return f"{x:.{digits}g}"


def bound_text(x: Fraction, upward: bool, digits: int = 7) -> str:
    """A bound with ``digits`` significant digits, rounded down (lower bound) or up
    (upper bound), so that the shown bracket still contains the certified one."""
    if x == 0:
        return "0"
    with localcontext() as ctx:
        ctx.prec = digits
        ctx.rounding = ROUND_CEILING if upward else ROUND_FLOOR
        value = Decimal(x.numerator) / Decimal(x.denominator)
    text = f"{value:g}" if abs(value) < Decimal(10) ** digits else f"{value:.{digits - 1}e}"
    return text


def witness_roots(witness) -> list[complex] | None:
    """The witness's roots as floats for display, or None when its coefficients lie beyond
    the float range (the exact counts still say where the roots are)."""
    values = [to_float(c) for c in witness.coefficients]
    if not all(math.isfinite(v) and (v != 0 or c == 0) for v, c in zip(values, witness.coefficients,
                                                                          strict=True)):
        return None
    return witness.root_values()


def exact_cell(value: Fraction, mono: bool = True) -> Cell:
    """An exact rational; long ones shown as a float with the exact text kept."""
    text = format_fraction(value)
    if len(text) <= LONG:
        return Cell((text,), mono=mono, numeric=True)
    return Cell(("≈" + approx_text(value, 7),), full=text, mono=mono, numeric=True)


def entry_cell(entry: Entry) -> Cell:
    """A Routh-array entry (a rational or an expression in ε), shortened for display."""
    if isinstance(entry, Fraction):
        return exact_cell(entry)
    text = format_entry(entry)
    if len(text) <= LONG:
        return Cell((text,), mono=True, numeric=True)
    return Cell((text[: LONG - 1] + "…",), full=text, mono=True, numeric=True)
