"""Root regions other than the open left half-plane, mapped exactly onto Hurwitz questions.

The disk |z| < r (discrete time: r = 1). The Moebius map z = r (1 + w) / (1 - w) takes the open
disk onto the open left half-plane Re w < 0, its circle onto the imaginary axis (z = -r onto
w = infinity) and the outside onto Re w > 0, so

    q(w) = (1 - w)^n p(r (1 + w) / (1 - w)) = sum_k a_k r^k (1 + w)^k (1 - w)^(n - k)

has as many roots left of, on and right of the imaginary axis as p has inside, on and outside
the circle, except that each root of p at z = -r lowers the degree of q by one (the standard
bilinear transformation; e.g. Jury, "Theory and Application of the z-Transform Method", 1964,
from memory). Its coefficients are linear in p's, so an affine or multilinear family stays so.

The Schur-Cohn reduction (Schur 1917; Cohn 1922; from memory) gives the table that the trade
prints for the unit circle: p_n = p and, with c_k the leading and c_0 the constant coefficient
of p_k, p_(k-1)(z) = (c_k p_k(z) - c_0 p_k*(z)) / z, where p_k* is p_k with its coefficients
reversed. p has every root inside the unit circle exactly when |c_k| > |c_0| at every step.

The damping sector: every root s with Re(s) < -zeta |s| (damping ratio above zeta, 0 <= zeta
< 1), the open sector of half-angle phi = arccos(zeta) about the negative real axis. With
alpha = pi/2 - phi, a root lies in it exactly when both e^(-j alpha) s and e^(j alpha) s lie
in the open left half-plane; the roots of p(e^(j alpha) w) are the first ones and, p being
real, the conjugates of the roots of p(e^(-j alpha) w) are the second. So the real polynomial

    P(w) = p(e^(j alpha) w) p(e^(-j alpha) w) = sum_(i, l) a_i a_l cos((i - l) alpha) w^(i + l)

of degree 2n is Hurwitz exactly when every root of p is in the sector (the rotated-polynomial
argument of Barmish, "New Tools for Robustness of Linear Systems", 1994, from memory; the
product form derived here). Its coefficients are quadratic in p's. The angle is carried as
t = tan(alpha / 2), rational: then cos(alpha) = (1 - t^2) / (1 + t^2) and zeta = sin(alpha) =
2t / (1 + t^2) are rational, cos(m alpha) is the Chebyshev polynomial T_m(cos alpha), and
every coefficient is exact. A damping ratio whose t is irrational is tested through a
rational t on the safe side (:func:`damping_parameter`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import comb, isqrt

from . import intpoly
from .numbers import short_between
from .routh import routh_table

__all__ = ["DiskCounts", "SchurCohnTable", "damping_of", "damping_parameter", "disk_counts",
           "disk_to_half_plane", "moebius_weights", "schur_cohn_table", "sector_product", "sector_weights"]


@dataclass(frozen=True, slots=True)
class DiskCounts:
    """Roots (with multiplicity) inside, on and outside the circle |z| = radius."""

    inside: int
    on_circle: int
    outside: int
    radius: Fraction = Fraction(1)

    @property
    def words(self) -> str:
        """The counts in words, for people."""
        circle = "the unit circle" if self.radius == 1 else f"the circle |z| = {self.radius}"
        return f"{self.outside} outside {circle}, {self.on_circle} on it, {self.inside} inside it"

    def as_dict(self) -> dict[str, int]:
        """JSON: inside, on_circle, outside (DESIGN.md section 5), and the same counts under
        the half-plane names every command's roots object carries (the roots of the bilinear
        image: open_left = inside, imaginary_axis = on_circle, open_right = outside)."""
        return {"inside": self.inside, "on_circle": self.on_circle, "outside": self.outside,
                "open_right": self.outside, "imaginary_axis": self.on_circle, "open_left": self.inside}


def _binomial_row(k: int, sign: int) -> tuple:
    """(1 + sign w)^k, ascending powers."""
    return intpoly.trim(comb(k, j) * sign**j for j in range(k + 1))


def moebius_weights(n: int, radius: Fraction = Fraction(1)) -> tuple[tuple[Fraction, ...], ...]:
    """The linear map of the disk: ``weights[j][i]`` is what p's coefficient i (highest power
    first, degree n) contributes to q's coefficient j (highest power first), q(w) = (1 - w)^n
    p(radius (1 + w) / (1 - w))."""
    rows = [[Fraction(0)] * (n + 1) for _ in range(n + 1)]
    for i in range(n + 1):
        k = n - i  # p's coefficient i multiplies z^k
        term = intpoly.mul(_binomial_row(k, 1), _binomial_row(n - k, -1))  # ascending in w
        scale = Fraction(radius) ** k
        for power, c in enumerate(term):
            rows[n - power][i] += scale * int(c)
    return tuple(tuple(row) for row in rows)


def disk_to_half_plane(coefficients: Sequence[Fraction], radius: Fraction = Fraction(1)) -> list[Fraction]:
    """q(w) = (1 - w)^n p(radius (1 + w) / (1 - w)), highest power first (exact; it may have
    leading zeros, one per root of p at z = -radius)."""
    coeffs = [Fraction(c) for c in coefficients]
    weights = moebius_weights(len(coeffs) - 1, Fraction(radius))
    return [sum((w * a for w, a in zip(row, coeffs, strict=True) if w and a), Fraction(0)) for row in weights]


def disk_counts(coefficients: Sequence[Fraction], radius: Fraction = Fraction(1)) -> DiskCounts:
    """Exact root counts of p (highest power first, leading coefficient non-zero) relative to
    the circle |z| = radius, by the exact Routh array of the mapped polynomial."""
    coeffs = [Fraction(c) for c in coefficients]
    if not coeffs or coeffs[0] == 0:
        raise ValueError("the leading coefficient must be non-zero")
    n = len(coeffs) - 1
    q = disk_to_half_plane(coeffs, radius)
    at_minus_r = 0
    while q and q[0] == 0:  # each such zero: a root of p at z = -radius
        q.pop(0)
        at_minus_r += 1
    if len(q) <= 1:
        return DiskCounts(0, at_minus_r, 0, Fraction(radius))
    roots = routh_table(q).roots
    assert roots.open_right + roots.imaginary_axis + roots.open_left + at_minus_r == n
    return DiskCounts(roots.open_left, roots.imaginary_axis + at_minus_r, roots.open_right, Fraction(radius))


@dataclass(frozen=True, slots=True)
class SchurCohnTable:
    """The Schur-Cohn reduction: ``rows[i]`` holds p_(n-i)'s coefficients, highest power first;
    ``conditions[i]`` whether |leading| > |constant| for that row (none for the last row, a
    constant). ``stopped`` is the degree at
    which a condition first failed (the reduction stops there: the polynomial then has a root
    on or outside the circle), or None when every condition holds."""

    rows: tuple[tuple[Fraction, ...], ...]
    conditions: tuple[bool, ...]
    stopped: int | None

    @property
    def schur_stable(self) -> bool:
        """Every root strictly inside the unit circle."""
        return self.stopped is None


def schur_cohn_table(coefficients: Sequence[Fraction]) -> SchurCohnTable:
    """The Schur-Cohn reduction of p (highest power first) for the unit circle, exactly; the
    rows are the reduced polynomials themselves."""
    row = [Fraction(c) for c in coefficients]
    if not row or row[0] == 0:
        raise ValueError("the leading coefficient must be non-zero")
    rows, conditions = [], []
    while True:
        rows.append(tuple(row))
        k = len(row) - 1
        if k == 0:  # a non-zero constant: no root left to place
            return SchurCohnTable(tuple(rows), tuple(conditions), None)
        holds = abs(row[0]) > abs(row[-1])
        conditions.append(holds)
        if not holds:
            return SchurCohnTable(tuple(rows), tuple(conditions), k)
        lead, const = row[0], row[-1]
        reversed_row = row[::-1]
        # (lead * p - const * p*) / z: the constant term cancels; highest power first
        row = [lead * a - const * b for a, b in zip(row, reversed_row, strict=True)][:-1]


def damping_of(t: Fraction) -> Fraction:
    """The damping ratio 2t / (1 + t^2) of the sector carried by t = tan(alpha / 2), 0 <= t <= 1."""
    return 2 * t / (1 + t * t)


def _sqrt_bounds(x: Fraction, digits: int = 40) -> tuple[Fraction, Fraction]:
    """Rationals lo <= sqrt(x) <= hi, 10^-digits apart (x >= 0)."""
    scale = 10 ** digits
    root = isqrt(x.numerator * scale * scale // x.denominator)
    return Fraction(root, scale), Fraction(root + 1, scale)


def damping_parameter(zeta: Fraction, side: int, rel_tol: Fraction = Fraction(1, 10**12)) -> Fraction:
    """A short rational t with damping_of(t) >= zeta (``side`` = +1: a sector at least as
    narrow, safe for a proof) or <= zeta (``side`` = -1: at least as wide, safe for a
    counterexample), within ``rel_tol`` of the exact t = zeta / (1 + sqrt(1 - zeta^2)); exact
    when that is rational. 0 <= zeta < 1."""
    zeta = Fraction(zeta)
    if not 0 <= zeta < 1:
        raise ValueError("a damping ratio in [0, 1)")
    if zeta == 0:
        return Fraction(0)
    low_root, high_root = _sqrt_bounds(1 - zeta * zeta)
    square = 1 - zeta * zeta
    num, den = isqrt(square.numerator), isqrt(square.denominator)
    if num * num == square.numerator and den * den == square.denominator:  # t is rational
        return zeta / (1 + Fraction(num, den))
    if side > 0:  # t grows as the root shrinks
        t = zeta / (1 + low_root)
        found = short_between(t, t * (1 + rel_tol))
    else:
        t = zeta / (1 + high_root)
        found = short_between(t * (1 - rel_tol), t)
    t = found if found is not None else t
    assert (damping_of(t) >= zeta) if side > 0 else (damping_of(t) <= zeta)
    return t


def _chebyshev(c: Fraction, top: int) -> list[Fraction]:
    """T_0(c) .. T_top(c): cos(m alpha) from cos(alpha) = c."""
    values = [Fraction(1), c]
    while len(values) <= top:
        values.append(2 * c * values[-1] - values[-2])
    return values[:top + 1]


def sector_weights(n: int, t: Fraction) -> tuple[tuple[tuple[int, int, Fraction], ...], ...]:
    """The quadratic map of the damping sector: ``weights[j]`` lists (i, j, w) with i <= j,
    and P's coefficient j (highest power first, degree 2n) is the sum of w a_i a_j over
    them (a highest power first, degree n)."""
    c = (1 - t * t) / (1 + t * t)
    cosines = _chebyshev(c, n)
    rows: list[list[tuple[int, int, Fraction]]] = [[] for _ in range(2 * n + 1)]
    for i in range(n + 1):
        for j in range(i, n + 1):
            weight = cosines[j - i] * (1 if i == j else 2)
            if weight:
                rows[i + j].append((i, j, weight))  # power (n - i) + (n - j): index i + j
    return tuple(tuple(row) for row in rows)


def sector_product(coefficients: Sequence[Fraction], t: Fraction) -> list[Fraction]:
    """P(w) = p(e^(j alpha) w) p(e^(-j alpha) w) with tan(alpha / 2) = t, highest power first:
    Hurwitz exactly when every root of p has damping ratio above damping_of(t)."""
    a = [Fraction(c) for c in coefficients]
    return [sum((w * a[i] * a[j] for i, j, w in row), Fraction(0))
            for row in sector_weights(len(a) - 1, Fraction(t))]
