"""What the report says, in order, as neutral blocks (no markup here).

Order: the job and the case; the parameters; the polynomial and its coefficients; the
verdict and its certificate (or witness); margins and requirements; the ranking; the
yield; the figures; the cautions; the record (version, date, case checksum, settings).
"""

from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction
from pathlib import Path
from typing import Any

from ..analysis.certificate import digest
from ..analysis.criteria import REQUIREMENT_OF, Criterion
from ..analysis.margin import MarginResult
from ..analysis.outcomes import Outcome, Verdict
from ..analysis.rank import RankResult
from ..analysis.requirements import RequirementCheck
from ..analysis.signoff import Analysis
from ..analysis.verdict import CheckResult
from ..exact.numbers import approx_text
from ..model.graph import build_graph
from .blocks import (
    Badge,
    Cell,
    Code,
    Document,
    Figure,
    ItemList,
    Num,
    Paragraph,
    Preformatted,
    Section,
    Table,
)
from .certificate import certificate_section, undecided_blocks, witness_section
from .fmt import bound_text, criterion_ends, units_of, with_unit
from .text import margin_reading

__all__ = ["CAUTIONS", "JOB_LINE", "build_document", "margins_section", "outcome", "parameters_section",
           "ranking_section", "rerun_command", "verdict_blocks"]

JOB_LINE = ("robust proves, in exact arithmetic, that a feedback loop's characteristic polynomial is "
            "stable for every combination of parameter values inside their tolerances, or refutes it "
            "with a verified counterexample.")

#: DESIGN.md section 7, in our words.
CAUTIONS = (
    "A verdict covers only the polynomial that was modelled. Unmodelled dynamics, delays, saturation, "
    "nonlinearity, time variation, ageing, and temperatures outside the stated ranges are not covered.",
    "Stability is necessary for a safe loop, not sufficient.",
    "Safety-relevant designs are signed off under the applicable standards by qualified engineers. "
    "This report supports that review; it does not replace it.",
)


_CORRELATED = ("the interval overbound of the coefficients is sound but may be conservative; the "
               "Bernstein test of the Hurwitz conditions works on the parameters themselves and keeps "
               "that correlation (box subdivision refines both)")
_KIND_TEXT = {
    "independent": "each parameter enters one coefficient only, so the interval "
                   "overbound of the coefficients is exact and Kharitonov's theorem decides the family",
    "affine": "every coefficient is affine in the parameters (a polytope of polynomials; "
              "the edge theorem can decide it exactly)",
    "multilinear": "each coefficient is affine in each parameter separately; " + _CORRELATED,
    "polynomial": "parameters enter with powers; " + _CORRELATED,
    "rational": "a denominator that keeps one sign over the box was cleared; " + _CORRELATED,
}

def _badge(outcome: Outcome, key: str = "") -> Badge:
    return Badge(outcome.word, outcome.value, key, outcome.passed)


def _requirement_results(analysis: Analysis) -> list[tuple[str, Fraction, Outcome]]:
    """(name, required, outcome) per requirement of the case: the outcomes of the margin
    search, which applies the one pass/fail rule to the direct decision and the bracket."""
    return list(analysis.margin.outcomes())


def rerun_command(analysis: Analysis, case_path: str | None = None) -> str:
    """The exact command that reproduces a report (same work budget, draws and seed)."""
    s = analysis.settings
    return (f"robust report {case_path or analysis.case.path} -o DIR --max-boxes {s.max_boxes} "
            f"--search-boxes {s.search_boxes} --search-tests {s.search_tests} "
            f"--max-seconds {s.max_seconds:g} --draws {s.yield_draws} --seed {s.seed}")


