"""Tests for the report's frequency-domain part: the criteria rows of the margins section,
the loop-response figure, the discrete-time root cloud and polynomial section.

The loop's frequency response is checked against a closed form derived here: for the servo,
L(s) = 8 Km (0.025 s + 1) / (s (Tm s + 1)(Te s + 1)(0.004 s + 1)) at s = j omega; for the
digital current loop, L(z) = P(z) C(z) with P(z) = (Vin T / L) / (z (z - 1 + R T / L)) and
C(z) = Kp + Ki T z / (z - 1) at z = e^(j omega T), T = 10 us (the case files' formulas,
rebuilt by hand and evaluated with mpmath).
"""

from __future__ import annotations

import dataclasses
import json
import math
from html.parser import HTMLParser
from pathlib import Path

import mpmath
import numpy as np
import pytest

from robust.analysis.criteria import REQUIREMENT_OF
from robust.model.case import load_case
from robust.render import figures
from robust.render.fmt import units_of
from robust.render.figdata import loop_mark, loop_values, sample_draws
from robust.render.loopfigure import loop_response_picture

CASES = Path(__file__).resolve().parent.parent / "cases"
LOOPS = ("servo_lead_criteria", "digital_current_loop")


@pytest.fixture(scope="module")
def reports(report_of):
    """The two loop cases' analyses and written reports (shared with test_report; read-only)."""
    return {name: report_of(name) for name in LOOPS}


class _Page(HTMLParser):
    """The <data> values and the plain text of a report page."""

    def __init__(self) -> None:
        super().__init__()
        self.data: dict[str, str] = {}
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        attributes = dict(attrs)
        if tag == "data" and "data-key" in attributes:
            self.data[attributes["data-key"]] = attributes["value"]

    def handle_data(self, data):
        self.text.append(data)


def _page(files) -> _Page:
    page = _Page()
    page.feed(files.html.read_text(encoding="utf-8"))
    page.close()
    return page


def _json_key(criterion) -> str:
    if criterion.measure.name == "gain_margin_db_lower_direction":
        return "margin.gain_margin_db.lower_direction"
    return "margin." + criterion.measure.name


def _lookup(data: dict, key: str) -> object:
    node: object = data
    for part in key.split("."):
        node = node[part]  # type: ignore[index]
    return node


def _markdown_row(files, label: str) -> str:
    rows = [line for line in files.markdown.read_text(encoding="utf-8").splitlines()
            if line.startswith(f"| {label} |")]
    assert len(rows) == 1, label
    return rows[0]


@pytest.mark.parametrize("name", LOOPS)
def test_every_criterion_has_a_row_whose_numbers_are_result_json(reports, name):
    """Each criterion's shown bracket ends are marked with its result.json key and value."""
    analysis, files = reports[name]
    page = _page(files)
    data = json.loads(files.json.read_text(encoding="utf-8"))
    # damping in continuous time, the spectral radius in discrete time
    last = "spectral_radius" if analysis.case.discrete else "damping_ratio"
    assert {c.measure.name for c in analysis.margin.criteria} >= {"gain_margin_db", "phase_margin_deg", last}
    for criterion in analysis.margin.criteria:
        key = _json_key(criterion)
        ends = [end for end, value in (("lower", criterion.low), ("upper", criterion.high))
                if value is not None]
        assert ends
        for end in ends:
            shown = page.data[f"{key}.{end}"]
            assert shown == json.dumps(_lookup(data, f"{key}.{end}"))
            assert float(shown) == (criterion.low if end == "lower" else criterion.high)
        unit = f", {criterion.measure.unit}" if criterion.measure.unit else ""
        assert _markdown_row(files, criterion.measure.words + unit)


@pytest.mark.parametrize("name", LOOPS)
def test_requirement_column_shows_the_outcomes_of_the_margin_search(reports, name):
    """Each criterion row's requirement and badge are those MarginResult.outcomes() gives."""
    analysis, files = reports[name]
    outcomes = {requirement: (value, result) for requirement, value, result in analysis.margin.outcomes()}
    assert set(outcomes) >= {"gain_margin_db", "phase_margin_deg"}
    for criterion in analysis.margin.criteria:
        unit = f", {criterion.measure.unit}" if criterion.measure.unit else ""
        row = _markdown_row(files, criterion.measure.words + unit)
        requirement = REQUIREMENT_OF[criterion.measure.name]
        if requirement in outcomes:
            value, result = outcomes[requirement]
            sign = "≤" if requirement == "radius" else "≥"
            assert f"{sign} {float(value):g}" in row
            assert row.endswith(f"| **{result.word}** |")
        else:
            assert row.endswith("| none | - |")


