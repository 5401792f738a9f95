"""The uncertain polynomial: coefficients as exact functions of toleranced parameters.

A family is a characteristic polynomial a_n(p) s^n + ... + a_0(p) whose coefficients are
exact polynomials in the parameters p, together with the parameter box. Rational
dependence is cleared on the way in: a denominator that keeps one sign over the box
multiplies out without moving any root; one that may vanish is an error.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import TYPE_CHECKING

import numpy as np

from ..errors import InputError
from ..exact.content import common_factor, divide
from ..exact.numbers import to_float
from ..exact.polynomials import Bound, MultiPoly, as_intervals

if TYPE_CHECKING:  # sympy is loaded only by the functions that take sympy input
    import sympy as sp

__all__ = ["Box", "UncertainPolynomial", "build_family", "classify", "discrete_family", "gain_family",
           "limit_reached", "loop_sum_and_difference", "phase_family", "radius_family", "sector_family",
           "shifted_family", "sign_over_box"]

#: The dependence classes, from the most to the least structured.
KINDS = ("independent", "affine", "multilinear", "polynomial")



def limit_reached(limits: tuple[Fraction | None, Fraction | None], low: Fraction, high: Fraction
                  ) -> Fraction | None:
    """The one rule of physical limits: limits are exclusive, so a range [low, high] reaches
    the lower limit when low <= it and the upper one when high >= it; that limit (the lower
    first), else None. A part's range as written, a scaled box, a design range and a
    tolerance class are all held to it.

    Examples
    --------
    >>> limit_reached((Fraction(0), None), Fraction(0), Fraction(1))
    Fraction(0, 1)
    >>> limit_reached((Fraction(0), None), Fraction(1, 10), Fraction(1)) is None
    True
    """
    lo_limit, hi_limit = limits
    if lo_limit is not None and low <= lo_limit:
        return lo_limit
    if hi_limit is not None and high >= hi_limit:
        return hi_limit
    return None

@dataclass(frozen=True, slots=True)
class Box:
    """A parameter box: one closed interval [low, high] per parameter, in family order."""

    names: tuple[str, ...]
    low: tuple[Fraction, ...]
    high: tuple[Fraction, ...]
    #: Each parameter's unit as the case wrote it ("" for none), for display only: not part
    #: of the box's identity, and not carried into the sub-boxes of a search.
    units: tuple[str, ...] = field(default=(), compare=False)

    def unit_of(self, name: str) -> str:
        """The unit of parameter ``name`` ("" when it has none or the box holds no units)."""
        return dict(zip(self.names, self.units, strict=False)).get(name, "")

    @property
    def intervals(self) -> tuple[tuple[Fraction, Fraction], ...]:
        """(low, high) per parameter."""
        return tuple(zip(self.low, self.high, strict=True))

    @property
    def center(self) -> tuple[Fraction, ...]:
        """The midpoint."""
        return tuple((a + b) / 2 for a, b in self.intervals)

    def widths(self) -> tuple[Fraction, ...]:
        """high - low per parameter."""
        return tuple(b - a for a, b in self.intervals)

    def relative_volume(self, outer: Box) -> Fraction:
        """Volume relative to ``outer`` (degenerate directions of ``outer`` count as 1)."""
        ratio = Fraction(1)
        for (a, b), (c, d) in zip(self.intervals, outer.intervals, strict=True):
            if d > c:
                ratio *= (b - a) / (d - c)
        return ratio

    def contains(self, point: Sequence[Fraction]) -> bool:
        """Whether a point lies in the closed box."""
        return all(a <= x <= b for x, (a, b) in zip(point, self.intervals, strict=True))

    def split(self, i: int, at: Fraction | None = None) -> tuple[Box, Box]:
        """Two halves along parameter ``i`` (at its midpoint unless ``at`` is given)."""
        lo, hi = self.low[i], self.high[i]
        cut = (lo + hi) / 2 if at is None else at
        left_high = list(self.high)
        left_high[i] = cut
        right_low = list(self.low)
        right_low[i] = cut
        return Box(self.names, self.low, tuple(left_high)), Box(self.names, tuple(right_low), self.high)

    def scaled(self, nominal: Sequence[Fraction], rho: Fraction,
               only: int | None = None) -> Box:
        """box(rho): every half-width (or only parameter ``only``'s) scaled by rho about nominal."""
        low, high = [], []
        for i, (n, (a, b)) in enumerate(zip(nominal, self.intervals, strict=True)):
            if only is None or i == only:
                low.append(n - rho * (n - a))
                high.append(n + rho * (b - n))
            else:
                low.append(a)
                high.append(b)
        return Box(self.names, tuple(low), tuple(high))

    def vertices(self) -> list[tuple[Fraction, ...]]:
        """Every corner (2^k for k non-degenerate directions)."""
        corners: list[tuple[Fraction, ...]] = [()]
        for a, b in self.intervals:
            ends = (a,) if a == b else (a, b)
            corners = [c + (v,) for c in corners for v in ends]
        return corners

    def as_dict(self) -> dict[str, list[str]]:
        """JSON form: name -> [low, high] as exact strings."""
        from ..exact.numbers import format_fraction

        return {n: [format_fraction(a), format_fraction(b)]
                for n, (a, b) in zip(self.names, self.intervals, strict=True)}


@dataclass(frozen=True, slots=True)
class UncertainPolynomial:
    """Coefficients of s^n .. s^0 as exact polynomials in the parameters, over a box.

    Attributes
    ----------
    names
        Parameter names, in the order of every exponent tuple and point.
    coefficients
        a_n .. a_0 (highest power first) as :class:`MultiPoly`.
    box
        The tolerance box.
    nominal
        The nominal point.
    rational
        True when the case's coefficients were rational in the parameters and a
        sign-definite denominator was cleared.
    cleared
        Text of the cleared denominator ("" when none).
    """

    names: tuple[str, ...]
    coefficients: tuple[MultiPoly, ...]
    box: Box
    nominal: tuple[Fraction, ...]
    rational: bool = False
    cleared: str = ""
    factors: tuple[MultiPoly, ...] = ()
    #: Physical limits per parameter, exclusive; None is no limit on that side.
    limits: tuple[tuple[Fraction | None, Fraction | None], ...] = ()
    #: The user's variable. "z" is discrete time: ``coefficients`` are then the Moebius image
    #: (:func:`discrete_family`) of ``source``, the polynomial in z as written, and are Hurwitz
    #: exactly when every root in z lies strictly inside the unit circle.
    variable: str = "s"
    source: tuple[MultiPoly, ...] = ()
    #: The circle |z| = radius that ``coefficients`` stand for (discrete time only).
    radius: Fraction = Fraction(1)
    #: For a loop: (D, N), den_P den_C and num_P num_C, in the same form as ``coefficients``
    #: (same degree, highest power first), so that D + k N is the loop with an extra gain k.
    loop: tuple[tuple[MultiPoly, ...], tuple[MultiPoly, ...]] = ()
    # derived from ``coefficients`` in __post_init__ (not init fields, so that
    # dataclasses.replace recomputes them rather than carrying them over stale)
    _derivatives: tuple[tuple[MultiPoly, ...], ...] = field(init=False, repr=False, compare=False)
    _float_form: tuple[np.ndarray, np.ndarray] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "_derivatives", tuple(
            tuple(c.derivative(i) for i in range(len(self.names))) for c in self.coefficients))
        exps = sorted({e for c in self.coefficients for e, _ in c.terms})
        index = {e: j for j, e in enumerate(exps)}
        weights = np.zeros((len(self.coefficients), len(exps)))
        for k, c in enumerate(self.coefficients):
            for e, v in c.terms:
                weights[k, index[e]] = to_float(v)
        object.__setattr__(self, "_float_form",
                           (np.array(exps, dtype=float).reshape(len(exps), -1), weights))

    @property
    def degree(self) -> int:
        """Nominal degree n (the leading coefficient is not identically zero)."""
        return len(self.coefficients) - 1

    @property
    def discrete(self) -> bool:
        """A discrete-time family: stable means every root strictly inside the unit circle."""
        return self.variable == "z"

    @property
    def written(self) -> tuple[MultiPoly, ...]:
        """The coefficients of the polynomial in the user's variable, highest power first."""
        return self.source or self.coefficients

    def written_at(self, point: Sequence[Fraction]) -> tuple[Fraction, ...]:
        """Exact coefficients of the polynomial in the user's variable at a point."""
        return tuple(c.evaluate(point) for c in self.written)

    def on_circle_at(self, point: Sequence[Fraction]) -> bool:
        """Discrete time: the Hurwitz form loses its degree at the point while the written
        polynomial keeps it, which happens only for a root at z = -radius (on the circle, so
        not inside it: the point fails)."""
        return bool(self.source) and self.coefficients[0].evaluate(point) == 0 and self.written_at(point)[0] != 0

    def counts_at(self, point: Sequence[Fraction]):
        """Exact root counts at a point, in the user's terms: inside, on and outside the
        circle for a discrete-time family (its leading coefficient non-zero there), left of,
        on and right of the imaginary axis otherwise (of ``coefficients``)."""
        if self.source:
            from ..exact.regions import disk_counts

            written = self.written_at(point)
            if written[0] != 0:
                return disk_counts(written, self.radius)
        from ..exact.routh import RootCounts, routh_table

        coefficients = self.coefficients_at(point)
        return routh_table(list(coefficients)).roots if any(coefficients) else RootCounts(0, 0, 0)

    @property
    def structure(self) -> str:
        """The dependence class of the (cleared) coefficients: see :func:`classify`."""
        return classify(self.coefficients)

    @property
    def kind(self) -> str:
        """The class reported to people: ``rational`` when a denominator was cleared."""
        return "rational" if self.rational else self.structure

    def coefficients_at(self, point: Sequence[Fraction]) -> tuple[Fraction, ...]:
        """Exact coefficients a_n .. a_0 at a rational parameter point."""
        return tuple(c.evaluate(point) for c in self.coefficients)

    def derivatives(self) -> tuple[tuple[MultiPoly, ...], ...]:
        """Partial derivatives: ``[k][i]`` is d a_(n-k) / d p_i."""
        return self._derivatives

    def with_box(self, box: Box) -> UncertainPolynomial:
        """The same polynomial over another box."""
        return dataclasses.replace(self, box=box)

    def with_coefficients(self, coefficients: Sequence[MultiPoly]) -> UncertainPolynomial:
        """Another polynomial over the same parameters and box (e.g. a shifted one)."""
        return dataclasses.replace(self, coefficients=tuple(coefficients))

    def limit_of(self, i: int) -> tuple[Fraction | None, Fraction | None]:
        """The physical limits of parameter ``i`` (exclusive; None: none on that side)."""
        return self.limits[i] if self.limits else (None, None)

    def limit_reached(self, i: int, low: Fraction, high: Fraction) -> Fraction | None:
        """The physical limit of parameter ``i`` that the range [low, high] reaches, if any
        (see :func:`limit_reached`)."""
        return limit_reached(self.limit_of(i), low, high)

    def factor_signs(self, box: Box) -> tuple[int | None, ...]:
        """Per cleared denominator or common factor, its sign over ``box``: see :func:`sign_over_box`."""
        return tuple(sign_over_box(f, box) for f in self.factors)

    def bounds(self, box: Box | None = None) -> tuple[Bound, ...]:
        """Range of each coefficient over the box (exact where monotone/multilinear, else outer)."""
        return self.bounds_and_directions(box)[0]

    def bounds_and_directions(self, box: Box | None = None, known: Sequence | None = None
                              ) -> tuple[tuple[Bound, ...], tuple[tuple[int | None, ...], ...]]:
        """:meth:`bounds` and :meth:`directions` from one pass over the coefficients.

        ``known``: the directions over a box that contains ``box`` (definite ones are kept).
        """
        box = box or self.box
        intervals = as_intervals(box.intervals)
        out, signs = [], []
        for k, (coeff, derivs) in enumerate(zip(self.coefficients, self.derivatives(), strict=True)):
            (lo, hi), exact, sign = coeff.bound_and_signs(intervals, derivs,
                                                          known=known[k] if known else None)
            out.append(Bound(Fraction(int(lo.numerator), int(lo.denominator)),
                             Fraction(int(hi.numerator), int(hi.denominator)), exact))
            signs.append(sign)
        return tuple(out), tuple(signs)

    def coefficients_float(self, points: np.ndarray) -> np.ndarray:
        """Float coefficients a_n .. a_0 at many points (rows): screening only, never verdicts."""
        exps, weights = self._float_form
        points = np.asarray(points, dtype=float)
        if exps.shape[1] == 0:
            monomials = np.ones((points.shape[0], exps.shape[0]))
        else:
            monomials = np.prod(points[:, None, :] ** exps[None, :, :], axis=2)
        return monomials @ weights.T

    def directions(self, box: Box | None = None) -> tuple[tuple[int | None, ...], ...]:
        """Sign of each partial derivative over the box: ``[k][i]`` in {+1, -1, 0, None=mixed}."""
        intervals = as_intervals((box or self.box).intervals)
        return tuple(c.derivative_signs(intervals, d)
                     for c, d in zip(self.coefficients, self.derivatives(), strict=True))

    def formulas(self) -> tuple[str, ...]:
        """Each coefficient as readable text, highest power first."""
        return tuple(c.to_text(self.names) for c in self.coefficients)

    def point_dict(self, point: Sequence[Fraction]) -> dict[str, Fraction]:
        """name -> value."""
        return dict(zip(self.names, point, strict=True))


