"""Certified design maps: which values of one or two design parameters keep the loop stable
for every toleranced value of all the others.

The design range of each varied parameter is cut into a grid of cells. A cell is decided by
the exact engine (:func:`robust.analysis.verdict.decide`) over the box made of the cell's
design ranges and every other parameter's tolerance range, so

* ``stable`` is a proof for every design value in the cell and every toleranced value;
* ``unstable`` carries a verified witness (a rational point of that box, exact Routh array);
* ``undecided`` means the cell's work budget ran out (or the cell does not stand for the
  loop: a divided-out factor may vanish there).

The map is then refined: undecided cells, and unstable cells that touch a stable one (an
unstable cell may still hold stable designs), are halved along every axis, level by level,
while the count of cell decisions stays within its budget. Which cells are split depends
only on the verdicts, in a fixed order, so the map is the same on any machine and with any
number of workers (:mod:`robust.analysis.executor`). With a margin requirement in the case,
each stable cell is also decided with the other parameters' tolerances scaled by the
required margin about their nominal values: PASS, FAIL or OPEN per cell.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction

from ..errors import InputError, did_you_mean
from ..exact.numbers import format_fraction, parse_number
from ..model.family import Box
from .executor import TaskRunner
from .outcomes import Outcome, Verdict, untestable
from .requirements import decide_margin_over
from .verdict import decide  # at module level: a worker process imports it once, at its start

__all__ = ["Axis", "DesignMap", "MapCell", "check_axes", "design_map", "parse_axis"]

#: Defaults of the command line and of :func:`design_map`.
DEFAULT_RESOLUTION = 8
DEFAULT_DEPTH = 2
DEFAULT_MAX_CELLS = 1000
DEFAULT_CELL_BOXES = 200


@dataclass(frozen=True, slots=True)
class Axis:
    """A design axis: the parameter ``name`` (family index ``index``) over [low, high]."""

    name: str
    index: int
    low: Fraction
    high: Fraction
    unit: str = ""

    def as_dict(self) -> dict[str, object]:
        """JSON form: name, low, high (exact strings), unit."""
        return {"name": self.name, "low": format_fraction(self.low), "high": format_fraction(self.high),
                "unit": self.unit}


def check_axes(axes: Sequence[Axis]) -> tuple[Axis, ...]:
    """One or two design axes, of different parameters.

    Raises
    ------
    InputError
        Naming --vary and what to write instead.
    """
    axes = tuple(axes)
    if not 1 <= len(axes) <= 2 or len({a.name for a in axes}) != len(axes):
        raise InputError("--vary", "give one or two different design parameters",
                         "--vary A=LO..HI [--vary B=LO..HI]", " ".join(a.name for a in axes))
    return axes


def parse_axis(text: str, case) -> Axis:
    """Read ``NAME=LO..HI`` for ``case``: a parameter of the case and a range strictly inside
    its physical limits (it may reach beyond the tolerance range: it is a design choice).

    Raises
    ------
    InputError
        One line saying what is wrong and what to write instead.
    """
    expected = "NAME=LO..HI with NAME a parameter of the case, e.g. Kp=0.5..4"
    name, sep, span = str(text).partition("=")
    low_text, dots, high_text = span.partition("..")
    name = name.strip()
    if not sep or not dots or not name:
        raise InputError("--vary", "not of the form NAME=LO..HI", expected, text)
    names = case.family.names
    if name not in names:
        raise InputError("--vary", f"{name} is not a parameter of the case{did_you_mean(name, names)}",
                         "one of " + ", ".join(names), text)
    low = parse_number(low_text.strip(), "--vary")
    high = parse_number(high_text.strip(), "--vary")
    if not low < high:
        raise InputError("--vary", "the low end must be below the high end", expected, text)
    index = names.index(name)
    if case.family.limit_reached(index, low, high) is not None:
        lo_limit, hi_limit = case.family.limit_of(index)
        inside = (f"({'-inf' if lo_limit is None else format_fraction(lo_limit)}, "
                  f"{'inf' if hi_limit is None else format_fraction(hi_limit)})")
        raise InputError("--vary", f"the range reaches the physical limits of {name}",
                         f"a range strictly inside {inside} (limits = [lo, hi] in the case file sets them)",
                         text)
    unit = case.parameter(name).unit if hasattr(case, "parameter") else ""
    return Axis(name, index, low, high, unit)


@dataclass(frozen=True, slots=True)
class MapCell:
    """One decided cell: its design ranges (one per axis) and what was concluded."""

    ranges: tuple[tuple[Fraction, Fraction], ...]
    level: int
    verdict: Verdict
    method: str
    reason: str
    witness: dict | None
    margin: dict | None
    boxes: int
    safety_stop: bool

    def as_dict(self, axes: Sequence[Axis]) -> dict[str, object]:
        """JSON form (DESIGN.md section 5): ranges as exact strings, verdict, witness, margin."""
        return {"ranges": {a.name: [format_fraction(lo), format_fraction(hi)]
                           for a, (lo, hi) in zip(axes, self.ranges, strict=True)},
                "verdict": self.verdict.value, "witness": self.witness, "margin": self.margin,
                "level": self.level, "method": self.method, "reason": self.reason, "boxes": self.boxes}

    def size(self, axes: Sequence[Axis]) -> Fraction:
        """The cell's share of the whole design region."""
        share = Fraction(1)
        for a, (lo, hi) in zip(axes, self.ranges, strict=True):
            share *= (hi - lo) / (a.high - a.low)
        return share


