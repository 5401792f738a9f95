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
