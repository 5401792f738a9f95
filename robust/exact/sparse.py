"""Exact sparse polynomials in many variables, for expanding what a user wrote.

A polynomial is a dict from a packed monomial to a non-zero exact coefficient: a Python int
(what formulas use: a quotient of integer polynomials needs nothing else, and small ints are
the fastest exact numbers here) or a GMP rational. The exponents of all variables are packed
into one Python integer, ``BITS`` bits per variable (variable i in bits i*BITS ..), so
multiplying two monomials is one integer addition; callers keep every degree below
2**BITS (formulas refuse degrees above a few hundred before multiplying).

Expanding is where a hostile or mistyped formula costs time, so every product is paid for
from a :class:`Work` account before it is computed: a product of polynomials with a and b
terms costs a*b term products, and the account refuses, with one clear error, what would go
over its limit.
"""

from __future__ import annotations

import sys
from collections.abc import Mapping, Sequence
from math import lcm
from typing import Any

from ..errors import InputError
from .numbers import gcd, mpq
from .polynomials import MultiPoly

__all__ = ["BITS", "Work", "add", "add_into", "constant", "degree_in", "from_multipoly", "is_monomial",
           "is_zero", "monomial_lcm", "monomial_quotient", "multiply", "negate", "power", "scale",
           "split_by", "to_multipoly", "variable"]

BITS = 16
_MASK = (1 << BITS) - 1

Sparse = dict  # packed monomial -> int or mpq, no zero values


class Work:
    """An account of term products; :meth:`spend` refuses to go over ``limit``, and no
    product may have more than ``max_terms`` terms."""

    __slots__ = ("limit", "max_terms", "spent")

    def __init__(self, limit: int, max_terms: int = 10**9) -> None:
        self.limit = limit
        self.max_terms = max_terms
        self.spent = 0

    def spend(self, amount: int) -> None:
        """Pay for ``amount`` term products, or raise InputError when over the limit."""
        if self.spent + amount > self.limit:
            raise InputError("formula", f"expanding it needs more than {self.limit:,} term "
                             "products (the limit for reading a case)",
                             "a smaller expression, or fewer parameters multiplied out")
        self.spent += amount


def constant(value) -> Sparse:
    """The constant polynomial ``value`` (an int or a rational, kept as given)."""
    return {0: value} if value else {}


def variable(index: int) -> Sparse:
    """The polynomial x_index."""
    return {1 << (BITS * index): 1}


def is_zero(p: Sparse) -> bool:
    """Whether p is the zero polynomial."""
    return not p


def negate(p: Sparse) -> Sparse:
    """-p."""
    return {m: -c for m, c in p.items()}


def scale(p: Sparse, factor) -> Sparse:
    """factor * p for a rational factor."""
    if not factor:
        return {}
    return {m: c * factor for m, c in p.items()}


def add(p: Sparse, q: Sparse) -> Sparse:
    """p + q."""
    if len(p) < len(q):
        p, q = q, p
    out = dict(p)
    for m, c in q.items():
        total = out.get(m)
        if total is None:
            out[m] = c
        else:
            total += c
            if total:
                out[m] = total
            else:
                del out[m]
    return out


def add_into(target: Sparse, q: Sparse, sign: int = 1) -> None:
    """target += sign * q, in place (for a caller that owns ``target``)."""
    for m, c in q.items():
        total = target.get(m, 0) + (c if sign > 0 else -c)
        if total:
            target[m] = total
        else:
            target.pop(m, None)


def _integer_form(p: Sparse) -> tuple[Sparse, int]:
    """(P, d) with P integer and p = P / d: rationals cost a gcd per operation, integers not."""
    d = 1
    for c in p.values():
        if not isinstance(c, int):
            d = lcm(d, int(c.denominator))
    if d == 1:
        return p, 1
    return {m: int(c * d) for m, c in p.items()}, d


