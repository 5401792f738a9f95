"""``robust map``: a certified map of one or two design parameters."""

from __future__ import annotations

import click

from .core import CASE_PATH, emit_json, executor_options, load, main, progress_bar


@main.command("map")
@click.argument("case", type=CASE_PATH)
@click.option("--vary", "varied", multiple=True, required=True, metavar="NAME=LO..HI",
              help="A design parameter and its range (once or twice); the others keep their tolerances.")
@click.option("--resolution", type=click.IntRange(min=1, max=256), default=8, show_default=True,
              help="Cells per axis of the first grid.")
@click.option("--depth", type=click.IntRange(min=0, max=10), default=2, show_default=True,
              help="How many times a boundary or undecided cell may be halved.")
@click.option("--max-cells", type=click.IntRange(min=1), default=1000, show_default=True,
              help="Work budget: cell decisions in all (the first grid is always decided).")
@click.option("--max-boxes", type=click.IntRange(min=1), default=200, show_default=True,
              help="Work budget of each cell decision: sub-boxes/edges to examine.")
@click.option("--max-seconds", type=click.FloatRange(min=0.01), default=60.0, show_default=True,
              help="Safety stop of each cell decision in wall-clock seconds (reported when it fires).")
@executor_options
@click.option("-o", "--output", "directory", default=None, type=click.Path(path_type=str),
              help="Also write map.png, map.svg and map.json into this new or empty directory.")
@click.option("--json", "as_json", is_flag=True, help="Print one JSON document.")
def map_command(case: str, varied: tuple[str, ...], resolution: int, depth: int, max_cells: int,
                max_boxes: int, max_seconds: float, workers: int | None, cluster: str | None,
                directory: str | None, as_json: bool) -> None:
    """Map which design values of one or two parameters are proven stable for every
    toleranced value of the others, which are refuted (a verified witness), and which are
    undecided; boundary cells are refined.

    Exit codes: 0 the map was made (whatever it shows), 2 bad input or an unusable -o,
    3 the work could not be finished (a worker process or the cluster lost).
    """
    from ..analysis.designmap import check_axes, design_map, parse_axis
    from ..errors import InputError

    loaded = load(case)
    axes = check_axes([parse_axis(text, loaded) for text in varied])
    if resolution ** len(axes) > max_cells:
        raise InputError("--resolution", f"the first grid needs {resolution ** len(axes)} cell decisions, "
                         f"more than --max-cells {max_cells}", "a smaller resolution or a larger --max-cells")
    if directory is not None:
        from ..render.designmap import check_map_directory

        check_map_directory(directory)
    shown = progress_bar("map", None, "cell")
    result = design_map(loaded, axes, resolution=resolution, depth=depth, max_cells=max_cells,
                        max_boxes=max_boxes, max_seconds=max_seconds, workers=workers, cluster=cluster,
                        progress=shown.reach)
    summary = result.summary()
    shown.finish(f"{summary['stable']} proven stable, {summary['unstable']} unstable, "
                 f"{summary['undecided']} undecided")
    document = {"case": case, "title": loaded.title, **result.as_dict()}
    if directory is not None:
        from ..render.designmap import write_map

        written = write_map(result, directory, document, loaded.title)
        click.echo("map written to " + ", ".join(str(p) for p in written), err=True)
    if as_json:
        emit_json(document)
    else:
        from ..render.designmap import render_map

        click.echo(render_map(result, loaded.title))
