"""The command line: a thin layer over the public API.

Each command parses its options, calls the library, and renders the result as text or (with
``--json``) as one JSON document on stdout; progress goes to stderr only. Errors are turned
into one line on stderr in one place, :meth:`_Robust.main`: a
:class:`~robust.errors.RobustError` or a usage error exits 2, an interrupt (Ctrl-C) exits 130
with "robust: interrupted", never with a traceback.
"""

from __future__ import annotations

import contextlib
import json
import signal
import sys
from collections.abc import Callable
from typing import Any

import click

from ._version import __version__
from .analysis.defaults import DEFAULT_MAX_BOXES, DEFAULT_MAX_SECONDS
from .errors import RobustError

#: The example polynomial ``robust routh`` analyses when given none: the closed loop of a
#: small speed-controlled fan (invented for the demo).
EXAMPLE_POLYNOMIAL = "s^4 + 6*s^3 + 13.5*s^2 + 12*s + 4.2"
#: routh --discrete without a polynomial: (z - 0.5)(z^2 - 0.8 z + 0.2), every root inside |z| < 1
EXAMPLE_DISCRETE = "z^3 - 1.3*z^2 + 0.6*z - 0.1"


#: Exit code of an interrupted command (128 + SIGINT, as shells report it).
EXIT_INTERRUPTED = 130


class Interrupted(BaseException):
    """Raised by our SIGINT handler: not a KeyboardInterrupt, so that nothing on the way
    (click included) prints anything for it; only :meth:`_Robust.main` reports it."""


def _raise_interrupted(_signum: int, _frame: object) -> None:
    raise Interrupted


def _one_line(text: str) -> str:
    return " ".join(part.strip() for part in str(text).splitlines() if part.strip())


def _say(line: str) -> None:
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
            _say("robust: interrupted")
            code = EXIT_INTERRUPTED
        except click.UsageError as error:
            _say(_usage_line(error))
            code = error.exit_code
        except click.ClickException as error:
            _say(f"robust: error: {_one_line(error.format_message())}")
            code = error.exit_code
        except RobustError as error:
            _say(f"robust: error: {_one_line(str(error))}")
            code = error.exit_code
        except RecursionError:
            _say("robust: error: input nested too deeply")
            code = 2
        finally:
            if previous is not None:
                signal.signal(signal.SIGINT, previous)
        sys.exit(code if isinstance(code, int) else 0)


def _emit_json(data: object) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False))


@click.group(cls=_Robust, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="robust")
def main() -> None:
    """Prove or refute the stability of a feedback loop over its parts' tolerances.

    Exit codes: 0 success (for check: robustly stable), 1 not stable, undecided or a
    requirement failed, 2 bad input or an unusable output path, 130 interrupted.
    """


class _PolynomialCommand(click.Command):
    """A command whose argument may start with a minus sign: ``robust routh "-(s+1)*(s-2)"``.

    A word that starts with one ``-``, is not one of the command's options and is not an
    option's value is the polynomial, as if written after ``--``; ``--`` itself works too.
    """

    def parse_args(self, ctx: click.Context, args: list[str]) -> list[str]:
        names: dict[str, bool] = {}  # option name -> whether it takes a value
        for param in self.get_params(ctx):
            if isinstance(param, click.Option):
                for name in (*param.opts, *param.secondary_opts):
                    names[name] = not param.is_flag and not param.count
        kept: list[str] = []
        moved: list[str] = []
        words = iter(args)
        for word in words:
            if word == "--":
                moved.extend(words)
                break
            if word in names or word.split("=", 1)[0] in names:
                kept.append(word)
                if names.get(word):  # the option's value follows, even when it starts with '-'
                    value = next(words, None)
                    if value is not None:
                        kept.append(value)
            elif word.startswith("-") and not word.startswith("--") and len(word) > 1:
                moved.append(word)
            else:
                kept.append(word)
        return super().parse_args(ctx, [*kept, "--", *moved] if moved else kept)


@main.command("routh", cls=_PolynomialCommand)
@click.argument("polynomial", required=False)
@click.option("--coeffs", help='Coefficients highest power first, e.g. "1, 2, 3".')
@click.option("--shift", "sigma", default="0", show_default=True,
              help="Count roots relative to the line Re(s) = -SIGMA.")
