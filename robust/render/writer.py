"""Writing a report directory: report.html, report.md with figures/*.png, result.json.

Never overwrites what the user wrote: a directory that exists, is not empty and does not
hold a previous robust report (a result.json whose ``tool.name`` is ``"robust"``) is
refused, and so is every output path that cannot work (a file, a symbolic link, a path
under a file, a folder that cannot be written), before any analysis runs.

A report is written whole into a temporary folder beside the target and renamed into place
when complete, so an interrupted run leaves the previous report as it was and nothing that
blocks the next run. Replacing a previous report moves the files that are not the report's
own (notes, the case file) into the new folder and then swaps the two folders, with the
interrupt signal held back for those few renames. Symbolic links are never followed inside
a report folder: a report folder that holds one is refused.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import signal
import tempfile
from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from pathlib import Path

from ..analysis.certificate import certificate_bytes
from ..analysis.signoff import Analysis
from ..errors import InputError
from .content import build_document
from .data import TOOL_NAME, result_data
from .figures import FIGURE_NAMES, draw_figures
from .html import render_html
from .markdown import render_markdown

__all__ = ["REPORT_FILES", "ReportFiles", "check_directory", "check_new_file", "write_new_file", "write_report"]

#: Every file a report may write, relative to its directory (what "replace" may touch).
REPORT_FILES = ("report.html", "report.md", "result.json", "case.toml", "certificate.json",
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
    if marker.is_symlink() or not marker.is_file():
        return False
    try:
        data = json.loads(marker.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError):
        return False
    tool = data.get("tool") if isinstance(data, dict) else None
    return isinstance(tool, dict) and tool.get("name") == TOOL_NAME


def _refuse(what: str, problem: str, path: Path, expected: str = "a new or empty directory") -> InputError:
    return InputError(what, problem, expected, str(path))


def _check_writable_place(path: Path, what: str, expected: str) -> None:
    """The nearest existing folder above ``path`` must be a folder we may write in."""
    above = path.absolute().parent
    while not os.path.lexists(above):
        above = above.parent
    if not above.is_dir():
        raise _refuse(what, f"{above} is not a directory, so nothing can be made under it", path, expected)
    if not os.access(above, os.W_OK | os.X_OK):
        raise _refuse(what, f"cannot write in {above} (permission denied)", path, expected)


def _links_inside(path: Path) -> list[Path]:
    """Symbolic links among the entries a report folder and its figures/ hold."""
    links = [entry for entry in path.iterdir() if entry.is_symlink()]
    figures = path / "figures"
    if figures.is_dir() and not figures.is_symlink():
        links += [entry for entry in figures.iterdir() if entry.is_symlink()]
    return links


def check_directory(directory: str | Path, extra_files: Mapping[str, bytes] | None = None) -> Path:
    """The report directory, checked: missing, empty, or holding a previous robust report,
    and writable (call it before the analysis: every problem is found before any work).

    ``extra_files`` (name -> bytes, see :func:`write_report`) may only replace files of the
    same content.

    Raises
    ------
    InputError
        When it is a file or a symbolic link, cannot be created or written, holds a
        symbolic link, or is a non-empty directory that holds something else.
    """
    path = Path(directory)
    if path.is_symlink():  # a dangling one too
        raise _refuse("-o", "is a symbolic link; robust writes reports only into real directories", path)
    _check_writable_place(path, "-o", "a new or empty directory")
    if path.exists() and not path.is_dir():
        raise _refuse("-o", "is a file, not a directory", path)
    if path.is_dir():
        if any(path.iterdir()) and not _is_previous_report(path):
            raise _refuse("-o", "the directory is not empty and holds no previous robust report; "
                          "robust never overwrites other files", path)
        links = _links_inside(path)
        if links:
            raise _refuse("-o", f"{links[0].relative_to(path)} in it is a symbolic link; robust never "
                          "follows links inside a report folder", path)
        if not os.access(path, os.W_OK | os.X_OK):
            raise _refuse("-o", "cannot write in it (permission denied)", path)
    for name, content in (extra_files or {}).items():
        if name not in REPORT_FILES or name.startswith("figures/"):
            raise InputError("extra_files", "not a report file name", "case.toml", name)
        existing = path / name
        if existing.is_file() and existing.read_bytes() != content:
            raise InputError("-o", f"{name} there differs from the one to be written; robust never "
                             "overwrites it", "a new or empty directory", str(existing))
    return path


def check_new_file(path: str | Path, what: str) -> Path:
    """A path for a new file, checked before any work: it must not exist (nor be a link,
    even a dangling one), and its folder must exist and be writable.

    Raises
    ------
    InputError
        Naming ``what`` (e.g. ``"--graphml"``) and what is wrong.
    """
    target = Path(path)
    expected = "a new file in an existing, writable folder"
    if os.path.lexists(target):
        problem = ("is a symbolic link" if target.is_symlink() else "the file exists already") + \
            "; robust never overwrites it"
        raise InputError(what, problem, "a new file name", str(target))
    folder = target.absolute().parent
    if not folder.is_dir():
        problem = (f"{folder} is not a directory" if os.path.lexists(folder)
                   else "its folder does not exist")
        raise InputError(what, problem, expected, str(target))
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(what, f"cannot write in {folder} (permission denied)", expected, str(target))
    return target


def write_new_file(path: str | Path, content: bytes, what: str) -> Path:
    """Write ``content`` to the new file ``path``: complete or not at all (written beside it,
    then linked into place), and never over an existing file or link.

    Raises
    ------
    InputError
        Naming ``what`` when ``path`` appeared since it was checked.
    """
    target = Path(path)
    handle, partial = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".partial",
                                       dir=target.absolute().parent)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(content)
        os.chmod(partial, 0o666 & ~_umask())
        os.link(partial, target)  # fails when the target exists: nothing is overwritten
    except FileExistsError:
        raise InputError(what, "the file exists already; robust never overwrites it", "a new file name",
                         str(target)) from None
    finally:
        os.unlink(partial)
    return target


@contextlib.contextmanager
def _interrupts_held() -> Iterator[None]:
    """Hold SIGINT back (delivered when the block ends): a few renames become one step."""
    blocking = hasattr(signal, "pthread_sigmask")
    if blocking:
        signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        if blocking:
            signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})


def _ours(extra: Mapping[str, bytes]) -> set[str]:
    """The previous report's files that the new one replaces (relative names)."""
    return {name for name in REPORT_FILES if name != "case.toml" or name in extra}


