"""Plain-text rendering of results for the terminal (no mathematics here)."""

from __future__ import annotations

from fractions import Fraction

from ..exact.numbers import approx_text, format_fraction, json_float, percent_text
from ..exact.routh import RouthTable, format_entry
from .fmt import box_text, criterion_text, units_of, with_unit, witness_roots

__all__ = ["render_table", "roots_sentence"]


def roots_sentence(table: RouthTable, unshifted=None) -> str:
    """One line: where the roots are and what that means.

    With a shift, the conclusion speaks of relative stability (every root left of the line
    Re(s) = -sigma, a decay rate above sigma); ``unshifted`` (the root counts of the
    polynomial itself, when known) then says whether a polynomial that misses the line is
    still stable, only slower than asked.
    """
    r = table.roots
    if table.shift:
        return _relative_sentence(table, unshifted)
    line = "the line Re(s) = " + format_fraction(-table.shift) if table.shift else "the imaginary axis"
    where = "right of" if table.shift else "in the open right half-plane"
    counts = (
        f"{r.open_right} root(s) {where if table.shift == 0 else 'right of ' + line}, "
        f"{r.imaginary_axis} on {line}, {r.open_left} "
        + ("in the open left half-plane" if table.shift == 0 else "left of " + line)
    )
    if table.is_hurwitz:
        verdict = "stable: every root lies " + (
            "in the open left half-plane" if table.shift == 0 else "left of " + line
        )
    elif r.open_right:
        verdict = "unstable"
    else:
        verdict = "not asymptotically stable (roots on " + line + ")"
    return f"{counts}.\nConclusion: {verdict}."


def _relative_sentence(table: RouthTable, unshifted) -> str:
    """Counts and conclusion relative to the line Re(s) = -sigma."""
    r = table.roots
    sigma = format_fraction(table.shift)
    line = "the line Re(s) = " + format_fraction(-table.shift)
    counts = f"{r.open_right} root(s) right of {line}, {r.imaginary_axis} on it, {r.open_left} left of it"
    if table.is_hurwitz:
        verdict = (f"relative stability met: every root lies left of {line} "
                   f"(decay rate above {sigma})")
    else:
        verdict = (f"relative stability not met: {r.open_right + r.imaginary_axis} root(s) "
                   f"on or right of {line}")
        if unshifted is not None:
            if unshifted.open_right == 0 and unshifted.imaginary_axis == 0:
                verdict += ("; the polynomial itself is stable (every root in the open left "
                            "half-plane), only slower than asked")
            elif unshifted.open_right:
                verdict += (f"; the polynomial itself is unstable ({unshifted.open_right} root(s) "
                            "in the open right half-plane)")
            else:
                verdict += ("; the polynomial itself is not asymptotically stable (roots on the "
                            "imaginary axis)")
    return f"{counts}.\nConclusion: {verdict}."


def render_table(table: RouthTable, unshifted=None) -> str:
    """The Routh array with powers down the left, special rows marked, then the counts."""
    rows = table.rows
    cells = [[format_entry(e) for e in row.entries] for row in rows]
    width = max((len(c) for row in cells for c in row), default=1)
    marks: dict[int, list] = {}
    for special in table.special_rows:
        marks.setdefault(special.power, []).append(special)
    lines = []
    from ..exact.routh import _format_polynomial  # display helper shared with the table notes

    lines.append("p(s) = " + _format_polynomial(table.coefficients)
                 + (f"   [p shifted: s -> s - {format_fraction(table.shift)}]" if table.shift else ""))
    lines.append("")
    label_width = len(f"s^{table.degree}")
    for row, row_cells in zip(rows, cells, strict=True):
        label = f"s^{row.power}".ljust(label_width)
        text = "  ".join(c.rjust(width) for c in row_cells)
        note = ""
        if row.power in marks:
            note = "   <- " + "; ".join(
                "from A'(s)" if s.kind == "zero_row" else "0 -> ε" for s in marks[row.power]
            )
        lines.append(f"{label} | {text}{note}")
    lines.append("")
    for special in table.special_rows:
        lines.append("note: " + special.describe())
    signs = "".join("+" if s > 0 else "-" for s in table.first_column_signs)
    shown = " (rows shown)" if table.omitted_rows else ""
    lines.append(f"first-column signs{shown}: {signs}   sign changes: {table.sign_changes}")
    if table.count_note:
        lines.append("note: " + table.count_note)
    lines.append(roots_sentence(table, unshifted))
    return "\n".join(lines)