@click.option("--discrete", is_flag=True,
              help="A polynomial in z: the Schur-Cohn table and the roots inside, on and outside "
                   "the unit circle (or the circle of --radius).")
@click.option("--radius", default="1", show_default=True,
              help="With --discrete: count relative to the circle |z| = RADIUS.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def routh_command(polynomial: str | None, coeffs: str | None, sigma: str, discrete: bool, radius: str,
                  as_json: bool) -> None:
    """Exact Routh array of POLYNOMIAL (an expression in s) and its root counts.

    Without POLYNOMIAL or --coeffs, a built-in example is used. A polynomial may start
    with a minus sign, as in robust routh "-(s+1)*(s-2)"; after -- everything is the
    polynomial. With --discrete the polynomial is in z, and the table is the Schur-Cohn
    reduction for the unit circle.

    Exit codes: 0 the table was computed (whatever the roots), 2 bad input.
    """
    from .errors import InputError
    from .model.forms import routh_table
    from .render.text import render_table

    if polynomial is not None and coeffs is not None:
        raise InputError("routh", "give either POLYNOMIAL or --coeffs, not both")
    if discrete:
        _discrete_routh(polynomial, coeffs, sigma, radius, as_json)
        return
    if coeffs is not None:
        source: object = _coefficient_items(coeffs)
    else:
        source = polynomial if polynomial is not None else EXAMPLE_POLYNOMIAL
    table = routh_table(source, shift=sigma)
    if as_json:
        _emit_json(table.as_dict())
    else:
        # with a shift, the plain polynomial's counts tell "unstable" from "slower than asked"
        unshifted = routh_table(source).roots if table.shift else None
        click.echo(render_table(table, unshifted))


def _discrete_routh(polynomial: str | None, coeffs: str | None, sigma: str, radius: str,
                    as_json: bool) -> None:
    """routh --discrete: the Schur-Cohn table and the counts relative to |z| = radius."""
    from .errors import InputError
    from .exact.numbers import to_fraction
    from .model.forms import discrete_table
    from .render.text import render_schur_cohn

    if to_fraction(sigma, "--shift") != 0:
        raise InputError("--shift", "applies to the s-plane, not with --discrete",
                         "--radius R to count relative to the circle |z| = R")
    r = to_fraction(radius, "--radius")
    if r <= 0:
        raise InputError("--radius", "must be positive", "a number such as 0.9", radius)
    source = _coefficient_items(coeffs) if coeffs is not None else \
        (polynomial if polynomial is not None else EXAMPLE_DISCRETE)
    result = discrete_table(source, r)
    if as_json:
        _emit_json(result.as_dict())
    else:
        click.echo(render_schur_cohn(result.coefficients, result.table, result.counts, r))


def _coefficient_items(coeffs: str) -> list[str]:
    from .errors import InputError

    items = [c.strip() for c in coeffs.replace(";", ",").split(",")]
    if any(not c for c in items):
        raise InputError("--coeffs", "empty coefficient in the list",
                         'numbers separated by commas, e.g. "1, 2.5, 3"', coeffs)
    return items


def _load(case: str):
    """Load a case file; say its notes (how a value was read) once on stderr."""
    from .model.case import load_case

    loaded = load_case(case)
    for note in loaded.notes:
        _say(f"robust: note: {note}")
    return loaded


def _progress(label: str, total: int | None, unit: str):
    from .render.progress import Progress

    return Progress(label, total, unit, stream=sys.stderr)


def _budget_options(func: Callable[..., Any]) -> Callable[..., Any]:
    func = click.option("--max-boxes", type=click.IntRange(min=1), default=DEFAULT_MAX_BOXES,
                        show_default=True, help="Work budget: sub-boxes/edges to examine.")(func)
    func = click.option("--max-seconds", type=click.FloatRange(min=0.01), default=DEFAULT_MAX_SECONDS,
                        show_default=True,
                        help="Safety stop in wall-clock seconds (reported when it fires).")(func)
    return func