def outcome(analysis: Analysis) -> tuple[str, str]:
    """The sign-off outcome: ("pass" | "fail" | "open", one sentence)."""
    verdict = analysis.check.verdict
    if verdict == Verdict.UNSTABLE:
        return "fail", "The design FAILS: it is not stable over the whole tolerance box."
    if verdict == Verdict.UNDECIDED:
        return "open", "No sign-off: robust stability could not be decided within the budget."
    results = [(name, result) for name, _, result in _requirement_results(analysis)]
    failed = [name for name, result in results if result is Outcome.FAIL]
    open_ = [name for name, result in results if result is Outcome.OPEN]
    if failed:
        return "fail", ("The design is robustly stable but FAILS its requirement(s): "
                        + ", ".join(failed) + ".")
    if open_:
        return "open", ("The design is robustly stable; requirement(s) " + ", ".join(open_)
                        + " could not be decided within the budget.")
    if results:
        return "pass", "The design PASSES: robustly stable, and every requirement is met."
    return "pass", "The design PASSES: robustly stable over the whole tolerance box (no requirements set)."


def _header(analysis: Analysis) -> Section:
    case = analysis.case
    kind, sentence = outcome(analysis)
    blocks: list = [Paragraph((JOB_LINE,), "lead"),
                    Paragraph((case.title,), "title")]
    if case.summary:
        blocks.append(Paragraph((case.summary,)))
    blocks.append(Paragraph(("Case file: ", Code(case.path)), "note"))
    blocks.append(Paragraph((Badge({"pass": "PASS", "fail": "FAIL", "open": "OPEN"}[kind], kind), " ",
                             sentence), "outcome"))
    return Section("Stability sign-off report", tuple(blocks), anchor="top")


def parameters_section(case) -> Section:
    """The case's parameters: nominal, range, tolerance as written, unit, distribution, note."""
    rows = []
    for p in case.parameters:
        rows.append((Cell((p.name,), mono=True), Cell((approx_text(p.nominal),), numeric=True),
                     Cell((f"{approx_text(p.low)} … {approx_text(p.high)}",), numeric=True),
                     Cell((p.tolerance,)), Cell((p.unit,)), Cell((p.distribution,)), Cell((p.note,))))
    table = Table(("name", "nominal", "range", "tolerance", "unit", "distribution", "note"), tuple(rows))
    return Section("Parameters", (table, Paragraph(
        ("Values are exact rationals from their decimal text; shown here to six digits. "
         "A normal distribution takes the tolerance as three standard deviations, clipped to the range. ",
         _units_checked(case)),
        "note")), anchor="parameters")


def _units_checked(case) -> str:
    """What the dimension check covered: every parameter, some (naming the others), or none."""
    without = [p.name for p in case.parameters if not p.unit.strip()]
    if len(without) == len(case.parameters):
        return "No parameter has a unit, so the formulas were not checked for dimension."
    if not without:
        return ("Every parameter has a unit: every sum of the formulas was checked for one dimension "
                "and scale.")
    return ("The formulas were checked for one dimension and scale in every sum, except the terms holding "
            "these parameters without a unit: " + ", ".join(without) + ".")


def _polynomial(analysis: Analysis) -> Section:
    case = analysis.case
    family = case.family
    graph = build_graph(family)
    written = case.written
    bounds = family.bounds()
    rows = []
    for k, (formula, b) in enumerate(zip(family.formulas(), bounds, strict=True)):
        power = family.degree - k
        deps = [f"{param[1]} ({graph.edges[param, ('coefficient', power)]['direction']})"
                for param in graph.predecessors(("coefficient", power))]
        rows.append((Cell((f"a{power}",), mono=True), Cell((formula,), mono=True),
                     Cell((f"{approx_text(b.low)} … {approx_text(b.high)}",), numeric=True),
                     Cell(("exact" if b.exact else "outer",)), Cell((", ".join(deps) or "constant",))))
    blocks: list = [
        Paragraph((f"As written in the case file (variable {case.variable}):",)),
        Preformatted(written),
        *_discrete_blocks(case),
        Paragraph((f"Degree {family.degree}. The coefficients as robust holds them, highest power first, "
                   "with their range over the tolerance box. Denominators are cleared and the whole "
                   "polynomial may be scaled by a constant factor; neither moves the roots.",)),
        Table(("coefficient", "formula in the parameters", "range over the box", "bound", "driven by"),
              tuple(rows)),
        Paragraph(("Family class: ", Code(family.kind),
                   " — " + _KIND_TEXT.get(family.kind, family.kind) + ".")),
        Paragraph(("Direction (+, −, mixed): how the coefficient moves as the parameter grows, over the "
                   "whole box. An outer bound may be wider than the true range; it is still safe to use.",),
                  "note"),
    ]
    if family.cleared:
        blocks.append(Paragraph(("Cleared factor (keeps one sign over the box): ", Code(family.cleared)),
                                "note"))
    return Section("Characteristic polynomial", tuple(blocks), anchor="polynomial")


