"""Batch sign-off: one command over several case files or a directory of them.

``robust check``, ``margin`` and ``report`` take several CASE arguments; a directory stands
for every ``*.toml`` in it, sorted by name. Each case prints one line, then a table sums up;
with ``--json`` the output is the list of the per-case documents. A case that is bad input
is named in its own error line and the others still run. The exit code is the worst over the
cases (2 bad input, 1 not stable or a requirement not met, 0 all good). One file alone keeps
the single-case output unchanged.
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Sequence
from pathlib import Path

import click

from ..errors import RobustError
from .core import emit_json, say

#: (exit code, JSON document, text of the single-case form, one line) of one case.
Outcome = tuple[int, dict, str, str]


def case_paths(arguments: Sequence[str]) -> list[str]:
    """The case files named, each once: each argument, a directory standing for its sorted
    ``*.toml`` entries (a broken link among them too, so that its error line says so: a
    sign-off over a folder never skips a case in silence)."""
    paths: list[str] = []
    seen: set[Path] = set()
    for argument in arguments:
        folder = Path(argument)
        named = [str(p) for p in sorted(folder.glob("*.toml")) if not p.is_dir()] if folder.is_dir() \
            else [argument]
        for path in named:
            try:
                key = Path(path).resolve()
            except (OSError, RuntimeError):  # a link loop: keep it, its error line will say so
                key = Path(path).absolute()
            if key not in seen:
                seen.add(key)
                paths.append(path)
    return paths


def is_batch(arguments: Sequence[str]) -> bool:
    """More than one argument, or a directory: the batch form."""
    return len(arguments) != 1 or Path(arguments[0]).is_dir()


def run_batch(command: str, arguments: Sequence[str], one: Callable[[str], Outcome], as_json: bool) -> None:
    """Run ``one`` on every case, print the lines and the table (or the JSON list), exit worst."""
    paths = case_paths(arguments)
    if not paths:
        say(f"robust: error: {' '.join(arguments)}: a directory with no *.toml case files; expected "
            f"case files, or a directory holding them, for robust {command}")
        sys.exit(2)
    codes: list[int] = []
    documents: list[dict] = []
    rows: list[tuple[str, str]] = []
    for path in paths:
        try:
            code, document, _, line = one(path)
        except RobustError as error:
            text = " ".join(str(error).split())
            say(f"robust: error: {text}")
            code, document, line = error.exit_code, {"case": path, "error": text}, "bad input"
        codes.append(code)
        documents.append(document)
        rows.append((path, line))
        if not as_json:
            click.echo(f"{path}: {line}")
    worst = max(codes)
    if as_json:
        emit_json(documents)
    else:
        width = max(len(p) for p, _ in rows)
        click.echo("")
        click.echo(f"{'case':<{width}}  exit  result")
        for (path, line), code in zip(rows, codes, strict=True):
            click.echo(f"{path:<{width}}  {code:>4}  {line}")
        click.echo(f"{len(paths)} case(s): {codes.count(0)} exit 0, {codes.count(1)} exit 1 (not stable, "
                   f"or a requirement not proven met), {codes.count(2)} bad input")
    sys.exit(worst)
