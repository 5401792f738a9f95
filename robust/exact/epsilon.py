"""Rational functions of a small positive ε, for the ε rows of the Routh array.

An entry of an ε row is either a GMP rational (``mpq``: it does not depend on ε) or an
:class:`EpsilonFraction` N(ε)/D(ε) in one canonical form: N and D integer polynomials
with no common factor in Z[ε] (their contents coprime too) and D's leading coefficient
positive. That is also the form of sympy's field of rational functions over QQ, so the
entries print as before; the arithmetic here is plain integer polynomial arithmetic, an
order of magnitude cheaper per entry.

The sign of an entry as ε -> 0+ is that of its lowest-order terms.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from . import intpoly
from .numbers import mpq, mpz

__all__ = ["EPSILON_ENTRY", "EpsilonFraction", "format_epsilon", "is_zero", "routh_step",
           "sign_at_zero_plus", "size", "times"]


@dataclass(frozen=True, slots=True)
class EpsilonFraction:
    """N(ε) / D(ε), canonical (see the module notes); never a constant."""

    numerator: intpoly.Poly  # ascending powers of ε
    denominator: intpoly.Poly

    @property
    def degree(self) -> int:
        """The larger of the degrees of N and D."""
        return max(len(self.numerator), len(self.denominator)) - 1

    def __str__(self) -> str:
        return format_epsilon(self)


#: ε itself.
EPSILON_ENTRY = EpsilonFraction((mpz(0), mpz(1)), (mpz(1),))

Entry = object  # mpq | EpsilonFraction


def _pair(x) -> tuple[intpoly.Poly, intpoly.Poly]:
    if isinstance(x, EpsilonFraction):
        return x.numerator, x.denominator
    return ((mpz(x.numerator),) if x else ()), (mpz(x.denominator),)


def _make(num: intpoly.Poly, den: intpoly.Poly):
    """The canonical entry num/den (den not zero)."""
    if not num:
        return mpq(0)
    common = intpoly.gcd_poly(num, den)
    if common != (1,):
        num, den = intpoly.divide_exact(num, common), intpoly.divide_exact(den, common)
    if den[-1] < 0:
        num, den = intpoly.negate(num), intpoly.negate(den)
    if len(num) == 1 and len(den) == 1:
        return mpq(num[0], den[0])
    return EpsilonFraction(num, den)


def is_zero(x) -> bool:
    """Whether an entry is exactly 0."""
    return not isinstance(x, EpsilonFraction) and x == 0


def sign_at_zero_plus(x) -> int:
    """Sign of a non-zero entry as ε -> 0+: that of its lowest-order terms."""
    if not isinstance(x, EpsilonFraction):
        return 1 if x > 0 else -1
    low_n = next(c for c in x.numerator if c)
    low_d = next(c for c in x.denominator if c)
    return 1 if (low_n > 0) == (low_d > 0) else -1


def size(x) -> int:
    """Number of ε-coefficients an entry carries (1 for a constant)."""
    if isinstance(x, EpsilonFraction):
        return len(x.numerator) + len(x.denominator)
    return 1


def times(k: int, x):
    """k * x for an integer k."""
    if not isinstance(x, EpsilonFraction):
        return k * x
    if k == 0:
        return mpq(0)
    return _make(intpoly.scale(x.numerator, mpz(k)), x.denominator)


def routh_step(a0, a1, b0, b1):
    """The Routh recurrence (b0*a1 - a0*b1) / b0 on entries (b0 not zero)."""
    if is_zero(b1):  # sparse rows: most entries are a1 again
        return a1
    if not any(isinstance(x, EpsilonFraction) for x in (a0, a1, b0, b1)):
        return (b0 * a1 - a0 * b1) / b0
    n_b0, d_b0 = _pair(b0)
    if is_zero(a1):  # -a0 * b1 / b0
        n_a0, d_a0 = _pair(a0)
        n_b1, d_b1 = _pair(b1)
        return _make(intpoly.negate(intpoly.mul(intpoly.mul(n_a0, n_b1), d_b0)),
                     intpoly.mul(intpoly.mul(d_a0, d_b1), n_b0))
    n_a1, d_a1 = _pair(a1)
    n_a0, d_a0 = _pair(a0)
    n_b1, d_b1 = _pair(b1)
    left_n, left_d = intpoly.mul(n_b0, n_a1), intpoly.mul(d_b0, d_a1)
    right_n, right_d = intpoly.mul(n_a0, n_b1), intpoly.mul(d_a0, d_b1)
    if left_d == right_d:
        diff_n, diff_d = intpoly.sub(left_n, right_n), left_d
    else:
        diff_n = intpoly.sub(intpoly.mul(left_n, right_d), intpoly.mul(right_n, left_d))
        diff_d = intpoly.mul(left_d, right_d)
    # dividing by b0 = n_b0 / d_b0
    return _make(intpoly.mul(diff_n, d_b0), intpoly.mul(diff_d, n_b0))


# -- text ----------------------------------------------------------------------------------
# The text is the one sympy's printer gives the same rational function (tables printed before
# the entries had their own type read the same); tests compare the two.


def _power(k: int) -> str:
    return "ε" if k == 1 else f"ε**{k}"


def _term(numerator, denominator, k: int) -> str:
    """c * ε^k with c = numerator/denominator (in lowest terms), its sign in front."""
    sign = "-" if numerator < 0 else ""
    top = abs(numerator)
    if k == 0:
        text = str(top) if denominator == 1 else f"{top}/{denominator}"
        return sign + text
    factors = ([str(top)] if top != 1 else []) + [_power(k)]
    text = "*".join(factors)
    return sign + (text if denominator == 1 else f"{text}/{denominator}")


Term = tuple[Any, Any, int]  # (numerator, denominator, power); GMP integers in practice


def _sum(terms: list[Term]) -> str:
    """A sum of terms (numerator, denominator, power), highest power first, as printed."""
    ordered = sorted(terms, key=lambda t: -t[2])
    if len(ordered) == 2 and ordered[1][2] == 0 and ordered[1][0] > 0 and ordered[0][0] < 0:
        ordered = [ordered[1], ordered[0]]  # a positive number first: "1 - ε"
    text = ""
    for i, (num, den, k) in enumerate(ordered):
        t = _term(num, den, k)
        if i == 0:
            text = t
        elif t.startswith("-"):
            text += " - " + t[1:]
        else:
            text += " + " + t
    return text


def _integer_terms(p: intpoly.Poly) -> list[Term]:
    return [(c, 1, k) for k, c in enumerate(p) if c]


def format_epsilon(entry: EpsilonFraction) -> str:
    """Text of N(ε)/D(ε), e.g. ``"(-ε - 8)/ε"``, ``"1 - ε"``, ``"-8/ε"``."""
    num, den = entry.numerator, entry.denominator
    terms = _integer_terms(num)
    if len(den) == 1:  # a constant denominator divides every coefficient
        d = den[0]
        scaled = []
        for c, _, k in terms:
            q = mpq(c, d)
            scaled.append((q.numerator, q.denominator, k))
        return _sum(scaled)
    single = len(terms) == 1
    if not any(den[:-1]):  # d * ε^j
        d, j = den[-1], len(den) - 1
        if single:
            c = terms[0][0]  # N is then a constant (no common factor ε)
            q = mpq(c, d)
            if q == 1 and j > 1:
                return f"ε**(-{j})"  # a bare power, printed as one
            sign = "-" if q < 0 else ""
            below = [str(q.denominator)] if q.denominator != 1 else []
            below.append(_power(j))
            under = below[0] if len(below) == 1 else "(" + "*".join(below) + ")"
            return f"{sign}{abs(q.numerator)}/{under}"
        under = _power(j) if d == 1 else f"({d}*{_power(j)})"
        return f"({_sum(terms)})/{under}"
    under = "(" + _sum(_integer_terms(den)) + ")"
    if single:
        c, _, k = terms[0]
        sign = "-" if c < 0 else ""
        factors = ([str(abs(c))] if abs(c) != 1 or k == 0 else []) + ([_power(k)] if k else [])
        return f"{sign}{'*'.join(factors)}/{under}"
    return f"({_sum(terms)})/{under}"