def _place(fresh: Path, path: Path, extra: Mapping[str, bytes]) -> None:
    """Move the finished report ``fresh`` to ``path``; a previous report there is replaced,
    the files beside it that are not the report's own move along (and back, should a
    rename fail half way)."""
    with _interrupts_held():
        if not path.exists():
            os.rename(fresh, path)
            return
        ours = _ours(extra)
        moves = []
        for entry in path.iterdir():
            if entry.name == "figures" and entry.is_dir() and not entry.is_symlink():
                moves += [(child, fresh / "figures" / child.name) for child in entry.iterdir()
                          if f"figures/{child.name}" not in ours]
            elif entry.name not in ours:
                moves.append((entry, fresh / entry.name))
        old = Path(tempfile.mkdtemp(prefix=f".{path.name}.old-", dir=path.parent))
        done: list[tuple[Path, Path]] = []
        swapped = False
        try:
            for source, target in moves:
                os.rename(source, target)
                done.append((source, target))
            os.rename(path, old / "report")
            swapped = True
            os.rename(fresh, path)
        except OSError:  # put everything back as it was
            if swapped:
                os.rename(old / "report", path)
            for source, target in reversed(done):
                os.rename(target, source)
            os.rmdir(old)
            raise
        shutil.rmtree(old)  # the old report's own files: rmtree never follows links


def _footer(analysis: Analysis) -> str:
    return (f"robust {analysis.version} · {analysis.started} · case SHA-256 {analysis.case.sha256}")


def write_report(analysis: Analysis, directory: str | Path, *,
                 extra_files: Mapping[str, bytes] | None = None,
                 progress: Callable[[str], None] | None = None) -> ReportFiles:
    """Write the report of ``analysis`` into ``directory`` (created when missing).

    The files are written into a temporary folder beside ``directory`` and moved into
    place when complete (see the module notes).

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
        When ``directory`` cannot hold the report (see :func:`check_directory`).
    """
    say = progress or (lambda _line: None)
    extra = dict(extra_files or {})
    path = check_directory(directory, extra)
    say("report: drawing the figures")
    pictures = draw_figures(analysis)
    images = {p.name: p.png for p in pictures}
    document = build_document(analysis, str(directory))
    footer = _footer(analysis)
    html = render_html(document, images, footer)
    markdown = render_markdown(document, {p.name: f"figures/{p.name}.png" for p in pictures}, footer)
    data = json.dumps(result_data(analysis), indent=2, ensure_ascii=False) + "\n"
    say(f"report: writing {path}")
    path.absolute().parent.mkdir(parents=True, exist_ok=True)
    fresh = Path(tempfile.mkdtemp(prefix=f".{path.name}.partial-", dir=path.absolute().parent))
    try:
        (fresh / "figures").mkdir()
        for picture in pictures:
            (fresh / "figures" / f"{picture.name}.png").write_bytes(picture.png)
        (fresh / "report.html").write_text(html, encoding="utf-8")
        (fresh / "report.md").write_text(markdown, encoding="utf-8")
        for name, content in extra.items():
            (fresh / name).write_bytes(content)
        (fresh / "result.json").write_text(data, encoding="utf-8")
        if analysis.certificate is not None:
            (fresh / "certificate.json").write_bytes(certificate_bytes(analysis.certificate))
        os.chmod(fresh, 0o777 & ~_umask())  # mkdtemp makes it private; a report folder is not
        _place(fresh, path, extra)
    except BaseException:
        shutil.rmtree(fresh, ignore_errors=True)
        raise
    return ReportFiles(path, path / "report.html", path / "report.md", path / "result.json",
                       tuple(path / "figures" / f"{p.name}.png" for p in pictures),
                       tuple(path / name for name in extra))


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
