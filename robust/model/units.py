"""Dimension checks of a case's formulas, with pint's unit registry.

Where parameters carry a ``unit``, every sum of every formula must add terms of one
dimension. The walk runs over the formula as written (:class:`robust.model.expr.Node`): the
variable ``s`` is a frequency (1/time), ``z`` a pure number; products, quotients and integer
powers combine dimensions. What cannot be known is not compared: a parameter without a unit,
and a written number (``0.025*s + 1`` writes a time constant in seconds, ``s + 600`` a
frequency in rad/s), make their term's dimension unknown; only a factor 1, as in
``1/(L*s + R)``, is a pure number. A sum takes the dimension of its known terms.

The forms add their own sums: the terms of an expression; ``a_k * s^k`` of a coefficient
list; ``1 + P*C`` of a loop, whose loop gain must be dimensionless (a plant or a controller
may carry a dimension, e.g. V/A); ``M_ij s^2 + C_ij s + K_ij`` of a mechanical entry;
``s - A_ii`` and ``A_ij - (B K)_ij`` of a state-space entry. A determinant adds, beside the
product of its diagonal, the same product with (i, i), (j, j) swapped for (i, j), (j, i), so
``P_ij P_ji`` must have the dimension of ``P_ii P_jj`` (state units cancel there, while an
off-diagonal entry alone may be any ratio of them).

Scale counts as well as dimension: values are used as written, so ``T1 + T2`` with ``T1`` in
ms and ``T2`` in s, or ``L*s + R`` with ``L`` in mH (``s`` is per second), adds numbers in
different units and is refused like a dimension mismatch, with a pointer to SI units and
engineering suffixes (``nominal = "0.5m"`` with ``unit = "s"``). A written number has no
known unit, so ``T*s + 1`` is not compared. pint is imported only here
and only for a case with units, so commands on other cases do not load it.
"""

from __future__ import annotations

import math
import re
import tokenize
from collections.abc import Callable, Sequence
from fractions import Fraction
from functools import cache
from typing import Any

from ..errors import CaseError, InputError
from .expr import Node, ParsedFormula

__all__ = ["EXPECTED_SUM", "MAX_UNIT_LENGTH", "check_units", "describe", "unit_dimension"]

#: Longest unit text handed to pint.
MAX_UNIT_LENGTH = 80
#: What a mismatch asks for, in every message.
EXPECTED_SUM = "terms of one dimension in every sum"
_UNIT_EXAMPLES = 'a unit such as "ohm", "uF", "mH", "V/A", "rad/s", "N*m/A" or "1" for a pure number'
_CHARACTERS = re.compile(r"[\w ()*/^.+\-%·]+\Z")
_EXPONENT = re.compile(r"(\^|\*\*)\s*(\(\s*[-+]?\d{1,2}\s*\)|[-+]?\d{1,2})(?!\s*[\d.(^]|\s*\*\*)")
# names pint gives derived dimensions, shown in messages (pint's own name on the left)
_NAMED = (("resistance", "resistance"), ("capacitance", "capacitance"), ("inductance", "inductance"),
          ("electric_potential", "voltage"), ("charge", "charge"), ("power", "power"),
          ("energy", "energy"), ("force", "force"), ("magnetic_flux", "magnetic flux"))

Dimension = Any  # a _Measure (pint's dimensionality and the SI scale); None where unknown


class _Measure:
    """A dimension (pint's UnitsContainer of base dimensions) and a scale: the factor from the
    unit to the SI units of that dimension (ms: 0.001). Multiplies, divides and raises to
    integer powers like a unit; equal when both agree (the scale to 1e-9); true when it is not
    a plain pure number."""

    __slots__ = ("dim", "scale")

    def __init__(self, dim: Any, scale: float = 1.0) -> None:
        self.dim, self.scale = dim, scale

    def __mul__(self, other: _Measure) -> _Measure:
        return _Measure(self.dim * other.dim, self.scale * other.scale)

    def __truediv__(self, other: _Measure) -> _Measure:
        return _Measure(self.dim / other.dim, self.scale / other.scale)

    def __pow__(self, k: int) -> _Measure:
        return _Measure(self.dim**k, self.scale**k)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, _Measure) and self.dim == other.dim and self.same_scale(other)

    __hash__ = None  # type: ignore[assignment]

    def same_scale(self, other: _Measure) -> bool:
        return math.isclose(self.scale, other.scale, rel_tol=1e-9)

    def __bool__(self) -> bool:
        return bool(self.dim) or not math.isclose(self.scale, 1.0, rel_tol=1e-9)
