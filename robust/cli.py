"""The command line: a thin layer over the public API.

Each command parses its options, calls the library, and renders the result as text or (with
``--json``) as one JSON document on stdout. A :class:`~robust.errors.RobustError` becomes one
line on stderr and its exit code (2 for bad input); progress goes to stderr only.
"""

from __future__ import annotations

import functools
import json
import sys
from collections.abc import Callable
from typing import Any

import click

from . import __version__
from .errors import RobustError
from .routh import RouthTable, routh_table
from .textout import render_table

#: The example polynomial ``robust routh`` analyses when given none: the closed loop of a
#: small speed-controlled fan (invented for the demo).
EXAMPLE_POLYNOMIAL = "s^4 + 6*s^3 + 13.5*s^2 + 12*s + 4.2"


def _fail(error: RobustError) -> None:
    click.echo(f"robust: error: {error}", err=True)
    sys.exit(error.exit_code)


def _guarded(func: Callable[..., Any]) -> Callable[..., Any]:
    """Turn every RobustError into one line on stderr and its exit code."""

    @functools.wraps(func)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        try:
            return func(*args, **kwargs)
        except RobustError as error:
            _fail(error)
        except RecursionError:
            click.echo("robust: error: input nested too deeply", err=True)
            sys.exit(2)

    return wrapper


def _emit_json(data: object) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False))


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="robust")
def main() -> None:
    """Prove or refute the stability of a feedback loop over its parts' tolerances."""


@main.command("routh")
@click.argument("polynomial", required=False)
@click.option("--coeffs", help='Coefficients highest power first, e.g. "1, 2, 3".')
@click.option("--shift", "sigma", default="0", show_default=True,
              help="Count roots relative to the line Re(s) = -SIGMA.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
@_guarded
def routh_command(polynomial: str | None, coeffs: str | None, sigma: str, as_json: bool) -> None:
    """Exact Routh array of POLYNOMIAL (an expression in s) and its root counts.

    Without POLYNOMIAL or --coeffs, a built-in example is used.
    """
    from .errors import InputError

    if polynomial is not None and coeffs is not None:
        raise InputError("routh", "give either POLYNOMIAL or --coeffs, not both")
    if coeffs is not None:
        items = [c.strip() for c in coeffs.replace(";", ",").split(",")]
        if any(not c for c in items):
            raise InputError("--coeffs", "empty coefficient in the list",
                             'numbers separated by commas, e.g. "1, 2.5, 3"', coeffs)
        source: object = items
    else:
        source = polynomial if polynomial is not None else EXAMPLE_POLYNOMIAL
    table: RouthTable = routh_table(source, shift=sigma)
    if as_json:
        _emit_json(table.as_dict())
    else:
        click.echo(render_table(table))


def _progress_printer(label: str):
    """A progress callback writing one self-overwriting line to stderr after the first second."""
    shown = {"any": False}

    def report(proven, boxes: int, seconds: float) -> None:
        if seconds < 1.0:
            return
        shown["any"] = True
        click.echo(f"\r{label}: {float(proven):6.1%} of the box proven, {boxes} boxes, "
                   f"{seconds:5.1f} s", err=True, nl=False)

    def finish() -> None:
        if shown["any"]:
            click.echo("", err=True)

    return report, finish


def _budget_options(func: Callable[..., Any]) -> Callable[..., Any]:
    from .verdict import DEFAULT_MAX_BOXES, DEFAULT_MAX_SECONDS

    func = click.option("--max-boxes", type=click.IntRange(min=1), default=DEFAULT_MAX_BOXES,
                        show_default=True, help="Budget: sub-boxes/edges to examine.")(func)
    func = click.option("--max-seconds", type=click.FloatRange(min=0.01), default=DEFAULT_MAX_SECONDS,
                        show_default=True, help="Budget: seconds of computation.")(func)
    return func


_CASE = click.Path(dir_okay=True, path_type=str)


@main.command("check")
@click.argument("case", type=_CASE)
@_budget_options
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
@_guarded
def check_command(case: str, max_seconds: float, max_boxes: int, as_json: bool) -> None:
    """Prove CASE stable over every tolerance, or find a verified counterexample.

    Exit code 0: robustly stable (and requirements met); 1: unstable, undecided or a
    requirement failed; 2: bad input.
    """
    from .case import load_case
    from .textout import render_check
    from .verdict import check

    loaded = load_case(case)
    report, finish = _progress_printer("check")
    result = check(loaded, max_seconds=max_seconds, max_boxes=max_boxes, progress=report)
    finish()
    if as_json:
        _emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_check(loaded, result))
    sys.exit(0 if result.verdict == "stable" else 1)


@main.command("trace")
@click.argument("case", type=_CASE)
@click.option("--graphml", type=click.Path(dir_okay=False, path_type=str),
              help="Also write the dependency graph as GraphML to this new file.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
@_guarded
def trace_command(case: str, graphml: str | None, as_json: bool) -> None:
    """Show which parameter drives which coefficient, in which direction, and the bounds."""
    from pathlib import Path

    from .case import load_case
    from .errors import InputError
    from .graph import build_graph, write_graphml
    from .textout import render_trace, trace_data

    loaded = load_case(case)
    if graphml is not None and Path(graphml).exists():
        raise InputError("--graphml", "the file exists already; robust never overwrites it",
                         "a new file name", graphml)
    graph = build_graph(loaded.family)
    if graphml is not None:
        write_graphml(graph, graphml)
    if as_json:
        _emit_json({"case": case, "title": loaded.title, **trace_data(loaded, graph)})
    else:
        click.echo(render_trace(loaded, graph))
        if graphml is not None:
            click.echo(f"graph written to {graphml}")