def _fmt(value: Fraction) -> str:
    """Exact value, with a float beside it when the fraction is not short."""
    text = format_fraction(value)
    if len(text) > 12 or value.denominator != 1:
        return approx_text(value, 6) + (f" (= {text})" if len(text) <= 24 else "")
    return text


def _dependence_words(kind: str) -> str:
    """How the coefficients depend on the parameters, in words ("affine dependence")."""
    if kind == "independent":
        return "independent coefficients (each parameter in one coefficient)"
    return f"{kind} dependence"


def render_check(case, result) -> str:
    """The verdict of ``robust check`` for people."""
    fam = case.family
    lines = [f"Case: {case.title}   [{case.path}]",
             f"Family: degree {fam.degree}, {len(fam.names)} parameters, {_dependence_words(fam.kind)}"]
    if fam.discrete:
        lines.append("Discrete time: stable means every root strictly inside the unit circle, decided "
                     "exactly on the bilinear image w = (z - 1)/(z + 1)")
    lines.append(f"Nominal: {result.nominal.words}")
    headline = result.verdict.headline
    lines.append(f"Verdict: {headline}")
    lines.append(f"Method: {result.method_text}")
    lines.append(f"Why: {result.reason}")
    kh = result.overbound
    if kh.stable:
        lines.append("Certificate: the Kharitonov polynomials of the overbound over the whole box:")
    else:
        what = {"degree": "the leading coefficient's range contains zero",
                "sign": "a coefficient's range reaches zero or changes sign",
                "vertex": "Kharitonov polynomial(s) " + ", ".join(kh.failing) + " not Hurwitz"}
        lines.append("Interval overbound over the whole box: inconclusive "
                     f"({what.get(kh.reason, kh.reason)})")
    for v in result.vertex_tables:
        if v.table is None:
            continue
        signs = "".join("+" if s > 0 else "-" for s in v.table.first_column_signs)
        lines.append(f"  {v.label}: first column signs {signs}  ->  "
                     + ("Hurwitz" if v.hurwitz else f"{v.table.roots.open_right} right-half-plane root(s)"))
    if result.method == "subdivision" and result.verdict == "stable":
        lines.append(f"Subdivision: {result.proven_boxes} sub-boxes proven (of {result.boxes} examined), "
                     f"depth up to {result.max_depth}")
    if result.method == "edges":
        lines.append(f"Edges: {result.edges} segments decided exactly")
    if result.witness is not None:
        w = result.witness
        lines.append(f"Witness ({w.found_by}), exact values inside the box:")
        for name, value in w.parameters.items():
            p = case.parameter(name)
            span = f"{approx_text(p.low, 6)} .. {approx_text(p.high, 6)}"
            lines.append(f"  {name} = {with_unit(_fmt(value), p.unit)}   [range {with_unit(span, p.unit)}]")
        lines.append(f"  roots: {w.roots.words}")
        values = witness_roots(w)
        if values is None:
            lines.append("  root values: not shown (the coefficients lie beyond the float range)")
        else:
            shown = ", ".join(f"{z.real:.4g}{z.imag:+.4g}j" for z in values[:6])
            lines.append(f"  root values (floats, for display): {shown}")
    if result.verdict == "undecided":
        lines.append(f"Unresolved: {percent_text(result.unresolved, 3)} of the box volume")
        if result.largest_unproven is not None:
            lines.append(f"Largest unproven sub-box: {box_text(result.largest_unproven, units_of(case))}")
    lines.append(f"Time: {result.seconds:.2f} s")
    return "\n".join(lines)


def trace_data(case, graph) -> dict:
    """JSON form of ``robust trace``."""
    return _trace(case, graph)[0]


def _trace(case, graph) -> tuple[dict, tuple]:
    """The JSON form and the exact coefficient bounds it was made from."""
    fam = case.family
    bounds = fam.bounds()
    coefficients = []
    for k, (coeff, b) in enumerate(zip(fam.coefficients, bounds, strict=True)):
        power = fam.degree - k
        deps = {}
        for param in graph.predecessors(("coefficient", power)):
            deps[param[1]] = graph.edges[param, ("coefficient", power)]["direction"]
        coefficients.append({"power": power, "formula": coeff.to_text(fam.names),
                             "low": format_fraction(b.low), "high": format_fraction(b.high),
                             "low_float": json_float(b.low),
                             "high_float": json_float(b.high),
                             "bound": "exact" if b.exact else "outer", "parameters": deps})
    vertices = {}
    for node in graph.nodes:
        if node[0] == "vertex":
            from ..model.graph import drivers

            vertices[node[1]] = {name: dirs for name, dirs in drivers(graph, node[1]).items()}
    data = {"family_class": fam.kind, "degree": fam.degree, "parameters": list(fam.names),
            "coefficients": coefficients, "vertices": vertices}
    if case.diagram is not None:
        data["diagram"] = case.diagram.as_dict()
    return data, bounds


