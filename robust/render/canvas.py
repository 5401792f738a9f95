"""The canvas every report picture is drawn on: a fresh matplotlib ``Figure`` on its own
Agg canvas (no global pyplot state), saved as PNG bytes without a timestamp, and the
:class:`Picture` that carries it with a text alternative."""

from __future__ import annotations

import io
from dataclasses import dataclass

__all__ = ["DPI", "Picture", "new_figure", "not_drawn", "png"]

DPI = 150


@dataclass(frozen=True, slots=True)
class Picture:
    """One rendered figure: file stem, PNG bytes and a text alternative."""

    name: str
    png: bytes
    alt: str


def new_figure(width: float, height: float):
    """A blank figure of ``width`` x ``height`` inches on an Agg canvas."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=(width, height), dpi=DPI, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def png(figure) -> bytes:
    """The figure as PNG bytes (no software stamp, so equal input gives equal bytes)."""
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=DPI, metadata={"Software": None})
    return buffer.getvalue()


def not_drawn(name: str, text: str) -> Picture:
    """A picture that says, in ``text``, why it is not drawn."""
    figure = new_figure(7.6, 1.2)
    ax = figure.subplots()
    ax.set_axis_off()
    ax.text(0.5, 0.5, text, ha="center", va="center", fontsize=9, wrap=True)
    return Picture(name, png(figure), text)
