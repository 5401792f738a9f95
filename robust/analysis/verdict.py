"""The decision ladder: prove robust stability, refute it with a verified witness, or say
honestly that the budget ran out.

Steps, cheapest first; each is sound on its own:

1. the nominal point (exact Routh array): an unstable nominal is a witness;
2. the interval overbound of the coefficients over the box + Kharitonov's theorem: stable
   proves the family stable (exact when no parameter enters two coefficients);
3. realisation through the dependency graph: a failing Kharitonov vertex (or a coefficient
   bound that breaks the sign condition) that one parameter point produces is a witness;
4. a witness search: box corners, a seeded sample screened in floating point, and a local
   optimisation (scipy) of the worst root's angle, every candidate re-decided exactly;
5. affine families: the edge theorem, each box edge decided exactly (:mod:`robust.analysis.edges`);
6. otherwise box subdivision: each sub-box proven by its own overbound + Kharitonov, or
   split along the parameter that most widens the coefficient intervals; the centre of
   each resisting box is tested exactly, and local searches run on stubborn boxes.

Floats only choose where to look. Every "stable" is a proof in exact arithmetic; every
"unstable" carries a rational parameter point inside the box whose exact Routh array is
not Hurwitz.
"""

from __future__ import annotations

import heapq
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction

import numpy as np

from ..exact.interval import IntervalPolynomial, KharitonovResult, KharitonovVertex, kharitonov_test
from ..exact.numbers import format_fraction, json_float, to_float
from ..exact.polynomials import Bound, as_intervals
from ..exact.routh import RootCounts, is_hurwitz, routh_table
from ..model.display import HtmlDisplay
from ..model.family import Box, UncertainPolynomial
from .edges import box_edges, check_segment
from .outcomes import Verdict
from .progress import tell
from .search import batch_worst_angle, search_witness
from .subbox import Conditions, hurwitz_conditions, try_box

__all__ = [
    "DEFAULT_MAX_BOXES",
    "DEFAULT_MAX_SECONDS",
    "CheckResult",
    "Proof",
    "Witness",
    "check",
    "decide",
]

DEFAULT_MAX_SECONDS = 600.0  # a safety stop only: the work budget is DEFAULT_MAX_BOXES
DEFAULT_MAX_BOXES = 20_000
#: The sub-box test decide() uses when not told (see its ``sub_box_test``); the benchmarks
#: set "overbound" to measure the engine without the Bernstein test through every command.
SUB_BOX_TEST = "auto"
#: Bernstein coefficients the subdivision may keep for boxes waiting their turn (about 40
#: bytes each); beyond it a box's patches are expanded again when it is taken.
MAX_STORED = 1_000_000
#: Above this degree check does not attach the Kharitonov polynomials' full Routh tables.
MAX_TABLE_DEGREE = 40

METHOD_TEXT = {
    "nominal": "nominal point, exact Routh array",
    "kharitonov": "interval overbound of the coefficients + Kharitonov's theorem",
    "kharitonov-vertex": "a Kharitonov vertex realised by one parameter point",
    "coefficient-sign": "a coefficient bound realised by one parameter point (sign condition)",
    "search": "witness search (corners, samples, local optimisation), exact re-check",
    "edges": "edge theorem, every box edge decided exactly",
    "subdivision": "box subdivision, every sub-box proven by Bernstein expansion of its Hurwitz "
                   "conditions or by its interval overbound + Kharitonov",
    "bernstein": "Bernstein expansion of the Hurwitz conditions (a_n, a_0, Delta_(n-1)) over the box",
}

Progress = Callable[[Fraction, int, float], None]