def test_limited_by_lines_name_each_witnessed_criterion(reports):
    """Below the table, every criterion with a witness has a "limited by" line with its point."""
    analysis, files = reports["digital_current_loop"]
    text = "".join(_page(files).text)
    witnessed = [c for c in analysis.margin.criteria if c.bracket.witness is not None]
    assert {c.measure.name for c in witnessed} >= {"gain_margin_db", "phase_margin_deg", "spectral_radius"}
    units = units_of(analysis.case)  # each value with its part's unit, as every table shows it
    assert units  # the case gives units: the lines below show them
    for criterion in witnessed:
        assert f"{criterion.measure.words.capitalize()} limited by: {criterion.limit_text(units)}." in text


def test_discrete_polynomial_section_shows_z_and_the_unit_circle(reports):
    """A case in z shows its polynomial as written in z and how the unit circle is decided."""
    analysis, files = reports["digital_current_loop"]
    text = files.markdown.read_text(encoding="utf-8")
    family = analysis.case.family
    for power, coefficient in zip(range(3, -1, -1), family.written, strict=True):
        assert f"z^{power}: {coefficient.to_text(family.names)}" in text
    assert "strictly inside the unit circle" in text and "w = (z − 1)/(z + 1)" in text
    servo = reports["servo_lead_criteria"][1].markdown.read_text(encoding="utf-8")
    assert "unit circle" not in servo.split("## 3.")[0]


@pytest.mark.parametrize("name", LOOPS)
def test_loop_response_is_drawn_for_a_loop(reports, name):
    """A loop case's report holds the loop_response picture, its legend naming the certified phase margin."""
    analysis, files = reports[name]
    assert (files.directory / "figures" / "loop_response.png").read_bytes().startswith(b"\x89PNG")
    draws = sample_draws(analysis.case, 20, analysis.settings.seed)
    picture = loop_response_picture(analysis, draws)
    assert picture.alt.startswith("Loop response") and "phase margin" in picture.alt
    assert "(c) Loop L = N/D" in files.markdown.read_text(encoding="utf-8")


def test_loop_response_is_not_drawn_without_a_loop(reports):
    """For a case not written as a loop the picture says it is not drawn, and why."""
    analysis, _ = reports["servo_lead_criteria"]
    plain = dataclasses.replace(analysis, case=load_case(CASES / "interval_measured.toml"))
    picture = loop_response_picture(plain, sample_draws(plain.case, 10, 0))
    assert picture.alt.startswith("Not drawn") and "not written as a loop" in picture.alt
    assert picture.png.startswith(b"\x89PNG")


def test_marked_members_lie_inside_the_certified_brackets(reports):
    """The limiting members' float crossovers give margins inside the certified brackets."""
    analysis, _ = reports["digital_current_loop"]
    case = analysis.case
    frequencies = np.geomspace(100.0, math.pi / 1e-5, 2000)
    seen = set()
    for criterion in analysis.margin.criteria:
        witness = criterion.bracket.witness
        if criterion.measure.name not in ("gain_margin_db", "phase_margin_deg") or witness is None:
            continue
        mark = loop_mark(case, criterion.measure.name, witness.parameters, frequencies)
        assert mark is not None
        if mark.kind == "gain":  # |L| = 1; the phase above -180 degrees is the member's phase margin
            assert abs(mark.magnitude_db) < 1e-6
            margin = math.degrees(np.angle(mark.value)) + 180
        else:  # L real negative; 1/|L| is the member's gain margin
            assert abs(mark.value.imag) < 1e-6 * abs(mark.value) and mark.value.real < 0
            margin = -mark.magnitude_db
        assert criterion.low - 1e-6 <= margin <= criterion.high + 1e-6
        seen.add(criterion.measure.name)
    assert seen == {"gain_margin_db", "phase_margin_deg"}