def _discrete_blocks(case) -> list:
    """For a polynomial in z: the characteristic polynomial as written, and how its
    stability (every root inside the unit circle) is decided."""
    family = case.family
    if not family.discrete:
        return []
    z, n = case.variable, len(family.written) - 1
    terms = "\n".join(f"{z}^{n - k}: {c.to_text(family.names)}" for k, c in enumerate(family.written))
    return [
        Paragraph((f"The characteristic polynomial in {z}, its coefficients highest power first:",)),
        Preformatted(terms),
        Paragraph((f"Discrete time: the loop is stable when every root in {z} lies strictly "
                   "inside the unit circle. robust decides that exactly on the bilinear image "
                   f"w = ({z} − 1)/({z} + 1), which maps the inside of the circle onto the open left "
                   "half-plane. The table below lists the coefficients of that polynomial in w (multiplied "
                   f"by (1 − w)^{n} to clear the denominators) with their ranges over the tolerance box.",)),
    ]


def verdict_blocks(result: CheckResult) -> list:
    """The check's verdict, method, reason, nominal roots and the work it took (no evidence)."""
    blocks: list = [
        Paragraph((Badge(result.verdict.headline, result.verdict.outcome.value, "check.verdict",
                         result.verdict.value),),
                  "outcome"),
        Paragraph(("Method: " + result.method_text + ".",)),
        Paragraph(("Why: " + result.reason + ".",)),
        Paragraph((f"Nominal design: roots {result.nominal.words}.",)),
    ]
    if result.method == "subdivision" and result.verdict == "stable":
        blocks.append(Paragraph((f"Subdivision: {result.proven_boxes} sub-boxes proven (of {result.boxes} "
                                 f"examined), depth up to {result.max_depth}.",)))
    if result.method == "edges":
        blocks.append(Paragraph((f"Edges: {result.edges} segments decided exactly.",)))
    if result.verdict == "undecided":
        blocks += undecided_blocks(result)
    blocks.append(Paragraph((f"Time: {result.seconds:.2f} s.",), "note"))
    return blocks


def _verdict(analysis: Analysis, folder: str = "DIR") -> Section:
    case, result = analysis.case, analysis.check
    blocks = verdict_blocks(result)
    proof = analysis.certificate
    sha = digest(proof) if proof is not None else ""
    command = f"robust verify {Path(folder) / 'certificate.json'} --case {case.path}" if proof else ""
    blocks.append(certificate_section(result, case.family.degree, proof, sha, command))
    if result.witness is not None:
        blocks.append(witness_section(case, result.witness))
    return Section("Verdict", tuple(blocks), anchor="verdict")


def _bracket_parts(bracket, json_bracket: dict, key: str) -> tuple:
    lower = Num(bound_text(bracket.lower, upward=False), json_bracket["lower"], key + ".lower")
    if bracket.upper is None:
        return ("at least ", lower)
    upper = Num(bound_text(bracket.upper, upward=True), json_bracket["upper"], key + ".upper")
    return ("[", lower, ", ", upper, "]")


