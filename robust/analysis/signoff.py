"""One run of every analysis a sign-off report needs, under one time budget."""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from datetime import datetime

from .._version import __version__
from ..model.case import Case
from .margin import MarginResult, margin
from .requirements import RequirementCheck, check_requirements
from .montecarlo import YieldResult, estimate_yield
from .rank import RankResult, rank
from .verdict import CheckResult, check

__all__ = ["Analysis", "Settings", "analyse"]

#: Shares of the budget. The check has its own share; the requirements (decided only for
#: a stable design) take a part of what is left; margin and rank share the rest, rank
#: taking whatever margin leaves over.
_CHECK_SHARE = 0.3
_REQUIREMENTS_SHARE = 0.2
_MARGIN_SHARE = 0.5
_MIN_STAGE_SECONDS = 1.0


@dataclass(frozen=True, slots=True)
class Settings:
    """The budget and random seed a report was made with (for re-running it)."""

    max_seconds: float
    yield_draws: int
    seed: int


@dataclass(frozen=True, slots=True)
class Analysis:
    """Everything a sign-off report shows, computed once.

    ``requirements`` is empty unless the check proved the design stable. ``started`` is the
    local date and time the analysis began (ISO 8601, with the UTC offset).
    """

    case: Case
    check: CheckResult
    margin: MarginResult
    requirements: tuple[RequirementCheck, ...]
    rank: RankResult
    yield_result: YieldResult
    started: str
    version: str
    settings: Settings = Settings(60.0, 20000, 0)


def analyse(case: Case, *, max_seconds: float = 60.0, yield_draws: int = 20000, seed: int = 0,
            progress: Callable[[str], None] | None = None) -> Analysis:
    """Run check, requirements, margin, rank and Monte Carlo yield on ``case``.

    Parameters
    ----------
    max_seconds
        Time budget for the exact analyses, split as: the check up to 30 %; the
        requirements (stable designs only) up to 20 % of what is left; the margin half of
        the remainder and the ranking the rest. Each stage gets at least one second, so a
        tiny budget may be overrun a little. The yield is not budgeted: it takes
        ``yield_draws`` draws.
    yield_draws, seed
        Monte Carlo draws and their seed.
    progress
        Called with one line per stage (the command line prints these to stderr).

    Returns
    -------
    Analysis
    """
    say = progress or (lambda _line: None)
    started = datetime.now().astimezone().isoformat(timespec="seconds")
    deadline = time.perf_counter() + max_seconds

    def left(share: float) -> float:
        return max((deadline - time.perf_counter()) * share, _MIN_STAGE_SECONDS)

    seconds = max(max_seconds * _CHECK_SHARE, _MIN_STAGE_SECONDS)
    say(f"check: deciding robust stability (budget {seconds:.0f} s)")
    verdict = check(case, max_seconds=seconds, seed=seed)
    requirements: tuple[RequirementCheck, ...] = ()
    if verdict.verdict == "stable" and (case.requirements.margin is not None
                                        or case.requirements.decay_rate is not None):
        seconds = left(_REQUIREMENTS_SHARE)
        say(f"requirements: deciding them directly (budget {seconds:.0f} s)")
        # check_requirements decides each requirement in turn, each with this budget
        requirements = check_requirements(case, max_seconds=seconds / 2)
    seconds = left(_MARGIN_SHARE)
    say(f"margin: robust margin and decay rate (budget {seconds:.0f} s)")
    margins = margin(case, max_seconds=seconds)
    seconds = left(1.0)
    say(f"rank: per-parameter margins (budget {seconds:.0f} s)")
    ranking = rank(case, max_seconds=seconds)
    say(f"yield: {yield_draws} random builds (seed {seed})")
    builds = estimate_yield(case, yield_draws, seed)
    return Analysis(case, verdict, margins, requirements, ranking, builds, started, __version__,
                    Settings(float(max_seconds), int(yield_draws), int(seed)))
