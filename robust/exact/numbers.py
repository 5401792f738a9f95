"""Exact numbers: the one place that chooses the big-number backend and reads number text.

Backend. GMP through gmpy2 gives the exact integers (``mpz``) and rationals (``mpq``) of the
hot loops (Routh rows, polynomial bounds); nothing else in the package imports gmpy2, and
every conversion between ``Fraction`` and ``mpq`` is here (:func:`to_mpq`, :func:`from_mpq`).
Results leave the exact core as ``fractions.Fraction``.

Text. Every number that enters an analysis becomes a :class:`fractions.Fraction` taken from its
decimal text: ``"0.1"`` is ``1/10``, never the binary float nearest to it. TOML floats are
read back through their shortest ``repr``, which is the decimal the user typed.
"""

from __future__ import annotations

import decimal
import math
import re
import sys
from fractions import Fraction
from numbers import Rational

import gmpy2

from ..errors import InputError

__all__ = [
    "ENGINEERING_SUFFIXES",
    "approx_text",
    "binary_exponent",
    "divexact",
    "format_fraction",
    "from_mpq",
    "gcd",
    "integer_text",
    "json_float",
    "mpq",
    "mpz",
    "parse_number",
    "percent_text",
    "short_between",
    "to_float",
    "to_fraction",
    "to_mpq",
]

#: GMP integers and rationals (exact; much faster than ``int``/``Fraction`` in hot loops).
mpz = gmpy2.mpz
mpq = gmpy2.mpq
#: Exact division of GMP integers known to divide (Bareiss steps).
divexact = gmpy2.divexact
#: Greatest common divisor of GMP integers (non-negative).
gcd = gmpy2.gcd


def to_mpq(value: Fraction | int) -> object:
    """A Fraction or int as a GMP rational."""
    if isinstance(value, Fraction):
        return mpq(value.numerator, value.denominator)
    return mpq(value)


def from_mpq(value: object) -> Fraction:
    """A GMP rational (or integer) as a Fraction."""
    return Fraction(int(value.numerator), int(value.denominator))  # type: ignore[attr-defined]

#: Multipliers of the engineering suffixes accepted on numbers written as strings.
ENGINEERING_SUFFIXES: dict[str, Fraction] = {
    "p": Fraction(1, 10**12),
    "n": Fraction(1, 10**9),
    "u": Fraction(1, 10**6),
    "µ": Fraction(1, 10**6),
    "m": Fraction(1, 10**3),
    "k": Fraction(10**3),
    "M": Fraction(10**6),
    "G": Fraction(10**9),
}