@dataclass(frozen=True, slots=True)
class DesignMap:
    """The answer of :func:`design_map`: the axes and a partition of the design region."""

    axes: tuple[Axis, ...]
    cells: tuple[MapCell, ...]
    resolution: int
    depth: int
    max_cells: int
    max_boxes: int
    decisions: int
    required_margin: Fraction | None = None
    seconds: float = field(default=0.0, compare=False)

    def count(self, verdict: Verdict | str) -> int:
        """Cells with this verdict."""
        return sum(1 for c in self.cells if c.verdict is Verdict(verdict))

    def fraction(self, verdict: Verdict | str) -> Fraction:
        """The share of the design region with this verdict (exact)."""
        return sum((c.size(self.axes) for c in self.cells if c.verdict is Verdict(verdict)), Fraction(0))

    def stable_intervals(self) -> list[tuple[Fraction, Fraction]]:
        """One axis: the proven-stable design intervals, adjacent stable cells merged."""
        if len(self.axes) != 1:
            return []
        merged: list[list[Fraction]] = []
        for cell in sorted(self.cells, key=lambda c: c.ranges):
            if cell.verdict is not Verdict.STABLE:
                continue
            lo, hi = cell.ranges[0]
            if merged and merged[-1][1] == lo:
                merged[-1][1] = hi
            else:
                merged.append([lo, hi])
        return [(lo, hi) for lo, hi in merged]

    def summary(self) -> dict[str, object]:
        """Counts, exact shares of the region, work done and (1-D) the stable intervals."""
        data: dict[str, object] = {"cells": len(self.cells), "decisions": self.decisions,
                                   "boxes": sum(c.boxes for c in self.cells)}
        for verdict in Verdict:
            share = self.fraction(verdict)
            data[verdict.value] = self.count(verdict)
            data[f"{verdict.value}_fraction"] = format_fraction(share)
        data["safety_stop"] = any(c.safety_stop for c in self.cells)
        if len(self.axes) == 1:
            data["stable_intervals"] = [[format_fraction(lo), format_fraction(hi)]
                                        for lo, hi in self.stable_intervals()]
        if self.required_margin is not None:
            outcomes = [c.margin["outcome"] for c in self.cells if c.margin is not None]
            data["margin"] = {"required": format_fraction(self.required_margin),
                              **{o.value: outcomes.count(o.value) for o in Outcome}}
        return data

    def as_dict(self) -> dict[str, object]:
        """JSON form (DESIGN.md section 5): axes, cells, summary, settings."""
        return {"axes": [a.as_dict() for a in self.axes],
                "cells": [c.as_dict(self.axes) for c in self.cells],
                "summary": self.summary(),
                "settings": {"resolution": self.resolution, "depth": self.depth,
                             "max_cells": self.max_cells, "max_boxes": self.max_boxes},
                "seconds": round(self.seconds, 3)}