@dataclass(frozen=True, slots=True)
class Witness:
    """A parameter point inside the box where the polynomial is not Hurwitz (exactly)."""

    names: tuple[str, ...]
    point: tuple[Fraction, ...]
    coefficients: tuple[Fraction, ...]
    roots: RootCounts
    found_by: str

    @property
    def parameters(self) -> dict[str, Fraction]:
        """name -> exact value."""
        return dict(zip(self.names, self.point, strict=True))

    def root_values(self) -> list[complex]:
        """The witness polynomial's roots as floats, for display only."""
        largest = max(abs(c) for c in self.coefficients) or 1
        coeffs = [to_float(c / largest) for c in self.coefficients]  # scaled: no overflow
        while coeffs and coeffs[0] == 0:
            coeffs.pop(0)
        with np.errstate(all="ignore"):
            try:
                roots = np.roots(coeffs)
            except np.linalg.LinAlgError:
                return []
        return sorted((complex(r) for r in roots), key=lambda z: -z.real)

    def as_dict(self) -> dict[str, object]:
        """JSON form (DESIGN.md section 5) with extras."""
        return {
            "parameters": {n: format_fraction(v) for n, v in zip(self.names, self.point, strict=True)},
            "parameters_float": {n: json_float(v) for n, v in zip(self.names, self.point, strict=True)},
            "roots": self.roots.as_dict(),
            "coefficients": [format_fraction(c) for c in self.coefficients],
            "root_values": [[z.real, z.imag] for z in self.root_values()],
            "found_by": self.found_by,
        }


@dataclass(frozen=True, slots=True)
class Proof:
    """How the box was proven (all of it for "stable", part of it for "undecided").

    ``nodes`` is the tree of midpoint splits in preorder: ``("split", i)`` halves the current
    box at the midpoint of parameter i and is followed by the lower half's subtree, then the
    upper half's; a leaf is ``("kharitonov",)`` (the leaf's interval overbound has Hurwitz
    Kharitonov polynomials), ``("bernstein", least)`` (every Bernstein coefficient of the
    conditions is positive; ``least`` holds each one's least coefficient) or ``("open",)``
    (not proven). ``point`` is a Hurwitz point of the box; ``fixed`` gives, per Bernstein
    condition (a_n, a_0, Delta_(n-1), signed positive at ``point``), the parameters fixed at
    a value where the condition is least (it is monotone in them over the box).
    """

    nodes: tuple[tuple, ...]
    point: tuple[Fraction, ...]
    fixed: tuple[dict[int, Fraction], ...] = ()

    @property
    def pieces(self) -> int:
        """Leaves of the tree, open ones included."""
        return sum(1 for node in self.nodes if node[0] != "split")


@dataclass(frozen=True, slots=True)
class CheckResult(HtmlDisplay):
    """The answer of :func:`check`.

    Attributes
    ----------
    verdict
        :class:`~robust.analysis.outcomes.Verdict`: stable (proven for every point of the
        box), unstable (``witness`` given) or undecided (budget exhausted; ``unresolved`` and
        ``largest_unproven`` say what is left).
    method
        Short id of the deciding step (see ``METHOD_TEXT``).
    nominal
        Root counts at the nominal point.
    unresolved
        Fraction of the box volume not proven stable (0 when decided).
    """

    verdict: Verdict
    method: str
    kind: str
    nominal: RootCounts
    witness: Witness | None
    unresolved: Fraction
    largest_unproven: Box | None
    boxes: int
    proven_boxes: int
    edges: int
    seconds: float
    overbound: KharitonovResult
    reason: str
    box: Box
    max_depth: int = 0
    vertex_tables: tuple[KharitonovVertex, ...] = field(default=())
    #: True when the wall-clock safety limit stopped the work before its budget: the only
    #: case in which the same input may give another result.
    safety_stop: bool = False
    #: The partition behind "stable" (or the proven part of "undecided"); None after the
    #: edge theorem, whose proof is not a partition (see ``decide(edges=False)``).
    proof: Proof | None = None

    @property
    def method_text(self) -> str:
        """The method in words."""
        return METHOD_TEXT.get(self.method, self.method)

    def as_dict(self) -> dict[str, object]:
        """JSON form: verdict, method, nominal, witness, unresolved (DESIGN.md section 5)."""
        return {
            "verdict": self.verdict.value,
            "method": self.method,
            "method_text": self.method_text,
            "family_class": self.kind,
            "nominal": self.nominal.as_dict(),
            "witness": self.witness.as_dict() if self.witness else None,
            "unresolved": float(self.unresolved),
            "largest_unproven": self.largest_unproven.as_dict() if self.largest_unproven else None,
            "overbound": "stable" if self.overbound.stable else "inconclusive",
            "reason": self.reason,
            "boxes": self.boxes,
            "proven_boxes": self.proven_boxes,
            "edges": self.edges,
            "max_depth": self.max_depth,
            "safety_stop": self.safety_stop,
            "seconds": round(self.seconds, 4),
            "box": self.box.as_dict(),
        }


