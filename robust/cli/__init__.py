"""The command line: a thin layer over the public API.

Each command parses its options, calls the library, and renders the result as text or (with
``--json``) as one JSON document on stdout; progress goes to stderr only. The group and what
the commands share live in :mod:`robust.cli.core`; each other module registers its commands
on import.
"""

from __future__ import annotations

from . import allocate, cases, designmap, report, routh  # noqa: F401  (each registers its commands on main)
from .core import EXIT_INTERRUPTED, Interrupted, main
from .routh import EXAMPLE_DISCRETE, EXAMPLE_POLYNOMIAL

__all__ = ["EXAMPLE_DISCRETE", "EXAMPLE_POLYNOMIAL", "EXIT_INTERRUPTED", "Interrupted", "main"]
