"""Writing a report directory: report.html, report.md with figures/*.png, result.json.

Never overwrites what the user wrote: a directory that exists, is not empty and does not
hold a previous robust report (a result.json whose ``tool.name`` is ``"robust"``) is
refused. A previous report is replaced file by file; other files beside it stay.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path

from ..analysis.signoff import Analysis
from ..errors import InputError
from .content import build_document
from .data import TOOL_NAME, result_data
from .figures import FIGURE_NAMES, draw_figures
from .html import render_html
from .markdown import render_markdown

__all__ = ["REPORT_FILES", "ReportFiles", "check_directory", "write_report"]

#: Every file a report may write, relative to its directory (what "replace" may touch).
REPORT_FILES = ("report.html", "report.md", "result.json", "case.toml",
                *(f"figures/{name}.png" for name in FIGURE_NAMES))


@dataclass(frozen=True, slots=True)
class ReportFiles:
    """Where a report was written."""

    directory: Path
    html: Path
    markdown: Path
    json: Path
    figures: tuple[Path, ...]
    extra: tuple[Path, ...] = ()


def _is_previous_report(directory: Path) -> bool:
    marker = directory / "result.json"
    if not marker.is_file():
        return False
    try:
        data = json.loads(marker.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError):
        return False
    tool = data.get("tool") if isinstance(data, dict) else None
    return isinstance(tool, dict) and tool.get("name") == TOOL_NAME


def check_directory(directory: str | Path, extra_files: Mapping[str, bytes] | None = None) -> Path:
    """The report directory, checked: missing, empty, or holding a previous robust report.

    ``extra_files`` (name -> bytes, see :func:`write_report`) may only replace files of the
    same content.

    Raises
    ------
    InputError
        When it is a file, or a non-empty directory that holds something else.
    """
    path = Path(directory)
    if path.exists() and not path.is_dir():
        raise InputError("-o", "is a file, not a directory", "a new or empty directory", str(path))
    if path.is_dir() and any(path.iterdir()) and not _is_previous_report(path):
        raise InputError("-o", "the directory is not empty and holds no previous robust report; "
                         "robust never overwrites other files", "a new or empty directory", str(path))
    for name, content in (extra_files or {}).items():
        if name not in REPORT_FILES or name.startswith("figures/"):
            raise InputError("extra_files", "not a report file name", "case.toml", name)
        existing = path / name
        if existing.is_file() and existing.read_bytes() != content:
            raise InputError("-o", f"{name} there differs from the one to be written; robust never "
                             "overwrites it", "a new or empty directory", str(existing))
    return path


def _footer(analysis: Analysis) -> str:
    return (f"robust {analysis.version} · {analysis.started} · case SHA-256 {analysis.case.sha256}")


def write_report(analysis: Analysis, directory: str | Path, *,
                 extra_files: Mapping[str, bytes] | None = None,
                 progress: Callable[[str], None] | None = None) -> ReportFiles:
    """Write the report of ``analysis`` into ``directory`` (created when missing).

    Parameters
    ----------
    extra_files
        More files to write beside the report, name -> bytes; only names listed in
        :data:`REPORT_FILES` (e.g. ``case.toml``).
    progress
        Called with one line per stage.

    Raises
    ------
    InputError
        When ``directory`` holds something other than a previous robust report.
    """
    say = progress or (lambda _line: None)
    extra = dict(extra_files or {})
    path = check_directory(directory, extra)
    say("report: drawing the figures")
    pictures = draw_figures(analysis)
    images = {p.name: p.png for p in pictures}
    document = build_document(analysis)
    footer = _footer(analysis)
    say(f"report: writing {path}")
    figures_dir = path / "figures"
    figures_dir.mkdir(parents=True, exist_ok=True)
    # a previous report's outputs are replaced; a case file beside it (perhaps the input of
    # this very run) is left alone unless the caller writes the same bytes again
    for name in REPORT_FILES:
        old = path / name
        if name != "case.toml" and old.is_file():
            old.unlink()
    figure_paths = []
    for picture in pictures:
        target = figures_dir / f"{picture.name}.png"
        target.write_bytes(picture.png)
        figure_paths.append(target)
    html_path = path / "report.html"
    html_path.write_text(render_html(document, images, footer), encoding="utf-8")
    md_path = path / "report.md"
    md_path.write_text(render_markdown(document, {p.name: f"figures/{p.name}.png" for p in pictures}, footer),
                       encoding="utf-8")
    written_extra = []
    for name, content in extra.items():
        target = path / name
        target.write_bytes(content)
        written_extra.append(target)
    # result.json last: its presence marks a complete report
    json_path = path / "result.json"
    json_path.write_text(json.dumps(result_data(analysis), indent=2, ensure_ascii=False) + "\n",
                         encoding="utf-8")
    return ReportFiles(path, html_path, md_path, json_path, tuple(figure_paths), tuple(written_extra))