# -- one cell, on whichever worker --------------------------------------------------------

def _cell_box(family, indices: Sequence[int], ranges: Sequence[tuple[Fraction, Fraction]],
              scale: Fraction | None = None) -> Box:
    """The tolerance box (scaled by ``scale`` about nominal) with the design ranges put in."""
    box = family.box if scale is None else family.box.scaled(family.nominal, scale)
    low, high = list(box.low), list(box.high)
    for i, (lo, hi) in zip(indices, ranges, strict=True):
        low[i], high[i] = lo, hi
    return Box(box.names, tuple(low), tuple(high))


def decide_cell(task: tuple) -> dict:
    """Decide one cell: ``task`` = (family, design indices, exact ranges as strings, boxes per
    decision, safety seconds, required margin as a string or None). Module level, plain out,
    so that any worker can run it (the family travels as allocation's and the yield's do)."""
    family, indices, ranges, max_boxes, max_seconds, required = task
    exact = [(Fraction(lo), Fraction(hi)) for lo, hi in ranges]
    box = _cell_box(family, indices, exact)
    problem = untestable(family, box)
    if problem is not None:
        return {"verdict": "undecided", "method": "validity", "reason": f"not decided: {problem.detail}",
                "witness": None, "margin": None, "boxes": 0, "safety_stop": False}
    result = decide(family, box, max_seconds=max_seconds, max_boxes=max_boxes)
    witness = None
    if result.witness is not None:
        w = result.witness
        witness = {"parameters": {n: format_fraction(v) for n, v in zip(w.names, w.point, strict=True)},
                   "roots": w.roots.as_dict(), "found_by": w.found_by}
    margin = None
    if required is not None and result.verdict is Verdict.STABLE:
        margin = _margin_outcome(family, indices, exact, Fraction(required), max_boxes, max_seconds)
    return {"verdict": result.verdict.value, "method": result.method, "reason": result.reason,
            "witness": witness, "margin": margin, "boxes": result.boxes, "safety_stop": result.safety_stop}


def _margin_outcome(family, indices, ranges, required: Fraction, max_boxes: int, max_seconds: float) -> dict:
    """Is the cell stable with every other tolerance scaled by the required margin? The margin
    rule of every command (:func:`robust.analysis.requirements.decide_margin_over`)."""
    check = decide_margin_over(family, _cell_box(family, indices, ranges, required), required, max_boxes,
                               max_seconds)
    if check.problem is not None:
        reason = check.problem.detail
    elif check.outcome is Outcome.PASS:
        reason = "stable over the cell with the other tolerances scaled by the margin"
    elif check.witness is not None:
        reason = "a verified unstable point in the cell with the other tolerances scaled by the margin"
    else:
        reason = "not decided within the budget"
    return {"required": format_fraction(required), "outcome": check.outcome.value, "reason": reason}


# -- the map ------------------------------------------------------------------------------

def _touch(a: tuple, b: tuple) -> bool:
    """Closed integer boxes ((lo, hi) per axis) meet."""
    return all(alo <= bhi and blo <= ahi for (alo, ahi), (blo, bhi) in zip(a, b, strict=True))


