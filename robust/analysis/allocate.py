"""Allocation: the cheapest tolerance class per part for which the case still passes, each
candidate design decided by proof.

A design gives every allocated part a class: a relative tolerance about the part's nominal,
with a cost. The other parts keep their tolerances as written. A design passes when the
decision ladder proves it robustly stable over its box and every requirement of the case is
proven met over that box (:func:`.requirements.decide_requirement`, as in ``check``); an
undecided design counts as not passing.

Passing is monotone in the box: a tighter design's box lies inside a looser one's, so a
proof for the looser covers the tighter, and a witness inside the tighter box lies inside
the looser. The search uses that twice:

* best-first over cost: designs are taken in order of increasing cost (ties: tighter in the
  first part, then the next, ...), so the first design that passes is the cheapest passing
  one; every design tighter than it costs more and is never decided;
* a failure rules out more than itself: a verified witness (a parameter point where the
  check fails) rules out every design whose box contains it, and a proven failure without a
  point (a box past a physical limit) every design looser in every part; such designs are
  counted as pruned, not decided. The witness is first moved towards nominal, part by part,
  while the exact Routh array still fails there: a point nearer nominal lies in more boxes.

Which parts: those named, else every part whose tolerance is written in percent (a range or
an absolute tolerance stays as written unless named). A class whose range reaches a part's
physical limit is not offered to that part; a class that costs no less than a tighter one is
never chosen (the tighter passes whenever it does) and is dropped as dominated.

The all-tightest design is decided first: when it fails with a witness every design does.
Decisions run in batches of a fixed size through a ``run`` callable (``run(function,
items) -> results`` in order, e.g. local processes); the batch size, never the runner,
decides which designs are decided, so the result is the same whatever runs them. The work
budget counts decisions.
"""

from __future__ import annotations

import heapq
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction

from ..errors import InputError, did_you_mean
from ..exact.numbers import format_fraction, parse_number
from ..model.family import Box, UncertainPolynomial, shifted_family
from .outcomes import BoxProblem, Outcome, Verdict, untestable
from .requirements import RequirementCheck, decide_requirement
from .verdict import CheckResult, Witness, decide, make_witness

__all__ = ["Allocation", "DesignDecision", "DesignTask", "PartClasses", "ToleranceClass", "allocate",
           "decide_design", "parse_classes"]

#: Decisions in one batch: fixed, so that the designs decided do not depend on who runs them.
DEFAULT_BATCH = 4
#: Designs the search may pass over as ruled out (without deciding them) before it stops:
#: with many parts the designs number classes^parts, and walking them costs work too.
MAX_PASSED_OVER = 200_000
_CLASSES_EXPECTED = 'comma-separated TOLERANCE:COST pairs such as "1%:4, 2%:2, 5%:1"'

Runner = Callable[[Callable, list], list]


@dataclass(frozen=True, slots=True)
class ToleranceClass:
    """A tolerance class: +-``tolerance`` (relative: 1/100 is 1 %) about nominal, at ``cost``."""

    tolerance: Fraction
    cost: Fraction
    written: str = ""  # as the user wrote it, e.g. "0.5%"

    @property
    def text(self) -> str:
        """The class as written (``"0.5%"``), else its exact percentage."""
        return self.written or f"{format_fraction(self.tolerance * 100)}%"

    def as_dict(self) -> dict[str, str]:
        """JSON form, exact strings."""
        return {"class": self.text, "tolerance": format_fraction(self.tolerance),
                "cost": format_fraction(self.cost)}


