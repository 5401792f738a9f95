"""The matrix forms of a case file: ``[polynomial.state_space]`` and ``[polynomial.mechanical]``.

Reads the matrices as written (rows of formulas), checks their shapes and entries, and hands
them to :mod:`robust.model.forms` for the determinant: det(sI - A), det(sI - (A - B K)) with
state feedback u = -K x, or det(M s^2 + C s + K). Every problem is one
:class:`~robust.errors.CaseError` naming the matrix, and the entry when there is one.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Protocol

from ..errors import CaseError, InputError, did_you_mean
from ..exact import sparse
from .expr import ParsedFormula
from .forms import Quotient, mechanical_polynomial, state_space_polynomial

__all__ = ["FORMS", "MAX_SIZE", "matrix_polynomial"]

#: Largest matrix side accepted (a dense 12 x 12 determinant is 12 * 2^11 products).
MAX_SIZE = 12
#: The keys of each matrix form, in the order they are documented.
KEYS = {"state_space": ("A", "B", "C", "K"), "mechanical": ("M", "C", "K")}
FORMS = tuple(KEYS)
_EXAMPLE = '[["0", "1"], ["-k/m", "-c/m"]]'

#: Reads one entry: (matrix key, the entry as written, (row, column)) -> the parsed formula.
ReadEntry = Callable[[str, object, tuple[int, int]], ParsedFormula]


class _Reader(Protocol):
    path: str

    def line_of(self, section: str, key: str | None = None) -> int | None: ...

    def error(self, section: str, key: str | None, problem: str, expected: str = "",
              value: object = None) -> CaseError: ...


def _shape(reader: _Reader, section: str, key: str, value: object) -> tuple[int, int]:
    """(rows, columns) of a matrix written as a list of equally long rows of entries."""
    if not isinstance(value, list) or not value or not all(isinstance(row, list) for row in value):
        raise reader.error(section, key, "a matrix must be a list of rows, each a list of entries",
                           f"e.g. {key} = {_EXAMPLE}", value)
    lengths = [len(row) for row in value]
    for i, length in enumerate(lengths):
        if length != lengths[0] or not length:
            raise reader.error(section, key, f"ragged rows: row {i} has {_entries_text(length)}, row 0 has "
                               f"{_entries_text(lengths[0])}", "rows of equal, non-zero length")
    if len(value) > MAX_SIZE or lengths[0] > MAX_SIZE:
        raise reader.error(section, key, f"the matrix is {len(value)} x {lengths[0]}, larger than "
                           f"{MAX_SIZE} x {MAX_SIZE}", f"at most {MAX_SIZE} rows and {MAX_SIZE} columns")
    for i, row in enumerate(value):
        for j, entry in enumerate(row):
            if isinstance(entry, bool) or not isinstance(entry, str | int | float):
                raise CaseError(reader.path, f"{section}.{key}[{i}][{j}]",
                                "a matrix entry must be a formula (text) or a number",
                                '"-k/m", "0" or 2.5', entry, reader.line_of(section, key))
    return len(value), lengths[0]


def _entries_text(count: int) -> str:
    return f"{count} entr{'y' if count == 1 else 'ies'}"


def _require(reader: _Reader, section: str, key: str, got: tuple[int, int], want: tuple[int, int],
             why: str) -> None:
    if got != want:
        raise reader.error(section, key, f"{key} is {got[0]} x {got[1]}: {why}",
                           f"{want[0]} x {want[1]} (rows x columns)")


def _entries(reader: _Reader, section: str, key: str, rows: list, variable: str,
             read: ReadEntry) -> list[list[ParsedFormula]]:
    """The matrix's parsed entries; none may contain the variable."""
    out = []
    for i, row in enumerate(rows):
        parsed = []
        for j, entry in enumerate(row):
            formula = read(key, entry, (i, j))
            if any(sparse.degree_in(dict(part), 0) for part in (formula.expanded_numerator,
                                                                formula.expanded_denominator)):
                raise CaseError(reader.path, f"{section}.{key}[{i}][{j}]",
                                f"a matrix entry depends on {variable}", "a formula in the parameters "
                                f"only (the form brings in {variable} itself)", str(entry),
                                reader.line_of(section, key))
            parsed.append(formula)
        out.append(parsed)
    return out