@dataclass
class _Budget:
    """Work counted in boxes and edges (reproducible); the clock is only a safety stop."""

    max_seconds: float
    max_boxes: int
    start: float = field(default_factory=time.perf_counter)
    boxes: int = 0
    clock_fired: bool = False

    def elapsed(self) -> float:
        return time.perf_counter() - self.start

    @property
    def deadline(self) -> float:
        """When the safety stop fires."""
        return self.start + self.max_seconds

    def exhausted(self) -> bool:
        if self.boxes >= self.max_boxes:
            return True
        if self.elapsed() >= self.max_seconds:
            self.clock_fired = True
        return self.clock_fired


def _interval(family: UncertainPolynomial, box: Box) -> IntervalPolynomial:
    return _interval_of(family.bounds(box))


def _interval_of(bounds: Sequence[Bound]) -> IntervalPolynomial:
    """The interval polynomial of coefficient bounds (the overbound over their box)."""
    return IntervalPolynomial(tuple(b.low for b in bounds), tuple(b.high for b in bounds))


def make_witness(family: UncertainPolynomial, point: Sequence[Fraction], found_by: str,
                  box: Box) -> Witness | None:
    """A verified witness, or None when the point is stable or outside the box."""
    point = tuple(point)
    if not box.contains(point):
        return None
    coeffs = family.coefficients_at(point)
    on_circle = family.on_circle_at(point)  # a root at z = -radius
    if not on_circle and (all(c == 0 for c in coeffs) or is_hurwitz(coeffs) or coeffs[0] == 0):
        return None  # stable, or a degree drop (not a witness by itself)
    # the polynomial as the user wrote it (in z for discrete time), with counts in their terms
    return Witness(family.names, point, family.written_at(point), family.counts_at(point), found_by)


def _realise_ends(family: UncertainPolynomial, box: Box, ends: Sequence[tuple[int, bool]]
                  ) -> tuple[Fraction, ...] | None:
    """One point giving coefficient k its high (True) or low end, for every (k, high) given;
    None when two coefficients ask a shared parameter for different values."""
    intervals = as_intervals(box.intervals)
    derivs = family.derivatives()
    point: dict[int, object] = {}
    for k, high in ends:
        coeff = family.coefficients[k]
        corner = coeff.attaining_point(intervals, high, derivs[k])
        if corner is None:
            return None
        for i in coeff.variables():
            if i in point and point[i] != corner[i]:
                return None
            point[i] = corner[i]
    out = []
    for i, (lo, hi) in enumerate(box.intervals):
        if i in point:
            v = point[i]
            out.append(Fraction(int(v.numerator), int(v.denominator)))
        else:
            out.append(min(max(family.nominal[i], lo), hi))
    return tuple(out)


def _realise_failure(family: UncertainPolynomial, box: Box, kh: KharitonovResult) -> Witness | None:
    """Try to realise what made Kharitonov's test fail on this box."""
    n = family.degree
    fam = kh.family
    flip = fam.high[0] < 0 if fam.degree_invariant else False
    if kh.reason == "degree":
        lead_positive = family.coefficients[0].evaluate(_inside(family, box)) > 0
        point = _realise_ends(family, box, [(0, not lead_positive)])
        return make_witness(family, point, "leading coefficient changes sign", box) if point else None
    if kh.reason == "sign" and kh.failing_coefficient is not None:
        k = kh.failing_coefficient
        point = _realise_ends(family, box, [(k, flip)])
        return make_witness(family, point, f"coefficient of s^{n - k} at its bound", box) if point else None
    for label in kh.failing:
        pattern = fam.pattern(label)
        point = _realise_ends(family, box, [(k, w == "high") for k, w in enumerate(pattern)])
        if point is not None:
            w = make_witness(family, point, f"Kharitonov vertex {label} realised", box)
            if w is not None:
                return w
    return None