def render_trace(case, graph) -> str:
    """Parameter -> coefficient dependencies with directions, and the coefficient bounds."""
    data, bounds = _trace(case, graph)
    lines = [f"Case: {case.title}   [{case.path}]",
             f"Family: degree {data['degree']}, {_dependence_words(data['family_class'])}", ""]
    var = "s"
    if case.family.discrete:
        var = "w"
        lines[-1:] = ["Discrete time: these are the coefficients of the bilinear image q(w), "
                      "w = (z - 1)/(z + 1), that the engine decides; p(z) as written:",
                      "  " + " + ".join(f"({c.to_text(case.family.names)})*z^{len(case.family.written) - 1 - k}"
                                        for k, c in enumerate(case.family.written) if not c.is_zero), ""]
    if "diagram" in data:
        lines[-1:] = [*_diagram_lines(data["diagram"]), ""]
    for c, b in zip(data["coefficients"], bounds, strict=True):
        deps = ", ".join(f"{n} ({d})" for n, d in c["parameters"].items()) or "constant"
        lines.append(f"a{c['power']} ({var}^{c['power']}) = {c['formula']}")
        lines.append(f"    range [{approx_text(b.low)}, {approx_text(b.high)}] ({c['bound']}); "
                     f"driven by: {deps}")
    lines.append("")
    lines.append("Directions: + the coefficient grows with the parameter over the whole box, "
                 "- it falls, mixed: both.")
    return "\n".join(lines)


def _diagram_lines(diagram: dict) -> list[str]:
    """How a block diagram became the polynomial: its equations, signals and loops."""
    lines = ["", "Formed from a block diagram: the characteristic polynomial is the determinant of the "
             "interconnection, det(I - G), times the denominator of every equation as written "
             "(no cancellation between them), so every block's poles are kept.", "Equations:"]
    lines += [f"  {text}" for text in diagram["equations"]]
    lines.append("Signals: " + ", ".join(diagram["signals"])
                 + ("; external inputs: " + ", ".join(diagram["inputs"]) if diagram["inputs"] else ""))
    if not diagram["loops"]:
        lines.append("Loops: none (no signal feeds back): the polynomial is the product of the blocks' "
                     "denominators.")
    for k, loop in enumerate(diagram["loops"], 1):
        path = " -> ".join([*loop["signals"], loop["signals"][0]])
        lines.append(f"Loop {k}: {path}; loop gain {loop['gain']}")
    return lines


def _bracket_text(b, unit: str = "") -> str:
    upper = "no witness up to the cap" if b.upper is None else approx_text(b.upper, 9)
    text = with_unit(f"[{approx_text(b.lower, 9)}, {upper}]", unit)
    if b.exact:
        text += f"   exact: {b.exact}" + (f" = {b.decimal}" if b.decimal else "")
    if b.note:
        text += f"   ({b.note})"
    return text


def margin_reading(bracket, limit) -> str:
    """What rho* means for the design, in plain words (shared by the terminal and the report)."""
    lower = approx_text(bracket.lower, 4)
    if limit.kind.value == "cap":
        return f"Proven stable with every tolerance up to x{lower} as wide; no end was found before."
    if limit.kind.value != "crossing":
        return (f"Proven stable up to x{lower}. Past x{approx_text(limit.scale)} the scaled box no "
                "longer stands for the hardware: this end is a property of the model, not stability "
                "headroom, and nothing is claimed beyond it.")
    if bracket.upper is not None and bracket.upper <= 1:
        return (f"Not stable over the stated tolerances: every tolerance would have to shrink to "
                f"x{lower} of its width.")
    if bracket.lower >= 1:
        return f"Stable over the stated tolerances; every tolerance could be x{lower} as wide."
    return f"Proven stable up to x{lower} of the stated tolerances."


