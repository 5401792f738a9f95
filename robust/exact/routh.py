"""The exact Routh array.

Everything here is exact: rational input is scaled to integers and the rows are computed
with a fraction-free recurrence on GMP integers; special cases fall back to exact rational
rows (and, for a zero leading entry, rational functions of a small positive epsilon whose
signs are taken in the limit epsilon -> 0+).

Fraction-free recurrence. With integer rows r(m-2), r(m-1), the next row is
``(r(m-1)[0]*r(m-2)[j+1] - r(m-2)[0]*r(m-1)[j+1]) / r(m-3)[0]`` (no division for the first
two computed rows). The division is exact: integer row m is the Routh row times the Hurwitz
determinant of order m-1, so its leading entries are the leading principal minors of the
Hurwitz matrix (Hurwitz 1895), and the step is Bareiss' exact division (Bareiss,
"Sylvester's identity and multistep integer-preserving Gaussian elimination", 1968). Hence
Routh entry (m, j) = r(m)[j] / r(m-1)[0], and the first column's signs follow from the
signs of consecutive integer leading entries.

Special cases (Routh 1877; treatment as in Gantmacher, "The Theory of Matrices", vol. 2,
1959, ch. XV):

* zero leading entry in a non-zero row: replaced by epsilon, signs as epsilon -> 0+;
* row of zeros: the row above gives the auxiliary polynomial A(s) (roots symmetric about
  the origin), the zero row is replaced by the coefficients of A'(s); the roots of A on the
  imaginary axis number deg A - 2 * (sign changes from A's row down).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from itertools import pairwise
from math import lcm

from ..errors import InputError
from .epsilon import EPSILON_ENTRY, EpsilonFraction, is_zero, routh_step, sign_at_zero_plus, size, times
from .numbers import divexact, format_fraction, from_mpq, mpq, mpz, to_fraction, to_mpq
from .rootcount import count_roots

__all__ = [
    "RootCounts",
    "RouthRow",
    "RouthTable",
    "SpecialRow",
    "as_coefficients",
    "format_entry",
    "is_hurwitz",
    "routh_table",
    "shift_coefficients",
]

#: The small positive ε of the zero-leading-entry rule, as a table entry.
EPSILON = EPSILON_ENTRY
Entry = Fraction | EpsilonFraction


@dataclass(frozen=True, slots=True)
class RootCounts:
    """Numbers of roots, with multiplicity, relative to the imaginary axis (or a shifted line)."""

    open_right: int
    imaginary_axis: int
    open_left: int

    @property
    def total(self) -> int:
        """The degree of the polynomial."""
        return self.open_right + self.imaginary_axis + self.open_left

    @property
    def words(self) -> str:
        """The counts in words, for people."""
        return (f"{self.open_right} in the open right half-plane, {self.imaginary_axis} on the "
                f"imaginary axis, {self.open_left} in the open left half-plane")

    def as_dict(self) -> dict[str, int]:
        """The JSON form of DESIGN.md section 5."""
        return {
            "open_right": self.open_right,
            "imaginary_axis": self.imaginary_axis,
            "open_left": self.open_left,
        }


@dataclass(frozen=True, slots=True)
class SpecialRow:
    """A row where the plain recurrence could not go on, and what was done instead.

    ``kind`` is ``"zero_leading"`` (epsilon method) or ``"zero_row"`` (auxiliary polynomial
    replaced by its derivative); ``auxiliary`` holds the auxiliary polynomial's coefficients
    (highest power first) for a zero row.
    """

    power: int
    kind: str
    auxiliary: tuple[Entry, ...] = ()

    def describe(self) -> str:
        """One line for people."""
        if self.kind == "zero_leading":
            return f"s^{self.power}: leading entry 0 replaced by ε (signs as ε -> 0+)"
        aux = _format_polynomial(self.auxiliary)
        return f"s^{self.power}: row of zeros; auxiliary polynomial {aux}, replaced by its derivative"

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        data: dict[str, object] = {"power": self.power, "kind": self.kind}
        if self.kind == "zero_row":
            data["auxiliary"] = [format_entry(c) for c in self.auxiliary]
        return data


@dataclass(frozen=True, slots=True)
class RouthRow:
    """One row of the array: the power of s it belongs to and its exact entries."""

    power: int
    entries: tuple[Entry, ...]


@dataclass(frozen=True, slots=True)
class RouthTable:
    """An exact Routh array and what it says about the roots.

    Attributes
    ----------
    coefficients
        The polynomial tabulated, highest power first (after the shift, if any).
    shift
        ``sigma``: the counts are relative to the line Re(s) = -sigma.
    special_rows
        Rows where the epsilon or the auxiliary-polynomial rule was applied.
    first_column_signs
        +1 / -1 per row shown, top to bottom (epsilon entries by their limit sign).
    roots
        Counts in the open right half-plane, on the axis and in the open left half-plane,
        relative to the shifted line.
    omitted_rows
        Rows at the bottom left out because their entries in ε outgrew the display bound
        (0 for a complete table); the counts then come from :mod:`robust.exact.rootcount`.
    """

    coefficients: tuple[Fraction, ...]
    shift: Fraction
    special_rows: tuple[SpecialRow, ...]
    first_column_signs: tuple[int, ...]
    roots: RootCounts
    _integer_rows: tuple[tuple[int, ...], ...] | None  # fraction-free rows (gmpy2 integers)
    _scales: Fraction | None  # the integer polynomial is this multiple of `coefficients`
    _exact_rows: tuple[tuple[object, ...], ...] | None  # mpq and EpsilonFraction entries
    #: True when ``roots`` comes from p = q * gcd(p(s), p(-s)) because an ε row met a root
    #: pair r, -r; the first column of this table then need not show the counts.
    counted_by_factors: bool = False
    omitted_rows: int = 0

    @property
    def degree(self) -> int:
        """Degree of the polynomial."""
        return len(self.coefficients) - 1

    @property
    def rows(self) -> tuple[RouthRow, ...]:
        """The rows, top (power n) to bottom (power 0), with exact entries."""
        n = self.degree
        if self._exact_rows is not None:
            raw = tuple(tuple(_entry_out(e) for e in row) for row in self._exact_rows)
        else:
            assert self._integer_rows is not None and self._scales is not None
            raw = _true_rows(self._integer_rows, self._scales)
        return tuple(
            RouthRow(n - i, tuple(row[: (n - i) // 2 + 1])) for i, row in enumerate(raw)
        )

    @property
    def first_column(self) -> tuple[Entry, ...]:
        """The first entry of every row."""
        return tuple(row.entries[0] for row in self.rows)

    @property
    def sign_changes(self) -> int:
        """Sign changes down the first column."""
        return _count_changes(self.first_column_signs)

    @property
    def count_note(self) -> str:
        """Where the counts come from when not from this table's first column ("" otherwise)."""
        how = ("the counts come from p = q*g, g = gcd(p(s), p(-s)): q by the Cauchy index of its "
               "even and odd parts, the even and odd square-free factors of g by Sturm sequences")
        if self.omitted_rows:
            return (f"rows s^{self.omitted_rows - 1} .. s^0 left out: their entries in ε outgrow "
                    f"the display bound; {how}")
        if self.counted_by_factors:
            return f"an ε row met roots symmetric about the origin, where the ε rule alone is unsound; {how}"
        return ""

    @property
    def is_hurwitz(self) -> bool:
        """True when every root lies in the open left half-plane (of the shifted line)."""
        return self.roots.open_left == self.degree

    def as_dict(self) -> dict[str, object]:
        """The JSON form of DESIGN.md section 5 (plus a few extra keys)."""
        return {
            "degree": self.degree,
            "coefficients": [format_fraction(c) for c in self.coefficients],
            "shift": format_fraction(self.shift),
            "rows": [
                {"power": r.power, "entries": [format_entry(e) for e in r.entries]}
                for r in self.rows
            ],
            "first_column_signs": list(self.first_column_signs),
            "sign_changes": self.sign_changes,
            "roots": self.roots.as_dict(),
            "special_rows": [s.as_dict() for s in self.special_rows],
            "hurwitz": self.is_hurwitz,
            "counted_by_factors": self.counted_by_factors,
            "omitted_rows": self.omitted_rows,
        }


