"""The commands on one case file: check, verify, trace, margin, rank and yield."""

from __future__ import annotations

import sys

import click

from .core import (
    CASE_PATH,
    CERTIFICATE_OPTION,
    budget_options,
    emit_json,
    executor_options,
    load,
    main,
    progress_bar,
    search_budget_options,
    write_certificate,
)


@main.command("check")
@click.argument("cases", nargs=-1, required=True, type=CASE_PATH)
@budget_options
@CERTIFICATE_OPTION
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document (a list for several cases).")
def check_command(cases: tuple[str, ...], max_seconds: float, max_boxes: int, certificate: str | None,
                  as_json: bool) -> None:
    """Prove CASE stable over every tolerance, or find a verified counterexample.

    Several CASE files, or a directory of them, give one line per case and a summary table.

    Exit codes: 0 robustly stable (and requirements met), 1 unstable, undecided or a
    requirement failed, 2 bad input or an unusable --certificate path (the worst over cases).
    """
    from .batch import is_batch, run_batch

    if is_batch(cases):
        if certificate is not None:
            from ..errors import InputError

            raise InputError("--certificate", "writes the proof of one case", "a single CASE file")
        run_batch("check", cases, lambda path: _check_case(path, max_seconds, max_boxes, None), as_json)
    code, document, text, _ = _check_case(cases[0], max_seconds, max_boxes, certificate)
    if as_json:
        emit_json(document)
    else:
        click.echo(text)
    sys.exit(code)


def _check_case(case: str, max_seconds: float, max_boxes: int, certificate: str | None
                ) -> tuple[int, dict, str, str]:
    """(exit code, JSON document, text, batch line) of ``robust check`` on one case."""
    from ..analysis.outcomes import Outcome
    from ..analysis.requirements import check_requirements
    from ..analysis.verdict import check
    from ..exact.numbers import percent_text
    from ..render.text import render_check, render_requirements

    loaded = load(case)
    if certificate is not None:
        from ..render.writer import check_new_file

        check_new_file(certificate, "--certificate")
    shown = progress_bar("check", max_boxes, "box")

    def report(proven, boxes: int, _seconds: float) -> None:
        shown.reach(boxes, f"{percent_text(proven, 1)} of the box proven")

    result = check(loaded, max_seconds=max_seconds, max_boxes=max_boxes, progress=report)
    shown.reach(result.boxes)
    shown.finish(f"{result.verdict.value} ({result.method_text})", quiet_under=1.0)
    requirements = check_requirements(loaded, max_seconds=max_seconds) \
        if result.verdict == "stable" else ()
    written = None
    if certificate is not None:
        written = write_certificate(certificate, loaded, result, max_boxes=max_boxes,
                                     max_seconds=max_seconds)
    extra = {} if written is None else {"certificate": {"file": certificate, **written["summary"]}}
    document = {"case": case, "title": loaded.title, **result.as_dict(),
                "requirements": {r.name: r.as_dict() for r in requirements}, **extra}
    text = render_check(loaded, result)
    if requirements:
        text += "\n" + render_requirements(requirements)
    failed = [r.name for r in requirements if r.outcome is not Outcome.PASS]
    code = 0 if result.verdict == "stable" and not failed else 1
    line = f"{result.verdict.value} ({result.method_text})"
    if failed:
        line += "; requirement not proven met: " + ", ".join(failed)
    return code, document, text, line


@main.command("verify")
@click.argument("certificate", type=click.Path(dir_okay=False, path_type=str))
@click.option("--case", "case", type=CASE_PATH, default=None,
              help="The case file that was certified [default: the one the certificate names, "
                   "as written or beside the certificate].")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def verify_command(certificate: str, case: str | None, as_json: bool) -> None:
    """Re-check a certificate written by check, margin or report, without the search.

    The checker re-derives the polynomial from the case file and confirms every piece of the
    proof with exact arithmetic (docs/certificates.md says what a VALID certificate proves).

    Exit codes: 0 VALID, 1 INVALID (the first piece that fails is named), 2 bad input.
    """
    from ..render.text import render_verification
    from ..verify import verify_file

    result = verify_file(certificate, case)
    if as_json:
        emit_json(result.as_dict())
    else:
        click.echo(render_verification(result))
    sys.exit(0 if result.valid else 1)