def render_margin(case, result) -> str:
    """``robust margin`` for people."""
    m = result.margin
    units = units_of(case)
    lines = [f"Case: {case.title}   [{case.path}]",
             f"Robust margin rho* (scale of every tolerance about nominal): {_bracket_text(m)}",
             f"  method: {result.method}",
             f"  what ends it: {result.limit.sentence(units=units)}",
             "  " + margin_reading(m, result.limit)]
    if m.witness is not None:
        pts = ", ".join(f"{n} = {with_unit(approx_text(v, 6), units.get(n, ''))}"
                        for n, v in m.witness.parameters.items())
        lines.append(f"  witness just beyond the margin: {pts}")
    if result.outcome is not None:
        lines.append(f"Requirement margin >= {approx_text(result.requirement)}: {result.outcome.word}")
    if result.decay is not None:
        d = result.decay
        lines.append(f"Decay-rate margin sigma* (every root has Re(s) < -sigma): {_bracket_text(d.bracket, '1/s')}")
        settle = d.settling_time()
        if settle is not None:
            lines.append(f"  worst-case 2 % settling time about 4/sigma = {settle:.4g} s (common rule of thumb)")
        if d.outcome is not None:
            lines.append(f"Requirement decay_rate >= {approx_text(d.requirement)} 1/s: {d.outcome.word}")
    for c in result.criteria:
        lines.append(f"{c.measure.words.capitalize()}, worst case over the box: {criterion_text(c)}")
        if c.limit_text():
            lines.append(f"  limited by: {c.limit_text(units)}")
        decay = c.decay_equivalent()
        if decay is not None and decay[0] > 0:
            high = "none" if decay[1] is None else f"{decay[1]:.6g}"
            lines.append(f"  continuous-time reading (sample time {approx_text(c.sample_time)} s): decay rate "
                         f"-ln(r)/T in [{decay[0]:.6g}, {high}] 1/s, 2 % settling within about "
                         f"{4 / decay[0]:.4g} s")
        if c.bracket.note:
            lines.append(f"  note: {c.bracket.note}")
    for name, required, outcome in result.outcomes():
        if name not in ("margin", "decay_rate"):
            sign = "<=" if name == "radius" else ">="
            lines.append(f"Requirement {name} {sign} {approx_text(required)}: {outcome.word}")
    if result.safety_stop:
        lines.append("Note: the wall-clock safety limit stopped the search early; a re-run may differ.")
    lines.append(f"Time: {result.seconds:.2f} s")
    return "\n".join(lines)


def _scale_cell(bracket, limit) -> str:
    """A rank cell: the margin, marked by what ends it when that is not a crossing."""
    value = approx_text(bracket.lower, 6)
    mark = {"crossing": "", "physical_limit": " L", "degree_loss": " D", "denominator": " F", "cap": "+"}
    return value + mark[limit.kind.value] + ("?" if not limit.proven else "")


def render_rank(case, result) -> str:
    """``robust rank`` for people."""
    units = units_of(case)
    lines = [f"Case: {case.title}   [{case.path}]",
             "Parameters, most critical first (margins are scales of that tolerance, no unit):",
             f"{'parameter':<12} {'unit':<10} {'tolerance':<10} {'alone':>14} {'others full':>14}  "
             "acts through"]
    for p in result.parameters:
        alone = _scale_cell(p.margin_alone, p.limit_alone)
        given = _scale_cell(p.margin_given_others, p.limit_given_others)
        acts = ", ".join(f"a{power}({d})" for power, d in p.coefficients)
        unit = p.unit or units.get(p.name, "") or "-"
        lines.append(f"{p.name:<12} {unit:<10} {p.tolerance:<10} {alone:>14} {given:>14}  {acts}")
    limited = [p for p in result.parameters if p.limit_alone.kind.value in ("physical_limit", "degree_loss",
                                                                             "denominator")]
    if limited:
        lines.append("")
        lines.append("Alone, these parts never destabilise the loop; their margin ends where the model ends:")
        for p in limited:
            lines.append(f"  {p.name}: {p.limit_alone.sentence(units=units)}")
    if result.robustly_stable is False:
        lines.append("")
        lines.append("The design is not robustly stable. Tightening one tolerance alone (others as given):")
        for p in result.parameters:
            if p.restores:
                lines.append(f"  {p.name}: scale its tolerance to at most {approx_text(p.tightened, 4)} "
                             "x the present one")
            elif p.restores is False:
                lines.append(f"  {p.name}: no tightening of this part alone restores stability")
    lines.append("(no mark: a root crosses there; L: the part reaches its physical limit; D: the leading "
                 "coefficient reaches zero; F: a divided-out factor reaches zero; +: stable up to the cap; "
                 "?: not proven within the work budget; 'alone': others at nominal; "
                 "'others full': others over their range)")
    if result.safety_stop:
        lines.append("Note: the wall-clock safety limit stopped a search early; a re-run may differ.")
    return "\n".join(lines)