def classify(coefficients: Sequence[MultiPoly]) -> str:
    """The dependence class of a family's coefficients.

    * ``independent``: no parameter enters two coefficients (the interval overbound of the
      coefficients is then realisable, so Kharitonov's test is exact);
    * ``affine``: every coefficient is affine in the parameters;
    * ``multilinear``: affine in each parameter separately;
    * ``polynomial``: anything else.
    """
    seen: set[int] = set()
    independent = True
    for c in coefficients:
        used = c.variables()
        if used & seen:
            independent = False
        seen |= used
    if independent:
        return "independent"
    if all(c.total_degree() <= 1 for c in coefficients):
        return "affine"
    if all(c.is_multilinear() for c in coefficients):
        return "multilinear"
    return "polynomial"


def _to_multipoly(expr: sp.Expr, symbols: Sequence[sp.Symbol]) -> MultiPoly:
    """A sympy polynomial expression in ``symbols`` as a MultiPoly (for sympy input only:
    case files are expanded by :mod:`robust.exact.sparse`, never by sympy)."""
    import sympy as sp

    if not symbols:
        value = sp.Rational(expr)
        return MultiPoly.constant(0, Fraction(int(value.p), int(value.q)))
    poly = sp.Poly(expr, *symbols, domain="QQ")
    mapping = {
        tuple(int(k) for k in monom): Fraction(int(c.p), int(c.q))
        for monom, c in zip(poly.monoms(), poly.coeffs(), strict=True)
    }
    return MultiPoly.from_mapping(len(symbols), mapping)