def _written(key: str, rows: list) -> list[tuple[str, str]]:
    """One (field, text) per row, as written: ("A[1]", "[-k/m, -c/m]")."""
    return [(f"{key}[{i}]", "[" + ", ".join(str(e) for e in row) + "]") for i, row in enumerate(rows)]


def matrix_polynomial(reader: _Reader, form: str, table: object, variable: str, work: sparse.Work,
                      read: ReadEntry) -> tuple[Quotient, list[tuple[str, str]]]:
    """The characteristic polynomial of ``[polynomial.<form>]`` and the formulas as written.

    Parameters
    ----------
    reader
        Makes the one-line errors (file, line, field).
    form
        ``"state_space"`` or ``"mechanical"``.
    table
        The section as TOML gave it.
    read
        Parses one entry (with its field name for errors), paid from ``work``.

    Raises
    ------
    CaseError
        For a malformed section, matrix or entry, or a determinant over the work limit.
    """
    section = f"polynomial.{form}"
    keys = KEYS[form]
    if not isinstance(table, dict):
        raise reader.error("polynomial", form, "must be a table", f"[{section}] with {', '.join(keys)}")
    for key in table:
        if key not in keys:
            raise reader.error(section, key, "unknown key" + did_you_mean(key, keys), ", ".join(keys))
    required = ("A",) if form == "state_space" else ("M", "K")
    for key in required:
        if key not in table:
            raise reader.error(section, None, f"the matrix {key} is missing", f"{key} = {_EXAMPLE} (square)")
    shapes = {key: _shape(reader, section, key, table[key]) for key in keys if key in table}
    square = shapes[required[0]]
    n = square[0]
    if square[1] != n:
        raise reader.error(section, required[0], f"{required[0]} is {n} x {square[1]}, not square",
                           "as many columns as rows")
    if form == "state_space":
        if "K" in table and "B" not in table:
            raise reader.error(section, "K", "state feedback K needs the input matrix B",
                               "B (states x inputs) with K (inputs x states), or no K")
        m = shapes["B"][1] if "B" in table else 0
        if "B" in table and shapes["B"][0] != n:
            raise reader.error(section, "B", f"B is {shapes['B'][0]} x {m}: it needs one row per state of A "
                               f"({n})", f'{n} rows of one entry per input (one input: a column such as '
                               '[["b1"], ["b2"]])')
        if "C" in table:
            p = shapes["C"][0]
            _require(reader, section, "C", shapes["C"], (p, n), f"it needs one column per state of A ({n})")
        if "K" in table:
            _require(reader, section, "K", shapes["K"], (m, n),
                     f"it needs one row per input of B ({m}) and one column per state of A ({n})")
        title = "det(" + variable + "*I - (A - B*K))" if "K" in table else f"det({variable}*I - A)"
    else:
        if variable != "s":
            raise reader.error("", "variable", "mass, damping and stiffness matrices describe continuous "
                               "time", 'variable = "s", or [polynomial.state_space] of the sampled model')
        for key in ("C", "K"):
            if key in table:
                _require(reader, section, key, shapes[key], (n, n), f"it needs the {n} x {n} shape of M")
        title = f"det(M*{variable}^2 + C*{variable} + K)" if "C" in table else f"det(M*{variable}^2 + K)"
    matrices = {key: _entries(reader, section, key, table[key], variable, read)
                for key in keys if key in table}
    try:
        if form == "state_space":
            quotient = state_space_polynomial(matrices["A"], matrices.get("B"), matrices.get("K"), work)
        else:
            quotient = mechanical_polynomial(matrices["M"], matrices.get("C"), matrices["K"], work)
    except InputError as error:
        raise reader.error(section, None, f"the determinant {title}: {error.problem}",
                           "a smaller or sparser matrix, or simpler entries") from None
    formulas = [("polynomial", title)]
    for key in keys:
        if key in table:
            formulas += _written(key, table[key])
    return quotient, formulas