def test_root_cloud_of_a_z_case_has_the_unit_circle(reports, monkeypatch):
    """For a case in z the root cloud plots the roots in z with the unit circle, axes Re z and Im z."""
    analysis, _ = reports["digital_current_loop"]
    captured = []
    monkeypatch.setattr(figures, "_png", lambda figure: captured.append(figure) or b"")
    case = analysis.case
    draws = sample_draws(case, 50, 1)
    picture = figures.root_cloud_picture(case, draws)
    assert "unit circle" in picture.alt
    axis = captured[-1].axes[0]
    assert axis.get_xlabel() == "Re z (no unit)" and axis.get_ylabel() == "Im z (no unit)"
    labels = [line.get_label() for line in axis.get_lines()]
    assert "unit circle |z| = 1" in labels and "imaginary axis" not in labels
    # the roots plotted are those of the polynomial in z: inside the circle (the case is stable)
    largest = float(picture.alt.rsplit(" ", 1)[-1])
    assert 0.5 < largest < 1


def test_root_cloud_draws_the_damping_sector(reports, monkeypatch):
    """With a damping-ratio requirement the root cloud draws the rays Re s = -zeta |s|."""
    analysis, _ = reports["servo_lead_criteria"]
    captured = []
    monkeypatch.setattr(figures, "_png", lambda figure: captured.append(figure) or b"")
    picture = figures.root_cloud_picture(analysis.case, sample_draws(analysis.case, 50, 1))
    assert "damping sector boundary for ζ = 0.4" in picture.alt
    rays = [line for line in captured[-1].axes[0].get_lines() if line.get_linestyle() == ":"]
    assert len(rays) == 2
    for ray, sign in zip(rays, (1, -1), strict=True):
        x, y = ray.get_xdata()[-1], ray.get_ydata()[-1]
        assert math.isclose(-x, 0.4 * math.hypot(x, y), rel_tol=1e-12) and sign * y > 0


def _servo_loop(omega: float, km, tm, te) -> complex:
    """Closed form derived here from the case file's plant and controller."""
    s = mpmath.mpc(0, omega)
    return complex(8 * km * (mpmath.mpf("0.025") * s + 1)
                   / (s * (tm * s + 1) * (te * s + 1) * (mpmath.mpf("0.004") * s + 1)))


def _digital_loop(omega: float, inductance, vin, r, kp, ki) -> complex:
    """Closed form derived here from the case file's plant and controller, z = e^(j omega T)."""
    t = mpmath.mpf("0.00001")
    z = mpmath.exp(mpmath.mpc(0, omega) * t)
    plant = vin * t / inductance / (z * (z - 1 + r * t / inductance))
    controller = kp + ki * t * z / (z - 1)
    return complex(plant * controller)


def test_loop_values_match_the_closed_form_of_each_case():
    """The figure data's nominal L at one frequency equals an mpmath evaluation of the case's loop."""
    servo = load_case(CASES / "servo_lead_criteria.toml")
    digital = load_case(CASES / "digital_current_loop.toml")
    assert [float(v) for v in servo.family.nominal] == [20, 0.05, 0.002]
    assert [float(v) for v in digital.family.nominal] == [22e-6, 12, 0.075, 0.03, 300]
    omega = 2 * math.pi * 3000
    with mpmath.workdps(30):
        expected_servo = _servo_loop(37.0, 20, mpmath.mpf("0.05"), mpmath.mpf("0.002"))
        expected_digital = _digital_loop(omega, mpmath.mpf("22e-6"), 12, mpmath.mpf("0.075"),
                                         mpmath.mpf("0.03"), 300)
    ours = loop_values(servo, np.array([[20, 0.05, 0.002]]), [37.0])[0, 0]
    assert abs(ours - expected_servo) <= 1e-12 * abs(expected_servo)
    ours = loop_values(digital, np.array([[22e-6, 12, 0.075, 0.03, 300]]), [omega])[0, 0]
    assert abs(ours - expected_digital) <= 1e-9 * abs(expected_digital)
    assert abs(ours) > 0.5  # near the crossover, where a wrong map of the circle would show