def sign_over_box(poly: MultiPoly, box: Box, depth: int = 0) -> int | None:
    """The sign of ``poly`` over the closed box, soundly.

    +1 or -1: it keeps that strict sign (proven by exact bounds); 0: it vanishes somewhere
    in the box (an exact bound reaches 0, or two sub-boxes have opposite strict signs, and
    the box is connected); None: not decided by the bisection (depth 8).
    """
    (lo, hi), exact = poly.bound(as_intervals(box.intervals))
    if lo > 0:
        return 1
    if hi < 0:
        return -1
    if exact:
        return 0
    if depth >= 8:
        return None
    widths = box.widths()
    i = max(range(len(widths)), key=lambda k: widths[k])
    signs = {sign_over_box(poly, h, depth + 1) for h in box.split(i)}
    if 0 in signs or signs == {1, -1}:
        return 0
    return signs.pop() if len(signs) == 1 else None


def _factor_text(factor: MultiPoly, names: Sequence[str]) -> str:
    """A cleared factor as sympy writes it (short ones; long ones in our own notation)."""
    if len(factor.terms) > 200:
        return factor.to_text(names)
    import sympy as sp

    symbols = [sp.Symbol(n) for n in names]
    terms = []
    for e, c in factor.terms:
        term = sp.Rational(int(c.numerator), int(c.denominator))
        for symbol, k in zip(symbols, e, strict=True):
            term *= symbol**k
        terms.append(term)
    return sp.sstr(sp.Add(*terms))


