"""The machine-readable result of a report: one JSON object holding what the other
commands' ``--json`` give, plus the certificate tables."""

from __future__ import annotations

from ..analysis.certificate import digest
from ..analysis.signoff import Analysis

__all__ = ["TOOL_NAME", "certificate_data", "check_data", "result_data"]

#: The ``tool.name`` that marks a directory as holding a robust report.
TOOL_NAME = "robust"


def check_data(analysis: Analysis) -> dict[str, object]:
    """The ``check`` object: as ``robust check --json`` (without case and title)."""
    return {**analysis.check.as_dict(),
            "requirements": {r.name: r.as_dict() for r in analysis.requirements}}


def certificate_data(analysis: Analysis) -> list[dict[str, object]]:
    """The exact Routh tables of the Kharitonov polynomials of the overbound."""
    out = []
    for vertex in analysis.check.vertex_tables:
        out.append({"label": vertex.label,
                    "pattern": list(vertex.pattern),
                    "hurwitz": vertex.hurwitz,
                    "table": vertex.table.as_dict() if vertex.table is not None else None})
    return out


def result_data(analysis: Analysis) -> dict[str, object]:
    """Everything ``robust check/margin/rank/yield --json`` give, in one object.

    The ``check``, ``margin``, ``rank`` and ``yield`` members come from the same
    ``as_dict`` methods as those commands' output; ``certificate`` and ``settings`` are
    extra.
    """
    case = analysis.case
    return {
        "case": case.path,
        "title": case.title,
        "tool": {"name": TOOL_NAME, "version": analysis.version},
        # when it ran: a key ending in "seconds", the one kind of key that may differ between
        # two runs of the same input (DESIGN.md section 5); the report shows the local date
        "started_epoch_seconds": analysis.started_epoch_seconds,
        "case_sha256": case.sha256,
        "check": check_data(analysis),
        "margin": analysis.margin.as_dict(),
        "rank": analysis.rank.as_dict(),
        "yield": analysis.yield_result.as_dict(),
        "certificate": certificate_data(analysis),
        "proof": None if analysis.certificate is None else {
            "file": "certificate.json", "sha256": digest(analysis.certificate),
            "verdict": analysis.certificate["verdict"], **analysis.certificate["summary"]},
        "settings": {"max_boxes": analysis.settings.max_boxes,
                     "search_boxes": analysis.settings.search_boxes,
                     "search_tests": analysis.settings.search_tests,
                     "max_seconds": analysis.settings.max_seconds,
                     "yield_draws": analysis.settings.yield_draws,
                     "seed": analysis.settings.seed},
        "safety_stop": analysis.safety_stop,
    }