@main.command("trace")
@click.argument("case", type=CASE_PATH)
@click.option("--graphml", type=click.Path(dir_okay=False, path_type=str),
              help="Also write the dependency graph as GraphML to this new file.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def trace_command(case: str, graphml: str | None, as_json: bool) -> None:
    """Show which parameter drives which coefficient, in which direction, and the bounds.

    Exit codes: 0 shown, 2 bad input or an unusable --graphml path.
    """
    from ..model.graph import build_graph, write_graphml
    from ..render.text import render_trace, trace_data
    from ..render.writer import check_new_file

    if graphml is not None:
        check_new_file(graphml, "--graphml")
    loaded = load(case)
    graph = build_graph(loaded.family)
    if graphml is not None:
        write_graphml(graph, graphml)
    if as_json:
        emit_json({"case": case, "title": loaded.title, **trace_data(loaded, graph)})
    else:
        click.echo(render_trace(loaded, graph))
        if graphml is not None:
            click.echo(f"graph written to {graphml}")


@main.command("margin")
@click.argument("cases", nargs=-1, required=True, type=CASE_PATH)
@click.option("--cap", default="100", show_default=True, help="Largest tolerance scale tried.")
@click.option("--rel-tol", type=click.FloatRange(min=1e-15, max=0.5), default=None,
              help="Relative bracket width asked for [default: 1e-9 interval families, 1e-6 others].")
@search_budget_options(1000, 48)
@click.option("--no-decay", is_flag=True, help="Skip the decay-rate margin.")
@click.option("--no-criteria", is_flag=True, help="Skip the gain, phase, damping and radius brackets.")
@click.option("--certificate", type=click.Path(dir_okay=False, path_type=str), default=None,
              help="Also write the proof of the bracket's proven end (every tolerance scaled by it) "
                   "to this new JSON file.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document (a list for several cases).")
def margin_command(cases: tuple[str, ...], cap: str, rel_tol: float | None, max_seconds: float,
                   max_boxes: int, max_tests: int, no_decay: bool, no_criteria: bool, certificate: str | None,
                   as_json: bool) -> None:
    """Robust margin rho* (how far every tolerance can grow), the decay-rate margin, and the
    worst-case damping ratio; for loops the gain and phase margins, for discrete time the
    spectral radius. Each is a certified bracket with the point that limits it.

    Several CASE files, or a directory of them, give one line per case and a summary table.

    Exit codes: 0 computed (and requirements met), 1 a requirement of the case is not
    proven met, 2 bad input or an unusable --certificate path (the worst over cases).
    """
    from ..exact.numbers import to_fraction
    from .batch import is_batch, run_batch

    cap_value = to_fraction(cap, "--cap")
    if cap_value <= 0:
        from ..errors import InputError

        raise InputError("--cap", "must be positive", "a number such as 100", cap)
    settings = dict(cap=cap_value, rel_tol=rel_tol, max_seconds=max_seconds, max_boxes=max_boxes,
                    max_tests=max_tests, with_decay=not no_decay, with_criteria=not no_criteria)
    if is_batch(cases):
        if certificate is not None:
            from ..errors import InputError

            raise InputError("--certificate", "writes the proof of one case", "a single CASE file")
        run_batch("margin", cases, lambda path: _margin_case(path, settings, None), as_json)
    code, document, text, _ = _margin_case(cases[0], settings, certificate)
    if as_json:
        emit_json(document)
    else:
        click.echo(text)
    sys.exit(code)


def _margin_case(case: str, settings: dict, certificate: str | None) -> tuple[int, dict, str, str]:
    """(exit code, JSON document, text, batch line) of ``robust margin`` on one case."""
    from ..analysis.margin import margin
    from ..analysis.outcomes import Outcome
    from ..analysis.progress import listening
    from ..exact.numbers import approx_text
    from ..render.text import render_margin

    loaded = load(case)
    if certificate is not None:
        from ..render.writer import check_new_file

        check_new_file(certificate, "--certificate")
    shown = progress_bar("margin", None, "decision")
    with listening(shown.listen):
        result = margin(loaded, **settings)
    upper = "no failure up to the cap" if result.margin.upper is None \
        else approx_text(result.margin.upper, 6)
    bracket = f"rho* in [{approx_text(result.margin.lower, 6)}, {upper}]"
    shown.finish(bracket)
    written = None
    if certificate is not None:
        rho = result.margin.lower
        scaled = loaded.family.box.scaled(loaded.family.nominal, rho)
        written = write_certificate(certificate, loaded, box=scaled, scale=rho,
                                     max_boxes=settings["max_boxes"], max_seconds=settings["max_seconds"])
    extra = {} if written is None else {"certificate": {"file": certificate, **written["summary"]}}
    document = {"case": case, "title": loaded.title, **result.as_dict(), **extra}
    # a requirement that is not proven met (failed or undecided) fails the command, as in check
    failed = [name for name, _, outcome in result.outcomes() if outcome is not Outcome.PASS]
    line = bracket + ("; requirement not proven met: " + ", ".join(failed) if failed else "")
    return (1 if failed else 0), document, render_margin(loaded, result), line


@main.command("rank")
@click.argument("case", type=CASE_PATH)
@search_budget_options(500, 16)
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def rank_command(case: str, max_seconds: float, max_boxes: int, max_tests: int, as_json: bool) -> None:
    """Rank the parameters, most critical first, with their margins.

    Exit codes: 0 ranked, 2 bad input.
    """
    from ..analysis.progress import listening
    from ..analysis.rank import rank
    from ..render.text import render_rank

    loaded = load(case)
    shown = progress_bar("rank", None, "decision")
    shown.brackets = False  # one search per parameter: no single bracket to show
    with listening(shown.listen):
        result = rank(loaded, max_seconds=max_seconds, max_boxes=max_boxes, max_tests=max_tests)
    first = result.parameters[0].name if result.parameters else None
    shown.finish(f"{len(result.parameters)} parameters ranked"
                 + (f", most critical {first}" if first else ""))
    if as_json:
        emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_rank(loaded, result))


