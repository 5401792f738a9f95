"""Cases and results as HTML fragments for a notebook's output cell (Jupyter).

The blocks are the report's own (:mod:`robust.render.content`, :mod:`robust.render.certificate`)
and so is their HTML (:func:`robust.render.html.render_fragment`): a result looks in a
notebook as its part of the report does. :func:`to_html` is what the ``_repr_html_`` of
:mod:`robust.model.display` calls.
"""

from __future__ import annotations

from ..analysis.margin import MarginResult
from ..analysis.rank import RankResult
from ..analysis.verdict import CheckResult
from ..model.case import Case
from .blocks import Code, ItemList, Paragraph, Preformatted, Section
from .certificate import witness_section
from .content import margins_section, parameters_section, ranking_section, verdict_blocks
from .html import render_fragment

__all__ = ["case_section", "check_section", "to_html"]


def case_section(case: Case) -> Section:
    """The case as written: title, summary, parameters, polynomial and requirements."""
    blocks: list = []
    if case.summary:
        blocks.append(Paragraph((case.summary,)))
    blocks.append(Paragraph(("Case: ", Code(case.path), f"; {case.sha256[:12]}… (SHA-256)"), "note"))
    blocks.append(parameters_section(case))
    written = case.written
    blocks.append(Section("Polynomial", (
        Paragraph((f"As written (variable {case.variable}); degree {case.family.degree}, "
                   f"family class {case.family.kind}:",)),
        Preformatted(written))))
    asked = case.requirements.asked()
    if asked:
        blocks.append(Section("Requirements", (ItemList(tuple((Code(name), f" = {value}")
                                                              for name, value in asked)),)))
    return Section(case.title, tuple(blocks))


def check_section(result: CheckResult) -> Section:
    """The check's verdict and, for an unstable design, its witness."""
    blocks = verdict_blocks(result)
    if result.witness is not None:
        blocks.append(witness_section(result.box, result.witness))
    return Section("Robust stability check", tuple(blocks))


def to_html(shown: object) -> str:
    """The HTML fragment of a case or of a check, margin or rank result."""
    if isinstance(shown, Case):
        section = case_section(shown)
    elif isinstance(shown, CheckResult):
        section = check_section(shown)
    elif isinstance(shown, MarginResult):
        section = margins_section(shown, (shown.direct,) if shown.direct is not None else (),
                                  shown.safety_stop)
    elif isinstance(shown, RankResult):
        section = ranking_section(shown, figure=False)
    else:
        raise TypeError(f"no HTML form for {type(shown).__name__}")
    return render_fragment([section])
