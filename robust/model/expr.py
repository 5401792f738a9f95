"""A small, safe formula parser.

Formulas are read by our own tokenizer and recursive-descent parser and turned into sympy
expressions node by node. Nothing a user writes is ever handed to ``eval``, ``exec``,
``sympify`` or ``parse_expr``. The language is deliberately tiny:

* numbers (``12``, ``0.1``, ``4.7e-3``; taken exactly as decimals),
* declared names (parameters) and the polynomial variable,
* ``+ - * / ^ **``, parentheses and unary signs,
* integer constant exponents only, written as a literal (``s^3``, ``R^-1``).

Limits keep hostile or mistyped input cheap to reject: formula length, nesting depth,
exponent size, and a bound on the size of the expanded result.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp

from ..errors import FormulaError, InputError
from ..exact.numbers import parse_number

__all__ = [
    "MAX_DEGREE",
    "MAX_EXPONENT",
    "ParsedFormula",
    "parse_formula",
    "polynomial_coefficients",
]

MAX_LENGTH = 20_000
MAX_DEPTH = 60
MAX_EXPONENT = 200
MAX_DEGREE = 200
_MAX_TERMS = 200_000
_MAX_NUMBER_BITS = 20_000  # a power of a constant may not exceed this many bits

_TOKEN = re.compile(
    r"\s*(?:(?P<number>(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)"
    r"|(?P<name>[A-Za-z_][A-Za-z0-9_]*)"
    r"|(?P<op>\*\*|[-+*/^()]))"
)


@dataclass(frozen=True, slots=True)
class _Token:
    kind: str  # "number", "name", "op", "end"
    text: str
    position: int  # 1-based column


@dataclass(frozen=True, slots=True)
class _Size:
    """Upper bounds on the expanded size of a subexpression (to refuse blow-ups early)."""

    degrees: tuple[tuple[str, int], ...]  # per-symbol degree bound, sorted by name
    terms: int

    def degree(self, name: str) -> int:
        return dict(self.degrees).get(name, 0)


@dataclass(frozen=True, slots=True)
class ParsedFormula:
    """A formula read into sympy.

    Attributes
    ----------
    text
        The text as written.
    expression
        The sympy expression built from the syntax tree.
    names
        The declared names the formula uses (the variable excluded), sorted.
    numerator, denominator
        The formula as one quotient exactly as written: common factors of the two are not
        cancelled (the expression above may have them cancelled by sympy).
    """

    text: str
    expression: sp.Expr
    names: tuple[str, ...]
    numerator: sp.Expr = sp.Integer(0)
    denominator: sp.Expr = sp.Integer(1)


def _tokenize(text: str) -> list[_Token]:
    tokens: list[_Token] = []
    pos = 0
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        match = _TOKEN.match(text, pos)
        if not match or match.end() == pos:
            column = pos + 1 + (len(text[pos:]) - len(text[pos:].lstrip()))
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
        pos = match.end()
    tokens.append(_Token("end", "", len(text) + 1))
    return tokens


class _Frac:
    """A quotient kept as written: numerator and denominator are never cancelled against
    each other, so a pole-zero cancellation inside a formula cannot hide a mode."""

    __slots__ = ("den", "num")

    def __init__(self, num: sp.Expr, den: sp.Expr = sp.Integer(1)):
        self.num, self.den = num, den

    def has(self, symbol: sp.Symbol) -> bool:
        return self.num.has(symbol) or self.den.has(symbol)

    def add(self, other: _Frac) -> _Frac:
        if self.den == other.den:
            return _Frac(self.num + other.num, self.den)
        return _Frac(self.num * other.den + other.num * self.den, self.den * other.den)

    def mul(self, other: _Frac) -> _Frac:
        return _Frac(self.num * other.num, self.den * other.den)

    def negate(self) -> _Frac:
        return _Frac(-self.num, self.den)

    def invert(self) -> _Frac:
        return _Frac(self.den, self.num)

    def power(self, k: int) -> _Frac:
        return _Frac(self.num**k, self.den**k) if k >= 0 else _Frac(self.den**-k, self.num**-k)

    def expression(self) -> sp.Expr:
        return self.num if self.den == 1 else self.num / self.den


class _Parser:
    def __init__(self, text: str, names: frozenset[str], variable: str | None, polynomial: bool):
        self.text = text
        self.names = names
        self.variable = variable
        self.polynomial = polynomial
        self.tokens = _tokenize(text)
        self.index = 0
        self.depth = 0
        self.used: set[str] = set()
        self.symbols = {n: sp.Symbol(n) for n in names}
        if variable is not None:
            self.symbols[variable] = sp.Symbol(variable)

    # -- token helpers ---------------------------------------------------------------------
    @property
    def token(self) -> _Token:
        return self.tokens[self.index]

    def fail(self, problem: str, expected: str = "", token: _Token | None = None) -> FormulaError:
        return FormulaError(self.text, (token or self.token).position, problem, expected)

    def take(self) -> _Token:
        token = self.token
        self.index += 1
        return token

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
        value, size = self.product()
        while self.is_op("+", "-"):
            op = self.take()
            other, other_size = self.product()
            value = value.add(other if op.text == "+" else other.negate())
            size = _add_sizes(size, other_size)
            self.check_size(size, op)
        return value, size

    def product(self) -> tuple[_Frac, _Size]:
        value, size = self.unary()
        while self.is_op("*", "/"):
            op = self.take()
            other, other_size = self.unary()
            if op.text == "*":
                value, size = value.mul(other), _mul_sizes(size, other_size)
            else:
                if other.num == 0:
                    raise self.fail("division by zero", "a non-zero divisor", op)
                if self.polynomial and self.variable and other.has(self.symbols[self.variable]):
                    raise self.fail(
                        f"division by an expression in {self.variable}",
                        f"a polynomial in {self.variable}", op,
                    )
                value, size = value.mul(other.invert()), _mul_sizes(size, other_size)
            self.check_size(size, op)
        return value, size

    def unary(self) -> tuple[_Frac, _Size]:
        if self.is_op("+", "-"):
            op = self.take()
            self.enter()
            value, size = self.unary()
            self.depth -= 1
            return (value.negate() if op.text == "-" else value), size
        return self.power()

    def power(self) -> tuple[_Frac, _Size]:
        base, size = self.atom()
        if self.is_op("^", "**"):
            op = self.take()
            exponent = self.exponent()
            if self.is_op("^", "**"):
                raise self.fail("exponent towers are not accepted", "one integer exponent")
            if exponent < 0 and base.num == 0:
                raise self.fail("division by zero", "a non-zero base", op)
            if (
                exponent < 0 and self.polynomial and self.variable
                and base.has(self.symbols[self.variable])
            ):
                raise self.fail(
                    f"negative power of an expression in {self.variable}",
                    f"a polynomial in {self.variable}", op,
                )
            if base.num.is_Rational and base.den.is_Rational and abs(exponent) * max(
                int(base.num.p).bit_length(), int(base.num.q).bit_length(),
                int(base.den.p).bit_length(), int(base.den.q).bit_length(),
            ) > _MAX_NUMBER_BITS:  # ((9^200)^200)^200 would take minutes and all memory
                raise self.fail("number too large", f"constants below 2^{_MAX_NUMBER_BITS}", op)
            size = _pow_size(size, abs(exponent))
            self.check_size(size, op)
            return base.power(exponent), size
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
        if self.token.kind != "number" or not self.token.text.isdigit():
            if self.token.kind == "name" or self.is_op("("):
                raise self.fail("exponents must be integer constants", "an integer such as 2")
            raise self.fail("exponents must be integer constants", "an integer such as 2")
        value = sign * int(self.take().text)
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
                raise self.fail(
                    "missing operator after a number (engineering suffixes such as 4.7k belong "
                    "in parameter values, not in formulas; write '*' between factors)",
                    "an operator",
                )
            try:
                value = parse_number(token.text, "number", suffixes=False)
            except InputError as error:  # e.g. 1e401: report it with its column, as the rest
                raise self.fail(error.problem, error.expected, token) from None
            return _Frac(sp.Rational(value.numerator, value.denominator)), _Size((), 1)
        if token.kind == "name":
            self.take()
            if self.is_op("("):
                raise self.fail(
                    f"function calls are not allowed ({token.text}(...))",
                    "numbers, names, + - * / ^ and parentheses", token,
                )
            if token.text not in self.symbols:
                known = sorted(self.names)
                hint = ", ".join(known[:8]) + (" ..." if len(known) > 8 else "")
                expected = "a declared parameter" + (f" ({hint})" if hint else "")
                if self.variable:
                    expected += f" or the variable {self.variable}"
                raise self.fail(f"unknown name {token.text!r}", expected, token)
            if token.text != self.variable:
                self.used.add(token.text)
            return _Frac(self.symbols[token.text]), _Size(((token.text, 1),), 1)
        if self.is_op("("):
            self.take()
            self.enter()
            if self.is_op(")"):
                raise self.fail("empty parentheses", "an expression")
            value = self.sum()
            if not self.is_op(")"):
                if self.token.kind == "end":
                    raise self.fail("unbalanced '(' (missing ')')", "')'", token)
                raise self.unexpected()
            self.take()
            self.depth -= 1
            return value
        if token.kind == "end":
            raise self.fail("formula ends too early", "a number, a name or '('")
        raise self.fail(f"unexpected {token.text!r}", "a number, a name or '('")

    def check_size(self, size: _Size, token: _Token) -> None:
        if self.variable and size.degree(self.variable) > MAX_DEGREE:
            raise self.fail(
                f"degree in {self.variable} too high", f"degree <= {MAX_DEGREE}", token
            )
        if any(d > MAX_DEGREE for _, d in size.degrees) or size.terms > _MAX_TERMS:
            raise self.fail("formula expands to an absurd size", "a smaller expression", token)


def _merge(a: _Size, b: _Size, combine) -> tuple[tuple[str, int], ...]:
    da, db = dict(a.degrees), dict(b.degrees)
    return tuple(sorted((k, combine(da.get(k, 0), db.get(k, 0))) for k in set(da) | set(db)))


def _dense_bound(degrees: Iterable[tuple[str, int]]) -> int:
    bound = 1
    for _, d in degrees:
        bound *= d + 1
        if bound > 10 * _MAX_TERMS:
            break
    return bound


def _add_sizes(a: _Size, b: _Size) -> _Size:
    degrees = _merge(a, b, max)
    return _Size(degrees, min(a.terms + b.terms, _dense_bound(degrees)))


def _mul_sizes(a: _Size, b: _Size) -> _Size:
    degrees = _merge(a, b, lambda x, y: x + y)
    return _Size(degrees, min(a.terms * b.terms, _dense_bound(degrees)))


def _pow_size(a: _Size, k: int) -> _Size:
    degrees = tuple((n, d * k) for n, d in a.degrees)
    crude = a.terms**k if a.terms > 1 and k * a.terms.bit_length() < 64 else (1 if a.terms <= 1 else 10 * _MAX_TERMS)
    return _Size(degrees, min(crude, _dense_bound(degrees)))


def parse_formula(
    text: str,
    names: Iterable[str] = (),
    variable: str | None = "s",
    polynomial: bool = False,
) -> ParsedFormula:
    """Parse a formula into a sympy expression without evaluating any user text.

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
    declared = frozenset(names)
    parser = _Parser(text, declared, variable, polynomial)
    value, _ = parser.parse()
    return ParsedFormula(text, value.expression(), tuple(sorted(parser.used)), value.num, value.den)


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
    poly = sp.Poly(sp.expand(parsed.expression), sp.Symbol(variable))
    return [Fraction(int(c.p), int(c.q)) for c in poly.all_coeffs()]
