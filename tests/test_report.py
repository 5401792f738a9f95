"""Tests for robust.render and the `report` and `demo` commands: the sign-off report.

The value-set check rests on Kharitonov's theorem in its frequency-domain form: the values
p(j omega) of an interval polynomial fill the axis-parallel rectangle whose corners are the
four Kharitonov polynomials at j omega (Dasgupta, "Kharitonov's theorem revisited", Systems &
Control Letters 11, 1988). A parametric family's coefficients lie inside its interval
overbound, so its value set lies inside that rectangle too; the test checks the data behind
the picture, not its pixels.
"""

from __future__ import annotations

import json
from html.parser import HTMLParser
from importlib import resources
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from robust.analysis.signoff import analyse
from robust.cli import main
from robust.errors import InputError
from robust.model.case import load_case
from robust.render.data import result_data
from robust.render.figdata import choose_omegas, sample_draws, value_set_data
from robust.render.figures import FIGURE_NAMES
from robust.render.writer import write_report

CASES = sorted((Path(__file__).resolve().parent.parent / "cases").glob("*.toml"))
IDS = [path.stem for path in CASES]
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


@pytest.fixture(scope="module")
def reports(report_of):
    """Each case's analysis and report, built once for the session (read-only afterwards)."""
    return {path.stem: report_of(path.stem) for path in CASES}


class _Page(HTMLParser):
    """Collects what the tests look at: links, images, scripts and <data> values."""

    def __init__(self) -> None:
        super().__init__()
        self.links: list[tuple[str, str, str]] = []
        self.data: dict[str, str] = {}
        self.scripts = 0
        self.images = 0
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        for name in ("src", "href", "srcset", "data"):
            if name in attributes:
                self.links.append((tag, name, attributes[name] or ""))
        if tag == "script":
            self.scripts += 1
        if tag == "img":
            self.images += 1
        if tag == "data" and "data-key" in attributes:
            self.data[attributes["data-key"]] = attributes["value"]

    def handle_data(self, data):
        self.text.append(data)


def _parse(path: Path) -> _Page:
    page = _Page()
    page.feed(path.read_text(encoding="utf-8"))
    page.close()
    return page


def _lookup(data: dict, key: str) -> object:
    node: object = data
    for part in key.split("."):
        assert isinstance(node, dict) and part in node, f"{key} is not in result.json"
        node = node[part]
    return node


def _roundtrip(value: object) -> object:
    return json.loads(json.dumps(value))


@pytest.mark.parametrize("name", IDS)
def test_report_writes_every_file(reports, name):
    """A report writes report.html, report.md, result.json and every figure as a real PNG."""
    _, files = reports[name]
    for path in (files.html, files.markdown, files.json):
        assert path.is_file() and path.stat().st_size > 0
    assert [p.stem for p in files.figures] == list(FIGURE_NAMES)
    for path in files.figures:
        assert path.parent == files.directory / "figures"
        content = path.read_bytes()
        assert content.startswith(PNG_MAGIC) and len(content) > 1000


@pytest.mark.parametrize("name", IDS)
def test_html_is_one_self_contained_file(reports, name):
    """The HTML parses, embeds every figure as a data: URI and links to no file or network."""
    _, files = reports[name]
    page = _parse(files.html)
    assert page.scripts == 0
    assert page.images == len(FIGURE_NAMES)
    for tag, attribute, target in page.links:
        if tag == "img":
            assert target.startswith("data:image/png;base64,"), target[:40]
        else:
            assert target.startswith(("#", "data:")), (tag, attribute, target)
    source = files.html.read_text(encoding="utf-8")
    assert "@media print" in source and "http://" not in source and "https://" not in source


@pytest.mark.parametrize("name", IDS)
def test_html_states_the_numbers_of_result_json(reports, name):
    """Every number the HTML marks as data equals result.json, verdict and margin included."""
    analysis, files = reports[name]
    page = _parse(files.html)
    data = json.loads(files.json.read_text(encoding="utf-8"))
    assert {"check.verdict", "margin.margin.lower", "yield.yield", "case_sha256"} <= set(page.data)
    for key, shown in page.data.items():
        expected = _lookup(data, key)
        assert shown == (expected if isinstance(expected, str) else json.dumps(expected)), key
    assert page.data["check.verdict"] == analysis.check.verdict
    if analysis.margin.margin.upper is not None:
        assert "margin.margin.upper" in page.data