def _inside(family: UncertainPolynomial, box: Box) -> tuple[Fraction, ...]:
    nominal = family.nominal
    if box.contains(nominal):
        return nominal
    return box.center


def _split_index(family: UncertainPolynomial, box: Box, kh: KharitonovResult | None = None,
                 directions: Sequence[Sequence[int | None]] | None = None) -> int:
    """The parameter to split: among those the failing Kharitonov vertex asks for both ends
    of their range (or whose direction is mixed) - the source of the overbound's
    conservatism - the one whose width most widens the coefficient intervals (relative)."""
    center = [to_float(x) for x in box.center]
    widths = [to_float(w) for w in box.widths()]
    conflicted = set()
    if kh is not None and kh.failing and directions is not None:
        pattern = kh.family.pattern(kh.failing[0])
        asked: dict[int, set[str]] = {}
        for k, end in enumerate(pattern):
            for i in family.coefficients[k].variables():
                d = directions[k][i]
                if d is None:
                    conflicted.add(i)
                elif d:
                    asked.setdefault(i, set()).add("high" if (end == "high") == (d > 0) else "low")
        conflicted |= {i for i, ends in asked.items() if len(ends) > 1}
    candidates = [i for i in conflicted if widths[i] > 0] or [i for i in range(len(widths)) if widths[i] > 0]
    if len(candidates) == 1:
        return candidates[0]
    values = [abs(c.evaluate_float(center)) for c in family.coefficients]
    scores = dict.fromkeys(candidates, 0.0)
    for k, derivs in enumerate(family.derivatives()):
        scale = values[k] or max(values) or 1.0
        for i in candidates:
            if not derivs[i].is_zero:
                slope = abs(derivs[i].evaluate_float(center))
                # a second-order term keeps a parameter with zero slope at the centre in play
                scores[i] += slope * widths[i] / scale + 1e-12  # a constant, whatever the units
    relative = [w / abs(c) if c else w for w, c in zip(widths, center, strict=True)]  # ties
    return max(candidates, key=lambda i: (scores[i], relative[i]))