def _true_rows(integer_rows, multiple: Fraction) -> tuple[tuple[Fraction, ...], ...]:
    """Undo the fraction-free scaling: Routh row m is r(m) / r(m-1)[0] for m >= 2."""
    out = []
    for m, row in enumerate(integer_rows):
        scale = multiple * (Fraction(int(integer_rows[m - 1][0])) if m >= 2 else 1)
        out.append(tuple(Fraction(int(x)) / scale for x in row))
    return tuple(out)


def format_entry(entry: Entry) -> str:
    """Exact text of a table entry: ``"7/2"``, or a rational function of ε."""
    if isinstance(entry, Fraction):
        return format_fraction(entry)
    return str(entry)


def _format_polynomial(coefficients: Sequence[Entry], variable: str = "s") -> str:
    n = len(coefficients) - 1
    parts = []
    for i, c in enumerate(coefficients):
        if c == 0:
            continue
        k = n - i
        if not isinstance(c, Fraction):
            parts.append(f"+ ({c})" + ("" if k == 0 else f"*{variable}^{k}"))
            continue
        mag = format_fraction(abs(c))
        power = "" if k == 0 else (variable if k == 1 else f"{variable}^{k}")
        term = mag if not power else (power if mag == "1" else f"{mag}*{power}")
        parts.append(("- " if c < 0 else "+ ") + term)
    if not parts:
        return "0"
    text = " ".join(parts)
    return text[2:] if text.startswith("+ ") else "-" + text[2:]