def parse_classes(text: str, what: str = "--classes") -> tuple[ToleranceClass, ...]:
    """Read ``"1%:4, 2%:2, 5%:1"``: tolerance classes with their costs, tightest first.

    Raises
    ------
    InputError
        Malformed text, a tolerance not in (0 %, 100 %), a negative cost, or a tolerance given twice.

    Examples
    --------
    >>> [c.text for c in parse_classes("5%:1, 1%:4, 0.5%:9")]
    ['0.5%', '1%', '5%']
    """
    entries = [entry.strip() for entry in text.split(",")]
    if not text.strip() or any(not entry for entry in entries):
        raise InputError(what, "an empty class", _CLASSES_EXPECTED, text)
    classes: dict[Fraction, ToleranceClass] = {}
    for entry in entries:
        tolerance_text, colon, cost_text = entry.partition(":")
        tolerance_text, cost_text = tolerance_text.strip(), cost_text.strip()
        if not colon or not cost_text:
            raise InputError(what, f"class {entry!r} has no cost", _CLASSES_EXPECTED, text)
        if not tolerance_text.endswith("%"):
            raise InputError(what, f"class {entry!r}: the tolerance is not a percentage", _CLASSES_EXPECTED,
                             text)
        try:
            percent = parse_number(tolerance_text[:-1].removeprefix("+-"), what, suffixes=False)
            cost = parse_number(cost_text, what, suffixes=False)
        except InputError:
            raise InputError(what, f"class {entry!r} is not a number", _CLASSES_EXPECTED, text) from None
        if not 0 < percent < 100:
            raise InputError(what, f"class {entry!r}: a tolerance must lie above 0 % and below 100 %",
                             _CLASSES_EXPECTED, text)
        if cost < 0:
            raise InputError(what, f"class {entry!r}: a cost cannot be negative", _CLASSES_EXPECTED, text)
        if percent / 100 in classes:
            raise InputError(what, f"the tolerance {tolerance_text} is given twice", _CLASSES_EXPECTED, text)
        classes[percent / 100] = ToleranceClass(percent / 100, cost, tolerance_text.removeprefix("+-"))
    return tuple(classes[t] for t in sorted(classes))


@dataclass(frozen=True, slots=True)
class PartClasses:
    """The classes one part may take, tightest first, and why the others may not.

    ``infeasible``: (class, reason) for a class whose box reaches the part's physical limit;
    ``dominated``: classes that cost no less than a tighter usable class (never chosen: the
    tighter one passes whenever they do).
    """

    name: str
    nominal: Fraction
    options: tuple[ToleranceClass, ...]
    infeasible: tuple[tuple[ToleranceClass, str], ...]
    dominated: tuple[ToleranceClass, ...]
    written: int | None  # the option matching the tolerance as written, if any

    def interval(self, option: int, scale: Fraction = Fraction(1)) -> tuple[Fraction, Fraction]:
        """The part's range at one option, its half-width scaled by ``scale``."""
        half = scale * self.options[option].tolerance * abs(self.nominal)
        return self.nominal - half, self.nominal + half

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        return {"name": self.name, "nominal": format_fraction(self.nominal),
                "classes": [c.as_dict() for c in self.options],
                "written": None if self.written is None else self.options[self.written].text,
                "infeasible": [{**c.as_dict(), "reason": why} for c, why in self.infeasible],
                "dominated": [c.as_dict() for c in self.dominated]}


@dataclass(frozen=True, slots=True)
class DesignTask:
    """One design to decide: the family over the design's box and the requirements asked."""

    family: UncertainPolynomial
    requirements: tuple[tuple[str, Fraction], ...]
    max_boxes: int
    max_seconds: float


@dataclass(frozen=True, slots=True)
class DesignDecision:
    """The decision of one design: ``outcome`` PASS only when robust stability and every
    requirement are proven; ``failed`` names what did not pass (``"stability"`` or the
    requirement), empty when it passed."""

    outcome: Outcome
    failed: str
    result: CheckResult | None
    requirements: tuple[RequirementCheck, ...] = ()
    problem: BoxProblem | None = None

    @property
    def witness(self) -> Witness | None:
        """The verified point that made the design fail, if any."""
        if self.requirements and self.failed == self.requirements[-1].name:
            return self.requirements[-1].witness
        return self.result.witness if self.result is not None and self.failed == "stability" else None

    @property
    def safety_stop(self) -> bool:
        """Whether a wall-clock safety stop cut a decision short."""
        return (bool(self.result is not None and self.result.safety_stop)
                or any(r.safety_stop for r in self.requirements))


