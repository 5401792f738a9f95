"""Tests for certified design maps (``robust map``, :mod:`robust.analysis.designmap`).

The family is the cubic p(s) = s^3 + a s^2 + b s + K with a and b toleranced and K (and, in
two dimensions, a) as design axes. For a monic cubic with positive coefficients the Routh
array's only condition left is a*b > K (Routh's stability criterion; Ogata, "Modern Control
Engineering", 5th ed. 2010, section 5-6), so the family over a box is robustly stable exactly
when K < a*b at the box's least a and b (a derivation of ours from that condition: a*b is
increasing in both). Every stable cell is checked against that closed form with exact
Fractions; every witness is checked by numpy's eigenvalue root finder (Harris et al., "Array
programming with NumPy", Nature 2020) and by the closed form.
"""

from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from robust.analysis.designmap import design_map, parse_axis
from robust.cli import main
from robust.errors import InputError
from robust.model.case import load_case

F = Fraction
A_LOW, B_LOW = F(18, 10), F(27, 10)  # 2 +- 10 %, 3 +- 10 %

CUBIC = """title = "Third-order loop with one gain to choose"
[parameters.a]
nominal = 2
tolerance = "10%"
[parameters.b]
nominal = 3
tolerance = "10%"
[parameters.K]
nominal = 1
tolerance = "1%"
[polynomial]
expression = "s^3 + a*s^2 + b*s + K"
"""


@pytest.fixture(scope="module")
def cubic_path(tmp_path_factory):
    path = tmp_path_factory.mktemp("map") / "cubic.toml"
    path.write_text(CUBIC)
    return path


def _unstable_by_numpy(point: dict[str, str]) -> bool:
    a, b, k = (float(F(point[n])) for n in ("a", "b", "K"))
    return max(np.roots([1.0, a, b, k]).real) > -1e-9


def _check_cells(result) -> None:
    """Stable cells inside the closed-form region; witnesses unstable and inside their cell."""
    names = [axis.name for axis in result.axes]
    for cell in result.cells:
        ranges = dict(zip(names, cell.ranges, strict=True))
        a_low = ranges["a"][0] if "a" in ranges else A_LOW
        k_high = ranges["K"][1]
        if cell.verdict == "stable":
            # the worst point of the cell: least a, least b, largest K (closed form above)
            assert k_high < a_low * B_LOW
        if cell.verdict == "unstable":
            point = cell.witness["parameters"]
            assert _unstable_by_numpy(point)
            assert F(point["K"]) >= F(point["a"]) * F(point["b"])  # closed form: not Hurwitz
            for name, (lo, hi) in ranges.items():
                assert lo <= F(point[name]) <= hi


def test_one_axis_stable_interval_matches_the_closed_form(cubic_path):
    """In one dimension the proven stable interval of K ends below a*b = 4.86 by less than
    one finest cell, and every cell agrees with the closed form."""
    case = load_case(cubic_path)
    result = design_map(case, [parse_axis("K=0.5..12", case)], resolution=8, depth=3, workers=1)
    _check_cells(result)
    intervals = result.stable_intervals()
    finest = (F(12) - F(1, 2)) / (8 * 2**3)
    assert len(intervals) == 1
    low, high = intervals[0]
    assert low == F(1, 2)
    assert A_LOW * B_LOW - finest <= high < A_LOW * B_LOW
    assert result.count("unstable") >= 1


def test_two_axes_cells_respect_the_closed_form_and_workers_do_not_change_the_map(cubic_path):
    """In two dimensions every stable cell lies inside K < a*b_low and every witness is
    unstable; one process and two processes give the same JSON."""
    case = load_case(cubic_path)
    axes = [parse_axis("a=1..4", case), parse_axis("K=0.5..12", case)]
    one = design_map(case, axes, resolution=4, depth=2, max_cells=120, workers=1)
    _check_cells(one)
    assert one.count("stable") > 0 and one.count("unstable") > 0
    two = design_map(case, axes, resolution=4, depth=2, max_cells=120, workers=2)
    first, second = one.as_dict(), two.as_dict()
    first.pop("seconds"), second.pop("seconds")
    assert json.dumps(first) == json.dumps(second)
    # the cells partition the design region exactly
    assert sum((c.size(one.axes) for c in one.cells), F(0)) == 1


def test_the_same_map_on_a_dask_cluster(cubic_path):
    """A dask.distributed LocalCluster started here gives the same JSON as one process, from
    the library and from the command line (ROBUST_CLUSTER)."""
    distributed = pytest.importorskip("distributed")
    case = load_case(cubic_path)
    axes = [parse_axis("K=0.5..12", case)]
    local = design_map(case, axes, resolution=6, depth=2, workers=1).as_dict()
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster:
        remote = design_map(case, axes, resolution=6, depth=2, workers=2,
                            cluster=cluster.scheduler_address).as_dict()
        # the command line reaches the same cluster through ROBUST_CLUSTER
        shown = CliRunner().invoke(main, ["map", str(cubic_path), "--vary", "K=0.5..12", "--resolution", "6",
                                          "--depth", "2", "--json"],
                                   env={"ROBUST_CLUSTER": cluster.scheduler_address})
    assert shown.exit_code == 0, shown.output
    command = json.loads(shown.stdout)
    local.pop("seconds"), remote.pop("seconds")
    assert json.dumps(local) == json.dumps(remote)
    assert command["cells"] == local["cells"]


