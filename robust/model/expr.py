"""A small, safe formula parser.

Formulas are read by our own tokenizer and recursive-descent parser and expanded node by node
into exact sparse polynomials (:mod:`robust.exact.sparse`). Nothing a user writes is ever
handed to ``eval``, ``exec``, ``sympify`` or ``parse_expr``. The language is deliberately tiny:

* numbers (``12``, ``0.1``, ``4.7e-3``; taken exactly as decimals),
* declared names (parameters) and the polynomial variable,
* ``+ - * / ^ **``, parentheses and unary signs,
* integer constant exponents only, written as a literal (``s^3``, ``R^-1``).

Limits keep hostile or mistyped input cheap to reject: formula length, nesting depth,
exponent size, an estimate of the expanded size checked before each product, and the work of
expanding (term products, paid from one account per case).
"""

from __future__ import annotations

import operator
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from types import MappingProxyType
from typing import NamedTuple

from ..errors import FormulaError, InputError, did_you_mean
from ..exact import sparse
from ..exact.numbers import parse_number, to_mpq

__all__ = [
    "MAX_DEGREE",
    "MAX_EXPONENT",
    "MAX_TERMS",
    "MAX_TOTAL_LENGTH",
    "MAX_WORK",
    "Node",
    "ParsedFormula",
    "names_in",
    "new_work",
    "parse_formula",
    "polynomial_coefficients",
    "sympy_of",
]

MAX_LENGTH = 20_000
#: All the formulas of one case together (parsing runs at about 10 us per character).
MAX_TOTAL_LENGTH = 100_000
MAX_DEPTH = 60
MAX_EXPONENT = 200
MAX_DEGREE = 200
#: Term products all the formulas of one case may spend while they are expanded (about a
#: second of work), and the most terms one expanded polynomial may have.
MAX_WORK = 1_000_000
MAX_TERMS = 50_000
_MAX_NUMBER_BITS = 20_000  # a power of a constant may not exceed this many bits

_TOKEN = re.compile(  # ASCII only: other digits (an Arabic-Indic three) are not numbers
    r"\s*(?:(?P<number>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)"
    r"|(?P<name>[A-Za-z_][A-Za-z0-9_]*)"
    r"|(?P<op>\*\*|[-+*/^()]))"
)
_SPACE = re.compile(r"\s*")
#: A name right after a number (4.7k, 2s): the one message, from the parser and from names_in.
_SUFFIX_PROBLEM = ("missing operator after a number (engineering suffixes such as 4.7k belong in parameter "
                   "values, not in formulas; write '*' between factors)")


class _Token(NamedTuple):  # a tuple: tokens are made by the hundred thousand
    kind: str  # "number", "name", "op", "end"
    text: str
    position: int  # 1-based column


@dataclass(frozen=True, slots=True)
class _Size:
    """Upper bounds on the expanded size of a subexpression (to refuse blow-ups early)."""

    degrees: tuple[int, ...]  # per slot (the variable, then the names): a degree bound
    terms: int


@dataclass(frozen=True, slots=True)
class Node:
    """One step of a formula as written, kept on request for walks other than expanding it
    (such as the dimension check of :mod:`robust.model.units`).

    ``kind`` is "number", "name", "sum", "product" or "power"; the node was read from
    ``text[start:end]``. ``children`` are the terms of a sum (signs dropped), the factors of a
    product (``inverted[i]``: factor i divides) or the base of a power (``exponent``). A
    unary sign or a pair of parentheses adds no node.
    """

    kind: str
    start: int
    end: int
    children: tuple[Node, ...] = ()
    inverted: tuple[bool, ...] = ()
    exponent: int = 0
    name: str = ""  # of a name: the name (the variable included)


