"""Rendering: results as terminal text and as the sign-off report (no mathematics here).

Architecture (imports flow downwards only):

    writer        the report directory: refuses foreign directories, writes the files
    html, markdown   renderers of the block tree (markup and escaping live only here)
    content       what the report says, in order, as neutral blocks (blocks.py)
    certificate   the verdict's evidence: Routh arrays, witness, undecided remainder
    figures       the pictures (matplotlib, Agg canvas, imported lazily)
    figdata       the numbers behind the pictures (value set, roots), numpy only
    data          result.json: the other commands' JSON in one object
    text          terminal text of every command
    fmt, blocks   number formatting; the block types

The package sits above every analysis module and below the command line; nothing in
``robust`` outside ``cli`` imports it. The analyses a report shows are run by
:func:`robust.analysis.signoff.analyse`.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: public name -> module that defines it; loaded on first use (PEP 562), so that the terminal
#: renderers (``robust.render.text``) start without the report's analyses and libraries
_EXPORTS = {
    "ReportFiles": "robust.render.writer",
    "check_directory": "robust.render.writer",
    "check_new_file": "robust.render.writer",
    "choose_omegas": "robust.render.figdata",
    "result_data": "robust.render.data",
    "sample_draws": "robust.render.figdata",
    "value_set_data": "robust.render.figdata",
    "write_report": "robust.render.writer",
}

__all__ = sorted(_EXPORTS)

if TYPE_CHECKING:
    from .data import result_data as result_data
    from .figdata import choose_omegas as choose_omegas
    from .figdata import sample_draws as sample_draws
    from .figdata import value_set_data as value_set_data
    from .writer import ReportFiles as ReportFiles
    from .writer import check_directory as check_directory
    from .writer import check_new_file as check_new_file
    from .writer import write_report as write_report


def __getattr__(name: str) -> Any:
    """Load a public name on first use (PEP 562)."""
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'robust.render' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted([*globals(), *_EXPORTS])