Fail = Callable[..., CaseError]  # (section, key, problem, expected, index=...) -> the error


@cache
def _registry():
    import pint  # heavy (it loads numpy): only for a case whose parameters carry units

    return pint.UnitRegistry()


@cache
def _dimensionless() -> Dimension:
    return _Measure(_registry().get_dimensionality("[]"))


def _per_second() -> Dimension:
    """The continuous-time variable: a frequency, per second (rad/s, Hz = 1/s: scale 1)."""
    return _Measure(_registry().get_dimensionality("1/[time]"))


def _measure(text: str) -> Dimension:
    """The dimension and SI scale of a unit (``"ms"``: [time], 0.001).

    Raises
    ------
    InputError
        As :func:`unit_dimension`, or for a unit with an offset (degC) that has no scale.
    """
    dimension = unit_dimension(text)
    registry = _registry()
    try:
        scale = float(registry.Quantity(1, registry.parse_units(text)).to_base_units().magnitude)
    except _errors():
        raise _unreadable(f"{text!r} has no plain scale to SI units (an offset unit such as degC?)") from None
    if not math.isfinite(scale) or scale <= 0:
        raise _unreadable(f"{text!r} has no plain scale to SI units")
    return _Measure(dimension, scale)


def _errors() -> tuple[type[BaseException], ...]:
    """What pint raises on text it cannot read (its parser asserts on a dangling operator)."""
    import pint

    return (pint.PintError, ValueError, TypeError, AttributeError, AssertionError, SyntaxError,
            tokenize.TokenError, IndexError, KeyError, ZeroDivisionError, OverflowError)


def unit_dimension(text: str) -> Dimension:
    """The dimension of a unit as pint reads it (``"mH"`` -> [inductance]).

    Raises
    ------
    InputError
        With the problem in words, when pint cannot read the text as a unit.
    """
    if len(text) > MAX_UNIT_LENGTH:
        raise _unreadable(f"a unit of {len(text)} characters is too long (at most {MAX_UNIT_LENGTH})")
    if not _CHARACTERS.match(text):
        raise _unreadable(f"{text!r} is not a unit (letters, digits, * / ^ and parentheses only)")
    # pint computes powers as written: keep exponents small integer literals (no m^9^9^9)
    for match in re.finditer(r"\^|\*\*", text):
        if not _EXPONENT.match(text, match.start()):
            raise _unreadable(f"{text!r} has an exponent that is not a small integer")
    registry = _registry()
    try:
        return registry.parse_units(text).dimensionality
    except _errors() as error:
        import pint

        if isinstance(error, pint.UndefinedUnitError):
            names = error.unit_names
            name = names if isinstance(names, str) else next(iter(names), "")
            where = f" ({name!r} is not defined)" if name and name != text else ""
            raise _unreadable(f"{text!r} is not a unit pint knows{where}") from None
        if "scaling factor" in str(error):
            raise _unreadable(f"{text!r} holds a number (the value belongs in nominal)") from None
        raise _unreadable(f"{text!r} is not a unit pint can read") from None


def _unreadable(problem: str) -> InputError:
    return InputError("unit", problem, _UNIT_EXAMPLES)


def describe(dimension: Dimension) -> str:
    """A dimension in words: ``[resistance^2]``, ``[1/time]``, ``[inductance*time]``, ``dimensionless``.

    A derived dimension pint names (resistance, voltage, ...) is shown by that name, possibly
    times a power of time; any other by its base dimensions. A unit not in SI scale says its
    scale: ``[time] in units of 0.001 x SI`` (ms).
    """
    if isinstance(dimension, _Measure):
        words = describe(dimension.dim)
        if math.isclose(dimension.scale, 1.0, rel_tol=1e-9):
            return words
        return f"{words} in units of {dimension.scale:.6g} x SI"
    if not dimension:
        return "dimensionless"
    if len(dimension) > 2:  # [time], [length^2*mass]: best as they are
        registry = _registry()
        time = registry.get_dimensionality("[time]")
        for k in (0, -1, 1, -2, 2):  # the lowest power of time first
            for pint_name, shown in _NAMED:
                named = registry.get_dimensionality(f"[{pint_name}]")
                for power in (1, -1, 2, -2):
                    if dimension == named**power * time**k:
                        return "[" + _product(time**k, {shown: power}) + "]"
    return "[" + _product(dimension) + "]"


