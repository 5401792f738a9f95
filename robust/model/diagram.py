"""The block-diagram form of a case file: ``[polynomial.diagram]``.

A diagram is a list of equations, one per signal: ``"u = (Kp + Ki/s)*e"``,
``"e = r - ym"``. The right-hand side is a sum of terms, each a transfer-function formula
(numbers, parameters, the variable) times one signal; a signal that no equation defines is an
external input. Any number of loops, cascades, feedforward paths and summing points.

Each equation is read as one exact quotient (:func:`robust.model.expr.parse_formula`, with
the signals as extra names), ``x_i = sum_j n_ij x_j / D_i``, whose denominator ``D_i`` holds
the denominators of its blocks as written (equal ones once, monomials by their least common
multiple, others multiplied: every pole of every block stays). The characteristic polynomial
is det(D_i x_i - sum_j n_ij x_j) = D_1 ... D_n det(I - G)
(:func:`~robust.model.forms.interconnection_polynomial`):
the determinant of the interconnection times the blocks' denominators, with no cancellation
between them, so that one loop written as a diagram gives exactly the polynomial of
``[polynomial.loop]``. Every problem is one :class:`~robust.errors.CaseError` naming the
equation and the signal.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Protocol

from ..errors import CaseError, FormulaError, InputError, did_you_mean
from ..exact import sparse
from .expr import ParsedFormula, names_in
from .forms import Quotient, interconnection_polynomial, written_quotient

__all__ = ["MAX_EQUATIONS", "Diagram", "diagram_polynomial"]

#: Most equations (signals defined) in one diagram.
MAX_EQUATIONS = 40
#: Most feedback loops listed by :meth:`Diagram.loops`.
MAX_LOOPS = 50
_KEYS = ("equations", "inputs")
_SECTION = "polynomial.diagram"
_EXAMPLE = '["e = r - y", "u = (Kp + Ki/s)*e", "y = K/(T*s + 1)*u"]'
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")

#: Parses one right-hand side: (equation index, text, names it may use) -> the formula.
ReadEquation = Callable[[int, str, tuple[str, ...]], ParsedFormula]


class _Reader(Protocol):
    path: str
    lines: list[str]
    notes: list[str]

    def line_of(self, section: str, key: str | None = None) -> int | None: ...

    def error(self, section: str, key: str | None, problem: str, expected: str = "",
              value: object = None) -> CaseError: ...


@dataclass(frozen=True, slots=True)
class Diagram:
    """A block diagram as read: what ``robust trace`` and the report show of it.

    Attributes
    ----------
    equations
        The equations as written.
    signals
        The signals the equations define, in their order (the determinant's rows).
    inputs
        The external inputs: signals no equation defines.
    edges
        ``(i, j, numerator, denominator)``: signal j enters equation i with the gain
        numerator / denominator (exact sparse polynomials over the variable and the
        parameters, as in :mod:`robust.exact.sparse`, held as sorted item tuples so that a
        diagram, like the case that holds it, is hashable).
    slots
        The slots of those polynomials: the variable, then the parameter names.
    """

    equations: tuple[str, ...]
    signals: tuple[str, ...]
    inputs: tuple[str, ...]
    edges: tuple[tuple[int, int, tuple, tuple], ...]
    slots: tuple[str, ...]

    def loops(self) -> tuple[tuple[int, ...], ...]:
        """The feedback loops: elementary cycles of signals, each as the indices of its
        signals in the order the signal flows (at most :data:`MAX_LOOPS`, shortest first)."""
        import itertools

        import networkx as nx

        graph = nx.DiGraph()
        graph.add_nodes_from(range(len(self.signals)))
        graph.add_edges_from((j, i) for i, j, _, _ in self.edges if j < len(self.signals))
        cycles = itertools.islice(nx.simple_cycles(graph), 10 * MAX_LOOPS)
        found = sorted((_rotated(c) for c in cycles), key=lambda c: (len(c), c))
        return tuple(found[:MAX_LOOPS])

    def loop_gain(self, loop: Sequence[int]) -> str:
        """The loop gain (product of the gains around ``loop``) as text."""
        from .expr import sympy_of

        gains = {(i, j): (num, den) for i, j, num, den in self.edges}
        product = 1
        for k, j in enumerate(loop):
            num, den = gains[(loop[(k + 1) % len(loop)], j)]
            product *= sympy_of(dict(num), self.slots) / sympy_of(dict(den), self.slots)
        import sympy

        return str(sympy.factor(product)).replace("**", "^")

    def as_dict(self) -> dict[str, object]:
        """JSON: the equations, signals, inputs and loops (signal names, gain text)."""
        return {"equations": list(self.equations), "signals": list(self.signals),
                "inputs": list(self.inputs),
                "loops": [{"signals": [self.signals[i] for i in loop], "gain": self.loop_gain(loop)}
                          for loop in self.loops()]}


def _rotated(cycle: list[int]) -> tuple[int, ...]:
    """A cycle started at its smallest index (one way of writing each loop)."""
    k = cycle.index(min(cycle))
    return tuple(cycle[k:] + cycle[:k])


def _line(reader: _Reader, text: str) -> int | None:
    """The line of an equation, by its text (else the line of ``equations``)."""
    quoted = (f'"{text}"', f"'{text}'")
    for i, line in enumerate(reader.lines):
        if any(q in line for q in quoted):
            return i + 1
    return reader.line_of(_SECTION, "equations")


def diagram_polynomial(reader: _Reader, table: object, names: tuple[str, ...], variable: str,
                       work: sparse.Work, read: ReadEquation
                       ) -> tuple[Quotient, list[tuple[str, str]], Diagram, list[ParsedFormula]]:
    """The characteristic polynomial of ``[polynomial.diagram]``.

    Parameters
    ----------
    reader
        Makes the one-line errors (file, line, field) and keeps the notes.
    table
        The section as TOML gave it.
    names
        The parameter names.
    read
        Parses one right-hand side with the names it may use (parameters, then signals),
        paid from ``work``.

    Returns
    -------
    tuple
        The quotient, the formulas as written (for the record), the :class:`Diagram` and the
        parsed right-hand sides (for the dimension check).

    Raises
    ------
    CaseError
        For a malformed section or equation, a signal defined twice, a term that is not a
        block times a signal, a likely misspelt name, or a singular interconnection.
    """
    equations, declared = _section(reader, table)

    def fail(i: int, problem: str, expected: str, value: object = None) -> CaseError:
        return CaseError(reader.path, f"{_SECTION}.equations[{i}]", problem, expected, value,
                         _line(reader, equations[i]))

    defined: list[str] = []
    sides: list[str] = []
    for i, equation in enumerate(equations):
        left, sep, right = equation.partition("=")
        name = left.strip()
        if not sep or "=" in right:
            raise fail(i, "an equation needs exactly one '='", "signal = block*signal + ...", equation)
        if not _NAME.match(name):
            raise fail(i, f"the left side {name!r} is not one signal name",
                       "one name on the left, e.g. u = Kp*e", equation)
        if name in names or name == variable:
            what = "a parameter" if name in names else "the variable"
            raise fail(i, f"{name} is {what}, not a signal", "another name for the signal", equation)
        if name in defined:
            raise fail(i, f"the signal {name} is defined twice (also by equation {defined.index(name)})",
                       "one equation per signal: add the terms into one sum", equation)
        defined.append(name)
        sides.append(right)
    inputs = _inputs(reader, equations, sides, defined, declared, names, variable, fail)
    signals = (*defined, *inputs)
    first = 1 + len(names)  # the slot of the first signal
    rows, edges, parsed_sides = [], [], []
    for i, right in enumerate(sides):
        parsed = read(i, right, (*names, *signals))
        parsed_sides.append(parsed)
        num, den = written_quotient(parsed)
        gains = _gains(num, den, first, signals, names, len(defined),
                       lambda p, e, i=i: fail(i, p, e, equations[i]))
        rows.append(([gains.get(j, {}) for j in range(len(defined))], den))
        edges += [(i, j, tuple(sorted(gain.items())), tuple(sorted(den.items())))
                  for j, gain in sorted(gains.items())]
    try:
        quotient = interconnection_polynomial(rows, work)
    except InputError as error:
        raise reader.error(_SECTION, "equations", f"the determinant of the interconnection: {error.problem}",
                           "fewer or simpler equations") from None
    diagram = Diagram(tuple(equations), tuple(defined), tuple(inputs), tuple(edges),
                      (variable, *names))
    if sparse.is_zero(quotient[0]):
        looped = sorted({defined[k] for loop in diagram.loops() for k in loop})
        through = f"through {', '.join(looped)} " if looped else ""
        raise reader.error(_SECTION, "equations", "the interconnection is singular (its determinant is "
                           f"identically zero): an algebraic loop {through}with a loop gain of exactly 1 "
                           "leaves those signals undetermined",
                           "a loop with dynamics or another gain (check the signs at the summing points)")
    if inputs and not declared:
        reader.notes.append(f"{reader.path}: {_SECTION}: signals no equation defines, read as external "
                            f"inputs: {', '.join(inputs)} (list them in inputs = [...] to make this "
                            "explicit)")
    formulas = [("polynomial", "det(I - G) x the denominator of every equation, from the equations"),
                *(("", text) for text in equations)]
    return quotient, formulas, diagram, parsed_sides


def _section(reader: _Reader, table: object) -> tuple[list[str], list[str] | None]:
    """The equations and the declared inputs (None when not declared), checked for form."""
    if not isinstance(table, dict):
        raise reader.error("polynomial", "diagram", "must be a table",
                           f"[{_SECTION}] with equations = {_EXAMPLE}")
    for key in table:
        if key not in _KEYS:
            raise reader.error(_SECTION, key, "unknown key" + did_you_mean(key, _KEYS), ", ".join(_KEYS))
    equations = table.get("equations")
    if (not isinstance(equations, list) or not equations
            or not all(isinstance(e, str) for e in equations)):
        raise reader.error(_SECTION, "equations", "must be a non-empty list of equations (text)",
                           f"equations = {_EXAMPLE}", equations)
    if len(equations) > MAX_EQUATIONS:
        raise reader.error(_SECTION, "equations", f"{len(equations)} equations, more than {MAX_EQUATIONS}",
                           f"at most {MAX_EQUATIONS} equations")
    declared = table.get("inputs")
    if declared is not None and (not isinstance(declared, list)
                                 or not all(isinstance(n, str) and _NAME.match(n) for n in declared)):
        raise reader.error(_SECTION, "inputs", "must be a list of signal names", '["r", "d"]', declared)
    return equations, declared


def _inputs(reader: _Reader, equations: list[str], sides: list[str], defined: list[str],
            declared: list[str] | None, names: tuple[str, ...], variable: str, fail) -> list[str]:
    """The external inputs: names on the right that are neither parameters, the variable nor
    defined signals. Undeclared, a name close to a defined signal is taken for a typo (one
    close to a parameter is caught when it multiplies a signal, by :func:`_gains`)."""
    known = (*names, *defined)
    for name in declared or ():
        if name in known or name == variable:
            what = "a parameter" if name in names else "the variable" if name == variable else \
                "defined by an equation"
            raise reader.error(_SECTION, "inputs", f"{name} is {what}, not an external input",
                               "only signals no equation defines", name)
    inputs: list[str] = []
    for i, right in enumerate(sides):
        try:
            written = names_in(right)
        except FormulaError as error:
            raise fail(i, f"{error.problem} at column {error.position} of the right side",
                       error.expected, equations[i]) from None
        for name in written:
            if name in known or name == variable or name in inputs:
                continue
            if declared is not None and name not in declared:
                raise fail(i, f"{name} is not a parameter, a signal an equation defines or a declared input"
                           + did_you_mean(name, (*known, *declared)),
                           f"a known name, or {name} listed in inputs = [...]", equations[i])
            hint = did_you_mean(name, [d for d in defined if _close(name, d)])
            if declared is None and hint:
                raise fail(i, f"{name} is not a parameter or a signal any equation defines{hint}",
                           f"the intended name, or inputs = [\"{name}\"] if it is an external input",
                           equations[i])
            inputs.append(name)
    return inputs


def _close(a: str, b: str) -> bool:
    """Likely the same name mistyped: equal but for case, or (both of three characters or
    more) one character inserted, dropped or changed. Short names (r, e, u) are left alone."""
    if a.lower() == b.lower():
        return True
    if min(len(a), len(b)) < 3 or abs(len(a) - len(b)) > 1:
        return False
    if len(a) == len(b):
        return sum(x != y for x, y in zip(a, b, strict=True)) == 1
    short, long = sorted((a, b), key=len)
    return any(long[:k] + long[k + 1:] == short for k in range(len(long)))


def _gains(num: dict, den: dict, first: int, signals: Sequence[str], names: Sequence[str], defined: int,
           fail) -> dict[int, dict]:
    """{signal index: its gain's numerator} of one equation: every term of the numerator holds
    exactly one signal to the first power; the denominator holds none. ``signals`` are the
    defined ones (the first ``defined``), then the inputs; a product with an input close to a
    parameter's name names that parameter."""
    shift = [sparse.BITS * (first + k) for k in range(len(signals))]
    mask = (1 << sparse.BITS) - 1
    for m in den:
        held = [signals[k] for k, b in enumerate(shift) if (m >> b) & mask]
        if held:
            raise fail(f"the right side divides by the signal {held[0]}",
                       "signals only as factors of the terms (a block times a signal)")
    gains: dict[int, dict] = {}
    for m, c in num.items():
        powers = [((m >> b) & mask, k) for k, b in enumerate(shift) if (m >> b) & mask]
        if not powers:
            raise fail("a term holds no signal (a constant or an offset)",
                       "every term a block times a signal; leave offsets out (they do not move "
                       "the roots) or name them as inputs, e.g. u = Kp*e + u0")
        if len(powers) > 1 or powers[0][0] > 1:
            held = " and ".join(signals[k] for _, k in powers) if len(powers) > 1 else \
                f"{signals[powers[0][1]]}^{powers[0][0]}"
            hints = [f"; {signals[k]} is not a parameter{did_you_mean(signals[k], names)}"
                     for _, k in powers if k >= defined and did_you_mean(signals[k], names)]
            raise fail(f"a term multiplies signals ({held}): the diagram must be linear" + "".join(hints[:1]),
                       "the parameter's name as declared" if hints else "each term a block times one signal")
        k = powers[0][1]
        gains.setdefault(k, {})[m - (1 << shift[k])] = c
    return gains
