"""The criteria a sign-off names beyond robust stability, each a certified bracket.

* gain margin (upper and lower direction), for loops: the largest g such that the loop stays
  stable for every extra loop gain k in [1, g] (in [1/g, 1]) and every parameter point;
* phase margin, for loops: the largest angle such that it stays stable for every extra phase
  lag e^(-j theta), theta in [0, angle]; a constant complex factor acts at negative
  frequencies too, where it is a lead, so this is the phase shift the loop tolerates in
  either direction (the classical margin 180 deg + arg L at crossover, unless the loop's
  phase at some crossover lies above 0 deg);
* damping ratio, in continuous time: the largest zeta with every root of every member in the
  sector Re(s) < -zeta |s|;
* spectral radius, for discrete time: the least r with every root of every member in |z| < r.

Each becomes a family that is Hurwitz exactly when the criterion holds at one value of a
search variable x (:mod:`robust.model.family`: gain_family, phase_family, sector_family,
radius_family), larger x asking more, and x = 0 asking robust stability itself. The bracket
on x comes from the decision ladder and the bisection of :mod:`.bracket` (proven at the lower
end, a verified witness at the upper end); it is shown in the engineer's unit (dB, degrees,
ratio, radius), rounded outwards. Where a value in that unit has no rational x (6 dB is
g = 10^(6/20)), a requirement is proven at a rational x on the strict side and refuted at one
on the lenient side, both within 1e-12 relative (:meth:`Measure.x_of`).

Every decision at one x goes through :meth:`Measure.decide_at`. For the damping ratio in
continuous time it first tries zero exclusion on the sector's boundary ray, on p itself
(:mod:`.sector`), which proves what the degree-2n family's ladder cannot for larger loops;
for the phase margin likewise zero exclusion on the imaginary axis for every lag, on the
loop itself (:mod:`.lag`).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from fractions import Fraction

from ..exact.numbers import format_fraction, json_float, short_between
from ..exact.regions import damping_of, damping_parameter
from ..model.family import (
    LOOP_GAIN,
    PHASE_LAG,
    UncertainPolynomial,
    gain_family,
    phase_family,
    radius_family,
    sector_family,
)
from .bracket import Bracket, Work, bisect_margin
from .lag import METHOD_TEXT as AXIS_METHOD
from .lag import prove_lag
from .outcomes import Outcome, Verdict, requirement_outcome
from .progress import tell
from .sector import METHOD_TEXT as RAY_METHOD
from .sector import prove_sector
from .verdict import Witness, decide, make_witness

__all__ = ["CRITERIA", "MEASURE_OF_REQUIREMENT", "Criterion", "Decision", "Measure", "criteria_for",
           "decide_criterion", "measure_criterion"]

_REL = Fraction(1, 10**12)


def _rational_near(value, side: int) -> Fraction:
    """A short rational within 1e-12 relative of the positive mpmath number ``value``, on
    its ``side`` (+1 above, -1 below)."""
    import mpmath

    with mpmath.workdps(60):
        text = mpmath.nstr(value, 50, strip_zeros=False)
    exact = Fraction(text)
    guard = exact * Fraction(1, 10**40)  # the 50 digits' own rounding, outwards
    if side > 0:
        start = exact + guard
        return short_between(start, start * (1 + _REL)) or start
    start = exact - guard
    return short_between(start * (1 - _REL), start) or start


@dataclass(frozen=True, slots=True)
class Decision:
    """One decision of a criterion at one x, as its three users need it: the verdict (STABLE:
    met at x), a verified witness of the family asked at x, whether the wall-clock safety stop
    cut it, and the method in words."""

    verdict: Verdict
    witness: Witness | None = None
    safety_stop: bool = False
    method: str = ""


#: (family, x, max_boxes) -> a decision, or None to leave it to the decision ladder.
Prover = Callable[[UncertainPolynomial, Fraction, int], Decision | None]


@dataclass(frozen=True, slots=True)
class Measure:
    """One criterion: its search variable x, the family that asks it at x, and the unit."""

    name: str  # the requirement's and the JSON's key
    words: str  # for people: "gain margin (upward)"
    unit: str  # "dB", "deg", "", "|z|"
    family_at: Callable[[UncertainPolynomial, Fraction], UncertainPolynomial]
    start: Fraction  # the first x tried
    end: Fraction  # the cap (or the value where the question stops making sense)
    end_testable: bool
    #: x -> the value in the engineer's unit (mpmath number or Fraction), increasing in x
    #: except for the radius (decreasing)
    value_of: Callable[[Fraction], object]
    #: (value, side) -> x: the exact x of a value, or a rational on ``side`` of it
    x_of: Callable[[Fraction, int], Fraction]
    smaller_is_better: bool = False
    #: What holds whatever the family: 0 dB and 0 deg of margin (x = 0), a damping ratio of at
    #: least -1, a spectral radius of at least 0. Shown when robust stability is not proven.
    floor: float = 0.0
    #: A test tried before the ladder on family_at(family, x) (the damping ratio's ray test,
    #: the phase margin's axis test).
    prover: Prover | None = None

    def decide_at(self, family: UncertainPolynomial, x: Fraction, max_boxes: int,
                  max_seconds: float = 600.0) -> Decision:
        """Decide "the criterion reaches x over the family's box": the measure's own prover
        first, then the decision ladder on the family that asks it at x."""
        if self.prover is not None:
            found = self.prover(family, x, max_boxes)
            if found is not None:
                return found
        res = decide(self.family_at(family, x), max_seconds=max_seconds, max_boxes=max_boxes)
        return Decision(res.verdict, res.witness, res.safety_stop, res.method_text)

    def shown(self, x: Fraction | None, side: int) -> float | None:
        """The value at x as a float rounded outwards (``side`` +1 up, -1 down)."""
        if x is None:
            return None
        value = self.value_of(x)
        f = float(value)
        if isinstance(value, Fraction):
            if (side > 0 and Fraction(f) < value) or (side < 0 and Fraction(f) > value):
                f = math.nextafter(f, side * math.inf)
            return f
        return f * (1 + side * 1e-12) if f else f  # mpmath values: 1e-12 outwards


def _gain_value(x: Fraction):
    """20 log10(1 + x) dB: exact for a power of ten (the cap, 10^6, is 120 dB)."""
    import mpmath

    g = 1 + x
    exponent = len(str(g.numerator)) - 1
    if g.denominator == 1 and g.numerator == 10**exponent:
        return Fraction(20 * exponent)
    with mpmath.workdps(40):
        return 20 * mpmath.log10(mpmath.mpf(g.numerator) / g.denominator)


def _gain_x(db: Fraction, side: int) -> Fraction:
    import mpmath

    with mpmath.workdps(60):
        g = mpmath.power(10, mpmath.mpf(db.numerator) / (20 * db.denominator))
        return _rational_near(g - 1, side)


def _phase_value(u: Fraction):
    import mpmath

    with mpmath.workdps(40):
        return 2 * mpmath.atan(mpmath.sqrt(mpmath.mpf(u.numerator) / u.denominator)) * 180 / mpmath.pi


def _phase_x(deg: Fraction, side: int) -> Fraction:
    import mpmath

    with mpmath.workdps(60):
        half = mpmath.mpf(deg.numerator) / deg.denominator * mpmath.pi / 360
        return _rational_near(mpmath.tan(half) ** 2, side)


def _upper_gain(family: UncertainPolynomial, x: Fraction) -> UncertainPolynomial:
    return gain_family(family, Fraction(1), 1 + x)


def _lower_gain(family: UncertainPolynomial, x: Fraction) -> UncertainPolynomial:
    return gain_family(family, 1 / (1 + x), Fraction(1))


GAIN_UP = Measure("gain_margin_db", "gain margin (gain raised)", "dB", _upper_gain, Fraction(1),
                  Fraction(10**6 - 1), True, _gain_value, _gain_x)
#: Both directions at once, k in [1/g, g]: what the requirement gain_margin_db asks.
GAIN_BOTH = Measure("gain_margin_db", "gain margin (gain raised or lowered)", "dB",
                    lambda f, x: gain_family(f, 1 / (1 + x), 1 + x), Fraction(1), Fraction(10**6 - 1), True,
                    _gain_value, _gain_x)
GAIN_DOWN = Measure("gain_margin_db_lower_direction", "gain margin (gain lowered)", "dB", _lower_gain,
                    Fraction(1), Fraction(10**6 - 1), True, _gain_value, _gain_x)


def _exclusion_prover(test: Callable, family_at: Callable[[UncertainPolynomial, Fraction],
                                                          UncertainPolynomial],
                      method: str, refuted: str) -> Prover:
    """A prover from a zero-exclusion test (continuous time only): its proof, or its candidate
    point checked exactly in the family that asks the criterion at x (a verified witness);
    None (the ladder's turn) otherwise."""
    def prover(family: UncertainPolynomial, x: Fraction, max_boxes: int) -> Decision | None:
        if family.discrete:
            return None
        found = test(family, x, max_boxes=max_boxes)
        if found.status == "proven":
            return Decision(Verdict.STABLE, method=method)
        if found.status == "refuted" and found.point is not None:
            asked = family_at(family, x)
            witness = make_witness(asked, found.point, found.reason, asked.box)
            if witness is not None:
                return Decision(Verdict.UNSTABLE, witness, method=refuted)
        return None
    return prover


# first try about 10 degrees (tan^2 5 deg = 0.00765), doubling up; cap about 179 degrees
PHASE = Measure("phase_margin_deg", "phase margin (lag or lead)", "deg", phase_family, Fraction(765, 10**5),
                Fraction(13130), True, _phase_value, _phase_x,
                prover=_exclusion_prover(prove_lag, phase_family, AXIS_METHOD,
                                         "a point unstable under the lag, exact Routh array"))
DAMPING = Measure("damping_ratio", "damping ratio", "", sector_family, Fraction(1, 16), Fraction(1), False,
                  damping_of, lambda zeta, side: damping_parameter(zeta, side), floor=-1.0,
                  prover=_exclusion_prover(prove_sector, sector_family, RAY_METHOD,
                                           "a point outside the sector, exact Routh array"))
RADIUS = Measure("spectral_radius", "spectral radius", "", lambda f, x: radius_family(f, 1 - x),
                 Fraction(1, 20), Fraction(1), False, lambda x: 1 - x, lambda r, side: 1 - r,
                 smaller_is_better=True)

#: Every criterion a margin search reports, by name.
CRITERIA = {m.name: m for m in (GAIN_UP, GAIN_DOWN, PHASE, DAMPING, RADIUS)}
#: The requirement that asks each criterion (the radius is asked by "radius").
REQUIREMENT_OF = {"gain_margin_db": "gain_margin_db", "gain_margin_db_lower_direction": "gain_margin_db",
                  "phase_margin_deg": "phase_margin_deg", "damping_ratio": "damping_ratio",
                  "spectral_radius": "radius"}
#: The measure each criterion requirement is decided with, directly.
MEASURE_OF_REQUIREMENT = {"gain_margin_db": GAIN_BOTH, "phase_margin_deg": PHASE, "damping_ratio": DAMPING,
                          "radius": RADIUS}


def criteria_for(family: UncertainPolynomial) -> tuple[Measure, ...]:
    """The criteria that apply to a family: gain and phase margins for loops; the damping
    ratio in continuous time, the spectral radius in discrete time (the damping region of
    z = e^(sT) is bounded by spirals, not by a polynomial region)."""
    out = []
    if family.loop:
        out += [GAIN_UP, GAIN_DOWN, PHASE]
    out.append(RADIUS if family.discrete else DAMPING)
    return tuple(out)


def _limited_by(measure: Measure, witness: Witness | None, x: Fraction | None) -> dict | None:
    """The parameter point (and extra gain or lag) that limits a criterion, exactly."""
    if witness is None:
        return None
    out: dict[str, object] = {n: format_fraction(v) for n, v in witness.parameters.items()
                              if n not in (LOOP_GAIN, PHASE_LAG)}
    values = witness.parameters
    if LOOP_GAIN in values:
        k = values[LOOP_GAIN]
        out["extra_gain"] = format_fraction(k)
        out["extra_gain_db"] = json_float(20 * math.log10(k))
    if PHASE_LAG in values:
        out["extra_phase_lag_deg"] = json_float(float(_phase_value(values[PHASE_LAG])))
    if measure is DAMPING and x is not None:
        out["sector_damping_ratio"] = format_fraction(damping_of(x))
    if measure is RADIUS and x is not None:
        out["circle_radius"] = format_fraction(1 - x)
    return out


@dataclass(frozen=True, slots=True)
class Criterion:
    """A certified bracket on one criterion, in x and in the engineer's unit."""

    measure: Measure
    bracket: Bracket  # on x: proven at lower, a verified witness at upper
    requirement: Fraction | None = None
    outcome: Outcome | None = None
    note: str = ""
    #: The sample time of a discrete-time case (seconds), for the spectral radius's
    #: continuous-time reading; None when not given.
    sample_time: Fraction | None = None
    #: Robust stability itself: True, False (a witness at x = 0) or None (undecided).
    #: Without it the bracket says only "at most 0" (gain, phase, damping) or "at least 1"
    #: (spectral radius), or nothing.
    stable: bool | None = True

    def decay_equivalent(self) -> tuple[float, float | None] | None:
        """For the spectral radius with a sample time: the worst-case decay rate -ln(r)/T
        (1/s) as (lower, upper), rounded outwards; None otherwise."""
        if self.measure is not RADIUS or self.sample_time is None or self.high is None:
            return None
        period = float(self.sample_time)
        low = -math.log(self.high) / period * (1 - 1e-12) if self.high < 1 else 0.0
        high = None if not self.low else -math.log(self.low) / period * (1 + 1e-12)
        return low, high

    @property
    def passed(self) -> bool | None:
        return None if self.outcome is None else self.outcome.passed

    def x_ends(self) -> tuple[Fraction | None, Fraction | None]:
        """The search values of the bracket's low and high ends in the engineer's unit (None:
        open), robust stability proven. For the radius the witnessed end is the low one."""
        b = self.bracket
        return (b.upper, b.lower) if self.measure.smaller_is_better else (b.lower, b.upper)

    def unproven_ends(self) -> tuple[float, float | None]:
        """The ends when robust stability is not proven: only x = 0 is known. A member fails
        there (stable False): at most 0 dB, 0 deg or damping 0, at least radius 1. Undecided:
        nothing beyond what holds for every family (the measure's floor)."""
        m = self.measure
        if m.smaller_is_better:
            return (1.0 if self.stable is False else m.floor), None
        return m.floor, (0.0 if self.stable is False else None)

    @property
    def low(self) -> float | None:
        """The low end in the unit, rounded down."""
        if self.stable is not True:
            return self.unproven_ends()[0]
        return self.measure.shown(self.x_ends()[0], -1)

    @property
    def high(self) -> float | None:
        """The high end in the unit, rounded up (None: open)."""
        if self.stable is not True:
            return self.unproven_ends()[1]
        return self.measure.shown(self.x_ends()[1], +1)

    def limit_text(self, units: Mapping[str, str] | None = None) -> str:
        """What limits it, for people: the witness point (with each part's unit from
        ``units``) and the extra gain or lag."""
        limited = _limited_by(self.measure, self.bracket.witness, self.bracket.upper)
        if not limited:
            return ""
        shown = {**(units or {}), "extra_gain_db": "dB", "extra_phase_lag_deg": "deg"}
        return ", ".join((f"{n} = {v:.6g}" if isinstance(v, float) else f"{n} = {v}")
                         + (f" {shown[n]}" if shown.get(n) else "") for n, v in limited.items())

    def as_dict(self) -> dict[str, object]:
        """JSON: lower and upper in the unit, rounded outwards; limited_by; the search
        variable's exact bracket; the requirement's outcome."""
        b = self.bracket
        return {"lower": self.low, "upper": self.high, "unit": self.measure.unit, "robustly_stable": self.stable,
                "limited_by": _limited_by(self.measure, b.witness, b.upper),
                "search_lower_exact": format_fraction(b.lower),
                "search_upper_exact": None if b.upper is None else format_fraction(b.upper),
                "witness": None if b.witness is None else b.witness.as_dict(),
                "requirement": json_float(self.requirement),
                "outcome": None if self.outcome is None else self.outcome.value,
                "passed": self.passed, "note": "; ".join(x for x in (b.note, self.note) if x),
                **self._equivalent()}

    def _equivalent(self) -> dict[str, object]:
        decay = self.decay_equivalent()
        if decay is None:
            return {}
        low, high = decay
        return {"decay_rate_equivalent": {"lower": low, "upper": high, "unit": "1/s",
                                          "sample_time": json_float(self.sample_time)},
                "settling_time_2pct_at_most": None if low <= 0 else 4 / low}


def _tester(family: UncertainPolynomial, measure: Measure, work: Work, max_boxes: int, last: list):
    def test(x: Fraction) -> tuple[Verdict, Witness | None]:
        res = measure.decide_at(family, x, max_boxes, max(work.deadline - time.perf_counter(), 0.01))
        work.clock_fired |= res.safety_stop
        tell("tested", scale=x, verdict=res.verdict)
        last[:] = [x]
        return res.verdict, res.witness
    return test


#: Exact decisions one witness may spend sliding back to its own critical value.
_TIGHTEN_STEPS = 48


def _tightener(family: UncertainPolynomial, measure: Measure, tol: Fraction, last: list):
    """witness -> (x', witness'): the witness's parameter point alone (a degenerate box, so
    each decision is one polynomial, or one extra gain or lag), bisected down to the least x
    at which that point fails, within ``tol``. Counted in decisions, never in seconds."""
    from ..model.family import Box

    k = len(family.names)

    def tighten(witness: Witness) -> tuple[Fraction, Witness]:
        point = tuple(witness.point[:k])
        alone = family.with_box(Box(family.names, point, point))
        low, high, best = Fraction(0), last[0], witness
        for _ in range(_TIGHTEN_STEPS):
            if high - low <= tol * high / 4:
                break
            mid = short_between(low + (high - low) / 4, high - (high - low) / 4) or (low + high) / 2
            res = measure.decide_at(alone, mid, 64)
            if res.verdict is Verdict.UNSTABLE and res.witness is not None:
                high, best = mid, res.witness
            elif res.verdict is Verdict.STABLE:
                low = mid
            else:
                break
        return high, best
    return tighten


def decide_criterion(family: UncertainPolynomial, measure: Measure, required: Fraction, max_boxes: int,
                     max_seconds: float) -> tuple[Verdict | None, Witness | None, bool]:
    """Decide "the criterion reaches ``required``" directly: proven at the strict rational x,
    refuted at the lenient one. Returns (STABLE = met, UNSTABLE = not met, None = open in
    the 1e-12 gap or the budget), the witness, and whether the clock stopped it."""
    deadline = time.perf_counter() + max_seconds
    strict, lenient = measure.x_of(required, +1), measure.x_of(required, -1)
    res = measure.decide_at(family, strict, max_boxes, max_seconds)
    if res.verdict is not Verdict.UNSTABLE or strict == lenient:
        verdict = None if res.verdict is Verdict.UNDECIDED else res.verdict
        return verdict, res.witness, res.safety_stop
    again = measure.decide_at(family, lenient, max_boxes, max(deadline - time.perf_counter(), 0.01))
    if again.verdict is Verdict.UNSTABLE:
        return Verdict.UNSTABLE, again.witness, again.safety_stop
    return None, None, res.safety_stop or again.safety_stop


def measure_criterion(family: UncertainPolynomial, measure: Measure, required: Fraction | None = None,
                      rel_tol: float = 1e-6, max_boxes: int = 500, max_tests: int = 32,
                      max_seconds: float = 600.0, stable: bool | None = None,
                      requirement_boxes: int = 5000) -> Criterion:
    """Certified bracket on one criterion over the family's box, and the requirement's
    outcome (through the one pass/fail rule, on x). ``stable``: robust stability when
    already decided (True), else it is decided first. A requirement the bracket leaves open
    is decided directly with ``requirement_boxes`` boxes, as in every command."""
    # an undecided test ends the search: near the first value it cannot decide, the
    # families of these criteria (degree 2n, squared coefficients) rarely become decidable
    work = Work(max_tests, time.perf_counter() + max_seconds, max_undecided=1)
    tol = Fraction(rel_tol)
    last: list = []
    test = _tester(family, measure, work, max_boxes, last)
    if stable is None:
        work.tests += 1
        verdict, witness = test(Fraction(0))
        stable = verdict is Verdict.STABLE
        if not stable:
            note = ("not robustly stable: the criterion is not met anywhere" if verdict is Verdict.UNSTABLE
                    else "robust stability itself is undecided")
            bracket = Bracket(Fraction(0), Fraction(0) if verdict is Verdict.UNSTABLE else None,
                              witness=witness, note=note)
            return _with_requirement(family, measure, bracket, required, requirement_boxes, work,
                                     False if verdict is Verdict.UNSTABLE else None)
    elif not stable:
        bracket = Bracket(Fraction(0), Fraction(0), note="not robustly stable: the criterion is not met anywhere")
        return _with_requirement(family, measure, bracket, required, requirement_boxes, work, False)
    bracket = bisect_margin(test, measure.end, measure.end_testable, tol, work,
                            start=measure.start, tighten=_tightener(family, measure, tol, last))
    if bracket.upper is None and not measure.end_testable:
        bracket = replace(bracket, upper=measure.end)  # the end itself is never met (a point, r = 0)
    return _with_requirement(family, measure, bracket, required, requirement_boxes, work)


def _with_requirement(family: UncertainPolynomial, measure: Measure, bracket: Bracket,
                      required: Fraction | None, max_boxes: int, work: Work, stable: bool | None = True
                      ) -> Criterion:
    if required is None:
        return Criterion(measure, bracket, stable=stable)
    strict, lenient = measure.x_of(required, +1), measure.x_of(required, -1)
    outcome = requirement_outcome(strict, None, bracket.lower, None)
    if outcome is Outcome.OPEN:
        outcome = requirement_outcome(lenient, None, None, bracket.upper)
    if outcome is Outcome.OPEN:  # the bracket leaves it open: decide it directly
        verdict, witness, _ = decide_criterion(family, measure, required, max_boxes,
                                               max(work.deadline - time.perf_counter(), 0.01))
        outcome = requirement_outcome(strict, verdict)
        if verdict is Verdict.STABLE and bracket.lower < strict:
            bracket = replace(bracket, lower=strict)
        elif verdict is Verdict.UNSTABLE and (bracket.upper is None or bracket.upper > lenient):
            bracket = replace(bracket, upper=lenient, witness=witness)
    return Criterion(measure, bracket, required, outcome, stable=stable)