def _product(rest: Dimension, named_powers: dict[str, int] | None = None) -> str:
    powers = {**(named_powers or {}), **{n.strip("[]"): e for n, e in rest.items()}}
    up = [_power(n, e) for n, e in powers.items() if e > 0]
    down = [_power(n, -e) for n, e in powers.items() if e < 0]
    return "*".join(up or ["1"]) + "".join("/" + d for d in down)


def _power(name: str, exponent: float) -> str:
    return name if exponent == 1 else f"{name}^{exponent:g}"


class _Mismatch(Exception):
    """Two terms of one sum of different dimensions (turned into a CaseError by the caller);
    ``position`` is the later term's place in the sum."""

    def __init__(self, problem: str, position: int):
        super().__init__(problem)
        self.problem = problem
        self.position = position


def _clash(first: str, first_dimension: Dimension, second: str, second_dimension: Dimension) -> str:
    if first_dimension.dim == second_dimension.dim:  # one dimension, two scales
        return (f"{_short(first)} is {describe(first_dimension)}, {_short(second)} is "
                f"{describe(second_dimension)}: values are used as written, so the terms of one sum "
                "need one scale (write values in SI units with suffixes: nominal = \"0.5m\", unit = \"s\")")
    one = "is dimensionless" if not first_dimension else f"has dimension {describe(first_dimension)}"
    other = "is dimensionless" if not second_dimension else f"has {describe(second_dimension)}"
    return f"{_short(first)} {one}, {_short(second)} {other}"


def _short(text: str) -> str:
    return text if len(text) <= 60 else text[:57] + "..."


def _dimension(node: Node, text: str, known: dict[str, Dimension]) -> Dimension:
    """The dimension of a node (None when unknown); raises _Mismatch at the first sum whose
    known terms differ."""
    if node.kind == "name":
        return known.get(node.name)
    if node.kind == "number":
        return None
    parts = [_dimension(child, text, known) for child in node.children]
    if node.kind == "power":
        return None if parts[0] is None else parts[0] ** node.exponent
    if node.kind == "product":
        # a factor 1 is the unit itself: 1/(L*s + R) is an admittance
        parts = [_dimensionless() if child.kind == "number" and _is_one(text[child.start:child.end]) else part
                 for child, part in zip(node.children, parts, strict=True)]
        if any(part is None for part in parts):
            return None
        result = _dimensionless()
        for part, inverted in zip(parts, node.inverted, strict=True):
            result = result / part if inverted else result * part
        return result
    return _common(zip(parts, (text[c.start:c.end] for c in node.children), strict=True))


def _is_one(number: str) -> bool:
    return Fraction(number) == 1


def _common(terms) -> Dimension:
    """The one dimension of the known terms ``(dimension, text)`` of a sum, None if none."""
    reference: tuple[Dimension, str] | None = None
    for position, (dimension, term) in enumerate(terms):
        if dimension is None:
            continue
        if reference is None:
            reference = (dimension, term)
        elif dimension != reference[0]:
            raise _Mismatch(_clash(reference[1], reference[0], term, dimension), position)
    return None if reference is None else reference[0]


