"""The report's pictures as PNG bytes (matplotlib, Agg canvas, imported lazily).

Our own plain look: greys and black only, meaning carried by line style, marker shape
and hatching, so that every picture survives a monochrome printer. No global pyplot
state is touched: each picture is a fresh ``Figure`` on its own Agg canvas.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from fractions import Fraction
from typing import Any

import numpy as np

from ..analysis.signoff import Analysis
from ..exact.numbers import to_float
from .canvas import Picture, not_drawn
from .canvas import new_figure as _new_figure
from .canvas import png as _png
from .figdata import (
    choose_omegas,
    nominal_roots,
    polynomial_roots,
    sample_draws,
    value_set_data,
    written_roots,
)
from .fmt import units_of
from .loopfigure import loop_response_picture

__all__ = ["FIGURE_NAMES", "Picture", "draw_figures", "parameter_label", "plane_labels"]

#: File stems of the pictures, in report order.
FIGURE_NAMES = ("ranking", "value_set", "root_cloud", "loop_response", "dependency_graph", "partition")

#: The ranking picture's margin axis: scales are ratios.
RANKING_AXIS = "margin: scale of the tolerance that keeps the loop robustly stable (a ratio, no unit)"
#: Members sampled for the value-set and root-cloud pictures.
SAMPLED_MEMBERS = 400

_STYLE: dict[str, Any] = {
    "font.family": "DejaVu Sans",
    "font.size": 9.5,
    "axes.titlesize": 10,
    "axes.labelsize": 9.5,
    "axes.edgecolor": "#333333",
    "axes.linewidth": 0.8,
    "xtick.labelsize": 8.5,
    "ytick.labelsize": 8.5,
    "legend.fontsize": 8.5,
    "legend.frameon": True,
    "legend.edgecolor": "#999999",
    "legend.framealpha": 1.0,
    "axes.grid": False,
    "figure.facecolor": "white",
    "savefig.facecolor": "white",
    "hatch.color": "#555555",
    "hatch.linewidth": 0.6,
}


def draw_figures(analysis: Analysis) -> tuple[Picture, ...]:
    """Every picture of the report, in :data:`FIGURE_NAMES` order."""
    import matplotlib

    case = analysis.case
    with matplotlib.rc_context(_STYLE):  # type: ignore[arg-type]  # rc names typed as literals
        if not floats_suffice(case):
            return (ranking_picture(analysis),
                    _not_drawn("value_set", "value set of the coefficient overbound"),
                    _not_drawn("root_cloud", "roots of sampled members"),
                    _not_drawn("loop_response", "loop responses of sampled members"),
                    dependency_picture(case),
                    _not_drawn("partition", "pieces of the proof"))
        draws = sample_draws(case, SAMPLED_MEMBERS, analysis.settings.seed)
        return (
            ranking_picture(analysis),
            value_set_picture(case, choose_omegas(case), draws),
            root_cloud_picture(case, draws, analysis.check.witness),
            loop_response_picture(analysis, draws),
            dependency_picture(case),
            partition_picture(analysis),
        )


def floats_suffice(case) -> bool:
    """Whether the box and the coefficients' ranges fit comfortably in floats (the sampled
    pictures are drawn in floats; their exact counterparts are the report's tables)."""
    limit = Fraction(2) ** 900
    values = [*case.family.box.low, *case.family.box.high]
    for bound in case.family.bounds():
        values += [bound.low, bound.high]
    return all(v == 0 or 1 / limit < abs(v) < limit for v in values)


def _not_drawn(name: str, what: str) -> Picture:
    """A picture that says it is not drawn because its numbers lie beyond the floats."""
    return not_drawn(name, f"Not drawn: the {what} lie beyond the range of floating-point numbers "
                           "(about 1e±270 here); the exact results above cover them.")


# -- (a) value set ------------------------------------------------------------------------

_LIMIT = 2.4  # half-width of each normalised panel


