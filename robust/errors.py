"""The error hierarchy of robust.

Every error the package raises on purpose derives from :class:`RobustError` and from the
builtin it resembles, so callers may catch either. Each carries structured fields and builds
its one-line message in ``__str__``; the CLI prints that line and exits with ``exit_code``.
"""

from __future__ import annotations

from collections.abc import Iterable

__all__ = [
    "BudgetError",
    "CaseError",
    "ExecutorError",
    "FormulaError",
    "InputError",
    "RobustError",
    "did_you_mean",
]


def did_you_mean(word: str, choices: Iterable[str]) -> str:
    """`` (did you mean X?)`` for the closest of ``choices`` to a mistyped ``word``, else "".

    A choice that differs only in case wins; otherwise the nearest by difflib's ratio, when
    close enough (0.6, difflib's own default) to be the likely intent.

    Examples
    --------
    >>> did_you_mean("Rff", ["Rf", "C1"])
    ' (did you mean Rf?)'
    >>> did_you_mean("zeta", ["Rf", "C1"])
    ''
    """
    import difflib

    options = [c for c in choices if c != word]
    same = [c for c in options if c.lower() == word.lower()]
    close = same or difflib.get_close_matches(word, options, n=1)
    if not close:
        lowered = {c.lower(): c for c in options}
        close = [lowered[c] for c in difflib.get_close_matches(word.lower(), lowered, n=1)]
    return f" (did you mean {close[0]}?)" if close else ""


class RobustError(Exception):
    """Base class of every error raised on purpose by robust."""

    #: Exit code the command line uses for this error.
    exit_code: int = 2


class InputError(ValueError, RobustError):
    """A value given to the library or the command line is malformed.

    Parameters
    ----------
    what
        What was wrong, e.g. ``"coefficients"``.
    problem
        The problem in words.
    expected
        What would have been accepted, if that helps.
    value
        The offending value, shown quoted.
    """

    def __init__(self, what: str, problem: str, expected: str = "", value: object = None) -> None:
        super().__init__(what, problem, expected, value)
        self.what = what
        self.problem = problem
        self.expected = expected
        self.value = value

    def __str__(self) -> str:
        text = f"{self.what}: {self.problem}"
        if self.value is not None:
            text += f" (got {self.value!r})"
        if self.expected:
            text += f"; expected {self.expected}"
        return text


class FormulaError(InputError):
    """A formula cannot be read: syntax, unknown names, forbidden constructs.

    ``position`` is the 1-based column inside ``text`` where the problem starts.
    """

    def __init__(
        self, text: str, position: int, problem: str, expected: str = "", where: str = "formula"
    ) -> None:
        super().__init__(where, problem, expected)
        self.text = text
        self.position = position

    def at(self, where: str) -> FormulaError:
        """Return the same error located at ``where`` (e.g. ``"case.toml: polynomial.expression"``)."""
        return FormulaError(self.text, self.position, self.problem, self.expected, where)

    def __str__(self) -> str:
        shown = self.text if len(self.text) <= 60 else self.text[:57] + "..."
        text = f"{self.what}: {self.problem} at column {self.position} of {shown!r}"
        if self.expected:
            text += f"; expected {self.expected}"
        return text


class CaseError(InputError):
    """A case file is unreadable or inconsistent.

    Parameters
    ----------
    file
        The case file's path as the user gave it.
    field
        The dotted field, e.g. ``"parameters.R1.tolerance"``; empty for the whole file.
    problem, expected, value
        As for :class:`InputError`.
    line
        1-based line in the file, when known.
    """

    def __init__(
        self,
        file: str,
        field: str,
        problem: str,
        expected: str = "",
        value: object = None,
        line: int | None = None,
    ) -> None:
        super().__init__(field or "file", problem, expected, value)
        self.file = file
        self.field = field
        self.line = line

    def __str__(self) -> str:
        where = self.file
        if self.line is not None:
            where += f":{self.line}"
        if self.field:
            where += f": {self.field}"
        text = f"{where}: {self.problem}"
        if self.value is not None:
            text += f" (got {self.value!r})"
        if self.expected:
            text += f"; expected {self.expected}"
        return text


class BudgetError(RuntimeError, RobustError):
    """A computation was asked for with a budget that cannot be honoured."""

    exit_code = 2

    def __init__(self, problem: str) -> None:
        super().__init__(problem)
        self.problem = problem

    def __str__(self) -> str:
        return self.problem


class ExecutorError(BudgetError):
    """Work sent to other processes or a cluster could not be finished (a worker lost again
    after its retry, or the cluster out of reach): the run stops rather than leave work out.
    Not bad input, nor a verdict: exit code 3."""

    exit_code = 3
