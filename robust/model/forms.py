"""The forms a polynomial is written in, read into exact coefficients.

A polynomial in ``s`` written as text, or its coefficients; and the forms of a case file
(one expression, a list of coefficient formulas, a loop of plant and controller, a state-space
model, mass/damping/stiffness matrices), each combined into one characteristic polynomial as
an exact sparse quotient (numerator, denominator) over the slots (variable, *parameter names)
of :func:`robust.model.expr.parse_formula`. Every product is paid for from one work account
(:mod:`robust.exact.sparse`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import lcm

from ..errors import InputError
from ..exact import routh as _routh
from ..exact import sparse
from ..exact.numbers import format_fraction
from ..exact.polydet import determinant
from ..exact.regions import DiskCounts, SchurCohnTable, disk_counts, schur_cohn_table
from ..exact.routh import RouthTable
from .expr import ParsedFormula, polynomial_coefficients

__all__ = [
    "DiscreteTable",
    "as_coefficients",
    "closed_loop",
    "coefficients_polynomial",
    "discrete_table",
    "expression_polynomial",
    "interconnection_polynomial",
    "loop_parts",
    "mechanical_polynomial",
    "over_common_denominator",
    "routh_table",
    "state_space_polynomial",
    "written_quotient",
]

Quotient = tuple[dict, dict]  # sparse numerator, sparse denominator
Matrix = Sequence[Sequence[ParsedFormula]]  # rows of entries


def written_quotient(parsed: ParsedFormula) -> Quotient:
    """The formula's quotient as written, a constant denominator made positive."""
    num, den = dict(parsed.expanded_numerator), dict(parsed.expanded_denominator)
    if set(den) == {0} and den[0] < 0:
        return sparse.negate(num), sparse.negate(den)
    return num, den


def _fraction(value) -> Fraction:
    return Fraction(int(value.numerator), int(value.denominator))


def _lowest_terms(quotient: Quotient) -> Quotient:
    """Over a constant denominator, the integer multiple of num/den with the smallest
    denominators cleared (0.1*s^2 + s + 1 -> s^2 + 10*s + 10 over 10), as one would write it."""
    num, den = quotient
    if set(den) != {0}:
        return quotient
    values = {m: _fraction(c) / _fraction(den[0]) for m, c in num.items()}
    scale = lcm(*(v.denominator for v in values.values())) if values else 1
    return ({m: int(v * scale) for m, v in values.items()}, sparse.constant(scale))


def expression_polynomial(parsed: ParsedFormula) -> Quotient:
    """The characteristic polynomial written as one expression."""
    return _lowest_terms(written_quotient(parsed))


def over_common_denominator(quotients: Sequence[Quotient], work: sparse.Work) -> tuple[list[dict], dict]:
    """([n_i * L / d_i], L) for quotients n_i / d_i: the numerators over one common
    denominator L, the least common multiple of the d_i when they are monomials (R, 2*L*C),
    else the product of the distinct ones."""
    distinct: list[dict] = []
    for _, den in quotients:
        if den not in distinct:
            distinct.append(den)
    monomials = all(sparse.is_monomial(d) for d in distinct)
    common = sparse.constant(1)
    for den in distinct:
        common = sparse.monomial_lcm(common, den) if monomials else sparse.multiply(common, den, work)
    numerators = []
    for num, den in quotients:
        if monomials:
            cofactor = sparse.monomial_quotient(common, den)
        else:
            cofactor = sparse.constant(1)
            for other in distinct:
                if other != den:
                    cofactor = sparse.multiply(cofactor, other, work)
        numerators.append(sparse.multiply(num, cofactor, work))
    return numerators, common


def coefficients_polynomial(items: Sequence[ParsedFormula], work: sparse.Work) -> Quotient:
    """sum of c_i * s^(n - i) over the common denominator of the c_i
    (:func:`over_common_denominator`)."""
    numerators, common = over_common_denominator([written_quotient(p) for p in items], work)
    n = len(items) - 1
    total: dict = {}
    for i, term in enumerate(numerators):
        sparse.add_into(total, _times_variable(term, n - i))
    return _lowest_terms((total, common))