def value_set_picture(case, omegas: Sequence[float], draws: np.ndarray) -> Picture:
    """Small multiples: per omega, the overbound's rectangle, the members, the origin.

    Each panel maps the rectangle onto [-1, 1] x [-1, 1] (real and imaginary parts scaled
    separately: containment, and so zero exclusion, survive such a scaling).
    """
    data = value_set_data(case, omegas, draws)
    columns = 3
    rows = math.ceil(len(data) / columns)
    figure = _new_figure(7.6, 3.05 * rows + 0.9)
    axes = figure.subplots(rows, columns, squeeze=False)
    for ax in axes.flat[len(data):]:
        ax.set_axis_off()
    for ax, entry in zip(axes.flat, data, strict=False):
        re_lo, re_hi, im_lo, im_hi = entry["rectangle"]
        cx, cy = (re_lo + re_hi) / 2, (im_lo + im_hi) / 2
        hx = (re_hi - re_lo) / 2 or max(abs(cx), 1.0) * 1e-12
        hy = (im_hi - im_lo) / 2 or max(abs(cy), 1.0) * 1e-12

        def scaled(x, y, cx=cx, cy=cy, hx=hx, hy=hy):
            return (np.asarray(x) - cx) / hx, (np.asarray(y) - cy) / hy

        from matplotlib.patches import Rectangle

        ax.add_patch(Rectangle((-1, -1), 2, 2, facecolor="#f2f2f2", edgecolor="black",
                               hatch="////", linewidth=1.1, zorder=1))
        u, v = scaled(entry["points"][:, 0], entry["points"][:, 1])
        ax.plot(u, v, linestyle="none", marker=".", markersize=2.6, color="#202020",
                alpha=0.75, zorder=3, label="sampled members")
        nu, nv = scaled(*entry["nominal"])
        ax.plot([nu], [nv], linestyle="none", marker="D", markersize=5, markerfacecolor="white",
                markeredgecolor="black", zorder=4, label="nominal")
        for label, (x, y) in entry["corners"].items():
            cu, cv = scaled(x, y)
            offset = (float(np.sign(cu)) * 4, float(np.sign(cv)) * 4)
            ax.annotate(label, (float(cu), float(cv)), xytext=offset,
                        textcoords="offset points", fontsize=7.5, color="#333333",
                        ha="left" if cu > 0 else "right", va="bottom" if cv > 0 else "top")
        ou, ov = scaled(0.0, 0.0)
        ou, ov = float(ou), float(ov)
        inside = abs(ou) <= _LIMIT and abs(ov) <= _LIMIT
        if inside:
            ax.plot([ou], [ov], linestyle="none", marker="o", markersize=9, markerfacecolor="white",
                    markeredgecolor="black", markeredgewidth=1.4, zorder=5)
            ax.plot([ou], [ov], linestyle="none", marker="+", markersize=9, color="black",
                    markeredgewidth=1.4, zorder=6, label="origin")
        else:
            # the origin lies outside the panel: an arrow near the border points at it
            reach = 1.0 / max(abs(ou), abs(ov))
            tail = (ou * reach * 1.45, ov * reach * 1.45)
            tip = (ou * reach * 2.25, ov * reach * 2.25)
            ax.annotate("", xy=tip, xytext=tail,
                        arrowprops={"arrowstyle": "-|>", "color": "black", "linewidth": 1.3},
                        zorder=6)
        verdict = "origin INSIDE the rectangle" if entry["origin_inside"] else "origin excluded"
        where = "" if inside else f", at ({ou:.2g}, {ov:.2g})"
        ax.set_title(f"ω = {entry['omega']:.3g} rad/s\n{verdict}{where}", fontsize=8.5, linespacing=1.3)
        ax.set_xlim(-_LIMIT, _LIMIT)
        ax.set_ylim(-_LIMIT, _LIMIT)
        ax.set_aspect("equal")
        ax.set_xticks([-2, -1, 0, 1, 2])
        ax.set_yticks([-2, -1, 0, 1, 2])
        ax.axhline(0, color="#bbbbbb", linewidth=0.5, zorder=0)
        ax.axvline(0, color="#bbbbbb", linewidth=0.5, zorder=0)
        ax.set_xlabel("Re p(jω), scaled (no unit)", fontsize=8)
        ax.set_ylabel("Im p(jω), scaled (no unit)", fontsize=8)
    handles, labels = axes.flat[0].get_legend_handles_labels()
    from matplotlib.patches import Patch

    handles.insert(0, Patch(facecolor="#f2f2f2", edgecolor="black", hatch="////"))
    labels.insert(0, "value set of the coefficient overbound (Kharitonov rectangle)")
    from matplotlib.lines import Line2D

    ring = Line2D([], [], linestyle="none", marker="o", markersize=9, markerfacecolor="white",
                  markeredgecolor="black", markeredgewidth=1.4)
    cross = Line2D([], [], linestyle="none", marker="+", markersize=9, color="black", markeredgewidth=1.4)
    keep = [i for i, lab in enumerate(labels) if lab != "origin"]
    handles = [handles[i] for i in keep] + [(ring, cross),
                                            Line2D([], [], color="black", linewidth=1.3, marker=">",
                                                   markevery=[1], markersize=5)]
    labels = [labels[i] for i in keep] + ["origin (zero exclusion asks: outside every rectangle)",
                                          "direction of the origin when off the panel"]
    figure.legend(handles, labels, loc="outside lower center", ncol=2, fontsize=8)
    alt = ("Value set at " + ", ".join(f"{d['omega']:.3g}" for d in data) + " rad/s: "
           + "; ".join(f"ω = {d['omega']:.3g} origin {'inside' if d['origin_inside'] else 'excluded'}"
                       for d in data))
    return Picture("value_set", _png(figure), alt)