def design_map(case, axes: Sequence[Axis], resolution: int = DEFAULT_RESOLUTION, depth: int = DEFAULT_DEPTH,
               max_cells: int = DEFAULT_MAX_CELLS, max_boxes: int = DEFAULT_CELL_BOXES,
               max_seconds: float = 60.0, workers: int | None = None, cluster: str | None = None,
               progress: Callable[[int], None] | None = None) -> DesignMap:
    """Map the design region of ``axes`` (one or two) into certified cells.

    Parameters
    ----------
    case
        A loaded case (:func:`robust.load_case` or :func:`robust.make_case`).
    axes
        From :func:`parse_axis`.
    resolution
        Cells per axis of the first grid.
    depth
        How many times a cell may be halved.
    max_cells
        Work budget: cell decisions in all (the first grid is always decided).
    max_boxes, max_seconds
        Each decision's work budget and safety stop (:func:`robust.analysis.verdict.decide`).
    workers, cluster
        Where the decisions run (:func:`robust.analysis.executor.run_tasks`).
    progress
        Called with the number of cell decisions finished so far.

    Returns
    -------
    DesignMap
    """
    started = time.perf_counter()
    axes = check_axes(axes)
    indices = tuple(a.index for a in axes)
    required = case.requirements.margin
    fine = resolution * 2 ** depth  # the finest grid, in whose integer units every cell lies

    def exact(corner: tuple) -> tuple[tuple[Fraction, Fraction], ...]:
        return tuple((a.low + (a.high - a.low) * Fraction(lo, fine),
                      a.low + (a.high - a.low) * Fraction(hi, fine))
                     for a, (lo, hi) in zip(axes, corner, strict=True))

    def decide_all(cells: list[tuple[int, tuple]], done_before: int) -> list[dict]:
        tasks = [(case.family, indices,
                  tuple((format_fraction(lo), format_fraction(hi)) for lo, hi in exact(corner)),
                  max_boxes, max_seconds, None if required is None else format_fraction(required))
                 for _, corner in cells]
        report = None if progress is None else (lambda done, _total: progress(done_before + done))
        return runner.run(decide_cell, tasks, progress=report)

    with TaskRunner(workers, cluster) as runner:
        found, decisions = _refine(axes, resolution, depth, max_cells, decide_all)
    cells = tuple(MapCell(exact(corner), lvl, Verdict(r["verdict"]), r["method"], r["reason"], r["witness"],
                          r["margin"], r["boxes"], r["safety_stop"])
                  for (lvl, corner), r in sorted(found.items(), key=lambda item: item[0][1]))
    return DesignMap(axes, cells, resolution, depth, max_cells, max_boxes, decisions, required,
                     time.perf_counter() - started)


def _refine(axes, resolution: int, depth: int, max_cells: int, decide_all) -> tuple[dict, int]:
    """The first grid, then the halvings level by level: (cell -> result, decisions made).
    A cell is (level, integer ranges on the finest grid)."""
    step = 2 ** depth
    grid: list[tuple[int, tuple]] = [(0, ((i * step, (i + 1) * step),)) for i in range(resolution)]
    if len(axes) == 2:
        grid = [(0, (x, (j * step, (j + 1) * step))) for _, (x,) in grid for j in range(resolution)]
    found = dict(zip(grid, decide_all(grid, 0), strict=True))
    decisions = len(grid)
    children = 2 ** len(axes)
    for _round in range(depth):
        stable = [corner for (_, corner), r in found.items() if r["verdict"] == "stable"]
        wanted = [(lvl, corner) for (lvl, corner), r in found.items() if lvl < depth and (
                  r["verdict"] == "undecided"
                  or (r["verdict"] == "unstable" and any(_touch(corner, s) for s in stable)))]
        # undecided first, then unstable, each in the order of position: a fixed order
        wanted.sort(key=lambda cell: (found[cell]["verdict"] != "undecided", cell[1]))
        wanted = wanted[: max(0, (max_cells - decisions) // children)]
        if not wanted:
            break
        new: list[tuple[int, tuple]] = []
        for cell in wanted:
            del found[cell]
            parts: list[tuple] = [()]
            for lo, hi in cell[1]:
                middle = (lo + hi) // 2  # widths are powers of two on the finest grid
                parts = [(*p, s) for p in parts for s in ((lo, middle), (middle, hi))]
            new += [(cell[0] + 1, p) for p in parts]
        found.update(zip(new, decide_all(new, decisions), strict=True))
        decisions += len(new)
    return found, decisions
