"""Interval polynomials and Kharitonov's theorem.

A real interval polynomial with a_i in [low_i, high_i] (the leading interval excluding
zero) is Hurwitz-stable for every choice of coefficients exactly when its four Kharitonov
polynomials are (Kharitonov, "Asymptotic stability of an equilibrium position of a family
of systems of linear differential equations", 1978). In ascending powers a_0, a_1, ... the
four use the bound patterns (period four):

    K1: low  low  high high   K2: high high low  low
    K3: high low  low  high   K4: low  high high low

(labels as in Barmish, "New Tools for Robustness of Linear Systems", 1994, ch. 5). For
degree 3, 4 and 5 fewer suffice (Anderson, Jury & Mansour, "On robust Hurwitz polynomials",
IEEE Trans. Automatic Control 32, 1987): we test those together with the positivity of every
lower bound, which is necessary anyway; the test suite checks the reduced sets against the
full four.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

from .routh import RouthTable, is_hurwitz, routh_table

__all__ = [
    "KHARITONOV_PATTERNS",
    "REDUCED_SETS",
    "IntervalPolynomial",
    "KharitonovResult",
    "KharitonovVertex",
    "kharitonov_test",
]

#: Bound pattern per Kharitonov polynomial, ascending powers, repeated with period 4.
KHARITONOV_PATTERNS: dict[str, tuple[str, str, str, str]] = {
    "K1": ("low", "low", "high", "high"),
    "K2": ("high", "high", "low", "low"),
    "K3": ("high", "low", "low", "high"),
    "K4": ("low", "high", "high", "low"),
}

#: Which Kharitonov polynomials decide, by degree (with all lower bounds positive).
#: Degree <= 2: positivity alone (a polynomial of degree 1 or 2 is Hurwitz exactly when its
#: coefficients share one sign).
REDUCED_SETS: dict[int, tuple[str, ...]] = {
    0: (),
    1: (),
    2: (),
    3: ("K3",),
    4: ("K2", "K3"),
    5: ("K2", "K3", "K4"),
}


@dataclass(frozen=True, slots=True)
class IntervalPolynomial:
    """Coefficient intervals a_n .. a_0 (highest power first)."""

    low: tuple[Fraction, ...]
    high: tuple[Fraction, ...]

    def __post_init__(self) -> None:
        if len(self.low) != len(self.high):
            raise ValueError("low and high must have the same length")
        if any(a > b for a, b in zip(self.low, self.high, strict=True)):
            raise ValueError("every interval needs low <= high")

    @property
    def degree(self) -> int:
        """n."""
        return len(self.low) - 1

    @property
    def degree_invariant(self) -> bool:
        """The leading interval excludes zero (every member has degree n)."""
        return self.low[0] > 0 or self.high[0] < 0

    def normalised(self) -> IntervalPolynomial:
        """The same family with a positive leading interval (negated if needed)."""
        if self.high[0] < 0:
            return IntervalPolynomial(tuple(-h for h in self.high), tuple(-lo for lo in self.low))
        return self

    def vertex(self, label: str) -> tuple[Fraction, ...]:
        """Coefficients (highest first) of Kharitonov polynomial ``label`` of the normalised family."""
        fam = self.normalised()
        pattern = KHARITONOV_PATTERNS[label]
        n = fam.degree
        out = []
        for k in range(n + 1):  # k = position from the top; power = n - k
            which = pattern[(n - k) % 4]
            out.append(fam.low[k] if which == "low" else fam.high[k])
        return tuple(out)

    def pattern(self, label: str) -> tuple[str, ...]:
        """Which bound ("low"/"high") the vertex uses per coefficient, highest power first,
        in terms of the family as given (before any sign normalisation)."""
        pattern = KHARITONOV_PATTERNS[label]
        n = self.degree
        flip = self.high[0] < 0
        out = []
        for k in range(n + 1):
            which = pattern[(n - k) % 4]
            if flip:
                which = "high" if which == "low" else "low"
            out.append(which)
        return tuple(out)


@dataclass(frozen=True, slots=True)
class KharitonovVertex:
    """One Kharitonov polynomial and its exact Routh verdict."""

    label: str
    coefficients: tuple[Fraction, ...]
    pattern: tuple[str, ...]
    hurwitz: bool
    table: RouthTable | None


@dataclass(frozen=True, slots=True)
class KharitonovResult:
    """The verdict of Kharitonov's test on an interval polynomial.

    ``stable`` is True when every member is Hurwitz. When it is False, ``reason`` says why:
    ``"degree"`` (the leading interval contains zero), ``"sign"`` (some lower bound, after
    normalisation, is not positive; ``failing_coefficient`` names its position from the
    top), or ``"vertex"`` (a Kharitonov polynomial is not Hurwitz: ``failing``).
    """

    family: IntervalPolynomial
    stable: bool
    reason: str
    vertices: tuple[KharitonovVertex, ...]
    checked: tuple[str, ...]
    reduced: bool
    failing: tuple[str, ...] = ()
    failing_coefficient: int | None = None


def kharitonov_test(family: IntervalPolynomial, tables: bool = False,
                    reduced: bool = True) -> KharitonovResult:
    """Decide Hurwitz stability of every member of an interval polynomial.

    Parameters
    ----------
    family
        The coefficient intervals.
    tables
        Also keep the exact Routh table of each vertex polynomial (for certificates).
    reduced
        Use the reduced vertex sets for degree 3 to 5.

    Examples
    --------
    >>> fam = IntervalPolynomial((Fraction(1), Fraction(5), Fraction(8), Fraction(3)),
    ...                          (Fraction(1), Fraction(6), Fraction(10), Fraction(4)))
    >>> kharitonov_test(fam).stable
    True
    """
    n = family.degree
    if not family.degree_invariant:
        return KharitonovResult(family, False, "degree", (), (), reduced)
    norm = family.normalised()
    labels = REDUCED_SETS.get(n, tuple(KHARITONOV_PATTERNS)) if reduced else tuple(KHARITONOV_PATTERNS)
    bad = next((k for k, lo in enumerate(norm.low) if lo <= 0), None)
    if reduced and bad is not None:
        return KharitonovResult(family, False, "sign", (), labels, reduced,
                                failing_coefficient=bad)
    if n <= 2 and not reduced:
        labels = tuple(KHARITONOV_PATTERNS)
    vertices = []
    for label in (labels if reduced else tuple(KHARITONOV_PATTERNS)):
        coeffs = family.vertex(label)
        table = routh_table(list(coeffs)) if tables else None
        ok = table.is_hurwitz if table is not None else is_hurwitz(coeffs)
        vertices.append(KharitonovVertex(label, coeffs, family.pattern(label), ok, table))
        if not ok and not tables:
            break
    failing = tuple(v.label for v in vertices if not v.hurwitz)
    if not failing and bad is not None:  # full set with a non-positive bound: cannot happen
        return KharitonovResult(family, False, "sign", tuple(vertices), labels, reduced,
                                failing_coefficient=bad)
    return KharitonovResult(family, not failing, "vertex" if failing else "",
                            tuple(vertices), tuple(v.label for v in vertices), reduced, failing)


def interval_from_bounds(low: Sequence[Fraction], high: Sequence[Fraction]) -> IntervalPolynomial:
    """Build an IntervalPolynomial from two sequences."""
    return IntervalPolynomial(tuple(low), tuple(high))