def build_family(
    numerator: sp.Expr | MultiPoly,
    denominator: sp.Expr | MultiPoly,
    variable: sp.Symbol,
    names: Sequence[str],
    box: Box,
    nominal: Sequence[Fraction],
    where: str = "polynomial",
    limits: Sequence[tuple[Fraction | None, Fraction | None]] = (),
) -> UncertainPolynomial:
    """Make the family from a characteristic polynomial numerator/denominator.

    Both are sympy expressions in ``variable`` and the parameters, or MultiPolys over
    (variable, *names) (what case files give). ``denominator`` must be free of the variable.
    Common factors of all coefficients that depend only on the parameters are divided out
    when they keep one sign over the box.

    Raises
    ------
    InputError
        When the polynomial is zero, a denominator or common factor may vanish inside the
        box, or the polynomial does not depend on the variable.
    """
    if not isinstance(numerator, MultiPoly) or not isinstance(denominator, MultiPoly):
        import sympy as sp

        gens = [variable, *(sp.Symbol(n) for n in names)]
        numerator = _to_multipoly(sp.expand(numerator), gens)
        denominator = _to_multipoly(sp.expand(denominator), gens)
    if numerator.is_zero:
        raise InputError(where, "the characteristic polynomial is identically zero",
                         "a non-zero polynomial in " + str(variable))
    if any(e[0] for e, _ in denominator.terms):
        raise InputError(where, f"the denominator depends on {variable}", f"a polynomial in {variable}")
    k = len(names)
    by_power: dict[int, dict] = {}
    for e, c in numerator.terms:
        by_power.setdefault(e[0], {})[e[1:]] = c
    degree = max(by_power)
    coeffs = [MultiPoly.from_mapping(k, by_power.get(d, {})) for d in range(degree, -1, -1)]
    cleared: list[MultiPoly] = []
    content = common_factor(coeffs)
    if content is not None:
        coeffs = [divide(c, content) for c in coeffs]
        cleared.append(content)
    rational = denominator.total_degree() > 0
    if rational:
        cleared.append(MultiPoly.from_mapping(k, {e[1:]: c for e, c in denominator.terms}))
    for factor in cleared:
        if sign_over_box(factor, box) in (0, None):
            raise InputError(
                where,
                f"the factor {_factor_text(factor, names)} may vanish inside the parameter box",
                "formulas whose denominators and common factors keep one sign over the tolerances",
            )
    if len(coeffs) == 1:
        raise InputError(where, f"the characteristic polynomial does not depend on {variable}",
                         f"degree >= 1 in {variable}")
    return UncertainPolynomial(
        names=tuple(names),
        coefficients=tuple(coeffs),
        box=box,
        nominal=tuple(nominal),
        rational=rational,
        cleared=" * ".join(_factor_text(f, names) for f in cleared),
        factors=tuple(cleared),
        limits=tuple(limits),
    )


