"""Plain-text rendering of results for the terminal (no mathematics here)."""

from __future__ import annotations

from .exact import format_fraction
from .routh import RouthTable, format_entry

__all__ = ["render_table", "roots_sentence"]


def roots_sentence(table: RouthTable) -> str:
    """One line: where the roots are and what that means."""
    r = table.roots
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


def render_table(table: RouthTable) -> str:
    """The Routh array with powers down the left, special rows marked, then the counts."""
    rows = table.rows
    cells = [[format_entry(e) for e in row.entries] for row in rows]
    width = max((len(c) for row in cells for c in row), default=1)
    marks = {}
    for special in table.special_rows:
        marks.setdefault(special.power, []).append(special)
    lines = []
    from .routh import _format_polynomial  # display helper shared with the table notes

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
    lines.append(f"first-column signs: {signs}   sign changes: {table.sign_changes}")
    lines.append(roots_sentence(table))
    return "\n".join(lines)