def margins_section(m: MarginResult, direct: Sequence[RequirementCheck] = (), safety_stop: bool = False,
                    verdict: Verdict | None = None) -> Section:
    """The margin search's brackets, what ends them and the requirements; ``direct`` holds the
    requirements decided directly, ``verdict`` the check's (None: not known here)."""
    data: dict[str, Any] = m.as_dict()
    requirements = {name: (required, result) for name, required, result in m.outcomes()}
    rows = []

    def row(label: str, bracket, json_bracket: dict, key: str, name: str, unit: str = "") -> tuple:
        exact = bracket.exact or ""
        if exact and bracket.decimal:
            exact = f"{exact} = {bracket.decimal}" if len(exact) <= 60 else f"≈ {bracket.decimal}"
        if name in requirements:
            required, result = requirements[name]
            asked = Cell((with_unit(f"≥ {approx_text(required)}", unit),), numeric=True)
            verdict = Cell((_badge(result),))
        else:
            asked, verdict = Cell(("none",)), Cell(("-",))
        shown = _bracket_parts(bracket, json_bracket, key) + ((" " + unit,) if unit else ())
        return (Cell((label,)), Cell(shown, numeric=True),
                Cell((exact or "-",), mono=bool(exact)), asked, verdict)

    rows.append(row("robust margin ρ*: scale of every tolerance about nominal", m.margin,
                    data["margin"], "margin.margin", "margin"))
    if m.decay is not None:
        rows.append(row("decay-rate margin σ*: every root has Re s < −σ, 1/s", m.decay.bracket,
                        data["decay_rate"], "margin.decay_rate", "decay_rate", "1/s"))
    rows += [_criterion_row(c, data, requirements) for c in m.criteria]
    blocks: list = [Table(("quantity", "certified bracket", "exact value", "requirement", "outcome"),
                          tuple(rows)),
                    Paragraph(("A certified bracket [lower, upper]: the family is proven stable at the "
                               "lower end; the upper end holds a verified witness, or is the scale at "
                               "which the scaled box stops standing for the hardware (a part at its "
                               "physical limit, a lost order, a divided-out factor at zero). Shown values "
                               "are rounded outwards.",), "note")]
    units = units_of(m)
    items: list = [("What ends ρ*: " + m.limit.sentence(units=units) + ".",),
                   (margin_reading(m.margin, m.limit),),
                   (f"Method: {m.method}.",)]
    if m.margin.note:
        items.append((f"Margin note: {m.margin.note}.",))
    if m.decay is not None:
        settle = m.decay.settling_time()
        if settle is not None:
            items.append((f"Worst-case 2 % settling time about 4/σ = {settle:.4g} s (rule of thumb).",))
        if m.decay.bracket.note:
            items.append((f"Decay-rate note: {m.decay.bracket.note}.",))
    if m.margin.witness is not None:
        pts = ", ".join(f"{n} = {with_unit(approx_text(v, 6), units.get(n, ''))}"
                        for n, v in m.margin.witness.parameters.items())
        items.append(("Witness just beyond the margin: " + pts + ".",))
    for r in direct:
        items.append((f"Decided directly: {r.wording}: ", _badge(r.outcome))
                     + ((f" ({r.problem.detail})",) if r.problem is not None else ()))
    if safety_stop:
        items.append(("The wall-clock safety limit cut a search short: a re-run on another machine "
                      "may give other brackets.",))
    if not direct and requirements and verdict is not None and verdict != Verdict.STABLE:
        items.append(("Requirements were not decided directly because the design is not robustly "
                      "stable; the outcome above comes from the brackets.",))
    blocks.append(ItemList(tuple(items)))
    if m.criteria:
        blocks += _criteria_notes(m.criteria, units)
    return Section("Margins and requirements", tuple(blocks), anchor="margins")


def _criterion_key(criterion: Criterion) -> tuple[str, ...]:
    """Where a criterion's object sits in result.json's margin (the lowered gain margin is
    held inside the raised one's)."""
    if criterion.measure.name == "gain_margin_db_lower_direction":
        return ("gain_margin_db", "lower_direction")
    return (criterion.measure.name,)


