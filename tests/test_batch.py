"""Tests for batch sign-off: ``robust check``, ``margin`` and ``report`` over several case
files or a directory.

Each case's line must agree with the single-case command on that file, whose verdicts are
checked elsewhere against outside references; here the reference for the unstable case is
the Routh-Hurwitz condition of a cubic, a*b > c for s^3 + a s^2 + b s + c with positive
coefficients (Ogata, "Modern Control Engineering", 5th ed. 2010, section 5-6), applied to
the two cases written below in closed form.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from robust.cli import main

# s^3 + 2 s^2 + 3 s + K, K in [0.99, 1.01]: a*b = 6 > K, stable (closed form above)
STABLE = """title = "Stable cubic"
[parameters.K]
nominal = 1
tolerance = "1%"
[polynomial]
expression = "s^3 + 2*s^2 + 3*s + K"
"""
# the same with K near 8 > a*b = 6: unstable everywhere in the box (closed form above)
UNSTABLE = STABLE.replace("nominal = 1", "nominal = 8").replace("Stable", "Unstable")


@pytest.fixture()
def folder(tmp_path):
    (tmp_path / "a_stable.toml").write_text(STABLE)
    (tmp_path / "b_unstable.toml").write_text(UNSTABLE)
    (tmp_path / "c_broken.toml").write_text("title = \"broken\"\n[polynomial]\n")
    (tmp_path / "notes.txt").write_text("not a case")
    return tmp_path


def run(*args: str):
    return CliRunner().invoke(main, list(args))


def test_check_over_a_directory_reports_every_case_and_exits_worst(folder):
    """A directory stands for its *.toml sorted; each case gets a line, the bad file its own
    error line, and the exit code is the worst (2)."""
    result = run("check", str(folder))
    assert result.exit_code == 2
    lines = result.stdout.splitlines()
    assert lines[0].startswith(f"{folder / 'a_stable.toml'}: stable")
    assert lines[1].startswith(f"{folder / 'b_unstable.toml'}: unstable")
    assert lines[2] == f"{folder / 'c_broken.toml'}: bad input"
    assert "3 case(s)" in lines[-1]
    errors = [line for line in result.stderr.splitlines() if line.startswith("robust: error:")]
    assert len(errors) == 1 and "c_broken.toml" in errors[0]


def test_check_json_is_a_list_of_case_documents(folder):
    """--json over two files gives the list of the per-case documents, each naming its case."""
    a, b = str(folder / "a_stable.toml"), str(folder / "b_unstable.toml")
    result = run("check", a, b, "--json")
    assert result.exit_code == 1
    documents = json.loads(result.stdout)
    assert [d["case"] for d in documents] == [a, b]
    assert [d["verdict"] for d in documents] == ["stable", "unstable"]
    single = json.loads(run("check", b, "--json").stdout)
    single.pop("seconds"), documents[1].pop("seconds")
    assert documents[1] == single


def test_a_single_file_keeps_the_single_case_output(folder):
    """One file alone prints the single-case text, not a batch table."""
    result = run("check", str(folder / "a_stable.toml"))
    assert result.exit_code == 0
    assert result.stdout.startswith("Case: Stable cubic")
    assert "case(s)" not in result.stdout


def test_margin_batch_and_certificate_refused_for_several(folder):
    """margin takes several cases too; --certificate with several cases is bad input."""
    a, b = str(folder / "a_stable.toml"), str(folder / "b_unstable.toml")
    result = run("margin", a, b, "--no-criteria", "--no-decay", "--json")
    assert [d["case"] for d in json.loads(result.stdout)] == [a, b]
    refused = run("check", a, b, "--certificate", str(folder / "proof.json"))
    assert refused.exit_code == 2


def test_report_batch_writes_one_directory_per_case(folder, tmp_path):
    """report over two cases writes a report into a sub-directory named after each file."""
    out = tmp_path / "reports"
    a, b = str(folder / "a_stable.toml"), str(folder / "b_unstable.toml")
    result = run("report", a, b, "-o", str(out), "--draws", "200", "--search-tests", "4",
                 "--search-boxes", "50", "--max-boxes", "200")
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in out.iterdir()) == ["a_stable", "b_unstable"]
    assert (out / "a_stable" / "report.html").is_file()
    assert "sign-off PASS" in result.stdout and "sign-off FAIL" in result.stdout


def test_broken_links_in_a_folder_are_reported_not_skipped(tmp_path):
    """A sign-off over a folder names every *.toml entry: a dangling link and a link loop
    each get a 'bad input' line and their own error line."""
    (tmp_path / "a_stable.toml").write_text(STABLE)
    (tmp_path / "b_dangling.toml").symlink_to(tmp_path / "nowhere.toml")
    (tmp_path / "c_loop.toml").symlink_to(tmp_path / "c_loop.toml")
    result = run("check", str(tmp_path))
    assert result.exit_code == 2
    assert f"{tmp_path / 'b_dangling.toml'}: bad input" in result.stdout
    assert f"{tmp_path / 'c_loop.toml'}: bad input" in result.stdout
    assert "3 case(s)" in result.stdout.splitlines()[-1]


def test_a_case_named_twice_runs_once(folder):
    path = str(folder / "a_stable.toml")
    result = run("check", path, path, str(folder / "." / "a_stable.toml"), "--json")
    assert result.exit_code == 0
    assert len(json.loads(result.stdout)) == 1