# -- (b) root cloud -----------------------------------------------------------------------


def root_cloud_picture(case, draws: np.ndarray, witness=None) -> Picture:
    """Roots of the sampled members, the nominal roots and the stability boundary: the
    imaginary axis, or for a polynomial in z its roots as written and the unit circle. With
    a damping-ratio requirement (s), the sector's boundary rays Re s = -zeta |s| too."""
    family = case.family
    discrete = family.discrete
    draws = np.asarray(draws, dtype=float)
    roots = (written_roots(case, draws) if discrete
             else polynomial_roots(family.coefficients_float(draws))).ravel()
    roots = roots[np.isfinite(roots)]
    nominal = nominal_roots(case, written=discrete)
    nominal = nominal[np.isfinite(nominal)]
    figure = _new_figure(7.6, 4.8 if not discrete else 5.6)
    ax = figure.subplots()
    everything = np.concatenate([roots, nominal])
    sizes = np.abs(everything[np.abs(everything) > 0])
    spread = float(sizes.max() / sizes.min()) if len(sizes) and not discrete else 1.0
    if spread > 30:
        width = float(np.min(np.abs(nominal[np.abs(nominal) > 0]))) / 2 if np.any(nominal) else 1.0
        ax.set_xscale("asinh", linear_width=width)
        ax.set_yscale("asinh", linear_width=width)
        note = f"asinh axes: linear within ±{width:.3g}, logarithmic beyond"
    else:
        note = "linear axes"
    unstable = np.abs(roots) > 1 if discrete else roots.real > 0
    ax.plot(roots.real[~unstable], roots.imag[~unstable], linestyle="none", marker=".", markersize=3,
            color="#777777", alpha=0.6, label=f"roots of {len(draws)} sampled members")
    if unstable.any():
        ax.plot(roots.real[unstable], roots.imag[unstable], linestyle="none", marker="^", markersize=5,
                markerfacecolor="white", markeredgecolor="black",
                label="sampled roots outside the unit circle" if discrete
                else "sampled roots in the right half-plane")
    ax.plot(nominal.real, nominal.imag, linestyle="none", marker="x", markersize=9,
            markeredgewidth=1.8, color="black", label="nominal roots")
    if witness is not None:
        values = np.array(witness.root_values())
        ax.plot(values.real, values.imag, linestyle="none", marker="s", markersize=7,
                markerfacecolor="none", markeredgecolor="black", markeredgewidth=1.2,
                label="witness roots")
    ax.axhline(0, color="#bbbbbb", linewidth=0.5, zorder=0)
    if discrete:
        turn = np.linspace(0, 2 * np.pi, 721)
        ax.plot(np.cos(turn), np.sin(turn), color="black", linestyle="--", linewidth=1.0,
                label="unit circle |z| = 1")
        ax.axvline(0, color="#bbbbbb", linewidth=0.5, zorder=0)
        reach = max(1.0, float(np.abs(everything).max()) if len(everything) else 1.0) * 1.1
        ax.set_xlim(-reach, reach)
        ax.set_ylim(-reach, reach)
        ax.set_aspect("equal")
    else:
        ax.axvline(0, color="black", linestyle="--", linewidth=1.0, label="imaginary axis")
        low = float(min(everything.real.min(), 0)) if len(everything) else -1.0
        high = float(max(everything.real.max(), 0)) if len(everything) else 1.0
        pad = (high - low) * 0.08 or 1.0
        if spread > 30:
            ax.set_xlim(low * 1.6 if low < 0 else -1, max(high * 1.6, width))
        else:
            ax.set_xlim(low - pad, high + pad)
    zeta = None if discrete else case.requirements.damping_ratio
    if zeta is not None:
        _sector_rays(ax, float(zeta))
    ax.grid(True, color="#dddddd", linewidth=0.5)
    x_label, y_label = plane_labels(case)
    ax.set_xlabel(x_label)
    ax.set_ylabel(y_label)
    if spread > 30:
        _decade_ticks(ax.xaxis, ax.get_xlim(), width)
        _decade_ticks(ax.yaxis, ax.get_ylim(), width)
    ax.set_title(f"Roots of sampled members ({note})", fontsize=9.5)
    figure.legend(loc="outside lower center", ncol=3, fontsize=8)
    if discrete:
        largest = float(np.abs(roots).max()) if len(roots) else float("nan")
        alt = (f"Root cloud of {len(draws)} sampled members in the z-plane with the unit circle "
               f"(axes {x_label} and {y_label}); largest root magnitude |z| {largest:.4g}")
    else:
        alt = (f"Root cloud of {len(draws)} sampled members (axes {x_label} and {y_label}); "
               "largest real part "
               f"{float(roots.real.max()) if len(roots) else float('nan'):.4g}"
               + (f"; damping sector boundary for ζ = {float(zeta):g}" if zeta is not None else ""))
    return Picture("root_cloud", _png(figure), alt)