def _times_variable(p: dict, power: int) -> dict:
    """p * s^power (the variable is the first slot: its exponent is the lowest bits)."""
    return {m + power: c for m, c in p.items()}


def loop_parts(plant: ParsedFormula, controller: ParsedFormula, work: sparse.Work) -> tuple[dict, dict]:
    """(den_P * den_C, num_P * num_C): the loop's open-loop denominator and numerator, as
    written (a pole-zero cancellation inside a formula must not hide a mode of the loop)."""
    n_p, d_p = written_quotient(plant)
    n_c, d_c = written_quotient(controller)
    return sparse.multiply(d_p, d_c, work), sparse.multiply(n_p, n_c, work)


def closed_loop(parts: tuple[dict, dict]) -> Quotient:
    """den_P * den_C + num_P * num_C from :func:`loop_parts`: unity negative feedback."""
    return _lowest_terms((sparse.add(*parts), sparse.constant(1)))



def state_space_polynomial(a: Matrix, b: Matrix | None, k: Matrix | None, work: sparse.Work) -> Quotient:
    """det(sI - A), or det(sI - (A - B K)) with the state feedback u = -K x, over a
    parameter-only denominator: each row of sI - A + B K is multiplied by the common
    denominator of its entries, and the determinant of those rows divided by their product."""
    n = len(a)
    if k is not None and b is not None:
        numerators, k_common = over_common_denominator([written_quotient(f) for row in k for f in row], work)
        k_rows = [numerators[r * n:(r + 1) * n] for r in range(len(k))]
    rows, commons = [], []
    for i in range(n):
        quotients = [_negated(written_quotient(f)) for f in a[i]]
        if k is not None and b is not None:
            b_row, b_common = over_common_denominator([written_quotient(f) for f in b[i]], work)
            below = sparse.multiply(b_common, k_common, work)
            for j in range(n):
                entry: dict = {}
                for gain, k_row in zip(b_row, k_rows, strict=True):
                    sparse.add_into(entry, sparse.multiply(gain, k_row[j], work))
                quotients.append((entry, below))
        numerators, common = over_common_denominator(quotients, work)
        row = numerators[:n]
        for j, extra in enumerate(numerators[n:]):
            row[j] = sparse.add(row[j], extra)
        row[i] = sparse.add(row[i], _times_variable(common, 1))
        rows.append(row)
        commons.append(common)
    return _determinant_over(rows, commons, work)


def mechanical_polynomial(mass: Matrix, damping: Matrix | None, stiffness: Matrix,
                          work: sparse.Work) -> Quotient:
    """det(M s^2 + C s + K) over a parameter-only denominator (rows cleared as in
    :func:`state_space_polynomial`); no damping matrix is a zero one."""
    n = len(mass)
    rows, commons = [], []
    for i in range(n):
        parts = [mass[i], stiffness[i]] + ([damping[i]] if damping is not None else [])
        quotients = [written_quotient(f) for part in parts for f in part]
        numerators, common = over_common_denominator(quotients, work)
        row = [sparse.add(_times_variable(numerators[j], 2), numerators[n + j]) for j in range(n)]
        if damping is not None:
            row = [sparse.add(row[j], _times_variable(numerators[2 * n + j], 1)) for j in range(n)]
        rows.append(row)
        commons.append(common)
    return _determinant_over(rows, commons, work)


def interconnection_polynomial(rows: Sequence[tuple[Sequence[dict], dict]], work: sparse.Work) -> Quotient:
    """det(D_i x_i - sum_j n_ij x_j): the characteristic polynomial of signals x_i = sum_j
    (n_ij / D_i) x_j, one equation per row with its gains over one denominator D_i as written.

    Row i is its equation times D_i, so the determinant is D_1 ... D_n det(I - G): every
    block's denominator times the determinant of the interconnection, with no cancellation
    between them (for one loop, e = -y, u = C e, y = P u, it is den_P den_C + num_P num_C).

    Parameters
    ----------
    rows
        ``([n_i1, ..., n_in], D_i)`` per equation, sparse polynomials in the variable and the
        parameters; the signals are the equations' own, in order (inputs are left out: they
        do not change the determinant).
    """
    matrix = []
    for i, (gains, den) in enumerate(rows):
        row = [sparse.negate(g) for g in gains]
        row[i] = sparse.add(den, row[i])
        matrix.append(row)
    return _lowest_terms((determinant(matrix, work), sparse.constant(1)))


