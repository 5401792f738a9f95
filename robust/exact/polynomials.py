"""Exact sparse polynomials in the parameters, with sound interval bounds.

A coefficient of the characteristic polynomial is a :class:`MultiPoly`: a map from exponent
tuples (one exponent per parameter, in the family's parameter order) to exact rationals.
Arithmetic inside uses GMP rationals (``mpq`` of :mod:`robust.exact.numbers`): exact, and far
faster than ``Fraction``; results leave as ``Fraction``.

Bounds over a box use exact rational interval arithmetic (Moore, "Interval Analysis",
1966): sound outer bounds, made exact where the polynomial is monotone in a parameter over
the box (the sign of the partial derivative, itself bounded soundly) or multilinear (extrema
of a multilinear function over a box sit at vertices).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from itertools import product
from typing import TYPE_CHECKING

from .numbers import format_fraction, from_mpq, mpq, to_float, to_mpq

if TYPE_CHECKING:
    import numpy as np

__all__ = ["Bound", "MultiPoly", "interval_power"]

_VARIABLES: dict[tuple, frozenset[int]] = {}  # terms -> variables used (terms are immutable)

Interval = tuple  # (low, high) of mpq
_q = to_mpq
_f = from_mpq


def interval_power(low, high, k: int) -> Interval:
    """Exact range of x^k for x in [low, high]."""
    if k == 0:
        return mpq(1), mpq(1)
    a, b = low**k, high**k
    if k % 2 == 0:
        if low <= 0 <= high:
            return mpq(0), max(a, b)
        return (a, b) if a <= b else (b, a)
    return a, b


@dataclass(frozen=True, slots=True)
class Bound:
    """A range [low, high] of a coefficient over a box; ``exact`` when both ends are attained."""

    low: Fraction
    high: Fraction
    exact: bool

    def contains(self, value: Fraction) -> bool:
        """Whether ``value`` lies in the closed range."""
        return self.low <= value <= self.high


@dataclass(frozen=True, slots=True)
class MultiPoly:
    """An exact polynomial in ``nvars`` parameters.

    ``terms`` maps exponent tuples to non-zero ``mpq`` coefficients, kept sorted for a
    canonical form.
    """

    nvars: int
    terms: tuple[tuple[tuple[int, ...], object], ...]

    @staticmethod
    def from_mapping(nvars: int, mapping: Mapping[tuple[int, ...], object]) -> MultiPoly:
        """Build from {exponents: coefficient}, dropping zeros."""
        items = sorted((tuple(e), _q(c)) for e, c in mapping.items())
        return MultiPoly(nvars, tuple((e, c) for e, c in items if c != 0))

    @staticmethod
    def constant(nvars: int, value: Fraction | int) -> MultiPoly:
        """The constant polynomial."""
        return MultiPoly.from_mapping(nvars, {(0,) * nvars: value})

    # -- structure ------------------------------------------------------------------------
    @property
    def is_zero(self) -> bool:
        """True for the zero polynomial."""
        return not self.terms

    def variables(self) -> frozenset[int]:
        """Indices of the parameters that appear."""
        cached = _VARIABLES.get(self.terms)
        if cached is None:
            cached = frozenset(i for e, _ in self.terms for i, k in enumerate(e) if k)
            if len(_VARIABLES) > 100_000:
                _VARIABLES.clear()
            _VARIABLES[self.terms] = cached
        return cached

    def total_degree(self) -> int:
        """Largest total degree of a term (0 for constants and zero)."""
        return max((sum(e) for e, _ in self.terms), default=0)

    def degree_in(self, i: int) -> int:
        """Largest exponent of parameter ``i``."""
        return max((e[i] for e, _ in self.terms), default=0)

    def is_multilinear(self) -> bool:
        """Every parameter appears with exponent at most 1 in every term."""
        return all(k <= 1 for e, _ in self.terms for k in e)

    def derivative(self, i: int) -> MultiPoly:
        """Partial derivative with respect to parameter ``i``."""
        out: dict[tuple[int, ...], object] = {}
        for e, c in self.terms:
            if e[i]:
                f = list(e)
                f[i] -= 1
                out[tuple(f)] = c * e[i]
        return MultiPoly.from_mapping(self.nvars, out)

    # -- evaluation -----------------------------------------------------------------------
    def evaluate(self, point: Sequence[Fraction]) -> Fraction:
        """Exact value at a rational point."""
        return _f(self._evaluate_q([_q(x) for x in point]))

    def _evaluate_q(self, point: Sequence) -> object:
        total = mpq(0)
        for e, c in self.terms:
            term = c
            for x, k in zip(point, e, strict=True):
                if k:
                    term = term * x**k
            total += term
        return total

    def evaluate_float(self, point: Sequence[float]) -> float:
        """Float value at one point (guidance only)."""
        total = 0.0
        for e, c in self.terms:
            term = to_float(c)
            for x, k in zip(point, e, strict=True):
                if k:
                    term *= x**k
            total += term
        return total

    def evaluate_many(self, points: np.ndarray) -> np.ndarray:
        """Float values at many points (rows of ``points``): for screening, never for verdicts."""
        import numpy as np  # here, not at import: routh and the parser need no numpy

        out = np.zeros(points.shape[0])
        for e, c in self.terms:
            term = np.full(points.shape[0], to_float(c))
            for i, k in enumerate(e):
                if k:
                    term = term * points[:, i] ** k
            out += term
        return out

    @staticmethod
    def linear_combination(nvars: int, polys: Sequence[MultiPoly], weights: Sequence[object]) -> MultiPoly:
        """sum of weights[i] * polys[i] (weights exact rationals)."""
        out: dict[tuple[int, ...], object] = {}
        for poly, weight in zip(polys, weights, strict=True):
            w = _q(weight)
            if w == 0:
                continue
            for e, c in poly.terms:
                out[e] = out.get(e, mpq(0)) + w * c
        return MultiPoly.from_mapping(nvars, out)

    def substitute(self, values: Mapping[int, object]) -> MultiPoly:
        """Fix some parameters at exact values (the others stay)."""
        out: dict[tuple[int, ...], object] = {}
        for e, c in self.terms:
            f = list(e)
            coeff = c
            for i, v in values.items():
                if f[i]:
                    coeff = coeff * _q(v) ** f[i]
                    f[i] = 0
            key = tuple(f)
            out[key] = out.get(key, mpq(0)) + coeff
        return MultiPoly.from_mapping(self.nvars, out)

    # -- bounds ---------------------------------------------------------------------------
    def outer_interval(self, box: Sequence[Interval]) -> Interval:
        """Natural interval extension over ``box`` (a sequence of (low, high) mpq pairs)."""
        low = high = mpq(0)
        for e, c in self.terms:
            tl = th = c
            for (bl, bh), k in zip(box, e, strict=True):
                if k:
                    pl, ph = interval_power(bl, bh, k)
                    cands = (tl * pl, tl * ph, th * pl, th * ph)
                    tl, th = min(cands), max(cands)
            if tl > th:
                tl, th = th, tl
            low += tl
            high += th
        return low, high

    def derivative_signs(self, box: Sequence[Interval], derivatives: Sequence[MultiPoly] | None = None,
                         known: Sequence[int | None] | None = None) -> tuple[int | None, ...]:
        """Per parameter: +1 (nondecreasing), -1 (nonincreasing), 0 (absent), None (mixed).

        Sound: decided from an outer bound of each partial derivative over the box.
        ``known`` holds the signs over a box containing this one: a definite sign there
        stays definite here, so only the mixed ones are recomputed.
        """
        used = self.variables()
        signs: list[int | None] = []
        for i in range(self.nvars):
            if i not in used or box[i][0] == box[i][1]:
                signs.append(0)
                continue
            if known is not None and known[i] is not None and known[i] != 0:
                signs.append(known[i])
                continue
            d = derivatives[i] if derivatives is not None else self.derivative(i)
            lo, hi = d.outer_interval(box)
            signs.append(1 if lo >= 0 else -1 if hi <= 0 else None)
        return tuple(signs)

    def bound(self, box: Sequence[Interval], derivatives: Sequence[MultiPoly] | None = None,
              max_vertices: int = 4096) -> tuple[Interval, bool]:
        """Range over the box as ((low, high), exact).

        Parameters with a definite derivative sign are fixed at the bound-attaining end
        (exact); the rest are enumerated over their vertices when the polynomial is
        multilinear in them (exact), else bounded by interval arithmetic (outer).
        """
        interval, exact, _ = self.bound_and_signs(box, derivatives, max_vertices)
        return interval, exact

    def bound_and_signs(self, box: Sequence[Interval], derivatives: Sequence[MultiPoly] | None = None,
                        max_vertices: int = 4096, known: Sequence[int | None] | None = None
                        ) -> tuple[Interval, bool, tuple[int | None, ...]]:
        """:meth:`bound` together with the :meth:`derivative_signs` it used."""
        if not self.terms:
            return (mpq(0), mpq(0)), True, (0,) * self.nvars
        signs = self.derivative_signs(box, derivatives, known)
        mixed = [i for i, s in enumerate(signs) if s is None]
        if not mixed:  # monotone in every parameter: the two corners, directly
            low_point = [hi if s and s < 0 else lo for (lo, hi), s in zip(box, signs, strict=True)]
            high_point = [hi if s and s > 0 else lo for (lo, hi), s in zip(box, signs, strict=True)]
            return (self._evaluate_q(low_point), self._evaluate_q(high_point)), True, signs
        ends = []
        for want_high in (False, True):
            fixed = {}
            for i, s in enumerate(signs):
                if s is not None and s != 0:
                    up = (s > 0) == want_high
                    fixed[i] = box[i][1] if up else box[i][0]
                elif s == 0 and i in self.variables():
                    fixed[i] = box[i][0]  # a degenerate (point) interval
            ends.append(self.substitute(fixed) if fixed else self)
        if not mixed:
            return (ends[0]._evaluate_q([b[0] for b in box]),
                    ends[1]._evaluate_q([b[0] for b in box])), True, signs
        multilinear_in_mixed = all(e[i] <= 1 for e, _ in self.terms for i in mixed)
        if multilinear_in_mixed and 2 ** len(mixed) <= max_vertices:
            values_low, values_high = [], []
            for corner in product(*((box[i][0], box[i][1]) for i in mixed)):
                point = [b[0] for b in box]
                for i, v in zip(mixed, corner, strict=True):
                    point[i] = v
                values_low.append(ends[0]._evaluate_q(point))
                values_high.append(ends[1]._evaluate_q(point))
            return (min(values_low), max(values_high)), True, signs
        return (ends[0].outer_interval(box)[0], ends[1].outer_interval(box)[1]), False, signs

    def attaining_point(self, box: Sequence[Interval], high: bool,
                        derivatives: Sequence[MultiPoly] | None = None,
                        max_vertices: int = 4096) -> list | None:
        """A corner of the box where the low (or high) end of :meth:`bound` is attained.

        Returns mpq coordinates for every parameter (those not involved at their low end),
        or None when the bound is only an outer one.
        """
        signs = self.derivative_signs(box, derivatives)
        point = [b[0] for b in box]
        mixed = []
        for i, s in enumerate(signs):
            if s is None:
                mixed.append(i)
            elif s != 0:
                point[i] = box[i][1] if (s > 0) == high else box[i][0]
        if not mixed:
            return point
        if not all(e[i] <= 1 for e, _ in self.terms for i in mixed) or 2 ** len(mixed) > max_vertices:
            return None
        best, best_point = None, None
        for corner in product(*((box[i][0], box[i][1]) for i in mixed)):
            trial = list(point)
            for i, v in zip(mixed, corner, strict=True):
                trial[i] = v
            value = self._evaluate_q(trial)
            if best is None or (value > best if high else value < best):
                best, best_point = value, trial
        return best_point

    def to_text(self, names: Sequence[str]) -> str:
        """Readable formula, e.g. ``2*R1*C1 + 1/10``."""
        if not self.terms:
            return "0"
        parts = []
        for e, c in reversed(self.terms):
            factors = [n if k == 1 else f"{n}^{k}" for n, k in zip(names, e, strict=True) if k]
            cf = _f(c)
            mag = abs(cf)
            coeff = format_fraction(mag)  # of any size
            body = "*".join(([coeff] if (mag != 1 or not factors) else []) + factors)
            parts.append(("-" if cf < 0 else "+") + " " + body)
        text = " ".join(parts)
        return text[2:] if text.startswith("+ ") else "-" + text[2:]


def as_intervals(box: Iterable[tuple[Fraction, Fraction]]) -> list[Interval]:
    """Convert a box of Fraction pairs to mpq pairs."""
    return [(_q(lo), _q(hi)) for lo, hi in box]
