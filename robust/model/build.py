"""Cases built from Python values (a notebook, a script) instead of a case file.

:func:`make_case` turns its arguments into the data a TOML reader would give for the same
case file and hands it to :func:`robust.model.case.case_from_data`, the file reader's own
checks and errors: one reader, so a case written either way is the same case. Errors name
the file ``<python>`` and the field as in a case file (``parameters.Kp.tolerance``).

The checksum (``Case.sha256``) of a case built here is the SHA-256 of the UTF-8 bytes of
:func:`canonical_text`: the case's data as JSON with sorted keys, no spaces, non-ASCII
characters kept, parameters as a list of ``[name, table]`` pairs in the order given (their
order is the family's), and every ``fractions.Fraction`` written ``"p/q"`` (an integer as a
number). Equal content gives an equal checksum, whatever the order of keyword arguments or
of the keys inside a parameter's table.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from collections.abc import Mapping, Sequence
from fractions import Fraction

from .case import Case, case_from_data

__all__ = ["PYTHON_PATH", "canonical_text", "make_case"]

#: The "file" errors and reports name for a case built from Python.
PYTHON_PATH = "<python>"


def _plain(value: object, formula: bool = False) -> object:
    """``value`` with every Fraction written as the reader reads it (lists and tables too);
    other values are left for the reader to accept or refuse."""
    if isinstance(value, Fraction):
        if value.denominator == 1:
            return str(value.numerator) if formula else value.numerator
        return f"({value})" if formula else str(value)
    if isinstance(value, Mapping):
        return {key: _plain(item, formula) for key, item in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(item, formula) for item in value]
    return value


def _case_data(title: object, parameters: object, expression: object, coefficients: object,
               plant: object, controller: object, variable: object, summary: object,
               sample_time: object, requirements: object, matrices: Mapping[str, object]) -> dict:
    """The data of the equivalent case file (top-level keys only where given)."""
    data: dict = {"title": title, "variable": variable}
    if summary:
        data["summary"] = summary
    if sample_time is not None:
        data["sample_time"] = _plain(sample_time)
    data["parameters"] = _plain(parameters) if isinstance(parameters, Mapping) else parameters
    polynomial: dict = {}
    if expression is not None:
        polynomial["expression"] = _plain(expression, formula=True)
    if coefficients is not None:
        polynomial["coefficients"] = (_plain(coefficients, formula=True)
                                      if isinstance(coefficients, list | tuple) else coefficients)
    if plant is not None or controller is not None:
        loop = {"plant": plant} if plant is not None else {}
        if controller is not None:
            loop["controller"] = controller
        polynomial["loop"] = _plain(loop, formula=True)
    for form, tables in matrices.items():  # state_space, mechanical (matrices), diagram (equations)
        if tables is not None:
            polynomial[form] = _plain(tables, formula=True)
    data["polynomial"] = polynomial
    if requirements is not None:
        data["requirements"] = _plain(requirements) if isinstance(requirements, Mapping) else requirements
    return data


def canonical_text(data: Mapping) -> str:
    """The canonical serialisation of a case's data that its checksum is taken over (see the
    module docstring)."""
    ordered = dict(data)
    if isinstance(ordered.get("parameters"), Mapping):
        ordered["parameters"] = [[name, table] for name, table in ordered["parameters"].items()]
    return json.dumps(ordered, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      default=str)


def make_case(title: str, parameters: Mapping[str, Mapping[str, object]], *,
              expression: str | None = None, coefficients: Sequence[object] | None = None,
              plant: str | None = None, controller: str | None = None, variable: str = "s",
              summary: str = "", sample_time: object = None,
              requirements: Mapping[str, object] | None = None,
              state_space: Mapping[str, object] | None = None,
              mechanical: Mapping[str, object] | None = None,
              diagram: Mapping[str, object] | Sequence[str] | None = None) -> Case:
    """Build a case from Python values, exactly as a case file with the same content.

    Parameters
    ----------
    title
        One line, as ``title`` in a case file.
    parameters
        name -> table with the keys of ``[parameters.NAME]``: ``nominal`` and ``tolerance``
        (or ``range = [low, high]``), optional ``unit``, ``note``, ``distribution``, ``limits``.
        Numbers may be int, float, ``Fraction`` or text (``"4.7u"``, ``"5%"``, ``"2/3"``).
    expression, coefficients, plant, controller, state_space, mechanical, diagram
        The polynomial, in exactly one form: the characteristic polynomial; its coefficients,
        highest power first; the loop's plant (and controller, default 1) in unity
        negative feedback; or the matrices of ``[polynomial.state_space]`` (``A``, optional
        ``B``, ``C``, ``K``) or ``[polynomial.mechanical]`` (``M``, ``C``, ``K``), as lists of
        rows of formulas; or a block diagram: its equations (``["e = r - y", "y = K/s*e"]``),
        or the keys of ``[polynomial.diagram]`` (``equations``, optional ``inputs``).
    variable, summary, sample_time, requirements
        As in a case file (``requirements`` holds the keys of ``[requirements]``).

    Returns
    -------
    Case
        ``path`` is ``"<python>"``; ``sha256`` is taken over :func:`canonical_text`.

    Raises
    ------
    CaseError
        One line naming ``<python>``, the field, the problem and what to write instead.

    Examples
    --------
    >>> case = make_case("second order", {"a": {"nominal": 3, "tolerance": "10%"}},
    ...                  expression="s^2 + a*s + 2")
    >>> case.form, case.names, case.path
    ('expression', ('a',), '<python>')
    """
    data = _case_data(title, parameters, expression, coefficients, plant, controller, variable,
                      summary, sample_time, requirements,
                      {"state_space": state_space, "mechanical": mechanical,
                       "diagram": {"equations": diagram} if isinstance(diagram, list | tuple) else diagram})
    case = case_from_data(data, PYTHON_PATH, "")  # checked before anything is serialised
    return dataclasses.replace(case, sha256=hashlib.sha256(canonical_text(data).encode("utf-8")).hexdigest())