def decide(
    family: UncertainPolynomial,
    box: Box | None = None,
    max_seconds: float = DEFAULT_MAX_SECONDS,
    max_boxes: int = DEFAULT_MAX_BOXES,
    progress: Progress | None = None,
    search: bool = True,
    seed: int = 0,
    sub_box_test: str | None = None,
    use_edges: bool = True,
) -> CheckResult:
    """Decide robust Hurwitz stability of ``family`` over ``box`` (default: its own box).

    Parameters
    ----------
    max_seconds, max_boxes
        The budget; when it runs out the verdict is ``"undecided"``.
    progress
        Called now and then with (proven volume fraction, boxes, seconds).
    search
        Run the witness search before subdividing (off for margin bisection, where the
        caller searches itself).
    sub_box_test
        ``"auto"``: the Bernstein test of the Hurwitz conditions on the whole box and in
        subdivision wherever the family's conditions fit (:mod:`.subbox`), the interval
        overbound + Kharitonov elsewhere; ``"overbound"``: the overbound alone (the
        reference the benchmarks compare with); None: ``SUB_BOX_TEST``.
    use_edges
        Try the edge theorem on affine families (False when a partition is wanted as the
        proof: a certificate).
    """
    sub_box_test = sub_box_test or SUB_BOX_TEST
    if sub_box_test not in ("auto", "overbound"):
        raise ValueError(f"sub_box_test must be 'auto' or 'overbound', not {sub_box_test!r}")
    tell("decision")  # progress for whoever listens (the command line); no effect on the result
    box = box or family.box
    budget = _Budget(max_seconds, max_boxes)
    kind = family.kind
    start_point = _inside(family, box)
    nominal_coeffs = family.coefficients_at(start_point)
    nominal_table = routh_table(list(nominal_coeffs)) if any(nominal_coeffs) else None
    nominal_roots = family.counts_at(start_point)  # in the user's terms (the circle for z)
    kh = kharitonov_test(_interval(family, box))

    def result(verdict: str, method: str, witness: Witness | None = None, unresolved=Fraction(0),
               largest: Box | None = None, reason: str = "", proven: int = 0, edges: int = 0,
               depth: int = 0, proof: Proof | None = None) -> CheckResult:
        if budget.clock_fired and verdict == Verdict.UNDECIDED:
            reason += "; stopped by the wall-clock safety limit before the work budget was used"
        return CheckResult(Verdict(verdict), method, kind, nominal_roots, witness, unresolved, largest,
                           budget.boxes, proven, edges, budget.elapsed(), kh, reason, box, depth,
                           safety_stop=budget.clock_fired, proof=proof)

    # in z, the image losing its degree at the nominal point is a root at z = -1: on the circle
    if nominal_table is None or not nominal_table.is_hurwitz or (family.source and nominal_coeffs[0] == 0):
        w = make_witness(family, start_point, "nominal point", box)
        if w is not None:
            return result("unstable", "nominal", w, reason="the nominal design is not stable")
        return result("undecided", "nominal", unresolved=Fraction(1), largest=box,
                      reason="the nominal polynomial drops degree")
    if kh.stable:
        exact = family.structure == "independent"
        return result("stable", "kharitonov",
                      reason="the Kharitonov polynomials of the coefficient overbound are Hurwitz"
                      + (" (exact: no parameter enters two coefficients)" if exact else ""),
                      proof=Proof((("kharitonov",),), start_point))
    w = _realise_failure(family, box, kh)
    if w is not None:
        method = "kharitonov-vertex" if kh.reason == "vertex" else "coefficient-sign"
        return result("unstable", method, w, reason=f"{w.found_by}: not Hurwitz")
    conditions = (hurwitz_conditions(family, start_point, box)
                  if sub_box_test == "auto" and family.structure != "independent" else None)
    if conditions is not None:
        budget.boxes += 1
        test = try_box(conditions, family, box)
        if test.status == "proven":
            return result("stable", "bernstein", reason="a_n, a_0 and Delta_(n-1) are positive over "
                          "the whole box (every Bernstein coefficient) and one point is Hurwitz",
                          proof=Proof((("bernstein", test.least),), start_point, conditions.fixed))
        if test.point is not None:
            w = make_witness(family, test.point, f"box corner where the {test.failing} fails", box)
            if w is not None:
                return result("unstable", "bernstein", w, reason=f"{w.found_by}: not Hurwitz")
    if search:
        # the safety stop bounds the search too (and, when it cuts it, is reported as such)
        found = search_witness(family, box, seed=seed, max_corners=64, deadline=budget.deadline)
        budget.exhausted()
        if found is not None:
            w = make_witness(family, found[0], found[1], box)
            if w is not None:
                return result("unstable", "search", w, reason=f"{w.found_by}: not Hurwitz")
    if kh.reason == "degree":
        lead = family.bounds(box)[0]
        if lead.exact and 0 in (lead.low, lead.high):
            return result("undecided", "nominal", unresolved=Fraction(1), largest=box,
                          reason="the leading coefficient reaches zero inside the box without "
                          "changing sign: the degree drops there, so robust stability of a "
                          "fixed-degree family cannot hold or be refuted by a rational witness")
    if use_edges and family.structure == "affine" and kh.reason != "degree":
        edge_result = _check_edges(family, box, budget)
        if edge_result is not None:
            verdict, witness, count, note = edge_result
            if verdict == "stable":
                return result("stable", "edges", edges=count,
                              reason=f"all {count} box edges are Hurwitz segments")
            if verdict == "unstable":
                return result("unstable", "edges", witness, edges=count,
                              reason=f"{witness.found_by}: not Hurwitz")
            if note:
                return result("undecided", "edges", unresolved=Fraction(1), largest=box,
                              edges=count, reason=note)
    return _subdivide(family, box, budget, progress, result, seed, conditions,
                      local_search=search or conditions is None, start_point=start_point)


