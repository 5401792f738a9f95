"""Certified brackets on a scale, and bisection with a sound decision at each step.

A bracket [lower, upper] on the largest scale with some property (stable over box(rho), or
every root left of Re(s) = -sigma): ``lower`` is proven, ``upper`` carries a verified witness
(or is None: "at least lower").
"""

from __future__ import annotations

import math
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

from ..exact.numbers import format_fraction, short_between, to_float
from ..model.family import Box, UncertainPolynomial
from .outcomes import Verdict, untestable
from .progress import tell
from .verdict import Witness, decide

__all__ = ["Bracket", "Tester", "Work", "bisect_margin", "float_down", "float_up", "just_below",
           "scaled_tester"]


@dataclass(frozen=True, slots=True)
class Bracket:
    """A certified bracket: proven at ``lower``; a verified witness at ``upper`` (None: none
    found up to the cap, "at least lower"). ``exact`` is the algebraic value when known."""

    lower: Fraction
    upper: Fraction | None
    exact: str | None = None
    decimal: str | None = None
    witness: Witness | None = None
    note: str = ""

    @property
    def relative_width(self) -> float | None:
        """(upper - lower) / upper, or None for an open bracket."""
        if self.upper is None or self.upper == 0:
            return None
        return float((self.upper - self.lower) / self.upper)

    def as_dict(self) -> dict[str, object]:
        """JSON: lower/upper as floats rounded outwards, plus exact strings."""
        return {
            "lower": float_down(self.lower),
            "upper": None if self.upper is None else float_up(self.upper),
            "lower_exact": format_fraction(self.lower),
            "upper_exact": None if self.upper is None else format_fraction(self.upper),
            "exact": self.exact,
            "decimal": self.decimal,
            "note": self.note,
        }


def float_down(x: Fraction) -> float:
    f = to_float(x)
    if math.isinf(f):
        return f if f < 0 else sys.float_info.max
    return math.nextafter(f, -math.inf) if Fraction(f) > x else f


def float_up(x: Fraction) -> float:
    f = to_float(x)
    if math.isinf(f):
        return f if f > 0 else -sys.float_info.max
    return math.nextafter(f, math.inf) if Fraction(f) < x else f


#: test(rho) -> (verdict over box(rho), witness or None); its work budget is its own.
Tester = Callable[[Fraction], tuple[Verdict, Witness | None]]
Tighten = Callable[[Witness], tuple[Fraction, Witness]]


@dataclass
class Work:
    """The work budget of a bracket search: tests counted (reproducible); the clock is a
    safety stop whose firing is reported."""

    max_tests: int
    deadline: float
    tests: int = 0
    clock_fired: bool = False
    #: undecided tests cost a whole decision budget each and cluster near the boundary:
    #: after this many the search stops
    max_undecided: int = 3
    undecided: int = 0

    def spent(self) -> bool:
        if self.tests >= self.max_tests or self.undecided >= self.max_undecided:
            return True
        if time.perf_counter() >= self.deadline:
            self.clock_fired = True
        return self.clock_fired


def scaled_tester(family: UncertainPolynomial, box_of: Callable[[Fraction], Box], work: Work,
                  max_boxes: int) -> Tester:
    """test(rho): the decision ladder over ``box_of(rho)`` with ``max_boxes`` boxes; a box that
    must not be decided (the validity rule) is undecided. The clock is the work's safety stop."""

    def test(rho: Fraction) -> tuple[Verdict, Witness | None]:
        box = box_of(rho)
        if untestable(family, box) is not None:
            return Verdict.UNDECIDED, None
        res = decide(family, box, max_seconds=max(work.deadline - time.perf_counter(), 0.01),
                     max_boxes=max_boxes)
        work.clock_fired |= res.safety_stop
        tell("tested", scale=rho, verdict=res.verdict)  # progress for the command line only
        return res.verdict, res.witness

    return test


def just_below(value: Fraction, rel_tol: Fraction) -> Fraction:
    """A short rational in [value (1 - rel_tol/2), value (1 - rel_tol/4)]."""
    return short_between(value * (1 - rel_tol / 2), value * (1 - rel_tol / 4)) or value * (1 - rel_tol / 4)


def bisect_margin(test: Tester, end: Fraction, end_testable: bool, rel_tol: Fraction, work: Work,
                  start: Fraction = Fraction(1), lower: Fraction = Fraction(0),
                  upper: Fraction | None = None, witness: Witness | None = None,
                  tighten: Tighten | None = None) -> Bracket:
    """Certified bracket on the largest rho in (0, end] with ``test(rho)`` stable.

    Assumes nested boxes (monotone in rho) and stability at rho = 0. ``end`` is where the
    scaled box stops standing for the loop (or the cap); box(end) itself is tested only when
    ``end_testable``. A proven ``lower`` and a refuted ``upper`` (with its witness) may be
    passed in; ``tighten`` maps a witness to a smaller scale that still holds one. An
    undecided test does not stop the search: it moves on below that point, so the proven end
    still rises. Returns [lower, upper] with ``upper`` a witness scale, or None when no
    witness was found below ``end``.
    """
    top = end if end_testable else just_below(end, rel_tol)
    stuck: Fraction | None = None  # the least scale found undecided
    if upper is None:
        rho = max(min(start, top), lower)
        while not work.spent():  # grow by doubling until unstable, undecided or the top
            work.tests += 1
            verdict, w = test(rho)
            if verdict is Verdict.STABLE:
                lower = rho
                if rho >= top:
                    break
                rho = min(rho * 2, top)
            elif verdict is Verdict.UNSTABLE:
                upper, witness = _upper_from(rho, w, tighten)
                break
            else:
                stuck = rho
                work.undecided += 1
                break
    probed: Fraction | None = None  # the last upper end probed just below
    last_was_probe = False
    while not work.spent():
        # below the least undecided point, if any: that is where a proof can still be found
        ends = [x for x in (upper, stuck) if x is not None]
        high = min(ends) if ends else None
        if high is None or (high - lower) <= rel_tol * high:
            break
        near = just_below(upper, rel_tol) if upper is not None and high == upper else None
        # a witness slid back to its first crossing is often the worst point: one proof just
        # below it closes the bracket (a proof at a scale covers every smaller one). Each
        # upper end is probed once, and never twice in a row, so the bracket still halves at
        # least every other test.
        last_was_probe = near is not None and near > lower and probed != upper and not last_was_probe
        if last_was_probe:
            probed, mid = upper, near
        else:
            # a short rational inside the middle half keeps the exact arithmetic small
            mid = short_between(lower + (high - lower) / 4, high - (high - lower) / 4) or (lower + high) / 2
        work.tests += 1
        verdict, w = test(mid)
        if verdict is Verdict.STABLE:
            lower = mid
        elif verdict is Verdict.UNSTABLE:
            upper, witness = _upper_from(mid, w, tighten)
        else:
            stuck = mid
            work.undecided += 1
    notes = []
    if stuck is not None and (upper is None or stuck < upper):
        notes.append(f"undecided from {float(stuck):.9g} on within the work budget")
    if work.clock_fired:
        notes.append("stopped by the wall-clock safety limit")
    return Bracket(lower, upper, witness=witness, note="; ".join(notes))


def _upper_from(rho: Fraction, witness: Witness | None, tighten: Tighten | None
                ) -> tuple[Fraction, Witness | None]:
    if tighten is None or witness is None:
        return rho, witness
    tightened, better = tighten(witness)
    return (tightened, better) if tightened <= rho else (rho, witness)
