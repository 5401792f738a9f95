"""The report as one self-contained HTML file: inline CSS, pictures as data: URIs, no
scripts, no fonts or anything else fetched from elsewhere. Everything the user wrote is
escaped with :func:`html.escape`."""

from __future__ import annotations

import base64
import json
from collections.abc import Mapping
from html import escape

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

__all__ = ["render_fragment", "render_html"]

_CSS = """
:root { --ink: #1a1a1a; --mute: #555; --rule: #c8c8c8; --shade: #f1f1f1; }
* { box-sizing: border-box; }
html { font-size: 15px; }
body { margin: 0; color: var(--ink); background: #fff;
       font-family: "DejaVu Sans", "Liberation Sans", "Helvetica Neue", Arial, sans-serif;
       line-height: 1.45; }
main { max-width: 62rem; margin: 0 auto; padding: 1.5rem 1.5rem 3rem; }
h1 { font-size: 1.65rem; margin: 0 0 .4rem; border-bottom: 3px double var(--ink); padding-bottom: .3rem; }
h2 { font-size: 1.25rem; margin: 2.2rem 0 .6rem; border-bottom: 1px solid var(--ink);
     padding-bottom: .15rem; }
h3 { font-size: 1.05rem; margin: 1.4rem 0 .4rem; }
h4 { font-size: .95rem; margin: .6rem 0 .3rem; }
h2 .num { color: var(--mute); font-weight: normal; margin-right: .4rem; }
p { margin: .45rem 0; }
p.lead { font-size: 1.05rem; font-style: italic; }
p.title { font-size: 1.3rem; font-weight: bold; margin: .9rem 0 .2rem; }
p.note { color: var(--mute); font-size: .88rem; }
p.outcome { font-size: 1.05rem; font-weight: bold; margin: .8rem 0; }
code, pre, .mono { font-family: "DejaVu Sans Mono", "Liberation Mono", Menlo, Consolas, monospace;
                   font-size: .86rem; }
pre { background: var(--shade); border-left: 3px solid var(--mute); padding: .5rem .7rem;
      white-space: pre-wrap; overflow-wrap: anywhere; margin: .5rem 0; }
.badge { display: inline-block; padding: .05rem .45rem; border: 2px solid var(--ink);
         font-weight: bold; letter-spacing: .02em; }
.badge.fail { background: var(--ink); color: #fff; }
.badge.open { border-style: dashed; }
.wrap { overflow-x: auto; margin: .5rem 0 .8rem; }
table { border-collapse: collapse; font-size: .88rem; }
th, td { border: 1px solid var(--rule); padding: .22rem .5rem; text-align: left; vertical-align: top; }
th { background: var(--shade); font-weight: bold; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.mono { overflow-wrap: anywhere; }
caption { caption-side: top; text-align: left; color: var(--mute); font-size: .82rem; padding: .15rem 0; }
table.routh td.num { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: .8rem; }
table.routh td:first-child { background: var(--shade); }
abbr[title] { text-decoration: underline dotted; cursor: help; }
.group { display: grid; grid-template-columns: repeat(auto-fit, minmax(27rem, 1fr)); gap: .2rem 1.4rem; }
.group > section { border-top: 1px solid var(--rule); }
figure { margin: 1.2rem 0; }
figure img { display: block; max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { font-size: .86rem; color: var(--mute); margin-top: .35rem; }
ul { margin: .4rem 0; padding-left: 1.4rem; }
li { margin: .2rem 0; }
footer { margin-top: 2.5rem; color: var(--mute); font-size: .8rem; border-top: 1px solid var(--rule);
         padding-top: .4rem; }
@page { size: A4; margin: 15mm 13mm 16mm; }
@media print {
  html { font-size: 10pt; }
  main { max-width: none; padding: 0; }
  h2, h3, h4 { break-after: avoid; }
  section.new-page { break-before: page; }
  table, figure, pre, ul, .group > section { break-inside: avoid; }
  .wrap { overflow: visible; }
  td.mono { font-size: .8rem; }
  .group { grid-template-columns: 1fr 1fr; }
  figure img { border: none; }
}
"""


def _value_attr(value: object) -> str:
    return value if isinstance(value, str) else json.dumps(value)


def _inline(part) -> str:
    if isinstance(part, str):
        return escape(part)
    if isinstance(part, Code):
        return f"<code>{escape(part.text)}</code>"
    if isinstance(part, Num):
        return (f'<data data-key="{escape(part.key)}" value="{escape(_value_attr(part.value))}">'
                f"{escape(part.text)}</data>")
    if isinstance(part, Badge):
        body = escape(part.text)
        if part.key:
            body = (f'<data data-key="{escape(part.key)}" value="{escape(_value_attr(part.value))}">'
                    f"{body}</data>")
        return f'<span class="badge {escape(part.kind)}">{body}</span>'
    raise TypeError(f"unknown inline part {part!r}")