def check_units(parameters: Sequence[Any], variable: str, form: str,
                formulas: Sequence[tuple[str, str, int | None, ParsedFormula]],
                fail: Fail) -> tuple[str, ...]:
    """Check every sum of a case's formulas for one dimension.

    Parameters
    ----------
    parameters
        The case's parameters (``name`` and ``unit``; an empty unit is unchecked).
    variable
        ``"z"`` (a pure number) or a continuous-time variable (1/time).
    form
        ``"expression"``, ``"coefficients"``, ``"loop"``, ``"mechanical"`` or ``"state_space"``.
    formulas
        ``(section, key, index, parsed)`` of each formula, parsed with ``keep_tree``; a loop's
        plant first, then its controller; a coefficient list highest power first; every entry
        of every matrix, index ``(row, column)``.
    fail
        Builds the error of a field: ``fail(section, key, problem, expected, index=...)``.

    Returns
    -------
    tuple of str
        The names of the parameters without a unit (not checked).

    Raises
    ------
    CaseError
        Through ``fail``: a unit pint cannot read, or two terms of one sum of different
        dimensions.
    """
    known: dict[str, Dimension] = {}
    for parameter in parameters:
        if parameter.unit.strip():
            try:
                known[parameter.name] = _measure(parameter.unit.strip())
            except InputError as error:
                raise fail(f"parameters.{parameter.name}", "unit", error.problem, error.expected) from None
    known[variable] = _dimensionless() if variable == "z" else _per_second()
    results = []
    for section, key, index, parsed in formulas:
        if parsed.tree is None:  # parsed without keep_tree: nothing to walk
            raise ValueError(f"{section}.{key} was parsed without its tree (keep_tree=True)")
        try:
            results.append(_dimension(parsed.tree, parsed.text, known))
        except _Mismatch as mismatch:
            raise fail(section, key, mismatch.problem, EXPECTED_SUM, index=index) from None
    if form == "coefficients":
        _check_coefficients(formulas, results, known[variable], variable, fail)
    elif form == "loop":
        _check_loop_gain(results[0], results[1], fail)
    elif form in ("mechanical", "state_space") and formulas:
        entries: dict[str, dict] = {}
        for (_, key, index, parsed), dimension in zip(formulas, results, strict=True):
            entries.setdefault(key, {})[index] = (dimension, parsed)
        check = _check_mechanical if form == "mechanical" else _check_state_space
        check(formulas[0][0], entries, known[variable], variable, fail)
    return tuple(p.name for p in parameters if p.name not in known)


def _check_coefficients(formulas, results, frequency: Dimension, variable: str, fail: Fail) -> None:
    """a_k * s^k: one dimension over the whole list (the coefficients are a sum's terms)."""
    n = len(formulas) - 1
    terms = []
    for (_, _, index, parsed), dimension in zip(formulas, results, strict=True):
        k = n - index
        terms.append((_times(dimension, frequency**k), _term(parsed, variable, k)))
    try:
        _common(terms)
    except _Mismatch as mismatch:
        section, key, index, _ = formulas[mismatch.position]
        raise fail(section, key, mismatch.problem, EXPECTED_SUM, index=index) from None


def _term(parsed: ParsedFormula, variable: str, k: int) -> str:
    """The text of ``parsed * variable^k`` (a sum in parentheses)."""
    term = f"({parsed.text})" if parsed.tree is not None and parsed.tree.kind == "sum" else parsed.text
    return term + ("" if k == 0 else f"*{variable}" if k == 1 else f"*{variable}^{k}")


def _times(dimension: Dimension, other: Dimension) -> Dimension:
    return None if dimension is None or other is None else dimension * other


def _check_loop_gain(plant: Dimension, controller: Dimension, fail: Fail) -> None:
    """1 + P*C adds the loop gain to 1: P*C must be dimensionless."""
    if plant is None or controller is None or not plant * controller:
        return
    raise fail("polynomial.loop", None,
               f"the loop gain P*C has dimension {describe(plant * controller)} (plant "
               f"{describe(plant)}, controller {describe(controller)}), but 1 + P*C adds it to 1",
               "a dimensionless loop gain (e.g. a plant in V/A with a controller in A/V)"
               if (plant * controller).dim else "a loop gain in SI scale (values are used as written: a gain "
               "of 2 mV/V is written 2m with unit V/V)")


_MECHANICAL = ("M*s^2, C*s and K of one dimension at each entry (e.g. kg*m^2, N*m*s/rad and N*m/rad "
               "for a rotation; kg, N*s/m and N/m for a translation)")


def _at(index: tuple[int, int]) -> str:
    return f"[{index[0]}][{index[1]}]"


def _check_mechanical(section: str, entries: dict, frequency: Dimension, variable: str, fail: Fail) -> None:
    """det(M s^2 + C s + K): at each place (i, j), M_ij s^2 + C_ij s + K_ij is one sum."""
    pencil, named = {}, {}
    for index in entries["M"]:
        terms, keys = [], []
        for key, k in (("M", 2), ("C", 1), ("K", 0)):
            if key in entries:
                dimension, parsed = entries[key][index]
                text = f"{_term(parsed, variable, k)} ({key}{_at(index)})"
                terms.append((_times(dimension, frequency**k), text))
                keys.append(key)
        try:
            pencil[index] = _common(terms)
        except _Mismatch as mismatch:
            raise fail(section, keys[mismatch.position], mismatch.problem, _MECHANICAL, index=index) from None
        # a pair's error names the first matrix whose entry there has a known dimension
        known = [key for (dimension, _), key in zip(terms, keys, strict=True) if dimension is not None]
        named[index] = (known or ["K"])[0]
    _check_pairs(section, pencil, named, f"M*{variable}^2 + C*{variable} + K", fail,
                 "entries whose dimensions factor by row and column (row i a force or torque, "
                 "column j per unit of coordinate j)")


