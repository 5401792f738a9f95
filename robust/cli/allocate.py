"""The allocate command: the cheapest tolerance class per part for which a case still passes."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from .core import CASE_PATH, emit_json, executor_options, load, main, progress_bar, write_certificate


@main.command("allocate")
@click.argument("case", type=CASE_PATH)
@click.option("--classes", "classes_text", required=True,
              help='Tolerance classes and their cost per part, e.g. "1%:4, 2%:2, 5%:1, 10%:0.6".')
@click.option("--parts", default=None,
              help="Comma-separated parts to allocate [default: every part whose tolerance is "
                   "written in %]. The others keep their tolerances as written.")
@click.option("--max-decisions", type=click.IntRange(min=1), default=200, show_default=True,
              help="Work budget: designs decided by proof.")
@click.option("--max-boxes", type=click.IntRange(min=1), default=2000, show_default=True,
              help="Work budget: sub-boxes per decision.")
@click.option("--max-seconds", type=click.FloatRange(min=0.1), default=60.0, show_default=True,
              help="Safety stop per decision in wall-clock seconds (reported when it fires).")
@executor_options
@click.option("--write-case", "case_out", type=click.Path(dir_okay=False, path_type=str), default=None,
              help="Also write the chosen design as a new case file: CASE with the allocated "
                   "tolerances, every other line as written.")
@click.option("--certificate", type=click.Path(dir_okay=False, path_type=str), default=None,
              help="Also write the proof of the chosen design to this new JSON file (needs "
                   "--write-case; re-check it with robust verify FILE --case THAT-CASE).")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def allocate_command(case: str, classes_text: str, parts: str | None, max_decisions: int, max_boxes: int,
                     max_seconds: float, workers: int | None, cluster: str | None, case_out: str | None,
                     certificate: str | None, as_json: bool) -> None:
    """Choose a tolerance class per part at the least total cost such that CASE stays robustly
    stable and meets its requirements, every design decided by proof.

    Each class is +-TOLERANCE about the part's nominal; a class whose range reaches a part's
    physical limit is not offered to it. Designs are decided cheapest first; an undecided
    design counts as not passing. A failure rules out every design whose box holds its
    witness, without deciding it.

    Designs are decided in batches on local processes (--workers) or a dask cluster
    (--cluster); the batches, not where they run, fix the result.

    Exit codes: 0 a passing design found, 1 none passes (or none proven within the budget),
    2 bad input, 3 the work could not be finished (a worker process or the cluster lost).
    """
    from ..analysis.allocate import allocate, allocation_parts, parse_classes
    from ..analysis.executor import TaskRunner
    from ..errors import InputError
    from ..exact.numbers import approx_text
    from ..model.rewrite import source_text, with_tolerances
    from ..render.allocation import render_allocation
    from ..render.writer import check_new_file

    if certificate is not None and case_out is None:
        raise InputError("--certificate", "the proof of the chosen design needs the case file it proves",
                         "--write-case FILE as well")
    for path, what in ((case_out, "--write-case"), (certificate, "--certificate")):
        if path is not None:
            check_new_file(path, what)
    if case_out is not None and certificate is not None and \
            Path(case_out).absolute().resolve() == Path(certificate).absolute().resolve():
        raise InputError("--certificate", "the same file as --write-case", "two different file names",
                         certificate)
    loaded = load(case)
    classes = parse_classes(classes_text)
    names = None if parts is None else tuple(name.strip() for name in parts.split(","))
    candidates = allocation_parts(loaded, classes, names)  # bad input fails here, before any analysis
    text = None
    if case_out is not None:  # the rewrite is tried on the tightest design before any analysis
        text = source_text(loaded)
        with_tolerances(text, {p.name: (p.nominal, p.options[0].text, *p.interval(0)) for p in candidates},
                        "chosen by robust allocate", loaded.path)
    shown = progress_bar("allocate", None, "design decided")
    shown.brackets = False

    def run(function, items):  # progress counts designs decided, wherever they run
        before = shown.count
        return runner.run(function, items, progress=lambda done, _total: shown.reach(before + done))

    with TaskRunner(workers, cluster) as runner:
        result = allocate(loaded, classes, names, max_boxes=max_boxes, max_decisions=max_decisions,
                          max_seconds=max_seconds, run=run)
    shown.finish("" if result.cost is None else f"cheapest passing costs {approx_text(result.cost, 8)}")
    written = _write_design(loaded, result, text, case_out, certificate, max_boxes, max_seconds) \
        if case_out is not None and text is not None and result.chosen is not None else None
    if as_json:
        emit_json({"case": case, "title": loaded.title, **result.as_dict(), "written_case": written})
    else:
        click.echo(render_allocation(loaded, result))
        if written is not None:
            click.echo(f"Chosen design written to {written}: check, report or sign it off like any case")
    sys.exit(0 if result.chosen is not None else 1)


def _write_design(loaded, result, text: str, case_out: str, certificate: str | None, max_boxes: int,
                  max_seconds: float) -> str:
    """Write the chosen design as a case file (and its certificate); return the file's path."""
    from ..model.case import load_case
    from ..model.rewrite import with_tolerances
    from ..render.writer import write_new_file

    chosen = with_tolerances(text, result.ranges_of(result.chosen), "chosen by robust allocate", loaded.path)
    write_new_file(case_out, chosen.encode("utf-8"), "--write-case")
    if certificate is not None:
        write_certificate(certificate, load_case(case_out), max_boxes=max(max_boxes, 20_000),
                          max_seconds=max_seconds)
    return case_out