def _check_edges(family: UncertainPolynomial, box: Box, budget: _Budget):
    """Edge theorem; None when the edges are too many for the budget."""
    free = [i for i, (a, b) in enumerate(box.intervals) if b > a]
    count = len(free) * 2 ** max(len(free) - 1, 0)
    if count > budget.max_boxes or len(free) > 16:
        return None
    corners = []
    for v in range(2 ** len(free)):
        point = list(box.low)
        for bit, i in enumerate(free):
            if v >> bit & 1:
                point[i] = box.high[i]
        corners.append(tuple(point))
    coeffs = [family.coefficients_at(p) for p in corners]
    for i, (a, b) in enumerate(box_edges(len(corners), free)):
        if budget.exhausted():
            return None
        budget.boxes += 1
        seg = check_segment(coeffs[a], coeffs[b])
        if seg.stable:
            continue
        if seg.witness_l is None:
            return ("undecided", None, i + 1,
                    "an edge touches the stability boundary only at irrational points "
                    "(marginal family); no rational witness exists there")
        lam = seg.witness_l
        point = tuple((1 - lam) * x + lam * y for x, y in zip(corners[a], corners[b], strict=True))
        w = make_witness(family, point, f"point on a box edge ({seg.crossing} crossing)", box)
        if w is not None:
            return ("unstable", w, i + 1, "")
    return ("stable", None, count, "")


def worst_root_angle_many(family: UncertainPolynomial, points: Sequence[Sequence[Fraction]]) -> np.ndarray:
    """Float screening scores (positive: unstable) at many points; guidance only."""
    array = np.array([[to_float(x) for x in p] for p in points])
    return batch_worst_angle(family.coefficients_float(array))