def box_from(names: Sequence[str], ranges: Mapping[str, tuple[Fraction, Fraction]]) -> Box:
    """A Box from name -> (low, high)."""
    return Box(tuple(names), tuple(ranges[n][0] for n in names),
               tuple(ranges[n][1] for n in names))


def shifted_family(family: UncertainPolynomial, sigma: Fraction) -> UncertainPolynomial:
    """The family p(s - sigma): Hurwitz exactly when every root has Re(s) < -sigma."""
    n = family.degree
    k_vars = len(family.names)
    # p(s - sigma) = sum_k a_k (s - sigma)^k, a_k = coefficients[n - k]
    new = []
    for j in range(n, -1, -1):  # power j, highest first
        weights, polys = [], []
        for k in range(j, n + 1):
            weights.append(Fraction(math.comb(k, j)) * (-sigma) ** (k - j))
            polys.append(family.coefficients[n - k])
        new.append(MultiPoly.linear_combination(k_vars, polys, weights))
    return family.with_coefficients(new)


def _product(a: MultiPoly, b: MultiPoly) -> MultiPoly:
    """a * b, exactly (the sizes are those of a case already read)."""
    from ..exact import sparse

    work = sparse.Work(10**12)
    return sparse.to_multipoly(sparse.multiply(sparse.from_multipoly(a), sparse.from_multipoly(b), work),
                               a.nvars)