def _search_budget_options(default_boxes: int, default_tests: int) -> Callable[..., Any]:
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


_CASE = click.Path(dir_okay=True, path_type=str)


_CERTIFICATE = click.option(
    "--certificate", type=click.Path(dir_okay=False, path_type=str), default=None,
    help="Also write the proof to this new JSON file (re-check it with robust verify).")


def _write_certificate(path: str, loaded, result=None, box=None, scale=None, max_boxes: int = 20000,
                       max_seconds: float = 600.0) -> dict:
    """Certify and write (never over an existing file); a line on stderr says where."""
    from .analysis.certificate import certificate_bytes, certify, digest
    from .render.writer import write_new_file

    _, data = certify(loaded, box=box, result=result, scale=scale, max_boxes=max_boxes,
                      max_seconds=max_seconds)
    write_new_file(path, certificate_bytes(data), "--certificate")
    click.echo(f"certificate: {data['verdict']}, {data['summary']['pieces']} piece(s), written to {path} "
               f"(SHA-256 {digest(data)[:16]}...); re-check with: robust verify {path}", err=True)
    return data


@main.command("check")
@click.argument("case", type=_CASE)
@_budget_options
@_CERTIFICATE
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def check_command(case: str, max_seconds: float, max_boxes: int, certificate: str | None,
                  as_json: bool) -> None:
    """Prove CASE stable over every tolerance, or find a verified counterexample.

    Exit codes: 0 robustly stable (and requirements met), 1 unstable, undecided or a
    requirement failed, 2 bad input or an unusable --certificate path.
    """
    from .analysis.outcomes import Outcome
    from .analysis.requirements import check_requirements
    from .analysis.verdict import check
    from .exact.numbers import percent_text
    from .render.text import render_check, render_requirements

    loaded = _load(case)
    if certificate is not None:
        from .render.writer import check_new_file

        check_new_file(certificate, "--certificate")
    shown = _progress("check", max_boxes, "box")

    def report(proven, boxes: int, _seconds: float) -> None:
        shown.reach(boxes, f"{percent_text(proven, 1)} of the box proven")

    result = check(loaded, max_seconds=max_seconds, max_boxes=max_boxes, progress=report)
    shown.reach(result.boxes)
    shown.finish(f"{result.verdict.value} ({result.method_text})", quiet_under=1.0)
    requirements = check_requirements(loaded, max_seconds=max_seconds) \
        if result.verdict == "stable" else ()
    written = None
    if certificate is not None:
        written = _write_certificate(certificate, loaded, result, max_boxes=max_boxes,
                                     max_seconds=max_seconds)
    if as_json:
        extra = {} if written is None else {"certificate": {"file": certificate, **written["summary"]}}
        _emit_json({"case": case, "title": loaded.title, **result.as_dict(),
                    "requirements": {r.name: r.as_dict() for r in requirements}, **extra})
    else:
        click.echo(render_check(loaded, result))
        if requirements:
            click.echo(render_requirements(requirements))
    failed = any(r.outcome is not Outcome.PASS for r in requirements)
    sys.exit(0 if result.verdict == "stable" and not failed else 1)


@main.command("verify")
@click.argument("certificate", type=click.Path(dir_okay=False, path_type=str))
@click.option("--case", "case", type=_CASE, default=None,
              help="The case file that was certified [default: the one the certificate names, "
                   "as written or beside the certificate].")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def verify_command(certificate: str, case: str | None, as_json: bool) -> None:
    """Re-check a certificate written by check, margin or report, without the search.

    The checker re-derives the polynomial from the case file and confirms every piece of the
    proof with exact arithmetic (docs/certificates.md says what a VALID certificate proves).

    Exit codes: 0 VALID, 1 INVALID (the first piece that fails is named), 2 bad input.
    """
    from .render.text import render_verification
    from .verify import verify_file

    result = verify_file(certificate, case)
    if as_json:
        _emit_json(result.as_dict())
    else:
        click.echo(render_verification(result))
    sys.exit(0 if result.valid else 1)


