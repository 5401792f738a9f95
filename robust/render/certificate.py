"""The verdict's evidence as blocks: the exact Routh arrays of the four Kharitonov
polynomials of the coefficient overbound, the witness of an unstable design, and what is
left of an undecided one."""

from __future__ import annotations

from ..analysis.verdict import CheckResult, Witness
from ..exact.interval import KharitonovVertex
from ..exact.numbers import approx_text, percent_text
from ..exact.routh import RouthTable
from ..model.family import Box
from .blocks import Cell, Code, ItemList, Paragraph, Section, Table
from .fmt import box_text, entry_cell, exact_cell, units_of, witness_roots

__all__ = ["certificate_section", "proof_blocks", "undecided_blocks", "witness_section"]


def routh_table_block(table: RouthTable, caption: str = "") -> Table:
    """One exact Routh array: power down the left, entries exact (long ones shortened)."""
    width = max(len(row.entries) for row in table.rows)
    rows = []
    for row in table.rows:
        cells = [Cell((f"s^{row.power}",), mono=True)]
        cells += [entry_cell(e) for e in row.entries]
        cells += [Cell(("",))] * (width - len(row.entries))
        rows.append(tuple(cells))
    header = ("row", *(f"column {i + 1}" for i in range(width)))
    return Table(header, tuple(rows), caption, style="routh")


def _vertex_section(vertex: KharitonovVertex, degree: int) -> Section:
    words = "Hurwitz" if vertex.hurwitz else "NOT Hurwitz"
    ends = " ".join("H" if p == "high" else "L" for p in vertex.pattern)
    blocks: list = [Paragraph((f"Coefficient ends used, a{degree} … a0: ", Code(ends),
                               " (L lower, H upper end of the coefficient's range)"), "note")]
    table = vertex.table
    if table is None:
        blocks.append(Paragraph(("No table kept for this polynomial.",), "note"))
        return Section(f"{vertex.label}: {words}", tuple(blocks))
    blocks.append(routh_table_block(table, f"Routh array of {vertex.label}"))
    signs = " ".join("+" if s > 0 else "−" for s in table.first_column_signs)
    blocks.append(Paragraph(("First column signs ", Code(signs), f"; {table.sign_changes} sign "
                             f"change(s); roots: {table.roots.words}."), "note"))
    for special in table.special_rows:
        blocks.append(Paragraph(("Special row: " + special.describe() + ".",), "note"))
    if table.count_note:
        blocks.append(Paragraph((table.count_note[0].upper() + table.count_note[1:] + ".",), "note"))
    return Section(f"{vertex.label}: {words}", tuple(blocks))


_METHOD_WORDS = {"bernstein": "by Bernstein expansion of a_n, a_0 and Delta_(n-1) over the piece",
                 "kharitonov": "by the Kharitonov polynomials of the piece's own coefficient overbound"}


def proof_blocks(proof: dict | None, sha256: str = "", command: str = "") -> list:
    """What the certificate holds: the partition by method, its digest, how to re-check it."""
    if proof is None:
        return []
    summary = proof.get("summary", {})
    verdict = proof.get("verdict")
    if verdict == "unstable":
        what = "the witness below; the checker re-derives its polynomial from the case file."
    else:
        methods = summary.get("by_method", {})
        parts = [f"{count} {_METHOD_WORDS.get(name, name)}" for name, count in methods.items()]
        splits = summary.get("splits", {})
        split_text = (" Midpoint splits per parameter: " + ", ".join(f"{n} {k}" for n, k in splits.items())
                      + ".") if splits else ""
        opened = summary.get("open", 0)
        open_text = f" {opened} piece(s) are not proven (open)." if opened else ""
        what = (f"a partition of the box into {summary.get('pieces', 0)} piece(s): "
                + "; ".join(parts or ["none proven"]) + "." + split_text + open_text)
    blocks: list = [Paragraph(("The proof, written as a certificate that a short separate checker "
                               "re-verifies without the search: " + what,))]
    if sha256:
        blocks.append(Paragraph(("Certificate file certificate.json, SHA-256 ", Code(sha256), "."), "note"))
    if command:
        blocks.append(Paragraph(("Re-check it: ", Code(command),
                                 " (prints VALID or INVALID and the first piece that fails)."), "note"))
    return blocks


