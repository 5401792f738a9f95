"""The report as a small tree of neutral blocks that the HTML and Markdown writers render.

The content is decided once (:mod:`robust.render.content`); each writer only decides how
a block looks. Text is plain: the writers escape it.
"""

from __future__ import annotations

from dataclasses import dataclass


class _Shown:
    """Rich display in a notebook (Jupyter): a block shows itself as an HTML fragment,
    rendered by :func:`robust.render.html.render_fragment` like the report."""

    __slots__ = ()

    def _repr_html_(self) -> str:
        from .html import render_fragment  # html imports this module

        return render_fragment(self if isinstance(self, Document) else [self])

__all__ = ["Badge", "Block", "Cell", "Code", "Document", "Figure", "Inline", "ItemList", "Num",
           "Paragraph", "Preformatted", "Section", "Table"]


@dataclass(frozen=True, slots=True)
class Num:
    """A number shown as ``text`` that stands for the machine value ``value`` in
    result.json at ``key`` (HTML keeps both, as a ``<data>`` element)."""

    text: str
    value: object
    key: str


@dataclass(frozen=True, slots=True)
class Code:
    """Inline formula or identifier, shown in a fixed-width font."""

    text: str


@dataclass(frozen=True, slots=True)
class Badge:
    """A short outcome word: ``kind`` is "pass", "fail" or "open"."""

    text: str
    kind: str
    key: str = ""
    value: object = None


Inline = str | Num | Code | Badge


@dataclass(frozen=True, slots=True)
class Paragraph(_Shown):
    """Running text; ``style`` is "", "lead", "note" or "outcome"."""

    parts: tuple[Inline, ...]
    style: str = ""


@dataclass(frozen=True, slots=True)
class Cell:
    """A table cell. ``full`` is the exact text when ``text`` shortens it."""

    parts: tuple[Inline, ...]
    full: str | None = None
    mono: bool = False
    numeric: bool = False


@dataclass(frozen=True, slots=True)
class Table(_Shown):
    """Header and rows of cells; ``style`` "routh" marks a Routh array."""

    header: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    caption: str = ""
    style: str = ""


@dataclass(frozen=True, slots=True)
class Preformatted(_Shown):
    """Fixed-width text kept as written (formulas)."""

    text: str


@dataclass(frozen=True, slots=True)
class ItemList(_Shown):
    """A bulleted list."""

    items: tuple[tuple[Inline, ...], ...]


@dataclass(frozen=True, slots=True)
class Figure(_Shown):
    """A picture by its file stem, with a caption and a text alternative."""

    name: str
    caption: str
    alt: str


@dataclass(frozen=True, slots=True)
class Section(_Shown):
    """A titled part; ``group`` lays its sub-sections side by side on screen; ``new_page``
    starts it on a fresh printed page."""

    title: str
    blocks: tuple[Block, ...]
    anchor: str = ""
    new_page: bool = False
    group: bool = False


Block = Paragraph | Table | Preformatted | ItemList | Figure | Section


@dataclass(frozen=True, slots=True)
class Document(_Shown):
    """The whole report."""

    title: str
    sections: tuple[Section, ...]
