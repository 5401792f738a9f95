"""Dense univariate polynomials with integer coefficients, for the exact special cases.

A polynomial is a tuple of GMP integers in *ascending* powers (index = power) without
trailing zeros; the zero polynomial is ``()``. Only what the Routh special cases need is
here: ring arithmetic, exact division, contents, pseudo-remainders and the gcd in Z[x]
(primitive remainder sequences, as in Knuth, "The Art of Computer Programming", vol. 2,
section 4.6.1, "Polynomial arithmetic"; from memory). Everything is exact.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

from .numbers import gcd, mpz

__all__ = [
    "Poly",
    "add",
    "content",
    "derivative",
    "divide_exact",
    "from_descending",
    "gcd_poly",
    "mul",
    "negate",
    "primitive",
    "pseudo_remainder",
    "scale",
    "sub",
    "trim",
]

Poly = tuple  # tuple of mpz, ascending powers, no trailing zeros

_ZERO = mpz(0)


def trim(coefficients: Iterable) -> Poly:
    """The polynomial with these ascending coefficients, trailing zeros removed."""
    c = [mpz(x) for x in coefficients]
    while c and c[-1] == 0:
        c.pop()
    return tuple(c)


def negate(p: Poly) -> Poly:
    """-p."""
    return tuple(-x for x in p)


def scale(p: Poly, factor) -> Poly:
    """factor * p for an integer ``factor``."""
    if factor == 0:
        return ()
    return tuple(factor * x for x in p)


def add(p: Poly, q: Poly) -> Poly:
    """p + q."""
    if len(p) < len(q):
        p, q = q, p
    out = list(p)
    for i, x in enumerate(q):
        out[i] += x
    return trim(out) if len(p) == len(q) else tuple(out)


def sub(p: Poly, q: Poly) -> Poly:
    """p - q."""
    out = list(p) + [_ZERO] * (len(q) - len(p))
    for i, x in enumerate(q):
        out[i] -= x
    return trim(out)


def mul(p: Poly, q: Poly) -> Poly:
    """p * q."""
    if not p or not q:
        return ()
    if len(p) == 1:
        return scale(q, p[0])
    if len(q) == 1:
        return scale(p, q[0])
    out = [_ZERO] * (len(p) + len(q) - 1)
    for i, x in enumerate(p):
        if x:
            for j, y in enumerate(q):
                out[i + j] += x * y
    return tuple(out)


def derivative(p: Poly) -> Poly:
    """dp/dx."""
    return tuple(k * x for k, x in enumerate(p))[1:]


def content(p: Poly):
    """The positive gcd of the coefficients (0 for the zero polynomial)."""
    g = _ZERO
    for x in p:
        g = gcd(g, x)
        if g == 1:
            break
    return g


def primitive(p: Poly) -> Poly:
    """p divided by its content, with a positive leading coefficient."""
    if not p:
        return p
    c = content(p)
    if p[-1] < 0:
        c = -c
    return p if c == 1 else tuple(x // c for x in p)


def divide_exact(p: Poly, q: Poly) -> Poly:
    """p / q when q divides p in Z[x] (the caller knows it does)."""
    if len(q) == 1:
        d = q[0]
        return p if d == 1 else tuple(x // d for x in p)
    rest = list(p)
    lead = q[-1]
    out = [_ZERO] * (len(p) - len(q) + 1)
    for k in range(len(out) - 1, -1, -1):
        c = rest[k + len(q) - 1] // lead
        out[k] = c
        if c:
            for j, y in enumerate(q):
                rest[k + j] -= c * y
    if any(rest):
        raise ArithmeticError("divide_exact: the divisor does not divide")
    return tuple(out)


def pseudo_remainder(a: Poly, b: Poly) -> Poly:
    """c * (a mod b) for some integer c > 0: the remainder of a by b without fractions.

    Each elimination step multiplies by |lc(b)| (a positive factor), so the result has the
    sign pattern of the true remainder (what Sturm sequences need).
    """
    rest = list(a)
    lead = b[-1]
    positive_lead = abs(lead)
    sign = 1 if lead > 0 else -1
    shift = len(a) - len(b)
    for k in range(shift, -1, -1):
        top = rest[k + len(b) - 1]
        if top:
            factor = sign * top
            rest = [positive_lead * x for x in rest]
            for j, y in enumerate(b):
                rest[k + j] -= factor * y
    return trim(rest[: len(b) - 1])


def gcd_poly(p: Poly, q: Poly) -> Poly:
    """The gcd in Z[x]: content gcd times the primitive gcd, with a positive leading coefficient."""
    if not p or not q:
        other = p or q
        return negate(other) if other and other[-1] < 0 else other
    c = gcd(content(p), content(q))
    # fast paths: a constant, or a monomial c*x^k, shares only a power of x
    for short, other in ((p, q), (q, p)):
        if len(short) == 1 or not any(short[:-1]):
            low = min(len(short) - 1, next(i for i, x in enumerate(other) if x))
            return (_ZERO,) * low + (c,)
    a, b = primitive(p), primitive(q)
    if len(a) < len(b):
        a, b = b, a
    while len(b) > 1:
        a, b = b, primitive(pseudo_remainder(a, b))
        if not b:
            return scale(a, c)
    return (c,)


def from_descending(coefficients: Sequence) -> Poly:
    """Ascending integer tuple from coefficients highest power first."""
    return trim(reversed(list(coefficients)))