@pytest.mark.parametrize(("vary", "words"), [
    ("K", "NAME=LO..HI"),
    ("Q=1..2", "not a parameter"),
    ("K=3..1", "low end must be below"),
    ("K=0..5", "physical limits"),
    ("K=x..5", "--vary"),
])
def test_bad_design_ranges_are_refused(cubic_path, vary, words):
    """A malformed range, an unknown name, an empty range or one reaching a physical limit
    is one error line."""
    case = load_case(cubic_path)
    with pytest.raises(InputError, match=words):
        parse_axis(vary, case)
    result = CliRunner().invoke(main, ["map", str(cubic_path), "--vary", vary])
    assert result.exit_code == 2
    assert len(result.stderr.strip().splitlines()) == 1
    assert "Traceback" not in result.output


def test_map_command_writes_figures_and_refuses_a_folder_of_other_files(cubic_path, tmp_path):
    """-o writes map.png, map.svg and map.json; a second run replaces its own map; a folder
    with other files is refused before any work."""
    out = tmp_path / "map"
    args = ["map", str(cubic_path), "--vary", "K=0.5..12", "--resolution", "4", "--depth", "1",
            "--workers", "1", "-o", str(out)]
    result = CliRunner().invoke(main, [*args, "--json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert {"axes", "cells", "summary"} <= set(data)
    assert data["axes"][0]["name"] == "K"
    assert all(set(c) >= {"ranges", "verdict", "witness", "margin"} for c in data["cells"])
    assert sorted(p.name for p in out.iterdir()) == ["map.json", "map.png", "map.svg"]
    assert (out / "map.png").read_bytes().startswith(b"\x89PNG")
    assert CliRunner().invoke(main, args).exit_code == 0  # a previous map is replaced
    (out / "notes.txt").write_text("mine")
    refused = CliRunner().invoke(main, args)
    assert refused.exit_code == 2
    assert (out / "notes.txt").read_text() == "mine"
    text = CliRunner().invoke(main, args[:-2])
    assert "Proven stable for every toleranced value when K lies in" in text.stdout


CASES_DIR = Path(__file__).resolve().parent.parent / "cases"


@pytest.mark.parametrize(("name", "vary"), [("servo_pid", "Ka=2..80"), ("active_filter", "kr=1.01..3.5")])
def test_shipped_cases_draw_certified_maps(name, vary, tmp_path):
    """robust map draws the two demo maps (amplifier gain of the servo, gain-setting ratio of
    the filter); at every corner of every stable cell's box numpy's roots lie in the open
    left half-plane, and every witness has a root numpy puts on or right of the axis."""
    path = CASES_DIR / f"{name}.toml"
    result = CliRunner().invoke(main, ["map", str(path), "--vary", vary, "--resolution", "6", "--depth", "2",
                                       "--workers", "1", "-o", str(tmp_path / "map"), "--json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    family = load_case(path).family
    axis = data["axes"][0]["name"]
    index = family.names.index(axis)
    assert data["summary"]["stable"] > 0 and data["summary"]["unstable"] > 0
    for cell in data["cells"]:
        if cell["verdict"] == "stable":
            low, high = (F(v) for v in cell["ranges"][axis])
            for corner in family.box.vertices():
                for value in (low, high):
                    point = list(corner)
                    point[index] = value
                    coefficients = [float(c) for c in family.coefficients_at(point)]
                    assert max(np.roots(coefficients).real) < 0
        if cell["verdict"] == "unstable":
            point = [F(cell["witness"]["parameters"][n]) for n in family.names]
            coefficients = [float(c) for c in family.coefficients_at(point)]
            largest = max(abs(c) for c in coefficients)
            assert max(np.roots([c / largest for c in coefficients]).real) > -1e-6
    assert (tmp_path / "map" / "map.svg").read_bytes().lstrip().startswith(b"<?xml")


def test_a_cell_meets_the_margin_rule_that_check_applies(tmp_path):
    """(K - 1) s^2 + a s + 1 with K = 2 +- 25 %: scaled by the required margin 2, K's range
    reaches 1, where the leading coefficient vanishes (the order drops: derived here), so the
    margin fails, in check and in every map cell alike (one rule, decided in one place)."""
    path = tmp_path / "lead.toml"
    path.write_text('title = "lead"\n[parameters.K]\nnominal = 2\ntolerance = "25%"\n[parameters.a]\n'
                    'nominal = 1\ntolerance = "10%"\n[polynomial]\nexpression = "(K - 1)*s^2 + a*s + 1"\n'
                    "[requirements]\nmargin = 2\n")
    mapped = CliRunner().invoke(main, ["map", str(path), "--vary", "a=0.5..2", "--resolution", "2",
                                       "--depth", "0", "--workers", "1", "--json"])
    assert mapped.exit_code == 0, mapped.stderr
    cells = json.loads(mapped.stdout)["cells"]
    assert [c["verdict"] for c in cells] == ["stable", "stable"]
    assert {c["margin"]["outcome"] for c in cells} == {"fail"}
    checked = CliRunner().invoke(main, ["check", str(path)])
    assert "Requirement margin (stable with every tolerance scaled by 2): FAIL" in checked.stdout