# -- input --------------------------------------------------------------------------------


def as_coefficients(coefficients: object) -> tuple[Fraction, ...]:
    """Exact coefficients, highest power first, with leading zeros removed.

    Accepts a sequence of ints, Fractions, decimal strings or floats (floats through their
    shortest repr). Text in ``s`` is read one layer up, by :func:`robust.model.forms.routh_table`.

    Raises
    ------
    InputError
        When nothing usable is given or every coefficient is zero.
    """
    if isinstance(coefficients, str) or not isinstance(coefficients, Sequence):
        raise InputError("polynomial", "not a list of coefficients",
                         "coefficients highest power first", coefficients)
    coeffs = [to_fraction(c, f"coefficient {i}") for i, c in enumerate(coefficients)]
    start = next((i for i, c in enumerate(coeffs) if c != 0), None)
    if start is None:
        raise InputError("polynomial", "the zero polynomial has no roots to count",
                         "at least one non-zero coefficient")
    return tuple(coeffs[start:])


def shift_coefficients(coefficients: Sequence[Fraction], sigma: Fraction) -> tuple[Fraction, ...]:
    """Coefficients of p(s - sigma), exactly (repeated synthetic division).

    A root r of p becomes r + sigma; p(s - sigma) is Hurwitz exactly when every root of p
    has real part below -sigma.
    """
    c = list(coefficients)
    if sigma == 0:
        return tuple(c)
    n = len(c) - 1
    shift = -sigma
    for i in range(n):
        for j in range(1, n - i + 1):
            c[j] += shift * c[j - 1]
    return tuple(c)