@pytest.mark.parametrize("name", IDS)
def test_result_json_holds_the_as_dict_of_each_result(reports, name):
    """result.json's check, margin, rank and yield objects equal the results' as_dict()."""
    analysis, files = reports[name]
    data = json.loads(files.json.read_text(encoding="utf-8"))
    requirements = {r.name: r.as_dict() for r in analysis.requirements}
    assert data["check"] == _roundtrip({**analysis.check.as_dict(), "requirements": requirements})
    assert data["margin"] == _roundtrip(analysis.margin.as_dict())
    assert data["rank"] == _roundtrip(analysis.rank.as_dict())
    assert data["yield"] == _roundtrip(analysis.yield_result.as_dict())
    assert data["tool"] == {"name": "robust", "version": analysis.version}
    assert data["case_sha256"] == analysis.case.sha256
    assert data == _roundtrip(result_data(analysis))
    assert len(data["certificate"]) == len(analysis.check.vertex_tables)


@pytest.mark.parametrize("name", IDS)
def test_markdown_links_the_figure_files_beside_it(reports, name):
    """report.md refers to each figure by a relative path that exists."""
    _, files = reports[name]
    text = files.markdown.read_text(encoding="utf-8")
    for figure in FIGURE_NAMES:
        assert f"](figures/{figure}.png)" in text
        assert (files.directory / "figures" / f"{figure}.png").is_file()
    assert "Cautions" in text and files.markdown.parent == files.directory


@pytest.mark.parametrize("path", CASES, ids=IDS)
def test_sampled_values_lie_in_the_kharitonov_rectangles(path):
    """Every sampled member's p(j omega) lies in the overbound's rectangle, whose corners are the
    Kharitonov polynomials at j omega (Dasgupta 1988)."""
    case = load_case(path)
    omegas = choose_omegas(case)
    assert len(omegas) >= 4 and all(w > 0 for w in omegas)
    for entry in value_set_data(case, omegas, sample_draws(case, 500, seed=3)):
        re_lo, re_hi, im_lo, im_hi = entry["rectangle"]
        points = entry["points"]
        slack = 1e-12 * entry["scale"]  # float rounding in evaluating p(j omega)
        assert points.shape == (500, 2)
        assert np.all((points[:, 0] >= re_lo - slack) & (points[:, 0] <= re_hi + slack))
        assert np.all((points[:, 1] >= im_lo - slack) & (points[:, 1] <= im_hi + slack))
        seen = set()
        for x, y in entry["corners"].values():
            near_x = [abs(x - re_lo), abs(x - re_hi)]
            near_y = [abs(y - im_lo), abs(y - im_hi)]
            assert min(near_x) <= slack and min(near_y) <= slack
            seen.add((int(np.argmin(near_x)), int(np.argmin(near_y))))
        if re_hi > re_lo and im_hi > im_lo:
            assert len(seen) == 4  # one Kharitonov polynomial at each corner


def test_report_refuses_a_foreign_directory(reports, tmp_path):
    """write_report raises InputError for a non-empty directory without a robust report, untouched."""
    analysis, _ = reports["interval_measured"]
    (tmp_path / "notes.txt").write_text("mine")
    with pytest.raises(InputError, match="not empty"):
        write_report(analysis, tmp_path)
    assert [p.name for p in tmp_path.iterdir()] == ["notes.txt"]
    (tmp_path / "result.json").write_text(json.dumps({"tool": {"name": "other"}}))
    with pytest.raises(InputError):
        write_report(analysis, tmp_path)


def test_cli_report_refuses_a_foreign_directory(tmp_path):
    """`robust report` into a directory holding other files exits 2 with one line on stderr."""
    (tmp_path / "thesis.tex").write_text("mine")
    result = CliRunner().invoke(main, ["report", str(CASES[0]), "-o", str(tmp_path), "--max-boxes", "500",
                                       "--search-boxes", "100", "--search-tests", "8"])
    assert result.exit_code == 2
    assert result.stderr.startswith("robust: error:") and result.stderr.count("\n") == 1
    assert (tmp_path / "thesis.tex").read_text() == "mine"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["thesis.tex"]


