"""Shared test configuration: the hypothesis profiles.

``ci`` (selected by .ci/run through HYPOTHESIS_PROFILE, and whenever CI is set) is
derandomized: the same examples every run, so a run that passed passes again. ``explore``
(the default elsewhere) draws new examples each run, to find new failures while developing;
pin what it finds with ``@example``.
"""

from __future__ import annotations

import os

from hypothesis import settings

# No deadline: exact arithmetic and the sympy references vary in time with the example, and
# a 2-core CI machine is slow; 100 examples is hypothesis' own default, kept explicit here.
settings.register_profile("ci", deadline=None, max_examples=100, derandomize=True, database=None,
                          print_blob=True)
settings.register_profile("explore", deadline=None, max_examples=100)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE") or ("ci" if os.environ.get("CI") else "explore"))

# When a property fails, hypothesis' pytest plugin imports its patch writer, which imports
# libcst, which triggers a DeprecationWarning (mypy_extensions.TypedDict); with
# filterwarnings = error that turns the failure report into an INTERNALERROR that hides the
# falsifying example. Importing it once here, with that warning silenced, keeps reports readable.
import contextlib  # noqa: E402
import warnings  # noqa: E402

# ImportError: libcst missing, hypothesis then skips the patch and there is nothing to do
with warnings.catch_warnings(), contextlib.suppress(ImportError):
    warnings.simplefilter("ignore", DeprecationWarning)
    import hypothesis.extra._patching  # noqa: F401

import pytest  # noqa: E402

#: The work budget of the reports the report tests share: small, so that every shipped case
#: is analysed in seconds, and counted, so that the reports are the same on any machine.
REPORT_BUDGET = {"max_boxes": 2000, "search_boxes": 200, "search_tests": 12, "yield_draws": 2000, "seed": 0}


@pytest.fixture(scope="session")
def report_of(tmp_path_factory):
    """``report_of(stem)`` -> (analysis, written report files) of the shipped case
    cases/<stem>.toml, built once per session with :data:`REPORT_BUDGET` (read-only)."""
    from pathlib import Path

    from robust.analysis.signoff import analyse
    from robust.model.case import load_case
    from robust.render.writer import write_report

    cases = Path(__file__).resolve().parent.parent / "cases"
    built: dict[str, tuple] = {}

    def build(stem: str) -> tuple:
        if stem not in built:
            analysis = analyse(load_case(cases / f"{stem}.toml"), **REPORT_BUDGET)
            built[stem] = (analysis, write_report(analysis, tmp_path_factory.mktemp(stem) / "report"))
        return built[stem]

    return build
