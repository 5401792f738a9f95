"""Interrupts and output paths of the command line: exit 130 with one line, reports that are
either complete or not there, and output paths refused before any analysis.

The interrupt tests start ``python -m robust`` as a child process and send it SIGINT, at
start-up and during the analysis, waiting for the child's own progress lines rather than for
a clock. Exit code 130 for an interrupted command is the shell convention 128 + SIGINT
(common practice, no source). Reports are compared byte for byte before and after.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from robust.cli import main

ROOT = Path(__file__).resolve().parent.parent
CASE = ROOT / "cases" / "servo_pid.toml"
QUICK = ["--max-seconds", "3", "--draws", "300"]


def _report(directory: Path) -> dict[str, bytes]:
    """Every file of a report folder, by relative path."""
    return {str(p.relative_to(directory)): p.read_bytes()
            for p in sorted(directory.rglob("*")) if p.is_file()}


@pytest.fixture
def previous(tmp_path):
    """A complete report written by robust itself, and its files."""
    target = tmp_path / "report"
    result = CliRunner().invoke(main, ["report", str(CASE), "-o", str(target), *QUICK])
    assert result.exit_code == 0, result.stderr
    return target, _report(target)


def _default_interrupt() -> None:
    """In the child before it runs Python: SIGINT back to its default action. A shell that
    starts a job in the background without job control (as CI runners do) makes the job ignore
    SIGINT, and Python then never turns SIGINT into KeyboardInterrupt; the tests are about an
    interrupt a user can send."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _start(*args: str, python: tuple[str, ...] = ()) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, *python, "-m", "robust", *args], cwd=ROOT,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            preexec_fn=_default_interrupt)


def _finish(child: subprocess.Popen, lines: list[str]) -> tuple[int, list[str]]:
    _, rest = child.communicate(timeout=600)
    return child.returncode, [line for line in lines + rest.splitlines()
                              if not line.startswith("import time:")]


def _assert_interrupted(code: int, lines: list[str]) -> None:
    assert code == 130, lines
    assert lines[-1] == "robust: interrupted"
    assert not any("Traceback" in line or "KeyboardInterrupt" in line for line in lines)
    assert all(line.split(":")[0] in ("check", "requirements", "margin", "rank", "yield", "report")
               for line in lines[:-1])  # progress lines, then the one line


def _assert_intact(target: Path, files: dict[str, bytes]) -> None:
    assert _report(target) == files
    assert sorted(p.name for p in target.parent.iterdir()) == ["report"]  # no partial folder left


def test_interrupt_during_start_up_exits_130_and_keeps_the_previous_report(previous):
    """SIGINT while robust is still loading gives exit 130, one line, and nothing written."""
    target, files = previous
    # -X importtime reports each module as it finishes loading. The package itself is loaded by
    # Python's start-up code (outside robust's reach); the first of robust's modules after it is
    # loaded by the command line's own start, which is where this interrupt lands, whatever the
    # machine's load
    child = _start("report", str(CASE), "-o", str(target), "--max-seconds", "60",
                   python=("-X", "importtime"))
    assert child.stderr is not None
    package_loaded = False
    for line in child.stderr:
        module = line.rsplit("|", 1)[-1].strip() if line.startswith("import time:") else ""
        if package_loaded and module.startswith("robust."):
            child.send_signal(signal.SIGINT)
            break
        package_loaded = package_loaded or module == "robust"
    code, lines = _finish(child, [])
    _assert_interrupted(code, lines)
    _assert_intact(target, files)


def test_interrupt_during_the_analysis_exits_130_and_keeps_the_previous_report(previous):
    """SIGINT once the analysis has begun gives exit 130, one line, and the old report as it was;
    the next run is not blocked by anything the interrupted one left."""
    target, files = previous
    child = _start("report", str(CASE), "-o", str(target), "--max-seconds", "60")
    assert child.stderr is not None
    lines = []
    for line in child.stderr:  # wait for the analysis to start, however long loading takes
        lines.append(line.rstrip("\n"))
        if line.startswith("check:"):
            child.send_signal(signal.SIGINT)
            break
    code, lines = _finish(child, lines)
    _assert_interrupted(code, lines)
    _assert_intact(target, files)
    again = CliRunner().invoke(main, ["report", str(CASE), "-o", str(target), *QUICK])
    assert again.exit_code == 0, again.stderr


