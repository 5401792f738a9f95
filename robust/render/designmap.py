"""A design map for people: the text summary, the figure (PNG and SVG) and the files of
``robust map -o DIR``.

Colours of our own: green for proven stable (dark green where the required margin is also
proven), a brick red for a cell with a verified unstable point, light grey with cross
hatching for undecided, so that the undecided cells stay distinct on a monochrome printer.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
import tempfile
from pathlib import Path

from ..analysis.designmap import DesignMap
from ..analysis.outcomes import Verdict
from ..errors import InputError
from ..exact.numbers import approx_text, format_fraction, to_float
from .canvas import DPI, new_figure
from .fmt import with_unit
from .writer import write_new_file

__all__ = ["MAP_FILES", "check_map_directory", "map_figures", "render_map", "write_map"]

#: The files ``robust map -o DIR`` writes.
MAP_FILES = ("map.json", "map.png", "map.svg")
_KIND = "robust design map"

_STYLE = {"stable": ("#8fcf8f", "", "proven stable"),
          "margin": ("#2e7d32", "", "proven stable, required margin proven"),
          "unstable": ("#c0504d", "", "unstable (verified witness inside)"),
          "undecided": ("#e0e0e0", "xx", "undecided within the budget")}


def _style_key(cell) -> str:
    if cell.verdict is Verdict.STABLE and cell.margin is not None and cell.margin["outcome"] == "pass":
        return "margin"
    return cell.verdict.value


def render_map(result: DesignMap, title: str = "") -> str:
    """The summary: the region's shares by verdict and, on one axis, the stable intervals."""
    axes = result.axes
    lines = [f"Design map{': ' + title if title else ''}"]
    for a in axes:
        lines.append("  " + with_unit(f"axis {a.name}: {approx_text(a.low, 6)} .. {approx_text(a.high, 6)}",
                                      a.unit))
    lines.append(f"  {len(result.cells)} cells ({result.decisions} decisions, first grid "
                 f"{result.resolution}{' x ' + str(result.resolution) if len(axes) == 2 else ''}, "
                 f"up to {result.depth} halvings)")
    for verdict in Verdict:
        share = result.fraction(verdict)
        lines.append(f"  {verdict.value:<9} {result.count(verdict):>5} cells, "
                     f"{to_float(share):7.2%} of the region")
    if result.required_margin is not None:
        summary: dict = result.summary()["margin"]  # type: ignore[assignment]
        lines.append(f"  required margin {approx_text(result.required_margin, 6)} proven in "
                     f"{summary['pass']} stable cell(s), refuted in {summary['fail']}, "
                     f"open in {summary['open']}")
    if len(axes) == 1:
        name = axes[0].name
        intervals = result.stable_intervals()
        if intervals:
            lines.append(f"Proven stable for every toleranced value when {name} lies in:")
            lines += [f"  [{approx_text(lo, 6)}, {approx_text(hi, 6)}]   exact [{format_fraction(lo)}, "
                      f"{format_fraction(hi)}]" for lo, hi in intervals]
        else:
            lines.append(f"No value of {name} in the range is proven stable at this resolution.")
    if result.summary()["safety_stop"]:
        lines.append("Note: the wall-clock safety limit cut a decision short; a re-run may differ")
    return "\n".join(lines)