# ASCII digits only: other digits (an Arabic-Indic three) are not numbers here
_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:_[0-9]+)*(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_MAX_EXPONENT = 400  # decimal exponents beyond this are typos, not component values


def parse_number(text: str, what: str = "number", suffixes: bool = True) -> Fraction:
    """Read a decimal number, optionally with one engineering suffix, exactly.

    Parameters
    ----------
    text
        E.g. ``"4.7k"``, ``"100n"``, ``"-1.5e-3"``, ``"2/3"``.
    what
        Named in the error message.
    suffixes
        Whether ``p n u m k M G`` are accepted after the number.

    Raises
    ------
    InputError
        When the text is not such a number.

    Examples
    --------
    >>> parse_number("4.7k")
    Fraction(4700, 1)
    >>> parse_number("0.1")
    Fraction(1, 10)
    """
    raw = text.strip()
    expected = "a decimal number such as 4.7, 1e-3" + (" or 4.7k, 100n" if suffixes else "")
    if "/" in raw:
        num, _, den = raw.partition("/")
        top, bottom = parse_number(num, what, False), parse_number(den, what, False)
        if bottom == 0:
            raise InputError(what, "division by zero", expected, text)
        return top / bottom
    scale = Fraction(1)
    if suffixes and raw and raw[-1] in ENGINEERING_SUFFIXES:
        scale, raw = ENGINEERING_SUFFIXES[raw[-1]], raw[:-1]
    match = _NUMBER.fullmatch(raw)
    if not match:
        raise InputError(what, "not a number", _number_hint(text.strip(), suffixes) or expected, text)
    mantissa, _, exponent = raw.replace("_", "").lower().partition("e")
    digits = exponent.lstrip("+-").lstrip("0")
    if len(digits) > 3 or (digits and int(digits) > _MAX_EXPONENT):
        raise InputError(what, "decimal exponent out of range", f"|exponent| <= {_MAX_EXPONENT}", text)
    value = _decimal(mantissa) * (Fraction(10) ** int(exponent or 0))
    return value * scale


#: Suffixes written in the wrong case, and what to write instead.
_WRONG_CASE = {"K": ("k", "kilo is a lowercase k"), "U": ("u", "micro is a lowercase u"),
               "N": ("n", "nano is a lowercase n"), "P": ("p", "pico is a lowercase p"),
               "g": ("G", "giga is an upper-case G"), "MEG": ("M", "mega is an upper-case M"),
               "meg": ("M", "mega is an upper-case M"), "Meg": ("M", "mega is an upper-case M")}


def _number_hint(raw: str, suffixes: bool) -> str:
    """What to write instead of ``raw`` when it is a number followed by a wrong-case suffix
    or by a unit ("22K", "10kOhm", "470 nF"); "" when it is not that."""
    lead = _NUMBER.match(raw)
    if not lead or not lead.group():
        return ""
    number, rest = lead.group(), raw[lead.end():].strip()
    if not rest or not suffixes:
        return ""
    if rest in _WRONG_CASE:
        right, why = _WRONG_CASE[rest]
        return f'"{number}{right}" ({why})'
    suffix = rest[0] if rest[0] in ENGINEERING_SUFFIXES and len(rest) > 1 else ""
    if suffix == "M" and rest[:3].lower() == "meg":
        suffix = ""  # "Meg" alone is handled above; "MegOhm" is not a unit we can split
    unit = rest[len(suffix):].strip()
    if suffix == "" and rest[0] in _WRONG_CASE and len(rest) > 1 and rest[1:].strip().isalpha():
        right, why = _WRONG_CASE[rest[0]]
        return f'"{number}{right}" with the unit given apart, as unit = "{rest[1:].strip()}" ({why})'
    if unit and unit.lower() != "e" and all(ch.isalpha() or ch in "/·*^-23" for ch in unit):
        return f'the number alone, "{number}{suffix}", with the unit given apart, as unit = "{unit}"'
    return ""


def _decimal(text: str) -> Fraction:
    """The exact value of a decimal such as ``-12.50`` of any length (GMP reads the digits:
    Python's own int() refuses more than 4,300 of them)."""
    sign = -1 if text.startswith("-") else 1
    whole, _, fraction = text.lstrip("+-").partition(".")
    digits = (whole + fraction).lstrip("0") or "0"
    return Fraction(sign * int(mpz(digits)), 10 ** len(fraction))


def integer_text(value: int) -> str:
    """Decimal text of an integer of any size (Python's str() refuses over 4,300 digits)."""
    return str(value) if -(10**18) < value < 10**18 else mpz(value).digits()


def to_fraction(value: object, what: str = "number") -> Fraction:
    """Convert an int, Fraction, decimal string or float to an exact Fraction.

    Floats are taken from their shortest decimal ``repr`` (what a TOML or JSON reader saw),
    so ``0.1`` becomes ``1/10``. Booleans, NaN and infinities are refused.
    """
    if isinstance(value, bool):
        raise InputError(what, "a boolean is not a number", "a number", value)
    if isinstance(value, Fraction):
        return value
    if isinstance(value, int):
        return Fraction(value)
    if isinstance(value, Rational):
        return Fraction(int(value.numerator), int(value.denominator))
    if isinstance(value, float):
        if value != value or value in (float("inf"), float("-inf")):
            raise InputError(what, "not a finite number", "a finite number", value)
        return parse_number(repr(value), what, suffixes=False)
    if isinstance(value, str):
        return parse_number(value, what)
    raise InputError(what, f"a {type(value).__name__} is not a number", "a number", value)


def to_float(value: Fraction | int) -> float:
    """The nearest float, or +-inf beyond the float range (0.0 or a subnormal below it).

    Never raises: for display and float guidance only, never for a decision.
    """
    try:
        return float(value)
    except OverflowError:
        return math.inf if value > 0 else -math.inf


def json_float(value: Fraction | int | float | None) -> float | None:
    """A number as a JSON float: the nearest float, or None beyond the float range (JSON has
    no infinity); the exact value goes beside it as text where it matters."""
    if value is None:
        return None
    f = value if isinstance(value, float) else to_float(value)
    return f if math.isfinite(f) else None


def approx_text(value, digits: int = 6) -> str:
    """``value`` with ``digits`` significant digits, as ``f"{x:.{digits}g}"`` would write it,
    for an exact number of any size ("1e+400" where a float would overflow)."""
    if value is None:
        return "-"
    f = value if isinstance(value, float) else to_float(value)
    if isinstance(value, float) or (math.isfinite(f) and (f == 0) == (value == 0)
                                    and (f == 0 or abs(f) >= sys.float_info.min)):
        return f"{f:.{digits}g}"
    with decimal.localcontext() as context:
        context.prec = digits
        number = decimal.Decimal(int(value.numerator)) / decimal.Decimal(int(value.denominator))
    return f"{number.normalize():.{digits}g}"  # 9.9e+399, not 9.90000e+399, as floats print


def percent_text(value, digits: int = 2) -> str:
    """``value`` as a percentage with ``digits`` decimals, as ``f"{x:.{digits}%}"``, any size."""
    f = value if isinstance(value, float) else to_float(value)
    if math.isfinite(f):
        return f"{f:.{digits}%}"
    return approx_text(value * 100, 6) + "%"


def binary_exponent(value) -> int:
    """e with 2^(e-1) < |value| < 2^(e+1) for a non-zero rational (0 for zero): the scale of a
    number of any size, exactly."""
    if not value:
        return 0
    return int(abs(value.numerator)).bit_length() - int(value.denominator).bit_length()


def format_fraction(value: Fraction) -> str:
    """Exact text of a rational: ``"3"``, ``"-7/20"`` (of any size)."""
    top = integer_text(value.numerator)
    return top if value.denominator == 1 else f"{top}/{integer_text(value.denominator)}"


def short_between(a: Fraction, b: Fraction) -> Fraction | None:
    """A rational with a small denominator in [a, b] (continued-fraction search)."""
    if a > b:
        return None
    mid = (a + b) / 2
    for limit in (10, 100, 1000, 10**4, 10**6, 10**9, 10**12):
        x = mid.limit_denominator(limit)
        if a <= x <= b:
            return x
    return None

