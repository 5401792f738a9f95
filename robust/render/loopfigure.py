"""The loop-response picture: magnitude and phase of L = N / D against frequency for the
nominal design and the sampled members, with the members that limit the certified gain and
phase margins marked where they meet the critical point.

Floats draw the curves and place the marks; the brackets in the legend are the certified
ones (:mod:`robust.analysis.criteria`), and the marked members are their witnesses.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..analysis.signoff import Analysis
from .canvas import Picture, new_figure, not_drawn, png
from .figdata import LoopMark, loop_frequencies, loop_mark, loop_values, phase_degrees
from .fmt import criterion_text

__all__ = ["loop_response_picture"]

_NAME = "loop_response"
#: Marker per criterion: shape, and what the mark shows.
_MARKS = {
    "phase_margin_deg": ("o", "limiting member's gain crossover |L| = 1"),
    "gain_margin_db": ("s", "limiting member's phase crossover"),
    "gain_margin_db_lower_direction": ("^", "limiting member's phase crossover"),
}


def frequency_label(case) -> str:
    """The frequency axis: omega in rad/s (s, or z with a sample time), else theta in rad/sample."""
    if case.family.discrete and case.sample_time is None:
        return "θ = ωT (rad/sample)"
    return "ω (rad/s)"


def _align(phase: float, curve_at: float) -> float:
    """``phase`` (degrees) moved by a multiple of 360 to the unwrapped curve's sheet."""
    return phase + 360 * round((curve_at - phase) / 360)


def loop_response_picture(analysis: Analysis, draws: np.ndarray) -> Picture:
    """Bode-form band of the loop over the sampled members; "not drawn" without a loop."""
    case = analysis.case
    family = case.family
    if not family.loop:
        return not_drawn(_NAME, "Not drawn: the case is not written as a loop (plant and controller), so "
                                "it has no loop response L = N/D and no gain or phase margin.")
    from matplotlib.lines import Line2D

    frequencies = loop_frequencies(case)
    nominal_point = np.array([[float(v) for v in family.nominal]])
    members = loop_values(case, np.asarray(draws, dtype=float), frequencies)
    nominal = loop_values(case, nominal_point, frequencies)[0]
    criteria = [c for c in analysis.margin.criteria if c.measure.name in _MARKS]
    marks: dict[str, LoopMark | None] = {}
    for criterion in criteria:
        witness = criterion.bracket.witness
        marks[criterion.measure.name] = None if witness is None else loop_mark(
            case, criterion.measure.name, witness.parameters, frequencies)

    figure = new_figure(7.6, 6.4)
    top, bottom = figure.subplots(2, 1, sharex=True)
    with np.errstate(divide="ignore", invalid="ignore"):
        member_db = 20 * np.log10(np.abs(members))
        nominal_db = 20 * np.log10(np.abs(nominal))
    member_phase = phase_degrees(members)
    nominal_phase = phase_degrees(nominal)
    top.plot(frequencies, member_db.T, color="#c4c4c4", linewidth=0.5)
    bottom.plot(frequencies, member_phase.T, color="#c4c4c4", linewidth=0.5)
    top.plot(frequencies, nominal_db, color="black", linewidth=1.5)
    bottom.plot(frequencies, nominal_phase, color="black", linewidth=1.5)
    top.axhline(0, color="black", linestyle="--", linewidth=0.9)
    finite = member_phase[np.isfinite(member_phase)]
    low = float(min(finite.min(), np.nanmin(nominal_phase))) if len(finite) else -180.0
    high = float(max(finite.max(), np.nanmax(nominal_phase))) if len(finite) else 0.0
    for k in range(int(np.floor((low + 180) / 360)), int(np.ceil((high + 180) / 360)) + 1):
        if low - 45 <= -180 + 360 * k <= high + 45:
            bottom.axhline(-180 + 360 * k, color="black", linestyle="--", linewidth=0.9)

    handles = [Line2D([], [], color="black", linewidth=1.5),
               Line2D([], [], color="#c4c4c4", linewidth=1.0)]
    labels = ["nominal loop", f"{len(members)} sampled members"]
    described = []
    unit = frequency_label(case)
    per = unit.split("(")[-1].rstrip(")")
    for criterion in criteria:
        name = criterion.measure.name
        marker, what = _MARKS[name]
        style: dict[str, Any] = {"linestyle": "none", "marker": marker, "markersize": 7,
                                 "markerfacecolor": "white", "markeredgecolor": "black",
                                 "markeredgewidth": 1.4, "zorder": 5}
        mark = marks[name]
        bracket = criterion_text(criterion, 4)
        if mark is not None:
            on_curve = float(np.interp(np.log(mark.frequency), np.log(frequencies),
                                       phase_degrees(loop_values(case, mark.point[None, :], frequencies))[0]))
            phase = _align(float(np.degrees(np.angle(mark.value))), on_curve)
            top.plot([mark.frequency], [mark.magnitude_db], **style)
            bottom.plot([mark.frequency], [phase], **style)
            if mark.kind == "gain":  # the phase margin: from -180 up to the member's phase
                bottom.plot([mark.frequency] * 2, [phase, -180 + 360 * round((phase + 180) / 360)],
                            color="black", linewidth=1.0)
            else:  # the gain margin: from the member's magnitude to 0 dB
                top.plot([mark.frequency] * 2, [mark.magnitude_db, 0], color="black", linewidth=1.0)
            where = f"{what} at {mark.frequency:.4g} {per}"
        else:
            where = "open upper end, no limiting member to mark"
        handles.append(Line2D([], [], **{k: v for k, v in style.items() if k != "zorder"}))
        labels.append(f"{criterion.measure.words} {bracket} (certified); {where}")
        described.append(f"{criterion.measure.words} {bracket}"
                         + (f", limiting member marked at {mark.frequency:.4g} {per}" if mark else ""))
    for ax in (top, bottom):
        ax.set_xscale("log")
        ax.grid(True, which="both", color="#e2e2e2", linewidth=0.5)
        ax.set_xlim(float(frequencies[0]), float(frequencies[-1]))
    top.set_ylabel("|L| (dB)")
    bottom.set_ylabel("phase of L (deg)")
    bottom.set_xlabel(unit)
    top.set_title("Loop L = N/D: nominal design (black) and sampled members (grey)", fontsize=9.5)
    figure.legend(handles, labels, loc="outside lower center", ncol=1, fontsize=8)
    alt = (f"Loop response: magnitude and phase of L against {unit} for the nominal design and "
           f"{len(members)} sampled members; "
           + ("; ".join(described) or "no gain or phase margin bracketed"))
    return Picture(_NAME, png(figure), alt)
