"""Number formatting for people: short, and rounded outwards where a bound is shown."""

from __future__ import annotations

import math
from decimal import ROUND_CEILING, ROUND_FLOOR, Decimal, localcontext
from fractions import Fraction

from ..exact.numbers import approx_text, format_fraction, to_float
from ..exact.routh import Entry, format_entry
from .blocks import Cell

__all__ = ["bound_text", "box_text", "criterion_ends", "criterion_text", "entry_cell", "exact_cell", "short",
           "units_of", "with_unit"]

#: Exact texts longer than this are shown as a float, the exact text kept beside it.
LONG = 14


#: Units that say "a pure number": shown as nothing beside a value ("8 1" would read as 81).
PURE_NUMBER = frozenset({"1", "dimensionless", "none"})


def units_of(source: object) -> dict[str, str]:
    """name -> unit of the parameters that have one (a pure number has none to show): from a
    case's parameters, or from a box or a result that holds the case's box (nothing when
    neither is there)."""
    parameters = getattr(source, "parameters", None)
    if parameters is not None and all(hasattr(p, "unit") for p in parameters):
        pairs = [(p.name, p.unit.strip()) for p in parameters]
    else:
        box = source if hasattr(source, "units") else getattr(source, "box", None)
        units = getattr(box, "units", ()) or ()
        pairs = list(zip(box.names, units, strict=False)) if units else []
    return {n: u for n, u in pairs if u and u.lower() not in PURE_NUMBER}


def with_unit(text: str, unit: str) -> str:
    """``text`` with ``unit`` beside it ("4.7 uF"); ``text`` alone when there is no unit or
    the unit is a pure number."""
    return f"{text} {unit}" if unit and unit.strip().lower() not in PURE_NUMBER else text


def box_text(box, units: dict[str, str]) -> str:
    """A box in words, each range with its unit: "R in [9900, 10100] ohm, C in [...]"."""
    return ", ".join(with_unit(f"{n} in [{approx_text(a)}, {approx_text(b)}]", units.get(n, ""))
                     for n, (a, b) in zip(box.names, box.intervals, strict=True))


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


def _measure_end(measure, x: Fraction, upward: bool, digits: int) -> str:
    """The criterion's value at search variable x in its unit, rounded outwards: exact for
    the rational units (ratio, radius); dB and degrees come as 40-digit mpmath numbers, moved
    outwards by 1e-30 relative (far above their own error) before the rounding."""
    value = measure.value_of(x)
    if not isinstance(value, Fraction):
        import mpmath

        with mpmath.workdps(40):
            nudged = value + (1 if upward else -1) * abs(value) * mpmath.mpf(10) ** -30
            value = Fraction(mpmath.nstr(nudged, 36, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
    text = bound_text(value, upward=upward, digits=digits)
    if "." in text and "e" not in text:
        text = text.rstrip("0").rstrip(".")
    return text


def criterion_ends(criterion, digits: int = 6) -> tuple[str | None, str | None]:
    """A criterion's certified ends in its unit (guaranteed and witnessed; for the radius the
    witnessed end is the lower one) with ``digits`` significant digits, rounded outwards;
    None = an open end. They contain the JSON's ``lower`` and ``upper``."""
    measure = criterion.measure
    if criterion.stable is not True:  # only what x = 0 shows
        return tuple(None if v is None else f"{v:g}" for v in criterion.unproven_ends())  # type: ignore[return-value]
    low_x, high_x = criterion.x_ends()
    low = None if low_x is None else _measure_end(measure, low_x, False, digits)
    high = None if high_x is None else _measure_end(measure, high_x, True, digits)
    return low, high


def criterion_text(criterion, digits: int = 6) -> str:
    """A criterion's certified bracket for people: "[41.5071, 50.4789] deg", "at least 24.609 dB",
    "at most 0.95", rounded outwards."""
    low, high = criterion_ends(criterion, digits)
    unit = f" {criterion.measure.unit}" if criterion.measure.unit else ""
    if low is None:
        return f"at most {high}{unit}"
    if high is None:
        return f"at least {low}{unit}"
    return f"[{low}, {high}]{unit}"


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