def render_yield(case, result) -> str:
    """``robust yield`` for people."""
    lo, hi = result.interval
    lines = [f"Case: {case.title}   [{case.path}]",
             f"Yield: {result.stable}/{result.draws} random builds stable = {result.fraction:.4%} "
             f"({result.confidence:.0%} interval {lo:.4%} .. {hi:.4%}, Clopper-Pearson), seed {result.seed}",
             f"  exact re-checks of unclear float decisions: {result.exact_rechecks}"]
    if result.unstable_ranges:
        lines.append("  parameter ranges of the unstable draws:")
        units = units_of(case)
        for name, a, b in result.unstable_ranges_exact:
            span = f"{approx_text(a)} .. {approx_text(b)}"
            lines.append(f"    {name}: {with_unit(span, units.get(name, ''))}")
    lines.append("A yield estimate is no proof: use `robust check` for the worst case.")
    return "\n".join(lines)


def render_requirements(requirements) -> str:
    """Pass/fail lines for the case's requirements."""
    lines = []
    for r in requirements:
        line = f"Requirement {r.name.replace('_', ' ')} ({r.wording}): {r.outcome.word}"
        if r.problem is not None:
            line += f" ({r.problem.detail})"
        lines.append(line)
    return "\n".join(lines)


def render_schur_cohn(coefficients, table, counts, radius) -> str:
    """routh --discrete: p(z), the Schur-Cohn rows with their conditions, the counts relative
    to the circle and the conclusion in discrete-time words."""
    from ..exact.numbers import format_fraction
    from ..exact.routh import _format_polynomial  # display helper shared with the s tables

    n = len(coefficients) - 1
    circle = "|z| = 1" if radius == 1 else f"|z| = {format_fraction(radius)}"
    lines = ["p(z) = " + _format_polynomial(coefficients, "z")]
    if radius != 1:
        lines.append(f"(the table is that of p({format_fraction(radius)}*z), for the circle {circle})")
    lines.append("")
    cells = [[format_entry(c) for c in row] for row in table.rows]
    width = max((len(c) for row in cells for c in row), default=1)
    label_width = len(f"p{n}")
    for k, (row, row_cells) in enumerate(zip(table.rows, cells, strict=True)):
        label = f"p{len(row) - 1}".ljust(label_width)
        note = ""
        if k < len(table.conditions):
            holds = table.conditions[k]
            note = "   |leading| > |constant|" if holds else "   |leading| <= |constant|: stop"
        lines.append(f"{label} | " + "  ".join(c.rjust(width) for c in row_cells) + note)
    lines.append("")
    lines.append("(Schur-Cohn reduction: each row is (leading * p - constant * reversed p) / z of the "
                 "row above; every root lies inside the circle exactly when every row has "
                 "|leading| > |constant|)")
    lines.append(f"{counts.inside} root(s) inside {circle}, {counts.on_circle} on it, "
                 f"{counts.outside} outside.")
    if counts.inside == n:
        lines.append(f"Conclusion: stable in discrete time (every root inside {circle}).")
    elif counts.outside == 0:
        lines.append(f"Conclusion: not asymptotically stable: {counts.on_circle} root(s) on {circle}.")
    else:
        lines.append(f"Conclusion: unstable in discrete time: {counts.outside} root(s) outside {circle}.")
    return "\n".join(lines)


def render_verification(result) -> str:
    """robust verify: VALID with what is proven, or INVALID with the first piece that fails."""
    if result.valid:
        done = "the witness re-checked" if result.verdict == "unstable" else \
            f"{result.pieces} piece(s) re-checked"
        return f"VALID: {result.verdict}; {done}. Proven: {result.statement}."
    failed = result.failed or {}
    where = "" if failed.get("piece") is None else f" at piece {failed['piece']}"
    box = failed.get("box")
    box_text = "" if not box else \
        " (" + ", ".join(f"{n} in [{a}, {b}]" for n, (a, b) in box.items()) + ")"
    return f"INVALID{where}: {failed.get('reason', 'no reason given')}{box_text}"