@main.command("yield")
@click.argument("case", type=CASE_PATH)
@click.option("-n", "draws", type=click.IntRange(min=1, max=10**8), default=100_000, show_default=True,
              help="Number of random builds.")
@click.option("--seed", type=int, default=0, show_default=True, help="Random seed.")
@executor_options
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def yield_command(case: str, draws: int, seed: int, workers: int | None, cluster: str | None,
                  as_json: bool) -> None:
    """Monte Carlo yield: the fraction of random builds that are stable.

    The draws come in chunks of 100,000, each from its own seeded stream, so the result is the
    same in this process, on local processes or on a cluster. Without --workers, runs of
    2,000,000 draws or more use every core and smaller ones stay in this process (starting
    workers would cost more than it saves).

    Exit codes: 0 estimated (whatever the yield), 2 bad input, 3 the work could not be
    finished (a worker process or the cluster lost).
    """
    from ..analysis.executor import TaskRunner
    from ..analysis.montecarlo import PARALLEL_DRAWS, estimate_yield
    from ..render.text import render_yield

    loaded = load(case)
    if workers is None and cluster is None and draws < PARALLEL_DRAWS:
        workers = 1
    shown = progress_bar("yield", draws, "draw")

    def progress(done: int, _total: int) -> None:
        shown.reach(done)

    with TaskRunner(workers, cluster) as runner:
        result = estimate_yield(loaded, draws, seed, progress=progress, run=runner.run)
    shown.finish(f"{result.fraction:.2%} stable")
    if as_json:
        emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_yield(loaded, result))