def multiply(p: Sparse, q: Sparse, work: Work) -> Sparse:
    """p * q, paid for from ``work``."""
    if not p or not q:
        return {}
    work.spend(len(p) * len(q))
    (p, dp), (q, dq) = _integer_form(p), _integer_form(q)
    if len(p) < len(q):
        p, q = q, p
    out: dict = {}
    get = out.get
    for mq, cq in q.items():
        for mp, cp in p.items():
            m = mp + mq
            out[m] = get(m, 0) + cp * cq
    d = dp * dq
    result = {m: (c if d == 1 else _rational(c, d)) for m, c in out.items() if c}
    if len(result) > work.max_terms:
        raise InputError("formula", f"it expands to more than {work.max_terms:,} terms",
                         "a smaller expression, or fewer parameters multiplied out")
    return result


def _rational(numerator: int, denominator: int):
    value = mpq(numerator, denominator)
    return int(value) if value.denominator == 1 else value


def power(p: Sparse, k: int, work: Work) -> Sparse:
    """p**k for k >= 0 (repeated multiplication by p: cheapest when p is the small one)."""
    result = constant(1)
    for _ in range(k):
        result = multiply(result, p, work)
    return result


def is_monomial(p: Sparse) -> bool:
    """Whether p is c * x^e with an integer c (one term)."""
    return len(p) == 1 and isinstance(next(iter(p.values())), int)


def monomial_lcm(p: Sparse, q: Sparse) -> Sparse:
    """The least common multiple of two integer monomials (positive coefficient)."""
    (mp, cp), (mq, cq) = next(iter(p.items())), next(iter(q.items()))
    count = max(mp.bit_length(), mq.bit_length()) // BITS + 1
    top = tuple(map(max, _unpack(mp, count), _unpack(mq, count)))
    packed = sum(e << (BITS * i) for i, e in enumerate(top))
    return {packed: int(abs(cp * cq) // gcd(cp, cq))}


def monomial_quotient(p: Sparse, q: Sparse) -> Sparse:
    """p / q for integer monomials where q divides p."""
    (mp, cp), (mq, cq) = next(iter(p.items())), next(iter(q.items()))
    return {mp - mq: cp // cq}


def degree_in(p: Sparse, index: int) -> int:
    """Largest exponent of x_index in p (0 for the zero polynomial)."""
    shift = BITS * index
    return max(((m >> shift) & _MASK for m in p), default=0)


def _unpack(m: int, nvars: int) -> tuple[int, ...]:
    # the packed integer's bytes are the exponents, BITS = 16 bits each (an unsigned short)
    return tuple(memoryview(m.to_bytes(2 * nvars, sys.byteorder)).cast("H"))


def from_multipoly(poly: MultiPoly) -> Sparse:
    """The packed form of a :class:`MultiPoly` (integers kept as ints, other rationals as mpq)."""
    out: Sparse = {}
    terms: list[tuple[tuple[int, ...], Any]] = list(poly.terms)  # exact rationals (mpq)
    for exps, c in terms:
        out[sum(e << (BITS * i) for i, e in enumerate(exps))] = int(c) if c.denominator == 1 else c
    return out


def to_multipoly(p: Sparse, nvars: int, keep: Sequence[int] | None = None) -> MultiPoly:
    """p as a :class:`MultiPoly` in ``nvars`` variables (only those in ``keep``, in that
    order, when given: the others must have exponent 0)."""
    mapping: Mapping
    if keep is None:
        mapping = {_unpack(m, nvars): c for m, c in p.items()}
        return MultiPoly.from_mapping(nvars, mapping)
    mapping = {}
    for m, c in p.items():
        full = _unpack(m, nvars)
        mapping[tuple(full[i] for i in keep)] = c
    return MultiPoly.from_mapping(len(keep), mapping)


def split_by(p: Sparse, index: int, nvars: int) -> dict[int, MultiPoly]:
    """p as a polynomial in x_index: {degree: coefficient as a MultiPoly in the other
    variables, in their order}."""
    shift = BITS * index
    parts: dict[int, Sparse] = {}
    for m, c in p.items():
        d = (m >> shift) & _MASK
        parts.setdefault(d, {})[m - (d << shift)] = c
    keep = [i for i in range(nvars) if i != index]
    return {d: to_multipoly(part, nvars, keep) for d, part in parts.items()}