def _inlines(parts) -> str:
    return "".join(_inline(p) for p in parts)


def _cell(cell: Cell) -> str:
    classes = [c for c, on in (("num", cell.numeric), ("mono", cell.mono)) if on]
    attr = f' class="{" ".join(classes)}"' if classes else ""
    body = _inlines(cell.parts)
    if cell.full is not None:
        body = f'<abbr title="{escape(cell.full)}">{body}</abbr>'
    return f"<td{attr}>{body}</td>"


def _table(table: Table) -> str:
    cls = f' class="{escape(table.style)}"' if table.style else ""
    out = [f'<div class="wrap"><table{cls}>']
    if table.caption:
        out.append(f"<caption>{escape(table.caption)}</caption>")
    out.append("<thead><tr>" + "".join(f"<th>{escape(h)}</th>" for h in table.header) + "</tr></thead>")
    out.append("<tbody>")
    for row in table.rows:
        out.append("<tr>" + "".join(_cell(c) for c in row) + "</tr>")
    out.append("</tbody></table></div>")
    return "".join(out)


def _figure(figure: Figure, images: Mapping[str, bytes]) -> str:
    if figure.name not in images:  # a fragment shown without its pictures: the caption says what
        return (f'<figure id="figure-{escape(figure.name)}"><figcaption>{escape(figure.caption)} '
                "(picture not drawn here)</figcaption></figure>")
    data = base64.b64encode(images[figure.name]).decode("ascii")
    return (f'<figure id="figure-{escape(figure.name)}"><img src="data:image/png;base64,{data}" '
            f'alt="{escape(figure.alt)}"><figcaption>{escape(figure.caption)}</figcaption></figure>')


def _block(block, images: Mapping[str, bytes], level: int) -> str:
    if isinstance(block, Paragraph):
        cls = f' class="{escape(block.style)}"' if block.style else ""
        return f"<p{cls}>{_inlines(block.parts)}</p>"
    if isinstance(block, Table):
        return _table(block)
    if isinstance(block, Preformatted):
        return f"<pre>{escape(block.text)}</pre>"
    if isinstance(block, ItemList):
        return "<ul>" + "".join(f"<li>{_inlines(item)}</li>" for item in block.items) + "</ul>"
    if isinstance(block, Figure):
        return _figure(block, images)
    if isinstance(block, Section):
        return _section(block, images, level)
    raise TypeError(f"unknown block {block!r}")


def _section(section: Section, images: Mapping[str, bytes], level: int, number: str = "") -> str:
    classes = [c for c, on in (("new-page", section.new_page), ("group", section.group)) if on]
    attrs = f' id="{escape(section.anchor)}"' if section.anchor else ""
    attrs += f' class="{" ".join(classes)}"' if classes else ""
    out = [f"<section{attrs}>"]
    if section.title:
        tag = f"h{min(level, 6)}"
        prefix = f'<span class="num">{escape(number)}</span>' if number else ""
        out.append(f"<{tag}>{prefix}{escape(section.title)}</{tag}>")
    child = level + 1 if section.title else level
    out.extend(_block(b, images, child) for b in section.blocks)
    out.append("</section>")
    return "\n".join(out)


def render_html(document: Document, images: Mapping[str, bytes], footer: str = "") -> str:
    """The report as one HTML page; ``images`` maps figure names to PNG bytes."""
    body = []
    for i, section in enumerate(document.sections):
        level = 1 if i == 0 else 2
        body.append(_section(section, images, level, "" if i == 0 else f"{i}."))
    foot = f"<footer>{escape(footer)}</footer>" if footer else ""
    return ("<!DOCTYPE html>\n"
            '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
            f"<title>{escape(document.title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n<main>\n"
            + "\n".join(body) + f"\n{foot}\n</main>\n</body>\n</html>\n")


#: The little a fragment styles itself (scoped to it): the outcome words and the tables.
_FRAGMENT_CSS = (".robust .badge { font-weight: bold; border: 2px solid; padding: 0 .4em; } "
                 ".robust .badge.open { border-style: dashed; } "
                 ".robust td.num { text-align: right; font-variant-numeric: tabular-nums; }")


def render_fragment(blocks, images: Mapping[str, bytes] | None = None, level: int = 3) -> str:
    """Blocks (or a whole :class:`Document`) as an HTML fragment for a page that has its own
    head and style, such as a notebook's output cell: no scripts, every text escaped, section
    titles from ``<h{level}>`` down. Pictures missing from ``images`` show their caption."""
    images = images or {}
    if isinstance(blocks, Document):
        body = [f"<h{min(level, 6)}>{escape(blocks.title)}</h{min(level, 6)}>"]
        body += [_section(section, images, level + 1) for section in blocks.sections]
    else:
        body = [_block(block, images, level) for block in blocks]
    return f'<div class="robust">\n<style>{_FRAGMENT_CSS}</style>\n' + "\n".join(body) + "\n</div>"