def map_figures(result: DesignMap, title: str = "") -> tuple[bytes, bytes]:
    """The map as (PNG bytes, SVG bytes), with no timestamps, so equal input gives equal files."""
    import matplotlib
    from matplotlib.collections import PatchCollection
    from matplotlib.patches import Patch, Rectangle

    with matplotlib.rc_context({"svg.hashsalt": "robust-map", "font.size": 9, "hatch.linewidth": 0.5}):
        one = len(result.axes) == 1
        figure = new_figure(6.4, 2.4 if one else 5.2)
        ax = figure.subplots()
        groups: dict[str, list] = {}
        for cell in result.cells:
            (x0, x1) = (to_float(v) for v in cell.ranges[0])
            (y0, y1) = (0.0, 1.0) if one else tuple(to_float(v) for v in cell.ranges[1])
            groups.setdefault(_style_key(cell), []).append(Rectangle((x0, y0), x1 - x0, y1 - y0))
        for key, rectangles in groups.items():
            colour, hatch, _ = _STYLE[key]
            ax.add_collection(PatchCollection(rectangles, facecolor=colour, edgecolor="#555555",
                                              linewidth=0.4, hatch=hatch or None))
        if not one:
            points = [c.witness["parameters"] for c in result.cells if c.witness is not None]
            names = (result.axes[0].name, result.axes[1].name)
            if points:
                ax.plot([to_float(_fraction(p[names[0]])) for p in points],
                        [to_float(_fraction(p[names[1]])) for p in points], linestyle="none",
                        marker=".", markersize=2.5, color="black")
        first = result.axes[0]
        ax.set_xlim(to_float(first.low), to_float(first.high))
        ax.set_xlabel(_label(first))
        if one:
            ax.set_ylim(0, 1)
            ax.set_yticks([])
        else:
            second = result.axes[1]
            ax.set_ylim(to_float(second.low), to_float(second.high))
            ax.set_ylabel(_label(second))
        used = [key for key in _STYLE if key in groups]
        handles: list = [Patch(facecolor=_STYLE[k][0], edgecolor="#555555", hatch=_STYLE[k][1] or None,
                         label=_STYLE[k][2]) for k in used]
        if not one and any(c.witness is not None for c in result.cells):
            from matplotlib.lines import Line2D

            handles.append(Line2D([], [], linestyle="none", marker=".", color="black",
                                  label="verified unstable point"))
        ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.22 if one else -0.12),
                  ncol=2, fontsize=7.5, frameon=False)
        ax.set_title(title or "Certified design map", fontsize=9.5)
        png_buffer, svg_buffer = io.BytesIO(), io.BytesIO()
        figure.savefig(png_buffer, format="png", dpi=DPI, metadata={"Software": None})
        figure.savefig(svg_buffer, format="svg", metadata={"Date": None, "Creator": None})
    return png_buffer.getvalue(), svg_buffer.getvalue()


def _fraction(text: str):
    from fractions import Fraction

    return Fraction(text)


def _label(axis) -> str:
    return f"{axis.name} ({axis.unit})" if with_unit("", axis.unit) else axis.name


def _is_previous_map(path: Path) -> bool:
    marker = path / "map.json"
    if marker.is_symlink() or not marker.is_file():
        return False
    try:
        return json.loads(marker.read_text()).get("kind") == _KIND
    except (OSError, ValueError, AttributeError):
        return False


def check_map_directory(directory: str | Path) -> Path:
    """The output directory, checked before any work: new, empty, or holding only a previous
    map (whose files are then replaced); never a file, a link, or a folder of other files."""
    path = Path(directory)
    expected = "a new or empty directory (or one holding a previous robust map)"
    if path.is_symlink() or (path.exists() and not path.is_dir()):
        raise InputError("-o", "is a symbolic link or a file", expected, str(path))
    if path.is_dir():
        entries = {entry.name for entry in path.iterdir()}
        if entries and not (entries <= set(MAP_FILES) and _is_previous_map(path)):
            raise InputError("-o", "the directory holds other files; robust never overwrites them",
                             expected, str(path))
        if not os.access(path, os.W_OK | os.X_OK):
            raise InputError("-o", "cannot write in it (permission denied)", expected, str(path))
    elif not path.absolute().parent.is_dir():
        raise InputError("-o", "its parent folder does not exist", expected, str(path))
    return path


def write_map(result: DesignMap, directory: str | Path, document: dict, title: str = "") -> list[Path]:
    """Write map.json, map.png and map.svg into ``directory`` (checked first), each complete
    or not at all; a previous map's files are replaced, nothing else is touched."""
    path = check_map_directory(directory)
    png, svg = map_figures(result, title)
    contents = {"map.json": (json.dumps({"kind": _KIND, **document}, indent=2) + "\n").encode(),
                "map.png": png, "map.svg": svg}
    path.mkdir(exist_ok=True)
    written = []
    for name in MAP_FILES:
        target = path / name
        if not target.exists():
            write_new_file(target, contents[name], "-o")
        else:  # a previous map's own file: replaced in one rename
            handle, partial = tempfile.mkstemp(prefix=f".{name}.", suffix=".partial", dir=path)
            try:
                with os.fdopen(handle, "wb") as stream:
                    stream.write(contents[name])
                os.replace(partial, target)
            finally:
                with contextlib.suppress(FileNotFoundError):
                    os.unlink(partial)
        written.append(target)
    return written
