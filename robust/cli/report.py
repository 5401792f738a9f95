"""``robust report`` and ``robust demo``: the whole sign-off written to a directory."""

from __future__ import annotations

import click

from .core import CASE_PATH, emit_json, load, main, progress_bar, say


class _Stages:
    """The stages of a report on stderr: on a terminal beside the live decision counter of
    :class:`~robust.render.progress.Progress`; elsewhere one line as each stage starts (a
    report runs for many seconds, and a log or a supervising program learns from these lines
    that the analysis has begun)."""

    def __init__(self, label: str) -> None:
        self.lines: list[str] = []
        self.shown = progress_bar(label, None, "decision")

    def __call__(self, line: str) -> None:
        self.lines.append(line)
        if self.shown.live:
            self.shown.restart(line, brackets=line.startswith("margin"))
        else:
            say(line)

    def finish(self) -> None:
        if self.shown.live:
            self.shown.finish("; ".join(self.lines))


def _summary_lines(analysis, files) -> list[str]:
    """The short summary ``robust report`` and ``robust demo`` print."""
    from ..exact.numbers import approx_text
    from ..render.content import outcome

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
@click.argument("cases", nargs=-1, required=True, type=CASE_PATH)
@click.option("-o", "--output", "directory", required=True, type=click.Path(path_type=str),
              help="Directory for report.html, report.md, figures/ and result.json "
                   "(several cases: one sub-directory per case, named after its file).")
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
def report_command(cases: tuple[str, ...], directory: str, max_boxes: int, search_boxes: int,
                   search_tests: int, max_seconds: float, draws: int, seed: int, as_json: bool) -> None:
    """Write the sign-off report of CASE into a directory (HTML, Markdown, JSON).

    Several CASE files, or a directory of them, give one report each in a sub-directory of
    the output directory, one line per case and a summary table.

    Exit codes: 0 the report was written (whatever it concludes), 2 bad input or an
    unusable output directory (the worst over cases).
    """
    from .batch import case_paths, is_batch, run_batch

    settings = dict(max_seconds=max_seconds, max_boxes=max_boxes, search_boxes=search_boxes,
                    search_tests=search_tests, yield_draws=draws, seed=seed)
    if is_batch(cases):
        from pathlib import Path

        from ..errors import InputError

        top = Path(directory)
        if top.is_symlink() or (top.exists() and not top.is_dir()):
            raise InputError("-o", "is a file or a symbolic link", "a directory for one report per case",
                             directory)
        top.mkdir(parents=True, exist_ok=True)
        stems: dict[str, str] = {}
        for path in case_paths(cases):
            stem = Path(path).stem
            stems[path] = stem if stem not in stems.values() else f"{stem}-{len(stems) + 1}"
        run_batch("report", cases,
                  lambda path: _report_case(path, str(top / stems[path]), settings), as_json)
    _, document, text, _ = _report_case(cases[0], directory, settings)
    if as_json:
        emit_json(document)
    else:
        click.echo(text)


def _report_case(case: str, directory: str, settings: dict) -> tuple[int, dict, str, str]:
    """(exit code, JSON document, text, batch line) of ``robust report`` on one case."""
    from ..analysis.progress import listening
    from ..analysis.signoff import analyse
    from ..render.content import outcome, rerun_command
    from ..render.data import result_data
    from ..render.writer import check_directory, write_report

    check_directory(directory)
    loaded = load(case)
    stages = _Stages("report")
    with listening(stages.shown.listen):
        analysis = analyse(loaded, progress=stages, **settings)
        files = write_report(analysis, directory, progress=stages)
    stages.finish()
    text = "\n".join([*_summary_lines(analysis, files), "Re-run: " + rerun_command(analysis)])
    line = f"sign-off {outcome(analysis)[0].upper()} ({analysis.check.verdict.value}); {files.html}"
    return 0, result_data(analysis), text, line


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

    from ..analysis.progress import listening
    from ..analysis.signoff import analyse
    from ..model.case import load_case
    from ..render.content import rerun_command
    from ..render.data import result_data
    from ..render.writer import check_directory, write_report

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
        emit_json(result_data(analysis))
        return
    click.echo("\n".join(_summary_lines(analysis, files)))
    click.echo("Re-run: " + rerun_command(analysis, str(Path(target) / "case.toml")))
