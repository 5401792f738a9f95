"""The command group, the one place errors become exit codes, and what every command shares:
loading a case (its notes said once on stderr), progress on stderr, JSON on stdout, the work
budget options and the certificate writer.

A :class:`~robust.errors.RobustError` or a usage error exits 2, an interrupt (Ctrl-C) exits
130 with "robust: interrupted", never with a traceback.
"""

from __future__ import annotations

import contextlib
import json
import signal
import sys
from collections.abc import Callable
from typing import Any

import click

from .._version import __version__
from ..analysis.defaults import DEFAULT_MAX_BOXES, DEFAULT_MAX_SECONDS
from ..errors import RobustError

#: Exit code of an interrupted command (128 + SIGINT, as shells report it).
EXIT_INTERRUPTED = 130


class Interrupted(BaseException):
    """Raised by our SIGINT handler: not a KeyboardInterrupt, so that nothing on the way
    (click included) prints anything for it; only :meth:`_Robust.main` reports it."""


def _raise_interrupted(_signum: int, _frame: object) -> None:
    raise Interrupted


def _one_line(text: str) -> str:
    return " ".join(part.strip() for part in str(text).splitlines() if part.strip())


def say(line: str) -> None:
    """One line on stderr, even when stderr is gone."""
    with contextlib.suppress(OSError):  # nowhere left to say it: the exit code still tells
        click.echo(line, err=True)


def _usage_line(error: click.UsageError) -> str:
    where = error.ctx.command_path if error.ctx is not None else "robust"
    return f"robust: error: {_one_line(error.format_message())} (see '{where} --help')"


class _Robust(click.Group):
    """The command group; its :meth:`main` is the one place errors become exit codes."""

    def invoke(self, ctx: click.Context) -> Any:
        try:
            return super().invoke(ctx)
        except KeyboardInterrupt:  # raised by other code: one report, as for our own signal
            raise Interrupted from None

    def main(self, args: Any = None, prog_name: str | None = None, complete_var: str | None = None,
             standalone_mode: bool = True, **extra: Any) -> Any:
        if not standalone_mode:  # a caller that wants click's exceptions
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        try:
            previous = signal.signal(signal.SIGINT, _raise_interrupted)
        except ValueError:  # not the main thread: KeyboardInterrupt stays, and is caught too
            previous = None
        try:
            code = super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        except (Interrupted, KeyboardInterrupt, click.Abort):
            say("robust: interrupted")
            code = EXIT_INTERRUPTED
        except click.UsageError as error:
            say(_usage_line(error))
            code = error.exit_code
        except click.ClickException as error:
            say(f"robust: error: {_one_line(error.format_message())}")
            code = error.exit_code
        except RobustError as error:
            say(f"robust: error: {_one_line(str(error))}")
            code = error.exit_code
        except RecursionError:
            say("robust: error: input nested too deeply")
            code = 2
        finally:
            if previous is not None:
                signal.signal(signal.SIGINT, previous)
        sys.exit(code if isinstance(code, int) else 0)


def emit_json(data: object) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False))


@click.group(cls=_Robust, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="robust")
def main() -> None:
    """Prove or refute the stability of a feedback loop over its parts' tolerances.

    Exit codes: 0 success (for check: robustly stable), 1 not stable, undecided or a
    requirement failed, 2 bad input or an unusable output path, 130 interrupted.
    """


def load(case: str):
    """Load a case file; say its notes (how a value was read) once on stderr."""
    from ..model.case import load_case

    loaded = load_case(case)
    for note in loaded.notes:
        say(f"robust: note: {note}")
    return loaded


def progress_bar(label: str, total: int | None, unit: str):
    from ..render.progress import Progress

    return Progress(label, total, unit, stream=sys.stderr)


def budget_options(func: Callable[..., Any]) -> Callable[..., Any]:
    func = click.option("--max-boxes", type=click.IntRange(min=1), default=DEFAULT_MAX_BOXES,
                        show_default=True, help="Work budget: sub-boxes/edges to examine.")(func)
    func = click.option("--max-seconds", type=click.FloatRange(min=0.01), default=DEFAULT_MAX_SECONDS,
                        show_default=True,
                        help="Safety stop in wall-clock seconds (reported when it fires).")(func)
    return func


def search_budget_options(default_boxes: int, default_tests: int) -> Callable[..., Any]:
    """--max-boxes per decision, --max-tests decisions, --max-seconds safety stop."""

    def add(func: Callable[..., Any]) -> Callable[..., Any]:
        func = click.option("--max-tests", type=click.IntRange(min=1), default=default_tests,
                            show_default=True, help="Work budget: decisions per search.")(func)
        func = click.option("--max-boxes", type=click.IntRange(min=1), default=default_boxes,
                            show_default=True, help="Work budget: sub-boxes per decision.")(func)
        func = click.option("--max-seconds", type=click.FloatRange(min=0.1), default=600.0,
                            show_default=True,
                            help="Safety stop in wall-clock seconds (reported when it fires).")(func)
        return func

    return add


CASE_PATH = click.Path(dir_okay=True, path_type=str)


CERTIFICATE_OPTION = click.option(
    "--certificate", type=click.Path(dir_okay=False, path_type=str), default=None,
    help="Also write the proof to this new JSON file (re-check it with robust verify).")


def write_certificate(path: str, loaded, result=None, box=None, scale=None, max_boxes: int = 20000,
                       max_seconds: float = 600.0) -> dict:
    """Certify and write (never over an existing file); a line on stderr says where."""
    from ..analysis.certificate import certificate_bytes, certify, digest
    from ..render.writer import write_new_file

    _, data = certify(loaded, box=box, result=result, scale=scale, max_boxes=max_boxes,
                      max_seconds=max_seconds)
    write_new_file(path, certificate_bytes(data), "--certificate")
    click.echo(f"certificate: {data['verdict']}, {data['summary']['pieces']} piece(s), written to {path} "
               f"(SHA-256 {digest(data)[:16]}...); re-check with: robust verify {path}", err=True)
    return data


def executor_options(func):
    """--workers and --cluster: where many independent decisions run (same result anywhere)."""
    func = click.option("--cluster", default=None, envvar="ROBUST_CLUSTER", metavar="ADDRESS",
                        help="Run on a dask.distributed cluster, e.g. tcp://10.0.0.5:8786 "
                             "[default: $ROBUST_CLUSTER, else local; needs robust[cluster]].")(func)
    func = click.option("--workers", type=click.IntRange(min=1), default=None,
                        help="Local worker processes; 1 runs in this process [default: all cores].")(func)
    return func
