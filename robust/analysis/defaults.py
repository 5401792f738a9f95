"""Default work budgets of the commands, in a module that imports nothing.

The command line shows these in its help; importing them from the analyses themselves would
load numpy and sympy before ``robust --help`` could answer. ``tests/test_cli_startup.py``
pins that they equal the defaults of :func:`robust.analysis.verdict.check`.
"""

#: Safety stop of a check in wall-clock seconds (the work budget is DEFAULT_MAX_BOXES).
DEFAULT_MAX_SECONDS = 600.0
#: Work budget of a check: sub-boxes and edges examined.
DEFAULT_MAX_BOXES = 20_000