def _mapped(coefficients: Sequence[MultiPoly], weights: Sequence[Sequence[Fraction]], nvars: int
            ) -> tuple[MultiPoly, ...]:
    return tuple(MultiPoly.linear_combination(nvars, coefficients, row) for row in weights)


def _padded(coefficients: Sequence[MultiPoly], degree: int, nvars: int) -> list[MultiPoly]:
    """Leading zero coefficients up to ``degree``."""
    return [MultiPoly.constant(nvars, 0)] * (degree + 1 - len(coefficients)) + list(coefficients)


def discrete_family(family: UncertainPolynomial) -> UncertainPolynomial:
    """The family of a polynomial in z (``family``'s coefficients), mapped onto the Hurwitz
    question of the unit disk (:func:`robust.exact.regions.moebius_weights`); the z
    coefficients are kept as ``source``, and loop parts are mapped alike."""
    from ..exact.regions import moebius_weights

    k = len(family.names)
    weights = moebius_weights(family.degree)
    loop = tuple(_mapped(_padded(part, family.degree, k), weights, k) for part in family.loop)
    return dataclasses.replace(family, coefficients=_mapped(family.coefficients, weights, k),
                               variable="z", source=family.coefficients, loop=loop)  # type: ignore[arg-type]


def radius_family(family: UncertainPolynomial, radius: Fraction) -> UncertainPolynomial:
    """For a discrete-time family: the family that is Hurwitz exactly when every root in z lies
    inside |z| < radius."""
    from ..exact.regions import moebius_weights

    assert family.discrete
    weights = moebius_weights(family.degree, Fraction(radius))
    return dataclasses.replace(family, coefficients=_mapped(family.source, weights, len(family.names)),
                               radius=Fraction(radius))


def sector_family(family: UncertainPolynomial, t: Fraction) -> UncertainPolynomial:
    """The family that is Hurwitz exactly when every root has damping ratio above
    damping_of(t) (:func:`robust.exact.regions.sector_weights`), degree 2n. For a
    discrete-time family the roots are those of the Hurwitz form, the bilinear (Tustin)
    equivalent w = (z - 1) / (z + 1) of the z roots (not offered as a criterion there: see
    robust.analysis.criteria)."""
    from ..exact.regions import sector_weights

    k = len(family.names)
    a = family.coefficients
    products: dict[tuple[int, int], MultiPoly] = {}
    new = []
    for row in sector_weights(family.degree, Fraction(t)):
        polys, weights = [], []
        for i, j, w in row:
            if (i, j) not in products:
                products[i, j] = _product(a[i], a[j])
            polys.append(products[i, j])
            weights.append(w)
        new.append(MultiPoly.linear_combination(k, polys, weights))
    return dataclasses.replace(family, coefficients=tuple(new), source=(), loop=())


def _extended(poly: MultiPoly) -> MultiPoly:
    """poly in one more variable (last), which it does not involve."""
    return MultiPoly.from_mapping(poly.nvars + 1, {(*e, 0): c for e, c in poly.terms})