@dataclass(frozen=True, slots=True)
class ParsedFormula:
    """A formula read and expanded exactly.

    Attributes
    ----------
    text
        The text as written.
    names
        The declared names the formula uses (the variable excluded), sorted.
    slots
        The order of the variables of the expanded forms: the polynomial variable first
        (``""`` when there is none), then every declared name in the order given.
    expanded_numerator, expanded_denominator
        The formula as one quotient exactly as written, expanded: common factors of the two
        are not cancelled, so a pole-zero cancellation inside a formula cannot hide a mode.
        Read-only sparse polynomials over ``slots`` (see :mod:`robust.exact.sparse`).
    tree
        The formula as written (:class:`Node`), when asked for with ``keep_tree``; else None.
    """

    text: str
    names: tuple[str, ...]
    slots: tuple[str, ...]
    expanded_numerator: Mapping = field(repr=False, compare=False)
    expanded_denominator: Mapping = field(repr=False, compare=False)
    tree: Node | None = field(default=None, repr=False, compare=False)

    @property
    def numerator(self):
        """The numerator as a sympy expression (for inspection and tests)."""
        return sympy_of(self.expanded_numerator, self.slots)

    @property
    def denominator(self):
        """The denominator as a sympy expression."""
        return sympy_of(self.expanded_denominator, self.slots)

    @property
    def expression(self):
        """The formula as one sympy expression (numerator / denominator)."""
        den = self.denominator
        return self.numerator if den == 1 else self.numerator / den


def sympy_of(poly: Mapping, slots: Sequence[str]):
    """A sparse polynomial over ``slots`` as a sympy expression, only to show it (each name
    becomes a sympy Symbol; no text is read)."""
    import sympy as sp  # only to show a formula; reading one never needs sympy

    symbols = [sp.Symbol(n) if n else sp.Integer(1) for n in slots]
    terms = []
    for m, c in poly.items():
        term = sp.Rational(int(c.numerator), int(c.denominator))
        for i, symbol in enumerate(symbols):
            k = (m >> (sparse.BITS * i)) & ((1 << sparse.BITS) - 1)
            if k:
                term *= symbol**k
        terms.append(term)
    return sp.Add(*terms)


def _skip_space(text: str, pos: int) -> int:
    match = _SPACE.match(text, pos)  # \s* matches everywhere, the empty string included
    return match.end() if match else pos


def _tokenize(text: str) -> list[_Token]:
    tokens: list[_Token] = []
    pos = _skip_space(text, 0)
    while pos < len(text):
        match = _TOKEN.match(text, pos)
        if not match or match.end() == pos:
            column = pos + 1
            char = text[column - 1]
            if char == ".":
                raise FormulaError(text, column, "attribute access is not allowed", "+ - * / ^")
            if char in "[]{},;:=<>!&|@%~`'\"\\":
                raise FormulaError(
                    text, column, f"the character {char!r} is not part of a formula",
                    "numbers, names, + - * / ^ ** and parentheses",
                )
            raise FormulaError(
                text, column, f"unexpected character {char!r}",
                "numbers, names, + - * / ^ ** and parentheses",
            )
        kind = match.lastgroup or "op"
        start = match.start(kind) + 1
        tokens.append(_Token(kind, match.group(kind), start))
        pos = _skip_space(text, match.end())
    tokens.append(_Token("end", "", len(text) + 1))
    return tokens


class _Frac:
    """A quotient kept as written, expanded exactly as sparse polynomials in the variable
    (slot 0) and the names, every product paid for from the parser's work account."""

    __slots__ = ("den", "num")

    def __init__(self, num: dict, den: dict):
        self.num, self.den = num, den

    def has_variable(self) -> bool:
        return sparse.degree_in(self.num, 0) > 0 or sparse.degree_in(self.den, 0) > 0

    def constant(self) -> Fraction | None:
        """The value when both parts are constants, else None."""
        if set(self.num) <= {0} and set(self.den) == {0}:
            return Fraction(self.num.get(0, 0)) / Fraction(self.den[0])
        return None

    def add(self, other: _Frac, work: sparse.Work) -> _Frac:
        if self.den == other.den:
            return _Frac(sparse.add(self.num, other.num), self.den)
        if sparse.is_monomial(self.den) and sparse.is_monomial(other.den):
            # R/L + 1/(L*C): over the least common multiple L*C, as one would write it
            common = sparse.monomial_lcm(self.den, other.den)
            mine, theirs = (sparse.monomial_quotient(common, d) for d in (self.den, other.den))
        else:
            common = sparse.multiply(self.den, other.den, work)
            mine, theirs = other.den, self.den
        num = sparse.add(sparse.multiply(self.num, mine, work), sparse.multiply(other.num, theirs, work))
        return _Frac(num, common)

    def mul(self, other: _Frac, work: sparse.Work) -> _Frac:
        return _Frac(sparse.multiply(self.num, other.num, work), sparse.multiply(self.den, other.den, work))

    def negate(self) -> _Frac:
        return _Frac(sparse.negate(self.num), self.den)

    def invert(self) -> _Frac:
        return _Frac(self.den, self.num)

    def power(self, k: int, work: sparse.Work) -> _Frac:
        base = self if k >= 0 else self.invert()
        return _Frac(sparse.power(base.num, abs(k), work), sparse.power(base.den, abs(k), work))