def _subdivide(family, box: Box, budget: _Budget, progress: Progress | None, result, seed: int,
               conditions: Conditions | None = None, local_search: bool = True,
               start_point: tuple[Fraction, ...] = ()):
    """Branch and bound over sub-boxes, largest first. Each sub-box is proven by the
    Bernstein test of the Hurwitz conditions when the family has them (:mod:`.subbox`),
    else by its own overbound + Kharitonov; what resists is split along the parameter the
    test blames, after its centre (and what the test points at) is tried as a witness."""
    heap: list[tuple[Fraction, int, Box, int, object]] = [(-Fraction(1), 0, box, 0, None)]
    counter = 1
    proven_volume = Fraction(0)
    proven = 0
    max_depth = 0
    last_report = time.perf_counter()
    searched_depths: set[int] = set()
    stored = 0  # Bernstein coefficients held by the boxes waiting in the heap
    tree: dict[int, tuple] = {}  # entry number -> ("split", i, lower, upper) or a proven leaf
    while heap:
        if budget.exhausted():
            break
        neg_vol, number, sub, depth, known = heapq.heappop(heap)
        budget.boxes += 1
        max_depth = max(max_depth, depth)
        if conditions is not None:
            if known is not None:
                stored -= _patch_size(known)
            test = try_box(conditions, family, sub, known)
            ok, kh, directions, blame, inherit = (test.status == "proven", None, None, test.blame,
                                                  test.patches)
            pointed = test.point
        else:
            bounds, directions = family.bounds_and_directions(sub, known)
            kh = kharitonov_test(_interval_of(bounds))
            ok, blame, inherit, pointed = kh.stable, None, directions, None
        if ok:
            proven_volume += -neg_vol
            proven += 1
            tree[number] = ("bernstein", test.least) if conditions is not None else ("kharitonov",)
        else:
            center = sub.center
            w = None
            if pointed is not None:
                w = make_witness(family, pointed, "corner of a sub-box where a stability condition fails",
                                 box)
            if w is None and worst_root_angle_many(family, [center])[0] > -1e-6:
                w = make_witness(family, center, "centre of a sub-box", box)
            if w is None and kh is not None and kh.reason in ("sign", "degree", "vertex"):
                w = _realise_failure(family, sub, kh)
            if w is None and local_search and depth >= 4 and depth % 4 == 0 and depth not in searched_depths:
                searched_depths.add(depth)
                found = search_witness(family, sub, seed=seed + depth, samples=64, local=2,
                                       deadline=budget.deadline)
                if found is not None:
                    w = make_witness(family, found[0], found[1] + " (sub-box)", box)
            if w is not None:
                return result("unstable", "subdivision", w, reason=f"{w.found_by}: not Hurwitz",
                              proven=proven, depth=max_depth)
            i = blame if blame is not None else _split_index(family, sub, kh, directions)
            halves = sub.split(i)
            if conditions is not None:
                # de Casteljau: the halves' patches without a new expansion, while the patches
                # waiting in the heap stay within MAX_STORED coefficients (else re-expanded)
                size = _patch_size(inherit)
                if stored + 2 * size <= MAX_STORED:
                    parts = tuple(zip(*(patch.halves(i) for patch in inherit), strict=True))
                    stored += 2 * size
                else:
                    parts = (None, None)
            else:
                parts = (inherit, inherit)
            tree[number] = ("split", i, counter, counter + 1)
            for half, part in zip(halves, parts, strict=True):
                # midpoint splits halve the volume exactly
                heapq.heappush(heap, (neg_vol / 2, counter, half, depth + 1, part))
                counter += 1
        now = time.perf_counter()
        if progress is not None and now - last_report > 0.5:
            progress(proven_volume, budget.boxes, budget.elapsed())
            last_report = now
    how = ("its Hurwitz conditions proven positive by Bernstein expansion" if conditions is not None
           else "its own overbound + Kharitonov")
    proof = Proof(_preorder(tree), start_point, conditions.fixed if conditions is not None else ())
    if not heap:
        return result("stable", "subdivision", proven=proven, depth=max_depth, proof=proof,
                      reason=f"{proven} sub-boxes, each proven by {how}")
    unresolved = 1 - proven_volume
    # among the largest boxes left, name the one whose centre is closest to instability
    top = [entry for entry in heap if entry[0] == heap[0][0]][:256]
    scores = worst_root_angle_many(family, [entry[2].center for entry in top])
    largest = top[int(np.argmax(scores))][2]
    return result("undecided", "subdivision", unresolved=unresolved, largest=largest,
                  proven=proven, depth=max_depth, proof=proof,
                  reason=f"budget exhausted after {budget.boxes} boxes; "
                  f"{float(unresolved):.3%} of the box volume is unproven")


def _preorder(tree: dict[int, tuple]) -> tuple[tuple, ...]:
    """The split tree from entry 0 in preorder; entries never taken from the heap are open."""
    out: list[tuple] = []
    stack = [0]
    while stack:
        node = tree.get(stack.pop(), ("open",))
        if node[0] == "split":
            out.append(("split", node[1]))
            stack += [node[3], node[2]]  # the lower half comes out first
        else:
            out.append(node)
    return tuple(out)


def _patch_size(patches) -> int:
    return sum(patch.tensor.size for patch in patches)


def check(
    case_or_family,
    max_seconds: float = DEFAULT_MAX_SECONDS,
    max_boxes: int = DEFAULT_MAX_BOXES,
    progress: Progress | None = None,
    seed: int = 0,
) -> CheckResult:
    """Decide whether a case (or family) is stable for every parameter set in its box.

    Returns a :class:`CheckResult`; the vertex tables of the overbound are attached for
    the certificate.

    Examples
    --------
    >>> import robust
    >>> result = robust.check(robust.load_case("cases/thermal_pi_affine.toml"))
    >>> result.verdict.value
    'stable'
    """
    family = getattr(case_or_family, "family", case_or_family)
    res = decide(family, family.box, max_seconds, max_boxes, progress, True, seed)
    # the four full tables are for people to read: beyond a degree where nobody reads them
    # they would cost more than the decision itself (degree 200: 20 s), so they are left out
    if not res.overbound.family.degree_invariant or family.degree > MAX_TABLE_DEGREE:
        return res
    from dataclasses import replace

    tables = kharitonov_test(res.overbound.family, tables=True, reduced=False)
    return replace(res, vertex_tables=tables.vertices)