def _integer_coefficients(coefficients: Sequence[Fraction]) -> list[int]:
    scale = lcm(*(c.denominator for c in coefficients))
    return [int(c.numerator * (scale // c.denominator)) for c in coefficients]


# -- the recurrence -----------------------------------------------------------------------


def _count_changes(signs: Sequence[int]) -> int:
    return sum(1 for a, b in pairwise(signs) if a != b)


def _fraction_free_rows(ints: Sequence[int], stop_at_non_positive: bool = False) -> list[list] | None:
    """Integer rows (see the module notes), or None when a zero leading entry is met.

    With ``stop_at_non_positive`` (and a positive leading coefficient) the computation stops
    at the first leading entry that is not positive and returns None: the polynomial is then
    not Hurwitz.
    """
    n = len(ints) - 1
    width = n // 2 + 1
    top = [mpz(x) for x in ints[0::2]]
    low = [mpz(x) for x in ints[1::2]]
    rows = [top + [mpz(0)] * (width - len(top)), low + [mpz(0)] * (width - len(low))]
    if n == 0:
        return rows[:1]
    if rows[1][0] == 0 or (stop_at_non_positive and rows[1][0] < 0):
        return None
    zero = mpz(0)
    for m in range(2, n + 1):
        a, b = rows[m - 2], rows[m - 1]
        a0, b0 = a[0], b[0]
        length = (n - m) // 2 + 1
        if m < 4:
            new = [b0 * a[j + 1] - a0 * b[j + 1] for j in range(length)]
        else:
            d = rows[m - 3][0]
            new = [divexact(b0 * a[j + 1] - a0 * b[j + 1], d) for j in range(length)]
        if new[0] == 0 or (stop_at_non_positive and new[0] < 0):
            return None
        rows.append(new + [zero] * (width - length))
    return rows


def is_hurwitz(coefficients: Sequence[Fraction | int]) -> bool:
    """Whether every root lies in the open left half-plane: the fast exact test.

    Stops at the first non-positive first-column entry (after normalising the sign of the
    leading coefficient); no table is kept.
    """
    # to_fraction, as in routh_table: a float is its decimal repr (0.1 -> 1/10), not its binary value
    coeffs = [c if isinstance(c, Fraction) else to_fraction(c, f"coefficient {i}")
              for i, c in enumerate(coefficients)]
    while coeffs and coeffs[0] == 0:
        coeffs.pop(0)
    if not coeffs:
        raise InputError("polynomial", "the zero polynomial has no roots to count")
    ints = _integer_coefficients(coeffs)
    if ints[0] < 0:
        ints = [-x for x in ints]
    if any(x <= 0 for x in ints):  # necessary condition (Stodola), and it is cheap
        return False
    return _fraction_free_rows(ints, stop_at_non_positive=True) is not None


# The special-case rows are exact: GMP rationals until the first ε, then rational functions
# of ε (robust.exact.epsilon). Their size grows with every ε row (a sparse polynomial of
# degree 200 would reach degree ~190 in ε); past these bounds the rest of the table is left
# out and the counts come from robust.exact.rootcount, which needs no table.
_MAX_EPSILON_DEGREE = 24  # largest degree in ε of an entry that is still shown
_EPSILON_WORK = 60_000  # work units (10 + size^2 per ε entry) for one table


def _entry_out(entry) -> Entry:
    """A Fraction for a constant entry, else the rational function of ε itself."""
    return entry if isinstance(entry, EpsilonFraction) else from_mpq(entry)


def _general_rows(coeffs: Sequence[Fraction]) -> tuple[list[list], list[SpecialRow], int, int]:
    """Exact rows with both special rules.

    Returns the rows computed, the special rows, the index of the first auxiliary row (-1
    when none) and the number of rows left out at the bottom (see ``_EPSILON_WORK``).
    """
    n = len(coeffs) - 1
    width = n // 2 + 1
    zero = mpq(0)
    entries = [to_mpq(c) for c in coeffs]
    rows: list[list] = [
        entries[0::2] + [zero] * (width - len(entries[0::2])),
        entries[1::2] + [zero] * (width - len(entries[1::2])),
    ][: n + 1]
    special: list[SpecialRow] = []
    first_aux: int | None = None
    spent = 0
    for m in range(1, n + 1):
        power = n - m
        if m >= 2:
            a, b = rows[m - 2], rows[m - 1]
            new = []
            for j in range(width - 1):
                entry = routh_step(a[0], a[j + 1], b[0], b[j + 1])
                if isinstance(entry, EpsilonFraction):
                    # computing an entry costs about size^2 (its gcd), printing it a constant
                    spent += 10 + size(entry) ** 2
                    if entry.degree > _MAX_EPSILON_DEGREE or spent > _EPSILON_WORK:
                        return rows, special, _or_none(first_aux), n + 1 - m
                new.append(entry)
            rows.append([*new, zero])
        row = rows[m]
        if all(is_zero(e) for e in row):
            above = rows[m - 1]
            k = power + 1  # degree of the auxiliary polynomial
            aux = [above[j] for j in range(k // 2 + 1)]
            aux_coeffs: list[Entry] = []
            for c in aux:
                aux_coeffs += [_entry_out(c), Fraction(0)]
            special.append(SpecialRow(power, "zero_row", tuple(aux_coeffs[: k + 1])))
            rows[m] = [times(k - 2 * j, aux[j]) for j in range(len(aux))]
            rows[m] += [zero] * (width - len(rows[m]))
            if first_aux is None:
                first_aux = m - 1
        if is_zero(rows[m][0]):
            special.append(SpecialRow(power, "zero_leading"))
            rows[m][0] = EPSILON_ENTRY
    return rows, special, _or_none(first_aux), 0


def _or_none(index: int | None) -> int:
    return -1 if index is None else index


def routh_table(coefficients: object, shift: object = 0) -> RouthTable:
    """Build the exact Routh array of a polynomial and count its roots.

    Parameters
    ----------
    coefficients
        Coefficients highest power first (ints, Fractions, decimal strings such as ``"0.1"``
        taken exactly). Text such as ``"s^3 + 2*s^2 + 1"`` is read by the public
        :func:`robust.routh_table` (:func:`robust.model.forms.routh_table`).
    shift
        ``sigma``: count relative to the line Re(s) = -sigma (the table is that of
        p(s - sigma)); e.g. ``shift=1`` asks whether every root has Re(s) < -1.

    Returns
    -------
    RouthTable

    Raises
    ------
    InputError, FormulaError
        For unreadable input or the zero polynomial.

    Examples
    --------
    >>> t = routh_table([1, 1, 2, 2, 1, 1])  # (s^2 + 1)^2 (s + 1)
    >>> t.roots
    RootCounts(open_right=0, imaginary_axis=4, open_left=1)
    >>> routh_table([1, "0.5", "0.06"]).is_hurwitz
    True
    """
    sigma = to_fraction(shift, "shift")
    coeffs = shift_coefficients(as_coefficients(coefficients), sigma)
    n = len(coeffs) - 1
    ints = _integer_coefficients(coeffs)
    fast = _fraction_free_rows(ints)
    if fast is not None:
        integer_signs = [1 if row[0] > 0 else -1 for row in fast]
        signs = tuple(
            integer_signs[m] * (integer_signs[m - 1] if m >= 2 else 1) for m in range(n + 1)
        )
        changes = _count_changes(signs)
        return RouthTable(
            coefficients=coeffs,
            shift=sigma,
            special_rows=(),
            first_column_signs=signs,
            roots=RootCounts(changes, 0, n - changes),
            _integer_rows=tuple(tuple(row) for row in fast),
            _scales=Fraction(ints[0]) / coeffs[0],
            _exact_rows=None,
        )
    rows, special, first_aux, omitted = _general_rows(coeffs)
    signs = tuple(sign_at_zero_plus(row[0]) for row in rows)
    changes = _count_changes(signs)
    by_factors = False
    if omitted or any(s.kind == "zero_leading" for s in special):
        # the ε rule alone is unsound when a root pair r, -r exists (Gantmacher, 1959,
        # ch. XV), and a cut table has no bottom rows: count without the table
        right, axis, left, paired = count_roots(coeffs)
        roots = RootCounts(right, axis, left)
        by_factors = paired > 0 and any(s.kind == "zero_leading" for s in special)
    else:
        imaginary = 0
        if first_aux >= 0:
            imaginary = (n - first_aux) - 2 * _count_changes(signs[first_aux:])
        roots = RootCounts(changes, imaginary, n - changes - imaginary)
    return RouthTable(
        coefficients=coeffs,
        shift=sigma,
        special_rows=tuple(special),
        first_column_signs=signs,
        roots=roots,
        _integer_rows=None,
        _scales=None,
        _exact_rows=tuple(tuple(row) for row in rows),
        counted_by_factors=by_factors,
        omitted_rows=omitted,
    )