@main.command("trace")
@click.argument("case", type=_CASE)
@click.option("--graphml", type=click.Path(dir_okay=False, path_type=str),
              help="Also write the dependency graph as GraphML to this new file.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def trace_command(case: str, graphml: str | None, as_json: bool) -> None:
    """Show which parameter drives which coefficient, in which direction, and the bounds.

    Exit codes: 0 shown, 2 bad input or an unusable --graphml path.
    """
    from .model.graph import build_graph, write_graphml
    from .render.text import render_trace, trace_data
    from .render.writer import check_new_file

    if graphml is not None:
        check_new_file(graphml, "--graphml")
    loaded = _load(case)
    graph = build_graph(loaded.family)
    if graphml is not None:
        write_graphml(graph, graphml)
    if as_json:
        _emit_json({"case": case, "title": loaded.title, **trace_data(loaded, graph)})
    else:
        click.echo(render_trace(loaded, graph))
        if graphml is not None:
            click.echo(f"graph written to {graphml}")


@main.command("margin")
@click.argument("case", type=_CASE)
@click.option("--cap", default="100", show_default=True, help="Largest tolerance scale tried.")
@click.option("--rel-tol", type=click.FloatRange(min=1e-15, max=0.5), default=None,
              help="Relative bracket width asked for [default: 1e-9 interval families, 1e-6 others].")
@_search_budget_options(1000, 48)
@click.option("--no-decay", is_flag=True, help="Skip the decay-rate margin.")
@click.option("--no-criteria", is_flag=True, help="Skip the gain, phase, damping and radius brackets.")
@click.option("--certificate", type=click.Path(dir_okay=False, path_type=str), default=None,
              help="Also write the proof of the bracket's proven end (every tolerance scaled by it) "
                   "to this new JSON file.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def margin_command(case: str, cap: str, rel_tol: float | None, max_seconds: float, max_boxes: int,
                   max_tests: int, no_decay: bool, no_criteria: bool, certificate: str | None,
                   as_json: bool) -> None:
    """Robust margin rho* (how far every tolerance can grow), the decay-rate margin, and the
    worst-case damping ratio; for loops the gain and phase margins, for discrete time the
    spectral radius. Each is a certified bracket with the point that limits it.

    Exit codes: 0 computed (and requirements met), 1 a requirement of the case is not
    proven met, 2 bad input or an unusable --certificate path.
    """
    from .analysis.margin import margin
    from .analysis.outcomes import Outcome
    from .analysis.progress import listening
    from .exact.numbers import approx_text, to_fraction
    from .render.text import render_margin

    loaded = _load(case)
    cap_value = to_fraction(cap, "--cap")
    if cap_value <= 0:
        from .errors import InputError

        raise InputError("--cap", "must be positive", "a number such as 100", cap)
    if certificate is not None:
        from .render.writer import check_new_file

        check_new_file(certificate, "--certificate")
    shown = _progress("margin", None, "decision")
    with listening(shown.listen):
        result = margin(loaded, cap=cap_value, rel_tol=rel_tol, max_seconds=max_seconds,
                        max_boxes=max_boxes, max_tests=max_tests, with_decay=not no_decay,
                        with_criteria=not no_criteria)
    upper = "no failure up to the cap" if result.margin.upper is None \
        else approx_text(result.margin.upper, 6)
    shown.finish(f"rho* in [{approx_text(result.margin.lower, 6)}, {upper}]")
    written = None
    if certificate is not None:
        rho = result.margin.lower
        scaled = loaded.family.box.scaled(loaded.family.nominal, rho)
        written = _write_certificate(certificate, loaded, box=scaled,
                                     scale=rho, max_boxes=max_boxes, max_seconds=max_seconds)
    if as_json:
        extra = {} if written is None else {"certificate": {"file": certificate, **written["summary"]}}
        _emit_json({"case": case, "title": loaded.title, **result.as_dict(), **extra})
    else:
        click.echo(render_margin(loaded, result))
    # a requirement that is not proven met (failed or undecided) fails the command, as in check
    sys.exit(1 if any(outcome is not Outcome.PASS for _, _, outcome in result.outcomes()) else 0)


@main.command("rank")
@click.argument("case", type=_CASE)
@_search_budget_options(500, 16)
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def rank_command(case: str, max_seconds: float, max_boxes: int, max_tests: int, as_json: bool) -> None:
    """Rank the parameters, most critical first, with their margins.

    Exit codes: 0 ranked, 2 bad input.
    """
    from .analysis.progress import listening
    from .analysis.rank import rank
    from .render.text import render_rank

    loaded = _load(case)
    shown = _progress("rank", None, "decision")
    shown.brackets = False  # one search per parameter: no single bracket to show
    with listening(shown.listen):
        result = rank(loaded, max_seconds=max_seconds, max_boxes=max_boxes, max_tests=max_tests)
    first = result.parameters[0].name if result.parameters else None
    shown.finish(f"{len(result.parameters)} parameters ranked"
                 + (f", most critical {first}" if first else ""))
    if as_json:
        _emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_rank(loaded, result))