class _Parser:
    def __init__(self, text: str, names: tuple[str, ...], variable: str | None, polynomial: bool,
                 work: sparse.Work, keep_tree: bool = False):
        self.text = text
        self.names = names
        self.variable = variable
        self.polynomial = polynomial
        self.tokens = _tokenize(text)
        self.index = 0
        self.depth = 0
        self.used: set[str] = set()
        # sparse polynomial slots: the variable is 0, the names follow in the order given
        self.slots = {n: i + 1 for i, n in enumerate(names)}
        if variable is not None:
            self.slots[variable] = 0
        self.work = work
        count = 1 + len(names)
        self.no_degree = (0,) * count
        self.unit_degrees = [tuple(int(i == j) for j in range(count)) for i in range(count)]
        # the formula as written, when kept: each grammar rule leaves its one node on this stack
        self.nodes: list[Node] | None = [] if keep_tree else None
        self.end = 0  # where the last token taken ends (0-based, exclusive)

    # -- token helpers ---------------------------------------------------------------------
    @property
    def token(self) -> _Token:
        return self.tokens[self.index]

    def fail(self, problem: str, expected: str = "", token: _Token | None = None) -> FormulaError:
        return FormulaError(self.text, (token or self.token).position, problem, expected)

    def take(self) -> _Token:
        token = self.token
        self.index += 1
        self.end = token.position - 1 + len(token.text)
        return token

    def keep(self, kind: str, start: int, count: int = 1, **fields) -> None:
        """Replace the last ``count`` nodes by one of ``kind`` read from ``start`` on (when kept)."""
        nodes = self.nodes
        if nodes is None:
            return
        children = tuple(nodes[len(nodes) - count:]) if count else ()
        del nodes[len(nodes) - count:]
        nodes.append(Node(kind, start, self.end, children, **fields))

    def is_op(self, *ops: str) -> bool:
        return self.token.kind == "op" and self.token.text in ops

    def enter(self) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.fail("formula nested too deeply", f"at most {MAX_DEPTH} levels")

    # -- grammar ---------------------------------------------------------------------------
    def parse(self) -> tuple[_Frac, _Size]:
        if self.token.kind == "end":
            raise self.fail("empty formula", "an expression")
        value = self.sum()
        if self.token.kind != "end":
            raise self.unexpected()
        return value

    def unexpected(self) -> FormulaError:
        token = self.token
        if token.kind in ("number", "name") or (token.kind == "op" and token.text == "("):
            return self.fail("missing operator (write '*' between factors)", "an operator")
        if token.text == ")":
            return self.fail("unbalanced ')'", "an operator or the end")
        return self.fail(f"unexpected {token.text!r}", "an operator or the end")

    def sum(self) -> tuple[_Frac, _Size]:
        start, terms = self.token.position - 1, 1
        value, size = self.product()
        owned = False  # whether value.num is this loop's own dict, to add into in place
        while self.is_op("+", "-"):
            op = self.take()
            other, other_size = self.product()
            terms += 1
            size = _add_sizes(size, other_size)
            self.check_size(size, op)
            if value.den == other.den:  # terms over one denominator: add in place, no copy
                if not owned:
                    value, owned = _Frac(dict(value.num), value.den), True
                sparse.add_into(value.num, other.num, -1 if op.text == "-" else 1)
                size = _Size(size.degrees, min(size.terms, max(len(value.num), len(value.den), 1)))
            else:
                value, size = self.expand(op, size, value.add,
                                          other if op.text == "+" else other.negate())
                owned = True
        if terms > 1:
            self.keep("sum", start, terms)
        return value, size

    def product(self) -> tuple[_Frac, _Size]:
        start, inverted = self.token.position - 1, [False]
        value, size = self.unary()
        while self.is_op("*", "/"):
            op = self.take()
            other, other_size = self.unary()
            inverted.append(op.text == "/")
            if op.text == "/":
                self.check_divisor(other, other_size, op, "division by")
                other = other.invert()
            size = _mul_sizes(size, other_size)
            self.check_size(size, op)
            value, size = self.expand(op, size, value.mul, other)
        if len(inverted) > 1:
            self.keep("product", start, len(inverted), inverted=tuple(inverted))
        return value, size

    def check_divisor(self, divisor: _Frac, size: _Size, op: _Token, what: str) -> None:
        """Refuse dividing by zero, written or once expanded, and (for a polynomial) by an
        expression in the variable."""
        if sparse.is_zero(divisor.num):
            if max(size.degrees) == 0:  # written without a name: 0, 2 - 2, ...
                raise self.fail("division by zero", "a non-zero divisor", op)
            # e.g. (s+1)^2 - s^2 - 2*s - 1: zero, though not written as 0
            raise self.fail(f"{what} an expression that is identically zero once expanded",
                            "a divisor that is not zero", op)
        if self.polynomial and self.variable and divisor.has_variable():
            raise self.fail(f"{what} an expression in {self.variable}",
                            f"a polynomial in {self.variable}", op)

    def expand(self, op: _Token, size: _Size, method, argument) -> tuple[_Frac, _Size]:
        """``method(argument)`` paid from the work account; the size becomes the actual one."""
        try:
            value = method(argument, self.work)
        except InputError as error:  # the work account ran out
            raise self.fail(error.problem, error.expected, op) from None
        terms = max(len(value.num), len(value.den), 1)
        return value, _Size(size.degrees, min(size.terms, terms))

    def unary(self) -> tuple[_Frac, _Size]:
        if self.is_op("+", "-"):
            op = self.take()
            self.enter()
            value, size = self.unary()
            self.depth -= 1
            return (value.negate() if op.text == "-" else value), size
        return self.power()

    def power(self) -> tuple[_Frac, _Size]:
        start = self.token.position - 1
        base, size = self.atom()
        if self.is_op("^", "**"):
            op = self.take()
            exponent = self.exponent()
            if self.is_op("^", "**"):
                raise self.fail("exponent towers are not accepted", "one integer exponent")
            if exponent < 0:
                self.check_divisor(base, size, op, "negative power of")
            value = base.constant()
            if value is not None and abs(exponent) * max(
                int(value.numerator).bit_length(), int(value.denominator).bit_length()
            ) > _MAX_NUMBER_BITS:  # ((9^200)^200)^200 would take minutes and all memory
                raise self.fail("number too large", f"constants below 2^{_MAX_NUMBER_BITS}", op)
            size = _pow_size(size, abs(exponent))
            self.check_size(size, op)
            self.keep("power", start, exponent=exponent)
            return self.expand(op, size, base.power, exponent)
        return base, size

    def exponent(self) -> int:
        token = self.token
        sign = 1
        parenthesised = False
        if self.is_op("("):
            self.take()
            parenthesised = True
        if self.is_op("+", "-"):
            sign = -1 if self.take().text == "-" else 1
        if self.token.kind != "number" or not re.fullmatch("[0-9]+", self.token.text):
            if self.token.kind == "name" or self.is_op("("):
                raise self.fail("exponents must be integer constants", "an integer such as 2")
            raise self.fail("exponents must be integer constants", "an integer such as 2")
        digits = self.take().text.lstrip("0") or "0"
        value = sign * (int(digits) if len(digits) <= 6 else 10**6)  # 10**6: "too large" below
        if parenthesised:
            if not self.is_op(")"):
                raise self.fail("exponents must be integer constants", "')'")
            self.take()
        if abs(value) > MAX_EXPONENT:
            raise FormulaError(
                self.text, token.position, "exponent too large", f"|exponent| <= {MAX_EXPONENT}"
            )
        return value

    def atom(self) -> tuple[_Frac, _Size]:
        token = self.token
        if token.kind == "number":
            self.take()
            if self.token.kind == "name":
                raise self.fail(_SUFFIX_PROBLEM, "an operator")
            try:
                value = parse_number(token.text, "number", suffixes=False)
            except InputError as error:  # e.g. 1e401: report it with its column, as the rest
                raise self.fail(error.problem, error.expected, token) from None
            # a decimal is a constant of the numerator, as written (0.05*s: the coefficient 1/20);
            # integers stay Python ints, the fastest exact numbers here
            constant = int(value) if value.denominator == 1 else to_mpq(value)
            self.keep("number", token.position - 1, 0)
            return _Frac(sparse.constant(constant), _PONE), _Size(self.no_degree, 1)
        if token.kind == "name":
            self.take()
            if self.is_op("("):
                raise self.fail(
                    f"function calls are not allowed ({token.text}(...))",
                    "numbers, names, + - * / ^ and parentheses", token,
                )
            if token.text not in self.slots:
                known = sorted(self.names)
                hint = ", ".join(known[:8]) + (" ..." if len(known) > 8 else "")
                expected = "a declared parameter" + (f" ({hint})" if hint else "")
                if self.variable:
                    expected += f" or the variable {self.variable}"
                choices = [*known, *([self.variable] if self.variable else [])]
                raise self.fail(f"unknown name {token.text!r}{did_you_mean(token.text, choices)}",
                                expected, token)
            if token.text != self.variable:
                self.used.add(token.text)
            slot = self.slots[token.text]
            self.keep("name", token.position - 1, 0, name=token.text)
            return _Frac(sparse.variable(slot), _PONE), _Size(self.unit_degrees[slot], 1)
        if self.is_op("("):
            self.take()
            self.enter()
            if self.is_op(")"):
                raise self.fail("empty parentheses", "an expression")
            inner = self.sum()
            if not self.is_op(")"):
                if self.token.kind == "end":
                    raise self.fail("unbalanced '(' (missing ')')", "')'", token)
                raise self.unexpected()
            self.take()
            self.depth -= 1
            return inner
        if token.kind == "end":
            raise self.fail("formula ends too early", "a number, a name or '('")
        raise self.fail(f"unexpected {token.text!r}", "a number, a name or '('")

    def check_size(self, size: _Size, token: _Token) -> None:
        if self.variable and size.degrees[0] > MAX_DEGREE:
            raise self.fail(
                f"degree in {self.variable} too high", f"degree <= {MAX_DEGREE}", token
            )
        if max(size.degrees) > MAX_DEGREE or size.terms > MAX_TERMS:
            raise self.fail(f"formula expands to an absurd size (over {MAX_TERMS:,} terms or degree "
                            f"{MAX_DEGREE} in a parameter)", "a smaller expression", token)