def test_interrupt_while_the_report_is_written_keeps_the_previous_report(previous, monkeypatch):
    """An interrupt after the new files are written but before they are moved into place
    leaves the previous report byte for byte and removes the partial folder."""
    import robust.render.writer as writer

    target, files = previous

    def interrupted(*_args, **_kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(writer, "_place", interrupted)
    result = CliRunner().invoke(main, ["report", str(CASE), "-o", str(target), *QUICK])
    assert result.exit_code == 130
    assert result.stderr.splitlines()[-1] == "robust: interrupted"
    _assert_intact(target, files)


def test_keyboard_interrupt_in_any_command_exits_130_with_one_line(monkeypatch):
    """A KeyboardInterrupt raised inside a command ends as exit 130 and 'robust: interrupted'."""
    import robust.model.forms as forms

    def interrupted(*_args, **_kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(forms, "routh_table", interrupted)  # the command imports it when it runs
    result = CliRunner().invoke(main, ["routh", "s^2 + s + 1"])
    assert result.exit_code == 130
    assert result.stderr == "robust: interrupted\n"


# -- output paths, refused before the analysis ------------------------------------------------------


def _refused(args: list[str], what: str) -> str:
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 2, (result.exit_code, result.stderr)
    message = result.stderr
    assert message.startswith(f"robust: error: {what}") and message.count("\n") == 1, message
    assert "check:" not in message and "Traceback" not in message  # nothing ran before it
    return message


def test_report_under_a_file_is_refused_before_the_analysis(tmp_path):
    """-o under a regular file cannot be made: one line, exit 2, no analysis."""
    (tmp_path / "plain").write_text("mine")
    assert "not a directory" in _refused(["report", str(CASE), "-o", str(tmp_path / "plain" / "r")], "-o")
    assert (tmp_path / "plain").read_text() == "mine"


def test_report_into_a_dangling_symlink_is_refused(tmp_path):
    """-o naming a symbolic link (here one that points nowhere) is refused."""
    (tmp_path / "link").symlink_to(tmp_path / "nowhere")
    assert "symbolic link" in _refused(["report", str(CASE), "-o", str(tmp_path / "link")], "-o")
    assert not (tmp_path / "nowhere").exists()


@pytest.mark.skipif(os.geteuid() == 0, reason="permissions do not bind the superuser")
def test_report_into_an_unwritable_folder_is_refused(tmp_path):
    """-o inside a folder without write permission is refused before the analysis."""
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        assert "permission denied" in _refused(["report", str(CASE), "-o", str(locked / "r")], "-o")
    finally:
        locked.chmod(0o755)


def test_a_figures_symlink_in_a_report_folder_is_never_followed(previous, tmp_path):
    """A previous report whose figures/ is a link elsewhere is refused, and the link's target
    is left untouched."""
    target, _ = previous
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    (elsewhere / "value_set.png").write_bytes(b"mine")
    for child in (target / "figures").iterdir():
        child.unlink()
    (target / "figures").rmdir()
    (target / "figures").symlink_to(elsewhere)
    assert "symbolic link" in _refused(["report", str(CASE), "-o", str(target), *QUICK], "-o")
    assert sorted(p.name for p in elsewhere.iterdir()) == ["value_set.png"]
    assert (elsewhere / "value_set.png").read_bytes() == b"mine"


def test_replacing_a_report_keeps_the_users_files_beside_it(previous):
    """A re-run replaces the report's own files and keeps the others, case file included."""
    target, files = previous
    (target / "notes.txt").write_text("reviewed")
    (target / "case.toml").write_bytes(CASE.read_bytes())
    result = CliRunner().invoke(main, ["report", str(target / "case.toml"), "-o", str(target), *QUICK])
    assert result.exit_code == 0, result.stderr
    assert (target / "notes.txt").read_text() == "reviewed"
    assert (target / "case.toml").read_bytes() == CASE.read_bytes()
    assert set(_report(target)) == set(files) | {"notes.txt", "case.toml"}
    assert sorted(p.name for p in target.parent.iterdir()) == ["report"]


@pytest.mark.parametrize("where", ["missing/graph.graphml", "plain/graph.graphml", "link"])
def test_graphml_paths_that_cannot_work_are_refused_before_the_analysis(tmp_path, where):
    """--graphml in a missing folder, under a file, or at a (dangling) link: one line, exit 2."""
    (tmp_path / "plain").write_text("mine")
    (tmp_path / "link").symlink_to(tmp_path / "nowhere")
    _refused(["trace", str(CASE), "--graphml", str(tmp_path / where)], "--graphml")
    assert not (tmp_path / "nowhere").exists() and (tmp_path / "plain").read_text() == "mine"


@pytest.mark.parametrize("args", [["check", str(CASE), "--bogus"], ["check"],
                                  ["check", str(CASE), "--max-seconds", "soon"], ["nosuch"],
                                  ["routh", "--coeffs"]])
def test_usage_errors_are_one_line_with_exit_2(args):
    """Unknown options, missing arguments and bad values are one line on stderr, exit 2."""
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 2
    assert result.stderr.startswith("robust: error: ") and result.stderr.count("\n") == 1
    assert "--help" in result.stderr and result.stdout == ""
