"""The report as Markdown (CommonMark with pipe tables), pictures as PNG files beside it.

User-written text is escaped: ASCII punctuation that Markdown would read as markup (or as
raw HTML) gets a backslash; formulas go in code spans, which need no escaping.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from .blocks import (
    Badge,
    Cell,
    Code,
    Document,
    Figure,
    ItemList,
    Num,
    Paragraph,
    Preformatted,
    Section,
    Table,
)

__all__ = ["render_markdown"]

_SPECIAL = re.compile(r"([\\`*_\[\]<>|~#!&])")


def _escape(text: str) -> str:
    return _SPECIAL.sub(r"\\\1", text.replace("\n", " "))


def _code(text: str) -> str:
    text = text.replace("\n", " ")
    longest = max((len(run) for run in re.findall(r"`+", text)), default=0)
    fence = "`" * (longest + 1)
    pad = " " if text.startswith("`") or text.endswith("`") or not text.strip() else ""
    return f"{fence}{pad}{text}{pad}{fence}"


def _inline(part) -> str:
    if isinstance(part, str):
        return _escape(part)
    if isinstance(part, Code):
        return _code(part.text)
    if isinstance(part, Num):
        return _escape(part.text)
    if isinstance(part, Badge):
        return f"**{_escape(part.text)}**"
    raise TypeError(f"unknown inline part {part!r}")


def _inlines(parts) -> str:
    return "".join(_inline(p) for p in parts)


def _cell(cell: Cell, notes: list[str], where: str) -> str:
    plain = [p for p in cell.parts if isinstance(p, str)]
    if cell.mono and len(plain) == len(cell.parts) and "".join(plain):
        text = _code("".join(plain))
    else:
        text = _inlines(cell.parts)
    if cell.full is not None:
        notes.append(f"{where} = {cell.full}")
        text += f" [{len(notes)}]"
    return text


def _table(table: Table) -> list[str]:
    notes: list[str] = []
    lines = []
    if table.caption:
        lines += [f"*{_escape(table.caption)}*", ""]
    lines.append("| " + " | ".join(_escape(h) for h in table.header) + " |")
    lines.append("|" + "|".join("---:" if i and table.style == "routh" else "---"
                                for i in range(len(table.header))) + "|")
    for row in table.rows:
        label = "".join(p for p in row[0].parts if isinstance(p, str))
        cells = [_cell(c, notes, f"{label}, {table.header[i]}" if i < len(table.header) else label)
                 for i, c in enumerate(row)]
        lines.append("| " + " | ".join(cells) + " |")
    if notes:
        lines += ["", "Exact values of the shortened entries:", "", "```"]
        lines += [f"[{i}] {note}" for i, note in enumerate(notes, start=1)]
        lines.append("```")
    return lines


def _block(block, paths: Mapping[str, str], level: int) -> list[str]:
    if isinstance(block, Paragraph):
        text = _inlines(block.parts)
        styled = {"lead": f"*{text}*", "outcome": f"> {text}", "title": f"**{text}**"}
        return [styled.get(block.style, text)]
    if isinstance(block, Table):
        return _table(block)
    if isinstance(block, Preformatted):
        fence = "~~~~" if "```" in block.text else "```"
        return [fence, block.text, fence]
    if isinstance(block, ItemList):
        return [f"- {_inlines(item)}" for item in block.items]
    if isinstance(block, Figure):
        return [f"![{_escape(block.alt)}]({paths[block.name]})", "", f"*{_escape(block.caption)}*"]
    if isinstance(block, Section):
        return _section(block, paths, level)
    raise TypeError(f"unknown block {block!r}")


def _section(section: Section, paths: Mapping[str, str], level: int, number: str = "") -> list[str]:
    lines: list[str] = []
    if section.title:
        lines += ["#" * min(level, 6) + " " + (number + " " if number else "") + _escape(section.title), ""]
    child = level + 1 if section.title else level
    for block in section.blocks:
        lines += _block(block, paths, child)
        lines.append("")
    return lines


def render_markdown(document: Document, paths: Mapping[str, str], footer: str = "") -> str:
    """The report as Markdown; ``paths`` maps figure names to relative PNG paths."""
    lines: list[str] = []
    for i, section in enumerate(document.sections):
        lines += _section(section, paths, 1 if i == 0 else 2, "" if i == 0 else f"{i}.")
    if footer:
        lines += ["---", "", _escape(footer), ""]
    text = "\n".join(lines)
    return re.sub(r"\n{3,}", "\n\n", text).rstrip() + "\n"