def _criterion_row(criterion: Criterion, data: dict[str, Any],
                   requirements: dict[str, tuple[Fraction, Outcome]]) -> tuple:
    """One criterion: its certified bracket in its unit, rounded outwards, and the outcome
    of the requirement that asks it (from :meth:`MarginResult.outcomes`)."""
    path = _criterion_key(criterion)
    node: Any = data
    for part in path:
        node = node[part]
    key = "margin." + ".".join(path)
    low, high = criterion_ends(criterion)
    unit = f" {criterion.measure.unit}" if criterion.measure.unit else ""
    if low is None:
        parts: tuple = ("at most ", Num(high or "-", node["upper"], key + ".upper"), unit)
    elif high is None:
        parts = ("at least ", Num(low, node["lower"], key + ".lower"), unit)
    else:
        parts = ("[", Num(low, node["lower"], key + ".lower"), ", ", Num(high, node["upper"], key + ".upper"),
                 "]" + unit)
    label = criterion.measure.words + (f", {criterion.measure.unit}" if criterion.measure.unit else "")
    name = REQUIREMENT_OF[criterion.measure.name]
    if name in requirements:
        required, result = requirements[name]
        sign = "≤" if criterion.measure.smaller_is_better else "≥"
        both = " (raised and lowered)" if name == "gain_margin_db" else ""
        asked = Cell((f"{sign} {approx_text(required)}{unit}{both}",), numeric=True)
        verdict = Cell((_badge(result),))
    else:
        asked, verdict = Cell(("none",)), Cell(("-",))
    return (Cell((label,)), Cell(parts, numeric=True), Cell(("-",)), asked, verdict)


def _criteria_notes(criteria: Sequence[Criterion], units: dict[str, str]) -> list:
    """What limits each criterion (its witness, each value with its unit), and the reading of
    the criteria's brackets."""
    limits: list = []
    for criterion in criteria:
        limit = criterion.limit_text(units)
        if limit:
            limits.append((f"{criterion.measure.words.capitalize()} limited by: {limit}.",))
        note = "; ".join(x for x in (criterion.bracket.note, criterion.note) if x)
        if note:
            limits.append((f"{criterion.measure.words.capitalize()} note: {note}.",))
    blocks: list = [Paragraph((
        "Criteria: each bracket holds for every parameter point of the tolerance box. The guaranteed "
        "end (the lower end; for the spectral radius the upper end, every root inside that circle) is "
        "proven; the other end holds a verified witness, the parameter point named below with the extra "
        "loop gain or phase lag, or the sector or circle, at which it fails. A gain margin requirement "
        "asks both directions, the gain raised and lowered; its outcome is shown on both rows.",), "note")]
    if limits:
        blocks.append(ItemList(tuple(limits)))
    return blocks


def _rank_bracket(bracket, limit) -> str:
    if bracket.upper is None:
        return f"≥ {bound_text(bracket.lower, upward=False, digits=5)}"
    lo = bound_text(bracket.lower, upward=False, digits=5)
    hi = bound_text(bracket.upper, upward=True, digits=5)
    text = lo if lo == hi else f"{lo} … {hi}"
    ends = {"physical_limit": " (limit)", "degree_loss": " (order lost)", "denominator": " (factor at 0)"}
    return text + ends.get(limit.kind.value, "") + ("" if limit.proven else " ?")


def ranking_section(r: RankResult, figure: bool = True) -> Section:
    """The parameters, most critical first, with their margins (and the bar chart's place)."""
    failing = r.robustly_stable is False
    rows = []
    for i, p in enumerate(r.parameters, start=1):
        acts = ", ".join(f"a{power} ({d})" for power, d in p.coefficients) or "-"
        cells = [Cell((str(i),), numeric=True), Cell((p.name,), mono=True), Cell((p.unit or "-",)),
                 Cell((p.tolerance,)),
                 Cell((_rank_bracket(p.margin_alone, p.limit_alone),), numeric=True),
                 Cell((_rank_bracket(p.margin_given_others, p.limit_given_others),), numeric=True),
                 Cell((acts,))]
        if failing:
            if p.restores:
                cells.append(Cell((f"scale to ≤ {approx_text(p.tightened or 0, 4)}",)))
            elif p.restores is False:
                cells.append(Cell(("does not help alone",)))
            else:
                cells.append(Cell(("-",)))
        rows.append(tuple(cells))
    header = ["rank", "parameter", "unit", "tolerance", "margin alone", "margin, others full", "acts through"]
    if failing:
        header.append("tightening this part alone")
    blocks: list = [
        Table(tuple(header), tuple(rows)),
        Paragraph(("Margins are scales of that one tolerance (ratios, without unit): alone = the others at "
                   "nominal; others full = the others over their whole range. 1 means the tolerance as "
                   "given; ≥ means stable up to the value shown (no failure found before the cap). Parts "
                   "marked (limit), (order lost) or (factor at 0) never make a root cross on their own: "
                   "their margin ends where the model stops standing for the hardware, and they are ranked "
                   "after the parts that cross; "
                   "? marks an end not proven within the work budget.",), "note"),
    ]
    if figure:
        blocks.append(Figure("ranking", "Per-parameter margins; the dashed line at 1 is the tolerance "
                             "as given. Bars longer than the axis are cut, with their value written "
                             "beside them.", "bar chart of per-parameter margins"))
    return Section("Parameter ranking (most critical first)", tuple(blocks), anchor="ranking")