def decide_design(task: DesignTask) -> DesignDecision:
    """Decide one design: robust stability over its box first, then each requirement in the
    case's order, stopping at the first that does not pass (a picklable module-level
    function, for runners that use processes)."""
    family = task.family
    problem = untestable(family, family.box)
    if problem is not None:
        outcome = Outcome.FAIL if problem.proven else Outcome.OPEN
        return DesignDecision(outcome, "stability", None, (), problem)
    result = decide(family, family.box, max_seconds=task.max_seconds, max_boxes=task.max_boxes)
    if result.verdict is not Verdict.STABLE:
        return DesignDecision(result.verdict.outcome, "stability", result)
    checks: list[RequirementCheck] = []
    for name, value in task.requirements:
        checks.append(decide_requirement(family, name, value, task.max_boxes, task.max_seconds))
        if checks[-1].outcome is not Outcome.PASS:
            return DesignDecision(checks[-1].outcome, name, result, tuple(checks), checks[-1].problem)
    return DesignDecision(Outcome.PASS, "", result, tuple(checks))


@dataclass(frozen=True, slots=True)
class Decided:
    """A design the search decided, in the order it was decided."""

    design: tuple[int, ...]
    cost: Fraction
    decision: DesignDecision


@dataclass(frozen=True, slots=True)
class Allocation:
    """The answer of :func:`allocate`.

    ``chosen`` is the cheapest design proven to pass (option index per part, 0 the tightest)
    or None; ``log`` every decision in order; ``candidates`` the number of designs,
    ``pruned`` those ruled out by a failure without a decision; ``exhausted`` says the
    decision budget (or :data:`MAX_PASSED_OVER`, ``passed_over_limit``) ran out before the
    search ended.
    """

    parts: tuple[PartClasses, ...]
    chosen: tuple[int, ...] | None
    cost: Fraction | None
    tightest_cost: Fraction
    written: tuple[int, ...] | None
    written_decision: DesignDecision | None
    log: tuple[Decided, ...]
    candidates: int
    pruned: int
    exhausted: bool
    batch: int
    max_decisions: int
    passed_over_limit: bool = False

    @property
    def decision(self) -> DesignDecision | None:
        """The proof of the chosen design."""
        return next((d.decision for d in self.log if d.design == self.chosen), None)

    @property
    def written_cost(self) -> Fraction | None:
        """The cost of the tolerances as written, when each is a class of the table."""
        return None if self.written is None else design_cost(self.parts, self.written)

    @property
    def undecided_cheaper(self) -> int:
        """Undecided designs cheaper than the chosen one (any, when none was chosen)."""
        return sum(1 for d in self.log if d.decision.outcome is Outcome.OPEN
                   and (self.cost is None or d.cost < self.cost))

    @property
    def safety_stop(self) -> bool:
        """Whether a wall-clock safety stop cut any decision short (only then may a run differ)."""
        return any(d.decision.safety_stop for d in self.log)

    def classes_of(self, design: Sequence[int]) -> dict[str, str]:
        """name -> class text of a design."""
        return {p.name: p.options[i].text for p, i in zip(self.parts, design, strict=True)}

    def ranges_of(self, design: Sequence[int]) -> dict[str, tuple[Fraction, str, Fraction, Fraction]]:
        """name -> (nominal, class text, low, high) of a design: what its case file says."""
        return {p.name: (p.nominal, p.options[i].text, *p.interval(i))
                for p, i in zip(self.parts, design, strict=True)}

    def as_dict(self) -> dict[str, object]:
        """JSON form: exact strings for numbers."""
        decision = self.decision
        written = self.written_decision
        return {
            "found": self.chosen is not None,
            "chosen": None if self.chosen is None else self.classes_of(self.chosen),
            "cost": None if self.cost is None else format_fraction(self.cost),
            "tightest_cost": format_fraction(self.tightest_cost),
            "written": {"classes": None if self.written is None else self.classes_of(self.written),
                        "cost": None if self.written_cost is None else format_fraction(self.written_cost),
                        "outcome": None if written is None else written.outcome.value},
            "proof": None if decision is None or decision.result is None else {
                "verdict": decision.result.verdict.value, "method": decision.result.method,
                "method_text": decision.result.method_text, "box": decision.result.box.as_dict(),
                "requirements": {r.name: r.outcome.value for r in decision.requirements}},
            "parts": [p.as_dict() for p in self.parts],
            "search": {"candidates": self.candidates, "decided": len(self.log), "pruned": self.pruned,
                       "undecided": sum(1 for d in self.log if d.decision.outcome is Outcome.OPEN),
                       "undecided_cheaper": self.undecided_cheaper, "exhausted": self.exhausted,
                       "passed_over_limit": self.passed_over_limit,
                       "batch": self.batch, "max_decisions": self.max_decisions,
                       "safety_stop": self.safety_stop},
            "decisions": [{"classes": self.classes_of(d.design), "cost": format_fraction(d.cost),
                           "outcome": d.decision.outcome.value, "failed": d.decision.failed or None,
                           "witness": d.decision.witness is not None}
                          for d in self.log],
        }