def certificate_section(result: CheckResult, degree: int, proof: dict | None = None,
                        sha256: str = "", command: str = "") -> Section:
    """The proof (the certificate's partition, when made) and the four Kharitonov polynomials
    of the overbound over the whole box, with tables: the proof themselves when they are all
    Hurwitz, else a record kept apart from it."""
    over = result.overbound
    blocks: list = proof_blocks(proof, sha256, command)
    record = not over.stable
    if over.stable:
        lead = ("All four Kharitonov polynomials of the coefficient overbound are Hurwitz. By "
                "Kharitonov's theorem every polynomial whose coefficients lie in these intervals is "
                "Hurwitz, hence every parameter set in the box gives a stable loop.")
    elif result.verdict == "stable":
        lead = ("For the record, not part of the proof: the interval overbound over the whole box, "
                "the first test tried, is not enough on its own (a Kharitonov polynomial below is not "
                "Hurwitz, because the overbound forgets that coefficients share parameters). The "
                "proof is the one above.")
    else:
        lead = ("The overbound over the whole box is not Hurwitz; the verdict rests on the witness "
                "below, which is a point of the box checked with its own exact Routh array.")
    tables: list = [Paragraph((lead,))]
    if not result.vertex_tables:
        tables.append(Paragraph(("No Kharitonov tables: the range of the leading coefficient "
                                 "contains zero, so the degree is not invariant over the box.",), "note"))
    else:
        tables.append(Paragraph(("Entries are exact rationals. Long ones are shown as ≈ a float; the "
                                 "exact text is kept (hover over it in the HTML report, listed below "
                                 "the table in the Markdown report, and in result.json under "
                                 "\"certificate\").",), "note"))
        tables.append(Section("", tuple(_vertex_section(v, degree) for v in result.vertex_tables),
                              group=True))
    if record and blocks:
        blocks.append(Section("For the record: the whole-box overbound (not the proof)", tuple(tables)))
    else:
        blocks += tables
    return Section("Certificate", tuple(blocks), anchor="certificate")


def witness_section(case, witness: Witness, title: str = "Witness: a parameter set that is not stable"
                    ) -> Section:
    """The counterexample, exact and as floats, with its root counts and root values; ``case``
    gives each parameter's range and unit (a :class:`Box` gives the units the case gave it)."""
    rows = []
    for name, value in witness.parameters.items():
        if isinstance(case, Box):
            (low, high), unit = case.intervals[case.names.index(name)], case.unit_of(name)
        else:
            p = case.parameter(name)
            low, high, unit = p.low, p.high, p.unit
        rows.append((Cell((name,), mono=True), exact_cell(value),
                     Cell((approx_text(value, 8),), numeric=True),
                     Cell((f"{approx_text(low)} … {approx_text(high)}",), numeric=True),
                     Cell((unit,))))
    table = Table(("parameter", "exact value", "value", "range", "unit"), tuple(rows))
    values = witness_roots(witness)
    shown = ["not shown: the coefficients lie beyond the float range"] if values is None else [
        f"{z.real:.6g} {'+' if z.imag >= 0 else '−'} {abs(z.imag):.6g}j" for z in values[:10]]
    blocks = (
        Paragraph((f"Found by: {witness.found_by}. Re-checked with the exact Routh array at these exact "
                   "rational values.",)),
        table,
        Paragraph((f"Roots of this member: {witness.roots.words}.",)),
        ItemList(tuple((Code(text),) for text in shown)),
        Paragraph(("Root values are floats, for display; the counts above are exact.",), "note"),
    )
    return Section(title, blocks, anchor="witness")


def undecided_blocks(result: CheckResult) -> list:
    """What an undecided check leaves open."""
    blocks: list = [Paragraph((f"Unresolved: {percent_text(result.unresolved, 3)} of the box volume is "
                               "neither proven stable nor refuted within the budget.",))]
    if result.largest_unproven is not None:
        parts = box_text(result.largest_unproven, units_of(result))
        blocks.append(Paragraph(("Largest unproven sub-box: " + parts + ".",)))
    blocks.append(Paragraph(("A larger --max-seconds budget may decide it.",), "note"))
    return blocks
