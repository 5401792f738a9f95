"""Plain-text rendering of an allocation (the cheapest passing tolerance classes): no mathematics."""

from __future__ import annotations

from fractions import Fraction

from ..exact.numbers import approx_text, percent_text

__all__ = ["render_allocation"]


def _money(value: Fraction) -> str:
    return approx_text(value, 8)


def _design(allocation, design) -> str:
    return ", ".join(f"{name} {text}" for name, text in allocation.classes_of(design).items())


def _part_lines(allocation) -> list[str]:
    lines = []
    for j, part in enumerate(allocation.parts):
        written = "" if part.written is None else f", written {part.options[part.written].text}"
        chosen = "" if allocation.chosen is None else f"  ->  {part.options[allocation.chosen[j]].text}"
        lines.append(f"  {part.name}: nominal {approx_text(part.nominal)}{written}{chosen}")
    for part in allocation.parts:
        for cls, why in part.infeasible:
            lines.append(f"  {part.name} cannot take {cls.text}: its range {why}")
        if part.dominated:
            lines.append(f"  {part.name} never takes " + ", ".join(c.text for c in part.dominated)
                         + ": a tighter class costs no more")
    return lines


def _search_line(allocation) -> str:
    data = allocation.as_dict()["search"]
    line = (f"Search: {data['candidates']} designs; {data['decided']} decided by proof, {data['pruned']} "
            f"ruled out by a failure without a decision (a witness inside their box, or a looser box); "
            f"best-first over cost, batches of {data['batch']}")
    if data["undecided"]:
        line += (f"\n  {data['undecided']} design(s) undecided within the work budget: they count as not "
                 "passing")
    if allocation.chosen is not None and allocation.undecided_cheaper:
        line += (f"; {allocation.undecided_cheaper} of them cost less than the chosen design, which may "
                 "pass with a larger --max-boxes")
    if allocation.safety_stop:
        line += "\n  a wall-clock safety stop cut a decision short: another run may differ"
    return line


def render_allocation(case, allocation) -> str:
    """The chosen classes, their cost against the all-tightest design and the design as written,
    the proof of the chosen design and what the search did."""
    lines = [f"Case: {case.title}   [{case.path}]",
             "Allocation of tolerance classes (the other parts keep their tolerances as written):"]
    classes = {c.text: c.cost for part in allocation.parts
               for c in (*part.options, *part.dominated, *(c for c, _ in part.infeasible))}
    lines.append("  classes: " + ", ".join(f"{text} costs {_money(cost)}" for text, cost in classes.items()))
    lines += _part_lines(allocation)
    tightest = allocation.tightest_cost
    if allocation.chosen is None:
        if allocation.passed_over_limit:
            lines.append(f"No passing design found: the search passed over {allocation.pruned} designs "
                         "ruled out by failures (its limit) and stopped; the designs left were not looked at")
        elif allocation.exhausted:
            lines.append(f"No passing design found within {allocation.max_decisions} decisions "
                         "(--max-decisions); the designs left were not decided")
        else:
            lines.append("No design passes: every design failed or was undecided")
    else:
        cost = allocation.cost
        saving = "" if not tightest else f", {percent_text((tightest - cost) / tightest, 1)} less"
        lines.append(f"Cheapest passing design: {_design(allocation, allocation.chosen)}")
        lines.append(f"  cost {_money(cost)} against {_money(tightest)} with every part at its tightest "
                     f"class{saving}")
        decision = allocation.decision
        result = decision.result
        lines.append(f"  proof: {result.verdict.headline}")
        lines.append(f"  method: {result.method_text}")
        for check in decision.requirements:
            lines.append(f"  requirement {check.name} ({check.wording}): {check.outcome.word}")
    written = allocation.written_decision
    if allocation.written is None:
        lines.append("As written: not every allocated part's tolerance is a class of the table")
    elif written is not None:
        lines.append(f"As written ({_design(allocation, allocation.written)}): cost "
                     f"{_money(allocation.written_cost)}, {written.outcome.word}"
                     + ("" if written.failed == "" else f" ({written.failed})"))
    lines.append(_search_line(allocation))
    return "\n".join(lines)
