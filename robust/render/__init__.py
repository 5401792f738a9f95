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

from .data import result_data as result_data
from .figdata import choose_omegas as choose_omegas
from .figdata import sample_draws as sample_draws
from .figdata import value_set_data as value_set_data
from .writer import ReportFiles as ReportFiles
from .writer import check_directory as check_directory
from .writer import check_new_file as check_new_file
from .writer import write_report as write_report

__all__ = [
    "ReportFiles",
    "check_directory",
    "check_new_file",
    "choose_omegas",
    "result_data",
    "sample_draws",
    "value_set_data",
    "write_report",
]