def _with_extra(family: UncertainPolynomial, name: str, coefficients: Sequence[MultiPoly],
                low: Fraction, high: Fraction, nominal: Fraction) -> UncertainPolynomial:
    box = Box((*family.box.names, name), (*family.box.low, low), (*family.box.high, high))
    limits = tuple(family.limits) or ((None, None),) * len(family.names)
    return UncertainPolynomial(
        names=(*family.names, name), coefficients=tuple(coefficients), box=box,
        nominal=(*family.nominal, nominal), rational=family.rational, cleared=family.cleared,
        factors=(), limits=(*limits, (None, None)), variable=family.variable)


#: The names of the extra parameter of the loop criteria (they cannot be parameter names).
LOOP_GAIN = "extra loop gain"
PHASE_LAG = "tan^2(phase lag/2)"


def gain_family(family: UncertainPolynomial, low: Fraction, high: Fraction) -> UncertainPolynomial:
    """The loop with an extra gain k in [low, high] (0 < low <= 1 <= high) as one more
    parameter, named :data:`LOOP_GAIN`: D + k N."""
    if not family.loop:
        raise ValueError("the gain margin needs a loop (plant and controller)")
    k = len(family.names)
    gain = MultiPoly.from_mapping(k + 1, {(0,) * k + (1,): 1})
    d, n = family.loop
    coefficients = [MultiPoly.linear_combination(k + 1, [_extended(a), _product(gain, _extended(b))], [1, 1])
                    for a, b in zip(d, n, strict=True)]
    return _with_extra(family, LOOP_GAIN, coefficients, Fraction(low), Fraction(high), Fraction(1))


def loop_sum_and_difference(family: UncertainPolynomial) -> tuple[list[MultiPoly], list[MultiPoly]]:
    """(D + N, D - N) of the family's loop, highest power first: the real and the lag part of
    (D + N) + j t (D - N), whose roots are those of D + e^(-j theta) N, t = tan(theta / 2)."""
    if not family.loop:
        raise ValueError("the phase margin needs a loop (plant and controller)")
    k = len(family.names)
    d, n = family.loop
    return ([MultiPoly.linear_combination(k, [a, b], [1, 1]) for a, b in zip(d, n, strict=True)],
            [MultiPoly.linear_combination(k, [a, b], [1, -1]) for a, b in zip(d, n, strict=True)])


def phase_family(family: UncertainPolynomial, high: Fraction) -> UncertainPolynomial:
    """The loop with an extra phase lag e^(-j theta), tan^2(theta / 2) = u in [0, high], as
    one more parameter named :data:`PHASE_LAG`.

    With t = tan(theta / 2), e^(-j theta) = (1 - j t) / (1 + j t), and D + e^(-j theta) N has
    the roots of c = (D + N) + j t (D - N). The conjugate-coefficient polynomial has the
    conjugate roots, in the same half-plane (or disk), so c is stable exactly when the real
    c * conj(c) = (D + N)^2 + u (D - N)^2 is: real coefficients, affine in u.
    """
    k = len(family.names)
    total, diff = loop_sum_and_difference(family)
    u = MultiPoly.from_mapping(k + 1, {(0,) * k + (1,): 1})

    def square(coeffs: Sequence[MultiPoly]) -> list[MultiPoly]:
        size = len(coeffs)
        out = []
        for m in range(2 * size - 1):
            terms = [_product(coeffs[i], coeffs[m - i]) for i in range(max(0, m - size + 1), min(m, size - 1) + 1)]
            out.append(MultiPoly.linear_combination(k, terms, [1] * len(terms)))
        return out

    coefficients = [MultiPoly.linear_combination(k + 1, [_extended(a), _product(u, _extended(b))], [1, 1])
                    for a, b in zip(square(total), square(diff), strict=True)]
    return _with_extra(family, PHASE_LAG, coefficients, Fraction(0), Fraction(high), Fraction(0))
