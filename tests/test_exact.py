"""Tests for robust.exact.numbers: exact numbers from the text people write.

Truth comes from outside the project: sympy's exact ``Rational`` reading of decimal text
(Meurer et al., "SymPy: symbolic computing in Python", PeerJ Comput. Sci., 2017), the SI
prefixes p n u m k M G = 1e-12 .. 1e9 (common practice, no source), and the round trip of a
float through its shortest repr (Python's float repr since 3.1; from memory).
"""

from __future__ import annotations

import math
from decimal import Decimal, localcontext
from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from robust.errors import InputError, RobustError
from robust.exact.numbers import (
    approx_text,
    format_fraction,
    integer_text,
    parse_number,
    percent_text,
    to_float,
    to_fraction,
)


def as_fraction(value: sp.Rational) -> Fraction:
    return Fraction(int(value.p), int(value.q))


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        # SI prefixes (common practice, no source)
        ("4.7k", Fraction(4700)),
        ("100n", Fraction(1, 10**7)),
        ("2.2u", Fraction(22, 10**7)),
        ("2.2µ", Fraction(22, 10**7)),
        ("15p", Fraction(15, 10**12)),
        ("3.3m", Fraction(33, 10**4)),
        ("1.5M", Fraction(1_500_000)),
        ("2G", Fraction(2 * 10**9)),
        ("0.1", Fraction(1, 10)),
        ("-1.5e-3", Fraction(-3, 2000)),
        ("1_000", Fraction(1000)),
        (" 12 ", Fraction(12)),
        (".25", Fraction(1, 4)),
        ("2/3", Fraction(2, 3)),
        ("-7/20", Fraction(-7, 20)),
        ("1e400", Fraction(10**400)),
    ],
)
def test_parse_number_reads_decimals_and_suffixes_exactly(text, expected):
    """Decimal text, with or without one engineering suffix, becomes the exact rational."""
    assert parse_number(text) == expected


@given(st.integers(-(10**9), 10**9), st.integers(0, 12), st.integers(-20, 20))
def test_parse_number_matches_sympy_rational(mantissa, digits, exponent):
    """Random decimal texts read like sympy's exact Rational of the same digits."""
    sign = "-" if mantissa < 0 else ""
    body = str(abs(mantissa)).rjust(digits + 1, "0")
    text = f"{sign}{body[: len(body) - digits]}.{body[len(body) - digits:]}e{exponent}"
    assert parse_number(text) == as_fraction(sp.Rational(text))  # Meurer et al., 2017


@pytest.mark.parametrize(
    "text", ["", "abc", "1.2.3", "4.7kk", "k", "1e", "--1", "1/0", "1e401", "0x10", "nan", "inf"]
)
def test_parse_number_rejects_what_is_not_a_number(text):
    """Malformed numbers raise InputError (a ValueError and a RobustError) naming the field."""
    with pytest.raises(InputError) as info:
        parse_number(text, "parameters.R1.nominal")
    assert isinstance(info.value, ValueError) and isinstance(info.value, RobustError)
    assert str(info.value).startswith("parameters.R1.nominal: ")


def test_suffixes_can_be_switched_off():
    """With suffixes=False an engineering suffix is an error, a plain number is not."""
    with pytest.raises(InputError):
        parse_number("4.7k", suffixes=False)
    assert parse_number("4.7", suffixes=False) == Fraction(47, 10)


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (0.1, Fraction(1, 10)),  # the decimal the user typed, not 3602879701896397/2**55
        (0.2, Fraction(1, 5)),
        (1e-12, Fraction(1, 10**12)),
        (4.7e3, Fraction(4700)),
        (-2.5, Fraction(-5, 2)),
        (3, Fraction(3)),
        (Fraction(2, 7), Fraction(2, 7)),
        ("10k", Fraction(10_000)),
        (np.int64(5), Fraction(5)),
    ],
)
def test_to_fraction_takes_floats_through_their_repr(value, expected):
    """Floats become the decimal of their repr; ints, Fractions and strings are exact."""
    assert to_fraction(value) == expected


def test_float_repr_differs_from_its_binary_value():
    """0.1 through to_fraction is 1/10, which is not the binary double's exact value."""
    assert to_fraction(0.1) != Fraction(0.1)  # Fraction(float) is the binary value
    assert to_fraction(0.1) * to_fraction(0.2) == Fraction(1, 50)


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_to_fraction_round_trips_every_finite_float(x):
    """A finite float's Fraction is the decimal of its repr, and converts back to the float."""
    value = to_fraction(x)
    assert value == as_fraction(sp.Rational(repr(x)))  # sympy's exact decimal (Meurer et al.)
    assert float(value) == x  # shortest repr round-trips (Python float repr, from memory)


@pytest.mark.parametrize("value", [True, False, math.nan, math.inf, -math.inf, None, [1], {}])
def test_to_fraction_rejects_non_numbers(value):
    """Booleans, NaN, infinities and non-numbers raise InputError naming the field."""
    with pytest.raises(InputError) as info:
        to_fraction(value, "coefficient 2")
    assert str(info.value).startswith("coefficient 2: ")


@pytest.mark.parametrize(
    ("value", "text"),
    [(Fraction(3), "3"), (Fraction(-7, 20), "-7/20"), (Fraction(0), "0"), (Fraction(1, 3), "1/3")],
)
def test_format_fraction_writes_exact_text(value, text):
    """Integers print without a denominator, other rationals as p/q."""
    assert format_fraction(value) == text
    assert parse_number(text) == value


# -- numbers of any size ----------------------------------------------------------------------


@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e300, max_value=1e300)
       .map(lambda x: x + 0.0),  # -0.0 is the exact 0
       st.integers(1, 12))
def test_approx_text_writes_in_range_numbers_as_floats_do(x, digits):
    """Inside the float range approx_text(x) is Python's own f"{x:.{digits}g}"."""
    assert approx_text(Fraction(x), digits) == f"{x:.{digits}g}"  # Python's float formatting


@given(st.integers(-400, 400).filter(lambda e: abs(e) > 320), st.integers(1, 999))
def test_approx_text_writes_numbers_beyond_floats_like_decimal(exponent, mantissa):
    """Beyond the float range the text is Python's Decimal rounding of the exact value."""
    value = Fraction(mantissa) * Fraction(10) ** exponent
    with localcontext() as context:  # decimal module (the General Decimal Arithmetic spec)
        context.prec = 6
        expected = f"{(Decimal(mantissa) * Decimal(10) ** exponent).normalize():.6g}"
    assert approx_text(value) == expected
    assert "inf" not in approx_text(value) and approx_text(value) != "0"


def test_to_float_never_raises_and_saturates():
    """1e400 is inf, -1e400 is -inf, 1e-400 is 0.0 (nearest float or +-inf; no OverflowError)."""
    assert to_float(Fraction(10) ** 400) == math.inf
    assert to_float(-(Fraction(10) ** 400)) == -math.inf
    assert to_float(Fraction(1, 10**400)) == 0.0
    assert to_float(Fraction(1, 3)) == 1 / 3


def test_integers_of_any_length_are_written_exactly():
    """A 5000-digit integer is written in full (past Python's int-to-str limit)."""
    value = 7 * (10**5000 - 1) // 9
    assert integer_text(value) == "7" * 5000
    assert format_fraction(Fraction(value, 3)) == "7" * 5000 + "/3"
    assert percent_text(Fraction(10) ** 400) == "1e+402%"