@main.command("yield")
@click.argument("case", type=_CASE)
@click.option("-n", "draws", type=click.IntRange(min=1, max=10**8), default=100_000, show_default=True,
              help="Number of random builds.")
@click.option("--seed", type=int, default=0, show_default=True, help="Random seed.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def yield_command(case: str, draws: int, seed: int, as_json: bool) -> None:
    """Monte Carlo yield: the fraction of random builds that are stable.

    Exit codes: 0 estimated (whatever the yield), 2 bad input.
    """
    from .analysis.montecarlo import estimate_yield
    from .render.text import render_yield

    loaded = _load(case)
    shown = _progress("yield", draws, "draw")

    def progress(done: int, _total: int) -> None:
        shown.reach(done)

    result = estimate_yield(loaded, draws, seed, progress=progress)
    shown.finish(f"{result.fraction:.2%} stable")
    if as_json:
        _emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_yield(loaded, result))


class _Stages:
    """The stages of a report on stderr: on a terminal beside the live decision counter of
    :class:`~robust.render.progress.Progress`; elsewhere one line as each stage starts (a
    report runs for many seconds, and a log or a supervising program learns from these lines
    that the analysis has begun)."""

    def __init__(self, label: str) -> None:
        self.lines: list[str] = []
        self.shown = _progress(label, None, "decision")

    def __call__(self, line: str) -> None:
        self.lines.append(line)
        if self.shown.live:
            self.shown.restart(line, brackets=line.startswith("margin"))
        else:
            _say(line)

    def finish(self) -> None:
        if self.shown.live:
            self.shown.finish("; ".join(self.lines))


def _summary_lines(analysis, files) -> list[str]:
    """The short summary ``robust report`` and ``robust demo`` print."""
    from .exact.numbers import approx_text
    from .render.content import outcome

    check = analysis.check
    m = analysis.margin
    lines = [f"Case: {analysis.case.title}",
             f"Verdict: {check.verdict.value.upper()}  ({check.method_text})"]

    def bracket(b) -> str:
        upper = "no failure found up to the cap" if b.upper is None else approx_text(b.upper, 6)
        return f"[{approx_text(b.lower, 6)}, {upper}]"

    lines.append(f"Robust margin rho*: {bracket(m.margin)}; {m.limit.sentence()}")
    if m.decay is not None:
        lines.append(f"Decay rate sigma*: {bracket(m.decay.bracket)}")
    crossing = [p for p in analysis.rank.parameters if p.crosses]
    if crossing:
        top = crossing[0]
        lines.append(f"Most critical parameter: {top.name} "
                     f"(alone, a root crosses at x{approx_text(top.margin_alone.lower, 4)} of its tolerance)")
    elif analysis.rank.parameters:
        lines.append("No single part makes a root cross on its own before its limit or the cap")
    y = analysis.yield_result
    lines.append(f"Yield: {y.fraction:.2%} of {y.draws} random builds stable")
    lines.append(outcome(analysis)[1])
    if analysis.safety_stop:
        lines.append("Note: the wall-clock safety limit cut a search short; a re-run may differ")
    lines.append(f"Report: {files.html}")
    if analysis.certificate is not None:
        proof = files.directory / "certificate.json"
        lines.append(f"Proof: {proof} ({analysis.certificate['summary']['pieces']} piece(s)); "
                     f"re-check it with: robust verify {proof}")
    return lines