def _yield(analysis: Analysis) -> Section:
    y = analysis.yield_result
    data = y.as_dict()
    lo, hi = y.interval
    blocks: list = [
        Paragraph((f"{y.stable} of {y.draws} random builds are stable: yield ",
                   Num(f"{y.fraction:.2%}", data["yield"], "yield.yield"),
                   f" ({y.confidence:.0%} Clopper-Pearson interval {lo:.2%} … {hi:.2%}; seed {y.seed}; "
                   f"{y.exact_rechecks} unclear float decision(s) re-checked exactly).")),
    ]
    if y.unstable_ranges:
        blocks.append(Paragraph(("Parameter ranges of the unstable draws:",)))
        units = units_of(analysis.case)
        blocks.append(ItemList(tuple((Code(n), ": " + with_unit(f"{a:.6g} … {b:.6g}", units.get(n, "")))
                                     for n, a, b in y.unstable_ranges)))
    blocks.append(Paragraph(("A yield estimate is no proof: the verdict above is the worst case.",), "note"))
    return Section("Monte Carlo yield", tuple(blocks), anchor="yield")


def _figures(analysis: Analysis) -> Section:
    interval = analysis.case.family.structure == "independent"
    inside = ("Here the family is an interval family, so the rectangle is the family's own value set: "
              "a rectangle that contains the origin shows a member with a root on the imaginary axis at "
              "that frequency." if interval else
              "For this family the rectangle is an overbound of the true value set: it may contain the "
              "origin although no member has a root at that frequency (that is when box subdivision takes "
              "over).")
    value_set = Figure(
        "value_set",
        "(a) Value set at several frequencies ω around the nominal roots' magnitudes. Hatched: the values "
        "p(jω) of the interval overbound of the coefficients, a rectangle with the four Kharitonov "
        "polynomials at its corners (K1 … K4). Dots: p(jω) of randomly drawn members, which always lie in "
        "it. Zero exclusion: the loop is robustly stable when the origin stays outside every rectangle "
        "for all ω and one member is stable. Each panel is scaled so that the rectangle fills [−1, 1] in "
        "both directions; the origin is given in the same units. " + inside,
        "value set rectangles and sampled points per frequency")
    cloud = _root_cloud_figure(analysis)
    loop = _loop_figure(analysis)
    graph = Figure(
        "dependency_graph",
        "(d) Which parameter drives which coefficient. Solid: the coefficient grows with the parameter "
        "over the whole box; dashed: it falls; dotted: mixed.",
        "dependency graph parameters to coefficients")
    partition = Figure(
        "partition",
        "(e) The proof's partition of the box (certificate.json), projected on the two parameters split "
        "most: each rectangle is a piece (overlapping where pieces differ only in the other parameters), "
        "grey when proven by the Bernstein test of a_n, a_0 and Delta_(n-1), hatched when proven by the "
        "Kharitonov polynomials of its own overbound, crossed when not proven within the budget.",
        "partition of the box into proven pieces")
    return Section("Figures", (value_set, cloud, loop, graph, partition), anchor="figures", new_page=True)


