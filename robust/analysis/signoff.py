"""One run of every analysis a sign-off report needs, under one time budget."""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from datetime import datetime

from .._version import __version__
from ..model.case import Case
from .certificate import certify
from .margin import DEFAULT_MARGIN_BOXES, DEFAULT_MARGIN_TESTS, MarginResult, margin
from .montecarlo import YieldResult, estimate_yield
from .outcomes import Verdict
from .rank import RankResult, rank
from .requirements import RequirementCheck, check_requirements
from .verdict import DEFAULT_MAX_BOXES, CheckResult, check

__all__ = ["Analysis", "Settings", "analyse"]

@dataclass(frozen=True, slots=True)
class Settings:
    """The work budget, safety stop and random seed a report was made with (for re-running it)."""

    max_seconds: float
    yield_draws: int
    seed: int
    max_boxes: int = DEFAULT_MAX_BOXES
    search_boxes: int = DEFAULT_MARGIN_BOXES
    search_tests: int = DEFAULT_MARGIN_TESTS


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
    settings: Settings = Settings(600.0, 20000, 0)
    #: The check's certificate (:mod:`robust.analysis.certificate`), None when not made.
    certificate: dict | None = None

    @property
    def started_epoch_seconds(self) -> int:
        """When the analysis began, in seconds since the Unix epoch."""
        return int(datetime.fromisoformat(self.started).timestamp())

    @property
    def safety_stop(self) -> bool:
        """Whether the wall-clock safety limit cut any stage short (results may then differ
        from a re-run on another machine)."""
        return (self.check.safety_stop or self.margin.safety_stop or self.rank.safety_stop
                or any(r.safety_stop for r in self.requirements))


def analyse(case: Case, *, max_seconds: float = 600.0, max_boxes: int = DEFAULT_MAX_BOXES,
            search_boxes: int = DEFAULT_MARGIN_BOXES, search_tests: int = DEFAULT_MARGIN_TESTS,
            yield_draws: int = 20000, seed: int = 0,
            progress: Callable[[str], None] | None = None) -> Analysis:
    """Run check, requirements, margin, rank and Monte Carlo yield on ``case``.

    Parameters
    ----------
    max_boxes
        The check's box budget.
    search_boxes, search_tests
        The margin search's budget: at most ``search_tests`` decisions of at most
        ``search_boxes`` boxes each; the ranking takes half the boxes and a third of the
        decisions per part. Work is counted, so a report is the same on any machine.
    max_seconds
        A wall-clock safety stop for the whole analysis; when it fires, the stage it cut
        says so (``safety_stop``) and the report shows it.
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

    def left() -> float:
        return max(deadline - time.perf_counter(), 0.01)

    say(f"check: deciding robust stability (budget {max_boxes} boxes)")
    verdict = check(case, max_seconds=left(), max_boxes=max_boxes, seed=seed)
    # the proof as a partition (a result of the edge theorem is decided again without it)
    _, proof = certify(case, result=verdict, max_boxes=max_boxes, max_seconds=left())
    requirements: tuple[RequirementCheck, ...] = ()
    if verdict.verdict == Verdict.STABLE and case.requirements.asked():
        say("requirements: deciding them directly")
        requirements = check_requirements(case, max_seconds=left())
    say("margin: robust margin and decay rate")
    # the requirements decided above are not decided again when a bracket leaves them open
    margins = margin(case, max_seconds=left(), max_boxes=search_boxes, max_tests=search_tests,
                     known=requirements)
    say("rank: per-parameter margins")
    ranking = rank(case, max_seconds=left(), max_boxes=max(search_boxes // 2, 1),
                   max_tests=max(search_tests // 3, 1))
    say(f"yield: {yield_draws} random builds (seed {seed})")
    builds = estimate_yield(case, yield_draws, seed)
    return Analysis(case, verdict, margins, requirements, ranking, builds, started, __version__,
                    Settings(float(max_seconds), int(yield_draws), int(seed), int(max_boxes),
                             int(search_boxes), int(search_tests)), proof)
