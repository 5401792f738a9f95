"""The allocate command: the cheapest tolerance class per part for which a case still passes."""

from __future__ import annotations

import sys

import click

from .core import CASE_PATH, emit_json, load, main, progress_bar


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
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def allocate_command(case: str, classes_text: str, parts: str | None, max_decisions: int, max_boxes: int,
                     max_seconds: float, as_json: bool) -> None:
    """Choose a tolerance class per part at the least total cost such that CASE stays robustly
    stable and meets its requirements, every design decided by proof.

    Each class is +-TOLERANCE about the part's nominal; a class whose range reaches a part's
    physical limit is not offered to it. Designs are decided cheapest first; an undecided
    design counts as not passing. A failure rules out every design whose box holds its
    witness, without deciding it.

    Exit codes: 0 a passing design found, 1 none passes (or none proven within the budget),
    2 bad input.
    """
    from ..analysis.allocate import allocate, allocation_parts, parse_classes
    from ..analysis.progress import listening
    from ..exact.numbers import approx_text
    from ..render.allocation import render_allocation

    loaded = load(case)
    classes = parse_classes(classes_text)
    names = None if parts is None else tuple(name.strip() for name in parts.split(","))
    allocation_parts(loaded, classes, names)  # bad input fails here, before any analysis
    shown = progress_bar("allocate", None, "decision")
    shown.brackets = False
    with listening(shown.listen):
        result = allocate(loaded, classes, names, max_boxes=max_boxes, max_decisions=max_decisions,
                          max_seconds=max_seconds)
    shown.finish(f"{len(result.log)} designs decided"
                 + ("" if result.cost is None else f", cheapest passing costs {approx_text(result.cost, 8)}"))
    if as_json:
        emit_json({"case": case, "title": loaded.title, **result.as_dict()})
    else:
        click.echo(render_allocation(loaded, result))
    sys.exit(0 if result.chosen is not None else 1)