def design_cost(parts: Sequence[PartClasses], design: Sequence[int]) -> Fraction:
    """The total cost of a design."""
    return sum((p.options[i].cost for p, i in zip(parts, design, strict=True)), Fraction(0))


def _sequential(function: Callable, items: list) -> list:
    return [function(item) for item in items]


def _default_parts(case) -> tuple[str, ...]:
    """Every part whose tolerance is written in percent (a relative tolerance)."""
    return tuple(p.name for p in case.parameters if p.tolerance.strip().endswith("%"))


def _part_classes(case, name: str, classes: Sequence[ToleranceClass]) -> PartClasses:
    family: UncertainPolynomial = case.family
    index = family.names.index(name)
    nominal = family.nominal[index]
    if nominal == 0:
        raise InputError("--parts", f"{name} has the nominal 0: a relative tolerance means nothing there",
                         "parts with a non-zero nominal", name)
    options, infeasible, dominated = [], [], []
    for c in classes:  # tightest first
        low, high = nominal - c.tolerance * abs(nominal), nominal + c.tolerance * abs(nominal)
        limit = family.limit_reached(index, low, high)
        if limit is not None:
            infeasible.append((c, f"reaches the physical limit {format_fraction(limit)} of {name}"))
        elif options and c.cost >= min(o.cost for o in options):
            dominated.append(c)
        else:
            options.append(c)
    if not options:
        raise InputError("--classes", f"no class fits {name}: each reaches its physical limit",
                         "a tighter class", ", ".join(c.text for c in classes))
    parameter = case.parameter(name)
    written = None
    if parameter.tolerance.strip().endswith("%") and nominal - parameter.low == parameter.high - nominal:
        relative = parameter.relative_tolerance
        written = next((i for i, c in enumerate(options) if c.tolerance == relative), None)
    return PartClasses(name, nominal, tuple(options), tuple(infeasible), tuple(dominated), written)


def allocation_parts(case, classes: Sequence[ToleranceClass], parts: Sequence[str] | None = None
                     ) -> tuple[PartClasses, ...]:
    """The parts to allocate and the classes each may take; checks ``parts`` (bad input raises
    :class:`~robust.errors.InputError` before any analysis)."""
    names = case.family.names
    chosen = tuple(parts) if parts is not None else _default_parts(case)
    if parts is not None and not chosen:
        raise InputError("--parts", "no part given", "comma-separated part names such as R1,C1")
    for name in chosen:
        if name not in names:
            raise InputError("--parts", f"unknown part {name!r}" + did_you_mean(name, names),
                             "one of " + ", ".join(names))
    if len(set(chosen)) != len(chosen):
        raise InputError("--parts", "a part is named twice", "each part once", ",".join(chosen))
    if not chosen:
        raise InputError("--parts", "no tolerance of the case is written in percent",
                         "the parts to allocate, such as --parts " + ",".join(names[:2]))
    return tuple(_part_classes(case, name, classes) for name in chosen)