def _sector_rays(ax, zeta: float) -> None:
    """The two rays Re s = -zeta |s| from the origin across the panel, dotted; the axis
    limits stay as they were (the rays are drawn as dense polylines, so they stay straight
    in data terms on asinh axes too)."""
    xlim, ylim = ax.get_xlim(), ax.get_ylim()
    reach = 4 * max(abs(v) for v in (*xlim, *ylim))
    radius = np.concatenate([[0.0], np.geomspace(reach * 1e-9, reach, 600)])
    across = math.sqrt(max(1 - zeta * zeta, 0.0))
    for sign, label in ((1, f"damping ratio ζ = {zeta:g} (sector boundary Re s = −ζ|s|)"), (-1, None)):
        ax.plot(-zeta * radius, sign * across * radius, color="black", linestyle=":", linewidth=1.2,
                label=label)
    ax.set_xlim(xlim)
    ax.set_ylim(ylim)


def _decade_ticks(axis, limits: tuple[float, float], width: float) -> None:
    """Ticks at 0 and at the powers of ten well outside the linear part of an asinh axis."""
    big = max(abs(limits[0]), abs(limits[1]))
    first = math.ceil(math.log10(max(width * 2.5, 1e-300)))
    last = math.floor(math.log10(big)) if big > 0 else first
    ticks, labels = [0.0], ["0"]
    for k in range(first, last + 1):
        for sign in (-1, 1):
            value = sign * 10.0**k
            if limits[0] <= value <= limits[1]:
                ticks.append(value)
                labels.append(("−" if sign < 0 else "") + f"$10^{{{k}}}$")
    axis.set_ticks(ticks, labels)
    axis.set_minor_locator(_no_ticks())