def _root_cloud_figure(analysis: Analysis) -> Figure:
    case = analysis.case
    witness = " Squares: the roots of the witness." if analysis.check.witness is not None else ""
    if case.family.discrete:
        return Figure(
            "root_cloud",
            f"(b) Roots in {case.variable} of randomly drawn members (dots), the nominal roots (×) and "
            f"the unit circle (dashed). Roots outside the circle are unstable." + witness,
            "root cloud in the z-plane with the unit circle")
    zeta = case.requirements.damping_ratio
    sector = (f" Dotted: the two rays Re s = −ζ|s| of the required damping ratio ζ = {approx_text(zeta)}; "
              "roots left of both rays meet it." if zeta is not None else "")
    return Figure(
        "root_cloud",
        "(b) Roots of randomly drawn members (dots), the nominal roots (×) and the imaginary axis "
        "(dashed). Roots right of the dashed line are unstable." + sector + witness,
        "root cloud")


def _loop_figure(analysis: Analysis) -> Figure:
    case = analysis.case
    if not case.family.loop:
        return Figure("loop_response", "(c) Loop response: not drawn, the case is not written as a loop "
                      "(plant and controller).", "loop response not drawn")
    if not case.family.discrete:
        axis = "against ω in rad/s"
    elif case.sample_time is not None:
        axis = ("on the unit circle z = e^(jωT), against ω in rad/s up to π/T "
                f"(T = {approx_text(case.sample_time)} s)")
    else:
        axis = "on the unit circle z = e^(jθ), against θ = ωT in rad/sample up to π"
    return Figure(
        "loop_response",
        f"(c) Loop L = N/D (plant times controller), magnitude in dB and phase in degrees, {axis}: the "
        "nominal design (black) and the randomly drawn members (grey). Marked: the member that limits each "
        "certified margin (its witness), where its loop meets the critical point: the circle at its gain "
        "crossover (|L| = 1, the phase margin), the square or triangle at its phase crossover (the gain "
        "margin, gain raised or lowered). The brackets in the legend are the certified ones; the curves are "
        "drawn in floating point and decide nothing.",
        "loop magnitude and phase against frequency")


def _cautions() -> Section:
    return Section("Cautions", (ItemList(tuple((c,) for c in CAUTIONS)),), anchor="cautions")


def _record(analysis: Analysis) -> Section:
    case = analysis.case
    s = analysis.settings
    rows = (
        (Cell(("tool",)), Cell((f"robust {analysis.version}",), mono=True)),
        (Cell(("date",)), Cell((analysis.started,), mono=True)),
        (Cell(("case file",)), Cell((case.path,), mono=True)),
        (Cell(("SHA-256 of the case file",)),
         Cell((Num(case.sha256, case.sha256, "case_sha256"),), mono=True)),
        (Cell(("budget",)), Cell((f"check: {s.max_boxes} boxes; margins: {s.search_tests} decisions of "
                                  f"{s.search_boxes} boxes (ranking: a third and half of that); "
                                  f"safety stop {s.max_seconds:g} s"
                                  + (" (it fired)" if analysis.safety_stop else " (not reached)")
                                  + f"; {s.yield_draws} yield draws; seed {s.seed}",))),
        (Cell(("times",)), Cell((f"check {analysis.check.seconds:.2f} s, "
                                 f"margin {analysis.margin.seconds:.2f} s, "
                                 f"rank {analysis.rank.seconds:.2f} s, "
                                 f"yield {analysis.yield_result.seconds:.2f} s",))),
    )
    rerun = rerun_command(analysis)
    return Section("Record", (Table(("item", "value"), rows), Paragraph(("To re-run: ",)),
                              Preformatted(rerun)), anchor="record")


def build_document(analysis: Analysis, folder: str = "DIR") -> Document:
    """The whole report as blocks; ``folder`` is the report's folder as the user named it (for
    the command that re-checks the certificate written there)."""
    return Document(
        f"robust report: {analysis.case.title}",
        (_header(analysis), parameters_section(analysis.case), _polynomial(analysis),
         _verdict(analysis, folder),
         margins_section(analysis.margin, analysis.requirements, analysis.safety_stop,
                         analysis.check.verdict),
         ranking_section(analysis.rank), _yield(analysis), _figures(analysis), _cautions(),
         _record(analysis)))