def _design_box(family: UncertainPolynomial, parts: Sequence[PartClasses], design: Sequence[int]) -> Box:
    low, high = list(family.box.low), list(family.box.high)
    for part, option in zip(parts, design, strict=True):
        i = family.names.index(part.name)
        low[i], high[i] = part.interval(option)
    return Box(family.names, tuple(low), tuple(high))


def _in_cost_order(parts: Sequence[PartClasses]) -> Iterator[tuple[tuple[int, ...], Fraction]]:
    """Every design once, by (cost, design): from the loosest, each design reached from one
    parent (loosened in its last tightened part), and tightening always costs more."""
    top = tuple(len(p.options) - 1 for p in parts)
    heap = [(design_cost(parts, top), top)]
    while heap:
        cost, design = heapq.heappop(heap)
        yield design, cost
        last = max((j for j, (v, t) in enumerate(zip(design, top, strict=True)) if v < t), default=0)
        for j in range(last, len(design)):
            if design[j] > 0:
                child = (*design[:j], design[j] - 1, *design[j + 1:])
                heapq.heappush(heap, (design_cost(parts, child), child))


def _failing_family(family: UncertainPolynomial, failed: str, requirements: dict[str, Fraction]
                    ) -> UncertainPolynomial | None:
    """The family whose non-Hurwitz points make a design fail ``failed``: the family itself for
    stability and the margin (decided over a larger box), the shifted one for the decay rate;
    None for the criteria, whose families have a parameter of their own."""
    if failed in ("stability", "margin"):
        return family
    if failed == "decay_rate":
        return shifted_family(family, requirements["decay_rate"])
    return None


def _floor(parts: Sequence[PartClasses], point: dict[str, Fraction], scale: Fraction) -> list[int] | None:
    """Per part, the tightest option whose range (half-width times ``scale``) holds the point."""
    least = []
    for part in parts:
        deviation = abs(point[part.name] - part.nominal)
        inside = [i for i, c in enumerate(part.options)
                  if deviation <= scale * c.tolerance * abs(part.nominal)]
        if not inside:
            return None
        least.append(inside[0])
    return least


def _ruled_out(family: UncertainPolynomial, parts: Sequence[PartClasses], design: tuple[int, ...],
               decision: DesignDecision, requirements: dict[str, Fraction]) -> tuple[int, ...] | None:
    """The least design (per part, an option) that a failure rules out together with every
    design at least as loose in every part; None when it rules out nothing (undecided).

    A witness is first moved towards nominal, part by part (to nominal, else to the nearest
    tighter option's end), as long as the exact Routh array still fails there: a point nearer
    nominal lies inside more designs' boxes, so it rules out more of them."""
    if decision.outcome is not Outcome.FAIL:
        return None
    witness = decision.witness
    failing = _failing_family(family, decision.failed, requirements)
    if witness is None:
        return design  # a proven failure without a point: itself and every looser design
    # a margin requirement is decided over the box scaled about nominal by the margin
    scale = requirements["margin"] if decision.failed == "margin" else Fraction(1)
    point = witness.parameters
    least = _floor(parts, point, scale)
    if least is None:
        return design
    if failing is not None:
        names = family.names
        for j, part in enumerate(parts):
            side = 1 if point[part.name] >= part.nominal else -1
            tries = [part.nominal] + [part.nominal + side * scale * c.tolerance * abs(part.nominal)
                                      for c in part.options[:least[j]]]
            for value in tries:
                moved = {**point, part.name: value}
                at = tuple(moved[n] for n in names)
                if make_witness(failing, at, "moved towards nominal", Box(names, at, at)) is not None:
                    point = moved
                    least = _floor(parts, point, scale) or least
                    break
    return tuple(least)