def _no_ticks():
    from matplotlib.ticker import NullLocator

    return NullLocator()


# -- (c) dependency graph -----------------------------------------------------------------

_DIRECTION_STYLE: dict[str, tuple[Any, str]] = {
    "+": ("-", "grows with the parameter (+)"),
    "-": ("--", "falls as the parameter grows (−)"),
    "mixed": (":", "both, depending on the point (mixed)"),
    "0": ((0, (1, 3)), "no effect over the box (0)"),
}


def dependency_picture(case) -> Picture:
    """Parameters (left) -> coefficients (right); line style gives the direction."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import FancyArrowPatch

    from ..model.graph import build_graph

    family = case.family
    graph = build_graph(family)
    names = list(family.names)
    powers = list(range(family.degree, -1, -1))
    tall = max(len(names), len(powers))
    figure = _new_figure(7.6, 0.42 * tall + 1.5)
    ax = figure.subplots()
    ax.set_axis_off()

    def place(count: int) -> list[float]:
        if count == 1:
            return [(tall - 1) / 2]
        return list(np.linspace(tall - 1, 0, count))

    left = dict(zip(names, place(len(names)), strict=True))
    right = dict(zip(powers, place(len(powers)), strict=True))
    x_left, x_right = 0.0, 1.0
    used = set()
    for name in names:
        for node in graph.successors(("parameter", name)):
            direction = graph.edges[("parameter", name), node]["direction"]
            used.add(direction)
            style = _DIRECTION_STYLE[direction][0]
            arrow = FancyArrowPatch((x_left + 0.03, left[name]), (x_right - 0.03, right[node[1]]),
                                    arrowstyle="-|>", mutation_scale=9, linestyle=style,
                                    linewidth=1.1, color="#222222", shrinkA=0, shrinkB=0)
            ax.add_patch(arrow)
    box = {"boxstyle": "round,pad=0.3", "facecolor": "white", "edgecolor": "black", "linewidth": 0.9}
    held = "w" if family.discrete else family.variable  # the variable of the coefficients held
    for name, y in left.items():
        ax.text(x_left, y, parameter_label(case, name), ha="right", va="center", fontsize=9.5, bbox=box)
    for power, y in right.items():
        ax.text(x_right, y, f"a{power}  ({held}^{power})", ha="left", va="center", fontsize=9.5,
                bbox={**box, "boxstyle": "square,pad=0.3", "facecolor": "#eeeeee"})
    ax.text(x_left, tall - 0.2 + 0.6, "parameters", ha="right", va="bottom", fontsize=9.5,
            fontweight="bold")
    ax.text(x_right, tall - 0.2 + 0.6, "coefficients", ha="left", va="bottom", fontsize=9.5,
            fontweight="bold")
    ax.set_xlim(-0.22, 1.3)
    ax.set_ylim(-0.8, tall + 0.6)
    handles = [Line2D([], [], color="#222222", linestyle=_DIRECTION_STYLE[d][0], linewidth=1.3)
               for d in ("+", "-", "mixed", "0") if d in used]
    labels = [_DIRECTION_STYLE[d][1] for d in ("+", "-", "mixed", "0") if d in used]
    figure.legend(handles, labels, loc="outside lower center", ncol=min(len(handles), 3),
                  title="over the whole box, the coefficient ...", title_fontsize=8.5)
    alt = "Dependency graph: " + "; ".join(
        f"{n} -> " + ", ".join(f"a{node[1]} ({graph.edges[('parameter', n), node]['direction']})"
                               for node in graph.successors(("parameter", n))) for n in names)
    return Picture("dependency_graph", _png(figure), alt)


# -- ranking ------------------------------------------------------------------------------


def ranking_picture(analysis: Analysis) -> Picture:
    """Horizontal bars of margin_alone and margin_given_others per parameter."""
    params = list(analysis.rank.parameters)
    figure = _new_figure(7.6, 0.4 * len(params) + 1.4)
    ax = figure.subplots()
    alone = [to_float(p.margin_alone.lower) for p in params]
    given = [to_float(p.margin_given_others.lower) for p in params]
    open_alone = [p.margin_alone.upper is None for p in params]
    open_given = [p.margin_given_others.upper is None for p in params]
    # a margin that ends where the model ends (a part's limit, a lost order, a factor at 0)
    # is no stability headroom: its value is written with the reason, not as a plain number
    ends = {"physical_limit": "limit", "degree_loss": "order lost", "denominator": "factor 0"}
    def why(limit) -> str:
        return ends.get(limit.kind.value, "") if limit.proven else "budget"

    why_alone = [why(p.limit_alone) for p in params]
    why_given = [why(p.limit_given_others) for p in params]
    finite = [v for v, o in zip(alone + given, open_alone + open_given, strict=True) if not o]
    top = max([*finite, 1.0]) * 1.25
    top = max(min(top, 10.0), 1.5)
    y = np.arange(len(params))[::-1].astype(float)
    height = 0.36
    for values, opens, whys, offset, style, label in (
            (alone, open_alone, why_alone, height / 2, {"facecolor": "#9a9a9a", "edgecolor": "black"},
             "this tolerance alone (others at nominal)"),
            (given, open_given, why_given, -height / 2,
             {"facecolor": "white", "edgecolor": "black", "hatch": "xxx"},
             "this tolerance, others over their full range")):
        shown = [min(v, top) for v in values]
        ax.barh(y + offset, shown, height=height * 0.95, linewidth=0.8, label=label, **style)
        for yy, v, s, is_open, why in zip(y + offset, values, shown, opens, whys, strict=True):
            text = f"≥ {v:.4g}" if is_open or why == "budget" else f"{v:.4g}"
            if why == "budget":
                text += " (undecided beyond, within the work budget)"
            elif why:
                text += f" ({why}, not a crossing)"
            if v > top:
                text += " (cut)"
            ax.text(s + top * 0.01, yy, text, va="center", ha="left", fontsize=8)
    ax.axvline(1.0, color="black", linestyle="--", linewidth=1.2)
    ax.text(1.0, len(params) - 0.45, " 1 = tolerances as given", ha="left", va="bottom", fontsize=8)
    ax.set_yticks(y)
    labels = [parameter_label(analysis.case, p.name) for p in params]
    ax.set_yticklabels(labels)
    ax.set_xlim(0, top * 1.18)
    ax.set_ylim(-0.7, len(params) - 0.1)
    ax.set_xlabel(RANKING_AXIS)
    ax.grid(True, axis="x", color="#dddddd", linewidth=0.5)
    ax.set_axisbelow(True)
    figure.legend(loc="outside lower center", ncol=2, fontsize=8)
    alt = f"Parameter margins ({RANKING_AXIS}): " + "; ".join(
        f"{label} alone {a:.4g}, given others {g:.4g}"
        for label, a, g in zip(labels, alone, given, strict=True))
    return Picture("ranking", _png(figure), alt)


# -- (d) the proof's partition -------------------------------------------------------------

_PIECE_STYLE = {"bernstein": {"facecolor": "#d9d9d9", "hatch": ""},
                "kharitonov": {"facecolor": "white", "hatch": "///"},
                "open": {"facecolor": "white", "hatch": "xx"}}


def partition_axes(data: dict | None) -> tuple[str, ...]:
    """The two parameters split most in the certificate (then the first ones of the box)."""
    if data is None:
        return ()
    names = list(data["box"])
    split = list(data.get("summary", {}).get("splits", {}))
    wide = [n for n in names if data["box"][n][0] != data["box"][n][1] and n not in split]
    return tuple((split + wide)[:2])


def partition_picture(analysis: Analysis) -> Picture:
    """The certificate's pieces projected on the two parameters split most."""
    from matplotlib.collections import PatchCollection
    from matplotlib.patches import Rectangle

    from ..analysis.certificate import leaves

    data = analysis.certificate
    axes_names = partition_axes(data)
    if data is None or not data.get("tree") or len(axes_names) < 1:
        figure = _new_figure(7.6, 1.0)
        ax = figure.subplots()
        ax.set_axis_off()
        text = "No partition: the verdict rests on a witness (or the box has no tolerance)."
        ax.text(0.5, 0.5, text, ha="center", va="center", fontsize=9)
        return Picture("partition", _png(figure), text)
    x_name = axes_names[0]
    y_name = axes_names[1] if len(axes_names) > 1 else None
    figure = _new_figure(5.6, 4.4)
    ax = figure.subplots()
    pieces = leaves(data)
    counts: dict[str, int] = {}
    groups: dict[str, list] = {}
    for method, low, high in pieces:
        counts[method] = counts.get(method, 0) + 1
        x0, x1 = to_float(low[x_name]), to_float(high[x_name])
        y0, y1 = (to_float(low[y_name]), to_float(high[y_name])) if y_name else (0.0, 1.0)
        groups.setdefault(method, []).append(Rectangle((x0, y0), x1 - x0, y1 - y0))
    for method, rectangles in groups.items():  # one collection per method: fast for many pieces
        style = _PIECE_STYLE.get(method, _PIECE_STYLE["open"])
        ax.add_collection(PatchCollection(rectangles, edgecolor="black", linewidth=0.6,
                                          facecolor=style["facecolor"], hatch=style["hatch"] or None))
    box = data["box"]
    ax.set_xlim(to_float(Fraction(box[x_name][0])), to_float(Fraction(box[x_name][1])))
    ax.set_xlabel(parameter_label(analysis.case, x_name))
    if y_name:
        ax.set_ylim(to_float(Fraction(box[y_name][0])), to_float(Fraction(box[y_name][1])))
        ax.set_ylabel(parameter_label(analysis.case, y_name))
    else:
        ax.set_yticks([])
    words = {"bernstein": "Bernstein (grey)", "kharitonov": "Kharitonov of the piece (hatched)",
             "open": "not proven (crossed)"}
    ax.set_title(f"{len(pieces)} piece(s): " + ", ".join(f"{k} {words.get(m, m)}" for m, k in counts.items()),
                 fontsize=9)
    shown = [parameter_label(analysis.case, n) for n in (x_name, y_name) if n]
    alt = (f"Partition of the box into {len(pieces)} pieces, projected on {' and '.join(shown)}: "
           + ", ".join(f"{k} proven by {m}" if m != "open" else f"{k} open" for m, k in counts.items()))
    return Picture("partition", _png(figure), alt)


def parameter_label(case, name: str) -> str:
    """A parameter as an axis or a node names it: "L (H)", the name alone without a unit."""
    unit = units_of(case).get(name, "")
    return f"{name} ({unit})" if unit else name


def plane_labels(case) -> tuple[str, str]:
    """The root plane's axes: for a time in seconds Re s in 1/s and Im s (a frequency) in
    rad/s; z = e^(sT) is a pure number."""
    var = getattr(case, "variable", "s")
    if case.family.discrete:
        return f"Re {var} (no unit)", f"Im {var} (no unit)"
    return f"Re {var} (1/s)", f"Im {var} (rad/s)"