_PONE = sparse.constant(1)


def new_work() -> sparse.Work:
    """A work account with the limits for reading one case."""
    return sparse.Work(MAX_WORK, MAX_TERMS)


def _dense_bound(degrees: Iterable[int]) -> int:
    bound = 1
    for d in degrees:
        if d:
            bound *= d + 1
            if bound > 10 * MAX_TERMS:
                break
    return bound


def _add_sizes(a: _Size, b: _Size) -> _Size:
    degrees = tuple(map(max, a.degrees, b.degrees))
    return _Size(degrees, min(a.terms + b.terms, _dense_bound(degrees)))


def _mul_sizes(a: _Size, b: _Size) -> _Size:
    degrees = tuple(map(operator.add, a.degrees, b.degrees))
    return _Size(degrees, min(a.terms * b.terms, _dense_bound(degrees)))


def _pow_size(a: _Size, k: int) -> _Size:
    degrees = tuple(d * k for d in a.degrees)
    small = a.terms <= 1 or k * a.terms.bit_length() < 64
    crude = (a.terms**k if a.terms > 1 else 1) if small else 10 * MAX_TERMS
    return _Size(degrees, min(crude, _dense_bound(degrees)))


def parse_formula(
    text: str,
    names: Iterable[str] = (),
    variable: str | None = "s",
    polynomial: bool = False,
    work: sparse.Work | None = None,
    keep_tree: bool = False,
) -> ParsedFormula:
    """Parse and expand a formula exactly, without evaluating any user text.

    Parameters
    ----------
    text
        The formula, e.g. ``"R1*C1*s^2 + (R1 + R2)*C1*s + 1"``.
    names
        Declared parameter names that may appear.
    variable
        The polynomial variable (``None`` when the formula must not contain one).
    polynomial
        Refuse division by, and negative powers of, expressions in the variable.
    work
        The account expanding is paid from (several formulas may share one); by default a
        fresh one of :data:`MAX_WORK` term products.
    keep_tree
        Keep the formula as written in :attr:`ParsedFormula.tree` (:class:`Node`).

    Raises
    ------
    FormulaError
        With the 1-based column of the problem.

    Examples
    --------
    >>> parse_formula("2*s^2 + 0.1*s + 1").expression
    2*s**2 + s/10 + 1
    """
    if not isinstance(text, str):
        raise FormulaError(str(text), 1, "a formula must be text", "a string")
    if len(text) > MAX_LENGTH:
        raise FormulaError(text, MAX_LENGTH, "formula too long", f"at most {MAX_LENGTH} characters")
    declared = tuple(dict.fromkeys(names))
    parser = _Parser(text, declared, variable, polynomial, work or new_work(), keep_tree)
    value, _ = parser.parse()
    return ParsedFormula(text, tuple(sorted(parser.used)), (variable or "", *declared),
                         MappingProxyType(value.num), MappingProxyType(value.den),
                         parser.nodes[0] if parser.nodes else None)