def allocate(case, classes: Sequence[ToleranceClass], parts: Sequence[str] | None = None,
             max_boxes: int = 2000, max_decisions: int = 200, max_seconds: float = 60.0,
             batch: int = DEFAULT_BATCH, run: Runner | None = None, prune: bool = True) -> Allocation:
    """The cheapest tolerance class per part for which ``case`` passes, decided by proof.

    Parameters
    ----------
    case
        A loaded case; its requirements are part of passing.
    classes
        The tolerance classes (:func:`parse_classes`), the same table for every part.
    parts
        The parts to allocate; default: every part whose tolerance is written in percent.
        The others keep their tolerances as written.
    max_boxes, max_seconds
        The budget of each decision (boxes) and its wall-clock safety stop.
    max_decisions
        The work budget of the search: designs decided.
    batch
        Designs decided together (through ``run``); part of the input, like a budget.
    run
        ``run(function, items) -> results``, in order; default: one after another, here.
    prune
        Rule out designs by the failures seen (off only to test that it changes nothing).

    Raises
    ------
    InputError
        An unknown or unusable part, or a part that no class fits.
    """
    run = run or _sequential
    parts_classes = allocation_parts(case, classes, parts)
    family: UncertainPolynomial = case.family
    requirements = tuple(case.requirements.asked())
    asked = dict(requirements)

    def task(design: tuple[int, ...]) -> DesignTask:
        return DesignTask(family.with_box(_design_box(family, parts_classes, design)), requirements,
                          max_boxes, max_seconds)

    tightest = tuple(0 for _ in parts_classes)
    known: dict[tuple[int, ...], DesignDecision] = {}
    log: list[Decided] = []
    floors: list[tuple[int, ...]] = []  # every design at or above one of these fails

    def decide_all(designs: list[tuple[int, ...]]) -> None:
        for design, decision in zip(designs, run(decide_design, [task(d) for d in designs]), strict=True):
            known[design] = decision
            log.append(Decided(design, design_cost(parts_classes, design), decision))
            floor = _ruled_out(family, parts_classes, design, decision, asked) if prune else None
            if floor is not None:
                floors.append(floor)

    def ruled_out(design: tuple[int, ...]) -> bool:
        return any(all(v >= f for v, f in zip(design, floor, strict=True)) for floor in floors)

    decide_all([tightest])
    order = _in_cost_order(parts_classes)
    chosen, pruned, exhausted, passed_over_limit = None, 0, False, False
    while chosen is None and not exhausted:
        if ruled_out(tightest):  # the tightest design fails, and with it every design
            pruned = _count(parts_classes) - len(known)
            break
        waiting: list[tuple[int, ...]] = []
        known_pass = None  # a design decided out of turn (the all-tightest) reached in order
        room = min(batch, max_decisions - len(log))
        for design, _cost in order:
            if design in known:
                if known[design].outcome is Outcome.PASS:
                    known_pass = design
                    break
                continue
            if ruled_out(design):
                pruned += 1
                if pruned >= MAX_PASSED_OVER:
                    exhausted = passed_over_limit = True
                    break
                continue
            if room <= 0:  # a design to decide and no budget left
                exhausted = True
                break
            waiting.append(design)
            if len(waiting) >= room:
                break
        if not waiting and known_pass is None:
            break
        if waiting:
            decide_all(waiting)
        # the batch holds the next designs in cost order (all cheaper than a known pass after
        # them): its first pass is the cheapest one
        chosen = next((d for d in waiting if known[d].outcome is Outcome.PASS), known_pass)
    written = _written_design(parts_classes)
    written_decision = None
    if written is not None:
        written_decision = known.get(written)
        if written_decision is None and chosen is not None and len(log) < max_decisions:
            decide_all([written])
            written_decision = known[written]
    cost = None if chosen is None else design_cost(parts_classes, chosen)
    return Allocation(tuple(parts_classes), chosen, cost, design_cost(parts_classes, tightest), written,
                      written_decision, tuple(log), _count(parts_classes), pruned, exhausted, batch,
                      max_decisions, passed_over_limit)


def _written_design(parts: Sequence[PartClasses]) -> tuple[int, ...] | None:
    if any(p.written is None for p in parts):
        return None
    return tuple(p.written for p in parts)  # type: ignore[misc]


def _count(parts: Sequence[PartClasses]) -> int:
    total = 1
    for part in parts:
        total *= len(part.options)
    return total
