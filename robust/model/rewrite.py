"""A case file's text read again, and that text with some parts given new tolerances,
everything else as written.

``robust allocate`` hands the engineer the chosen design as a case file of its own, to check,
report, certify and sign off like any other. Only the lines that set the range of an
allocated part change (its ``tolerance`` or ``range``; a ``nominal`` is added where the range
implied it); comments, order and every other line stay. The result is read back and refused
unless each allocated part spans exactly the range asked, so a file this module writes never
says other than the design that was proven.
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Mapping
from fractions import Fraction
from pathlib import Path

from ..errors import CaseError, InputError
from ..exact.numbers import format_fraction

__all__ = ["source_text", "with_tolerances"]

_KEY = re.compile(r"""\s*["']?(tolerance|range|nominal)["']?\s*=""")


def source_text(case) -> str:
    """The case file's text, checked to be the bytes the case was read from (a file edited
    since then is refused: the work done was for the old one).

    Raises
    ------
    InputError
        When the file cannot be read again or has changed.
    """
    try:
        raw = Path(case.path).read_bytes()
    except OSError as error:
        raise InputError("case", f"cannot read the case file again ({error.strerror})",
                         "a case loaded from a readable file", case.path) from None
    if hashlib.sha256(raw).hexdigest() != case.sha256:
        raise InputError("case", "the case file changed since it was read", "run again", case.path)
    return raw.decode("utf-8-sig")


def _section(lines: list[str], name: str) -> tuple[int, int]:
    """(header line, end line) of ``[parameters.NAME]`` (0-based, end exclusive)."""
    header = re.compile(r"\s*\[\s*parameters\s*\.\s*" + re.escape(name) + r"\s*\]\s*(#.*)?$")
    for i, line in enumerate(lines):
        if header.match(line):
            end = next((j for j in range(i + 1, len(lines)) if lines[j].lstrip().startswith("[")), len(lines))
            return i, end
    raise InputError("--write-case", f"the parameter {name} is not written as a [parameters.{name}] table",
                     f"[parameters.{name}] with nominal and tolerance on lines of their own, "
                     "or no --write-case")


def with_tolerances(text: str, changes: Mapping[str, tuple[Fraction, str, Fraction, Fraction]],
                    note: str, path: str = "<case>") -> str:
    """``text`` with each part ``name -> (nominal, tolerance text, low, high)`` set to that
    tolerance, which must give exactly the range [low, high].

    Parameters
    ----------
    text
        The case file as written.
    changes
        The allocated parts: their nominal (kept, written out when the file implied it by a
        range), the new tolerance, such as ``"5%"``, and the range it must give.
    note
        A comment put beside each changed line (``# chosen by ...``).
    path
        The file the text came from, for messages.

    Raises
    ------
    InputError
        When a part is not written as a table of its own, or its range or tolerance spans
        more than one line (nothing is guessed), or the text read back gives another range.
    """
    from .case import parse_case

    lines = text.splitlines()
    for name, (nominal, tolerance, _, _) in changes.items():
        start, end = _section(lines, name)
        keys = {}
        for i in range(start + 1, end):
            match = _KEY.match(lines[i])
            if match:
                keys[match.group(1)] = i
        for key in ("tolerance", "range"):
            if key in keys and lines[keys[key]].count("[") != lines[keys[key]].count("]"):
                raise InputError("--write-case", f"parameters.{name}.{key} spans several lines",
                                 f"{key} on one line, or no --write-case")
        new = [f'tolerance = "{tolerance}"   # {note}']
        if "nominal" not in keys:
            new.insert(0, f'nominal = "{format_fraction(nominal)}"   # the middle of the range as written')
        first = min((keys[k] for k in ("tolerance", "range") if k in keys), default=start + 1)
        kept = [line for i, line in enumerate(lines[start + 1:end], start + 1)
                if i not in (keys.get("tolerance"), keys.get("range"))]
        at = first - start - 1  # the first removed line's place among the kept ones
        lines[start + 1:end] = kept[:at] + new + kept[at:]
    out = "\n".join(lines) + "\n"
    try:
        read = parse_case(out, path)
    except CaseError as error:
        raise InputError("--write-case", f"{path} rewritten with the allocated tolerances does not read back "
                         f"({error.field + ': ' if error.field else ''}{error.problem}"
                         f"{f' on line {error.line}' if error.line else ''})",
                         "[parameters.NAME] tables with nominal and tolerance on lines of their own, "
                         "or no --write-case") from None
    for name, (_, _, low, high) in changes.items():
        part = read.parameter(name)
        if (part.low, part.high) != (low, high):
            raise InputError("--write-case", f"the rewritten parameters.{name} reads back as "
                             f"[{part.low}, {part.high}], not the allocated [{low}, {high}]",
                             f"[parameters.{name}] written plainly (nominal, tolerance), or no --write-case")
    return out