def _negated(quotient: Quotient) -> Quotient:
    """-(num/den), the sign carried by the numerator."""
    return sparse.negate(quotient[0]), quotient[1]


def _determinant_over(rows: list[list[dict]], commons: list[dict], work: sparse.Work) -> Quotient:
    """det(rows) / product(commons): the determinant of the matrix whose row i is rows[i] /
    commons[i]."""
    denominator = sparse.constant(1)
    for common in commons:
        denominator = sparse.multiply(denominator, common, work)
    return _lowest_terms((determinant(rows, work), denominator))


def as_coefficients(poly_or_coeffs: object, variable: str = "s") -> tuple[Fraction, ...]:
    """Exact coefficients, highest power first, with leading zeros removed.

    Accepts a polynomial written in ``variable`` (text) or a sequence of ints, Fractions,
    decimal strings or floats (floats through their shortest repr).

    Raises
    ------
    InputError
        When nothing usable is given or every coefficient is zero.
    """
    if isinstance(poly_or_coeffs, str):
        return _routh.as_coefficients(polynomial_coefficients(poly_or_coeffs, variable))
    if isinstance(poly_or_coeffs, Sequence):
        return _routh.as_coefficients(poly_or_coeffs)
    raise InputError("polynomial", "not a polynomial", "text in s or a list of coefficients",
                     poly_or_coeffs)


def routh_table(poly_or_coeffs: object, shift: object = 0, variable: str = "s") -> RouthTable:
    """The exact Routh array of a polynomial given as text or as coefficients.

    Parameters
    ----------
    poly_or_coeffs
        Text in ``variable`` (``"s^3 + 2*s^2 + 3*s + 1"``) or coefficients highest power first
        (ints, Fractions, decimal strings such as ``"0.1"`` taken exactly).
    shift
        ``sigma``: count relative to the line Re(s) = -sigma.

    Examples
    --------
    >>> routh_table("(s^2 + 1)^2*(s + 1)").roots
    RootCounts(open_right=0, imaginary_axis=4, open_left=1)
    >>> routh_table([1, "0.5", "0.06"]).is_hurwitz
    True
    """
    return _routh.routh_table(as_coefficients(poly_or_coeffs, variable), shift)


@dataclass(frozen=True, slots=True)
class DiscreteTable:
    """A polynomial in z against the circle |z| = radius: the Schur-Cohn table (of p(radius z),
    for the unit circle) and the exact root counts."""

    coefficients: tuple[Fraction, ...]
    radius: Fraction
    table: SchurCohnTable
    counts: DiskCounts

    @property
    def stable(self) -> bool:
        """Every root strictly inside the circle."""
        return self.counts.inside == len(self.coefficients) - 1

    def as_dict(self) -> dict[str, object]:
        """JSON: rows [{power, entries}] and roots {inside, on_circle, outside} (DESIGN.md
        section 5), with the coefficients, radius, conditions and verdict."""
        return {"variable": "z", "degree": len(self.coefficients) - 1,
                "radius": format_fraction(self.radius),
                "coefficients": [format_fraction(c) for c in self.coefficients],
                "rows": [{"power": len(row) - 1, "entries": [format_fraction(c) for c in row]}
                         for row in self.table.rows],
                "schur_conditions": list(self.table.conditions),
                "roots": self.counts.as_dict(), "stable": self.stable}


def discrete_table(poly_or_coeffs: object, radius: Fraction = Fraction(1)) -> DiscreteTable:
    """The Schur-Cohn table and root counts of a polynomial in z (text or coefficients).

    Examples
    --------
    >>> counts = discrete_table("(z - 0.5)*(z + 2)").counts
    >>> counts.inside, counts.on_circle, counts.outside
    (1, 0, 1)
    """
    values = as_coefficients(poly_or_coeffs, "z")
    n = len(values) - 1
    scaled = [c * radius ** (n - i) for i, c in enumerate(values)]
    return DiscreteTable(values, radius, schur_cohn_table(scaled), disk_counts(values, radius))