def _feedback(section: str, entries: dict, n: int, variable: str, fail: Fail) -> dict:
    """The dimension of each entry (i, j) of B K, a sum of B_ik K_kj (None where unknown)."""
    b, k_matrix = entries["B"], entries["K"]
    inputs = 1 + max(k for _, k in b)
    out = {}
    for i in range(n):
        for j in range(n):
            terms = [(_times(b[i, k][0], k_matrix[k, j][0]),
                      f"{_term(b[i, k][1], variable, 0)}*{_term(k_matrix[k, j][1], variable, 0)} "
                      f"(B[{i}][{k}]*K[{k}][{j}])") for k in range(inputs)]
            try:
                out[i, j] = _common(terms)
            except _Mismatch as mismatch:
                raise fail(section, "K", mismatch.problem, EXPECTED_SUM,
                           index=(mismatch.position, j)) from None
    return out


def _check_state_space(section: str, entries: dict, frequency: Dimension, variable: str, fail: Fail) -> None:
    """det(sI - A) or det(sI - (A - B K)): B K adds to A entry by entry, each diagonal entry
    adds to s, and the state units cancel in every product of the determinant."""
    a = entries["A"]
    n = 1 + max(i for i, _ in a)
    feedback = _feedback(section, entries, n, variable, fail) if "K" in entries and "B" in entries else {}
    matrix = f"{variable}*I - (A - B*K)" if feedback else f"{variable}*I - A"
    diagonal = (f"diagonal entries in 1/s (rates), since det({matrix}) subtracts each from {variable}"
                if frequency else f"dimensionless diagonal entries, since det({matrix}) subtracts each "
                f"from {variable}")
    pencil = {}
    for (i, j), (dimension, parsed) in a.items():
        own = (dimension, f"{parsed.text} (A{_at((i, j))})")
        fed = (feedback.get((i, j)), f"(B*K){_at((i, j))}")
        try:
            pencil[i, j] = _common([own, fed])
        except _Mismatch as mismatch:
            raise fail(section, "A", mismatch.problem, f"(B*K){_at((i, j))} of the dimension of "
                       f"A{_at((i, j))}, since A - B*K subtracts them (units of B and K)",
                       index=(i, j)) from None
        if i == j:  # the entry of s*I - A there is a sum with s
            try:
                _common([(frequency, variable), (pencil[i, j], (own if dimension is not None else fed)[1])])
            except _Mismatch as mismatch:
                raise fail(section, "A", mismatch.problem, diagonal, index=(i, j)) from None
            pencil[i, j] = frequency
    per_second = " per second" if frequency else ""
    _check_pairs(section, pencil, dict.fromkeys(a, "A"), matrix, fail,
                 f"A[i][j] in (unit of state i)/(unit of state j){per_second}, so that A[i][j]*A[j][i] has "
                 f"dimension {describe(frequency**2)}")


def _check_pairs(section: str, pencil: dict, named: dict, matrix: str, fail: Fail, expected: str) -> None:
    """The determinant of ``pencil`` (dimension per entry, None where unknown) holds the
    product of the diagonal and, beside it, the same product with entries (i, i), (j, j)
    swapped for (i, j), (j, i): two terms of one sum, so P_ij P_ji ~ P_ii P_jj."""
    n = 1 + max(i for i, _ in pencil)
    for i in range(n):
        for j in range(i + 1, n):
            across = _times(pencil[i, j], pencil[j, i])
            along = _times(pencil[i, i], pencil[j, j])
            if across is not None and along is not None and across != along:
                raise fail(section, named[j, i],
                           f"in det({matrix}) the entries {_at((i, j))} and {_at((j, i))} multiply to "
                           f"{describe(across)}, the entries {_at((i, i))} and {_at((j, j))} to "
                           f"{describe(along)}, and both products are terms of one sum", expected,
                           index=(j, i))