@main.command("report")
@click.argument("case", type=_CASE)
@click.option("-o", "--output", "directory", required=True, type=click.Path(path_type=str),
              help="Directory for report.html, report.md, figures/ and result.json.")
@click.option("--max-boxes", type=click.IntRange(min=1), default=20_000, show_default=True,
              help="Work budget of the check: sub-boxes/edges to examine.")
@click.option("--search-boxes", type=click.IntRange(min=1), default=1000, show_default=True,
              help="Work budget of the margin search: sub-boxes per decision (the ranking takes half).")
@click.option("--search-tests", type=click.IntRange(min=1), default=48, show_default=True,
              help="Work budget of the margin search: decisions (the ranking takes a third per part).")
@click.option("--max-seconds", type=click.FloatRange(min=1.0), default=600.0, show_default=True,
              help="Safety stop in wall-clock seconds for the whole report (reported when it fires).")
@click.option("--draws", type=click.IntRange(min=1, max=10**7), default=20_000, show_default=True,
              help="Monte Carlo draws for the yield.")
@click.option("--seed", type=int, default=0, show_default=True, help="Random seed.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as one JSON document.")
def report_command(case: str, directory: str, max_boxes: int, search_boxes: int, search_tests: int,
                   max_seconds: float, draws: int, seed: int, as_json: bool) -> None:
    """Write the sign-off report of CASE into a directory (HTML, Markdown, JSON).

    Exit codes: 0 the report was written (whatever it concludes), 2 bad input or an
    unusable output directory.
    """
    from .analysis.progress import listening
    from .analysis.signoff import analyse
    from .render.data import result_data
    from .render.writer import check_directory, write_report

    check_directory(directory)
    loaded = _load(case)
    stages = _Stages("report")
    with listening(stages.shown.listen):
        analysis = analyse(loaded, max_seconds=max_seconds, max_boxes=max_boxes, search_boxes=search_boxes,
                           search_tests=search_tests, yield_draws=draws, seed=seed, progress=stages)
        files = write_report(analysis, directory, progress=stages)
    stages.finish()
    if as_json:
        _emit_json(result_data(analysis))
    else:
        from .render.content import rerun_command

        click.echo("\n".join(_summary_lines(analysis, files)))
        click.echo("Re-run: " + rerun_command(analysis))


@main.command("demo")
@click.option("-o", "--output", "directory", default="robust-demo-report", show_default=True,
              type=click.Path(path_type=str), help="Directory for the demo report.")
@click.option("--json", "as_json", is_flag=True,
              help="Print the result as one JSON document (the report's result.json).")
def demo_command(directory: str, as_json: bool) -> None:
    """Analyse the built-in demo case (a DC-motor servo) and write its report.

    The case file is copied beside the report as case.toml, to read and re-run.

    Exit codes: 0 the report was written, 2 bad input (an unusable output directory).
    """
    import dataclasses
    from importlib import resources
    from pathlib import Path

    from .analysis.progress import listening
    from .analysis.signoff import analyse
    from .model.case import load_case
    from .render.content import rerun_command
    from .render.data import result_data
    from .render.writer import check_directory, write_report

    source = resources.files("robust") / "data" / "demo.toml"
    text = source.read_bytes()
    target = check_directory(directory, {"case.toml": text})
    with resources.as_file(source) as path:
        loaded = load_case(path)
    # the report names the copy beside it, which holds the same bytes (same SHA-256)
    loaded = dataclasses.replace(loaded, path=str(Path(target) / "case.toml"))
    stages = _Stages("demo")
    with listening(stages.shown.listen):
        analysis = analyse(loaded, yield_draws=20_000, seed=0, progress=stages)
        files = write_report(analysis, target, extra_files={"case.toml": text}, progress=stages)
    stages.finish()
    if as_json:
        _emit_json(result_data(analysis))
        return
    click.echo("\n".join(_summary_lines(analysis, files)))
    click.echo("Re-run: " + rerun_command(analysis, str(Path(target) / "case.toml")))