def names_in(text: str) -> tuple[str, ...]:
    """The names a formula writes, each once, in the order they first appear (numbers such
    as ``4.7e-3`` hold no name).

    Raises
    ------
    FormulaError
        For a character that is not part of a formula, or a name right after a number.

    Examples
    --------
    >>> names_in("(Kp + Ki/s)*e - 4.7e-3*e")
    ('Kp', 'Ki', 's', 'e')
    """
    if not isinstance(text, str):
        raise FormulaError(str(text), 1, "a formula must be text", "a string")
    if len(text) > MAX_LENGTH:
        raise FormulaError(text, MAX_LENGTH, "formula too long", f"at most {MAX_LENGTH} characters")
    tokens = _tokenize(text)
    for before, token in zip(tokens, tokens[1:], strict=False):
        if before.kind == "number" and token.kind == "name":
            raise FormulaError(text, token.position, _SUFFIX_PROBLEM, "an operator")
    return tuple(dict.fromkeys(t.text for t in tokens if t.kind == "name"))


def polynomial_coefficients(text: str, variable: str = "s") -> list[Fraction]:
    """Read a polynomial with numeric coefficients; return them highest power first.

    Raises
    ------
    FormulaError
        For syntax errors, names other than the variable, or non-polynomial forms.

    Examples
    --------
    >>> polynomial_coefficients("(s + 1)*(s + 0.5)")
    [Fraction(1, 1), Fraction(3, 2), Fraction(1, 2)]
    """
    parsed = parse_formula(text, (), variable, polynomial=True)
    # no names and no division by the variable: the denominator is a non-zero constant, and
    # a packed monomial in the variable alone is its exponent
    scale = Fraction(parsed.expanded_denominator[0])
    by_power = {m: Fraction(c) / scale for m, c in parsed.expanded_numerator.items()}
    degree = max(by_power, default=0)
    return [by_power.get(k, Fraction(0)) for k in range(degree, -1, -1)]