def test_report_replaces_its_own_previous_report(reports, tmp_path):
    """A second report into the same directory replaces the first and leaves other files alone."""
    analysis, _ = reports["interval_unstable"]
    first = write_report(analysis, tmp_path / "out")
    (first.directory / "reviewer-notes.txt").write_text("kept")
    first.html.write_text("stale")
    second = write_report(analysis, tmp_path / "out")
    assert second.html.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert (second.directory / "reviewer-notes.txt").read_text() == "kept"
    assert json.loads(second.json.read_text())["tool"]["name"] == "robust"


def test_cli_report_json_is_one_document_with_progress_on_stderr(tmp_path):
    """`robust report --json` prints result.json's content on stdout, stages on stderr, exit 0."""
    unstable = next(p for p in CASES if p.stem == "interval_unstable")
    result = CliRunner().invoke(main, ["report", str(unstable), "-o", str(tmp_path / "r"), "--json",
                                       "--draws", "500"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["check"]["verdict"] == "unstable"
    assert data == json.loads((tmp_path / "r" / "result.json").read_text(encoding="utf-8"))
    assert "check:" in result.stderr and "yield:" in result.stderr


def test_report_escapes_user_text(tmp_path):
    """Markup in the case's title, summary and notes reaches the HTML escaped."""
    case_file = tmp_path / "case.toml"
    case_file.write_text(
        'title = "<script>alert(1)</script> & co"\n'
        'summary = "<img src=x onerror=alert(2)>"\n'
        '[parameters.a1]\nrange = [2, 3]\nnote = "<b>bold</b>"\n'
        '[parameters.a0]\nrange = [1, 2]\n'
        '[polynomial]\ncoefficients = ["1", "a1", "a0"]\n', encoding="utf-8")
    analysis = analyse(load_case(case_file), search_boxes=100, search_tests=8, yield_draws=200)
    files = write_report(analysis, tmp_path / "report")
    source = files.html.read_text(encoding="utf-8")
    assert "<script>" not in source and "<img src=x" not in source and "<b>bold" not in source
    assert "&lt;script&gt;alert(1)&lt;/script&gt; &amp; co" in source
    assert "<script>" not in files.markdown.read_text(encoding="utf-8")


def test_demo_writes_a_report_with_its_case_file(tmp_path):
    """`robust demo -o DIR` writes report.html and a copy of the demo case, and exits 0."""
    target = tmp_path / "demo"
    result = CliRunner().invoke(main, ["demo", "-o", str(target)])
    assert result.exit_code == 0, result.output
    assert (target / "report.html").is_file()
    packaged = (resources.files("robust") / "data" / "demo.toml").read_bytes()
    assert (target / "case.toml").read_bytes() == packaged
    assert "Verdict: STABLE" in result.stdout and str(target / "report.html") in result.stdout
    data = json.loads((target / "result.json").read_text(encoding="utf-8"))
    assert data["case_sha256"] == load_case(target / "case.toml").sha256


def test_figures_beyond_the_float_range_say_they_are_not_drawn(reports):
    """For a family beyond the float range the sampled pictures are replaced by a note."""
    import dataclasses

    from robust.model.case import parse_case
    from robust.render.figures import draw_figures, floats_suffice

    analysis, _ = reports[IDS[0]]
    huge = parse_case('title = "huge"\n[parameters.R]\nnominal = "1e400"\ntolerance = "1%"\n'
                      '[polynomial]\nexpression = "R*s^2 + s + R"\n')
    assert not floats_suffice(huge) and floats_suffice(analysis.case)
    pictures = draw_figures(dataclasses.replace(analysis, case=huge))
    assert [p.name for p in pictures] == list(FIGURE_NAMES)
    notes = {p.name: p.alt for p in pictures}
    assert notes["value_set"].startswith("Not drawn") and notes["root_cloud"].startswith("Not drawn")
    assert all(p.png.startswith(PNG_MAGIC) for p in pictures)
