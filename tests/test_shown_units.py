"""Units beside the values robust shows: the terminal's answers, the report's blocks (HTML
and Markdown), a notebook's HTML, the JSON of rank and the figures' labels.

These tests pin down display, not analysis: each value of a parameter that has a unit is
shown with that unit, and nothing is added for a parameter without one. The one fact from
outside the project is pint's: the root plane's axes carry 1/s and rad/s, whose dimension
pint's registry gives as 1/[time] (pint documentation, dimensionality; rad is dimensionless
there), the dimension the unit check gives the variable s.
"""

from __future__ import annotations

import json
from pathlib import Path
from types import SimpleNamespace

import pint
import pytest
from click.testing import CliRunner

import robust
from robust.cli import main
from robust.render.blocks import Document
from robust.render.certificate import witness_section
from robust.render.content import margins_section, ranking_section
from robust.render.figdata import sample_draws
from robust.render.figures import (
    RANKING_AXIS,
    parameter_label,
    plane_labels,
    ranking_picture,
    root_cloud_picture,
)
from robust.render.html import render_fragment
from robust.render.markdown import render_markdown
from robust.render.notebook import to_html

CASES_DIR = Path(__file__).resolve().parent.parent / "cases"


@pytest.fixture(scope="module")
def unstable_converter(tmp_path_factory) -> Path:
    """cases/converter_units.toml with a ceramic output capacitor whose ESR reaches 1 mOhm: the
    ESR zero that the type-II compensator relies on moves out, and a corner of the box is
    unstable (a verified witness)."""
    text = (CASES_DIR / "converter_units.toml").read_text(encoding="utf-8")
    wrong = text.replace('range = ["40m", "80m"]', 'range = ["1m", "80m"]')
    assert wrong != text
    path = tmp_path_factory.mktemp("units") / "converter_ceramic.toml"
    path.write_text(wrong, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def mechanism():
    """The shipped two-mass mechanism (every part with a unit) and its ranking."""
    case = robust.load_case(CASES_DIR / "two_mass_mechanism.toml")
    return case, robust.rank(case)


def test_the_witness_in_the_terminal_shows_each_value_and_range_with_its_unit(unstable_converter):
    """robust check prints the witness's values in ohm, F, H and V, ranges too."""
    result = CliRunner().invoke(main, ["check", str(unstable_converter)])
    assert result.exit_code == 1
    assert "  rc = 0.001 (= 1/1000) ohm   [range 0.001 .. 0.08 ohm]" in result.stdout
    assert "  C = 0.000564 (= 141/250000) F   [range 0.000376 .. 0.000564 F]" in result.stdout
    assert "  L = 1.2e-05 (= 3/250000) H" in result.stdout
    assert "  Vin = 13.2 (= 66/5) V" in result.stdout


def test_the_witness_table_of_the_report_and_the_notebook_has_the_units(unstable_converter):
    """The report's witness table (from the case) and a notebook's check result (from the
    box the case gave it) both put ohm beside rc and F beside C, in HTML and Markdown."""
    case = robust.load_case(unstable_converter)
    result = robust.check(case)
    assert result.witness is not None
    section = witness_section(case, result.witness)
    rows = {row[0].parts[0]: row[-1].parts[0] for row in section.blocks[1].rows}
    assert section.blocks[1].header[-1] == "unit"
    assert (rows["rc"], rows["C"], rows["L"], rows["Vin"]) == ("ohm", "F", "H", "V")
    markdown = render_markdown(Document("t", (section,)), {})
    assert "| `rc` |" in markdown and "| ohm |" in markdown and "| F |" in markdown
    html = to_html(result)
    assert "<td>ohm</td>" in html and "<td>F</td>" in html
    assert result.box.unit_of("rc") == "ohm"


def test_a_part_without_a_unit_gets_nothing_beside_its_value():
    """cases/interval_measured.toml declares no unit: the witness table's unit cells are
    empty and no text is added to the labels."""
    case = robust.load_case(CASES_DIR / "interval_measured.toml")
    assert all(not p.unit for p in case.parameters)
    name = case.names[0]
    assert parameter_label(case, name) == name
    assert case.family.box.unit_of(name) == ""


def test_margin_and_rank_name_the_unit_of_a_physical_limit(mechanism):
    """What ends rho* and each part's own margin says "reaches its physical limit 0
    N*m*s/rad"; the ranking has a unit column in the terminal, the report and the JSON."""
    case, ranking = mechanism
    margin = robust.margin(case, with_decay=False, with_criteria=False)
    text = render_fragment([margins_section(margin)])
    assert "cs reaches its physical limit 0 N*m*s/rad" in text
    terminal = CliRunner().invoke(main, ["rank", str(CASES_DIR / "two_mass_mechanism.toml")])
    assert terminal.exit_code == 0
    assert "unit" in terminal.stdout.splitlines()[2]
    assert any(line.split()[:2] == ["ks", "N*m/rad"] for line in terminal.stdout.splitlines())
    assert "cs: stable until cs reaches its physical limit 0 N*m*s/rad" in terminal.stdout
    table = ranking_section(ranking, figure=False).blocks[0]
    assert table.header[2] == "unit"
    assert {row[1].parts[0]: row[2].parts[0] for row in table.rows}["J1"] == "kg*m^2"
    data = json.loads(CliRunner().invoke(main, ["rank", str(CASES_DIR / "two_mass_mechanism.toml"),
                                                "--json"]).stdout)
    assert {p["name"]: p["unit"] for p in data["parameters"]}["Kt"] == "N*m/A"


def test_the_decay_rate_is_shown_in_one_over_seconds(mechanism):
    """The decay-rate margin and its requirement carry 1/s in the terminal and the report."""
    case, _ = mechanism
    result = CliRunner().invoke(main, ["margin", str(CASES_DIR / "two_mass_mechanism.toml")])
    assert "Requirement decay_rate >= 10 1/s: PASS" in result.stdout
    assert "Decay-rate margin sigma* (every root has Re(s) < -sigma): [" in result.stdout
    assert "] 1/s" in result.stdout
    html = render_fragment([margins_section(robust.margin(case, with_criteria=False))])
    assert "≥ 10 1/s" in html


def test_figure_labels_carry_the_units(mechanism):
    """The ranking's bars are labelled "ks (N*m/rad)" and its axis says a scale has no unit;
    the root plane's axes are in 1/s and rad/s (no unit for z); the partition's axes use the
    same labels."""
    case, ranking = mechanism
    assert parameter_label(case, "ks") == "ks (N*m/rad)"
    picture = ranking_picture(SimpleNamespace(case=case, rank=ranking))
    assert picture.alt.startswith(f"Parameter margins ({RANKING_AXIS}): ")
    assert "ks (N*m/rad) alone" in picture.alt and "J1 (kg*m^2) alone" in picture.alt
    x_label, y_label = plane_labels(case)
    assert (x_label, y_label) == ("Re s (1/s)", "Im s (rad/s)")
    cloud = root_cloud_picture(case, sample_draws(case, 20, 1))
    assert "(axes Re s (1/s) and Im s (rad/s))" in cloud.alt
    digital = robust.load_case(CASES_DIR / "digital_current_loop.toml")
    assert plane_labels(digital) == ("Re z (no unit)", "Im z (no unit)")
    # pint (documentation, dimensionality): 1/s and rad/s are both 1/[time]
    registry = pint.UnitRegistry()
    assert registry.parse_units("1/s").dimensionality == registry.parse_units("rad/s").dimensionality \
        == registry.get_dimensionality("1/[time]")


def test_the_report_says_which_parameters_the_unit_check_left_out():
    """Parameters without a unit are not checked for dimension; the report's parameter
    section names them (and says so when no parameter, or every one, has a unit)."""
    from robust.model.case import parse_case
    from robust.render.content import parameters_section

    text = ('title = "t"\n[parameters.R]\nnominal = "10"\ntolerance = "1%"\nunit = "ohm"\n'
            '[parameters.K]\nnominal = "2"\ntolerance = "1%"\n[polynomial]\nexpression = "s + R*K"\n')
    section = parameters_section(parse_case(text))
    note = "".join(str(part) for part in section.blocks[-1].parts)
    assert "except the terms holding these parameters without a unit: K." in note
    plain = parameters_section(parse_case(text.replace('unit = "ohm"\n', "")))
    assert "No parameter has a unit" in "".join(str(part) for part in plain.blocks[-1].parts)
