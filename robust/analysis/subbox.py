"""Sub-box tests that keep the correlation between coefficients.

The interval overbound + Kharitonov test forgets that two coefficients share a parameter, so
its error shrinks only linearly with the box and subdivision explodes with the number of
parameters. The test here works on the parameters themselves.

Zero-exclusion by conditions (Frazer and Duncan 1929; Zettler and Garloff, IEEE TAC 43(3),
1998). Over a connected box on which the coefficients stay polynomials in the parameters, a
root can only leave the open left half-plane through s = 0 (a_0 = 0), through s = j*w with
w != 0 (then the pair s, -s are roots and the Hurwitz determinant Delta_(n-1) = 0, by
Orlando's formula), or through infinity (a_n = 0). So when a_n, a_0 and Delta_(n-1) keep a
strict sign over the box and one point of the box is Hurwitz, every point is. Each condition
is a polynomial in the parameters; its Bernstein expansion over the box
(:mod:`robust.exact.bernstein`) proves the sign when every coefficient has it, refutes it when
a corner coefficient (a value at a corner) has the other sign, and otherwise says which
parameter to split. Multilinear conditions (a_n and a_0 of a multilinear family) have
Bernstein coefficients equal to their corner values: there the test is exact at once, the
vertex property that the mapping theorem uses for value sets.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache

from ..exact.bernstein import Patch, bernstein_patch, tensor_size
from ..exact.hurwitz import MAX_DELTA_DEGREE, hurwitz_determinant_in, with_fixed_parts
from ..exact.polynomials import MultiPoly, as_intervals
from ..exact.routh import is_hurwitz
from ..model.family import Box, UncertainPolynomial

__all__ = ["MAX_COEFFICIENTS", "MAX_DEGREE", "Conditions", "SubBoxTest", "hurwitz_conditions", "try_box"]

#: Above this many Bernstein coefficients per box (all conditions together) the test costs
#: more than the interval overbound's subdivision saves; the engine keeps Kharitonov then.
MAX_COEFFICIENTS = 60_000
#: Highest degree given the test (shared with the certificate checker: robust.exact.hurwitz,
#: which also bounds the term products of multiplying Delta_(n-1) out).
MAX_DEGREE = MAX_DELTA_DEGREE

LABELS = ("leading coefficient", "constant coefficient", "Hurwitz determinant Delta_(n-1)")


@dataclass(frozen=True, slots=True)
class Conditions:
    """Polynomials in the parameters whose positivity over a box with one Hurwitz point
    proves the box (sign-normalised at a Hurwitz point).

    A condition that is monotone in a parameter over the box it was made for is positive
    there as soon as it is positive with that parameter at its least favourable end, so
    that parameter is fixed there (``fixed``: per condition, parameter -> value) and costs
    no Bernstein axis; positivity at the fixed end is a lower bound on every sub-box too.
    """

    polys: tuple[MultiPoly, ...]
    labels: tuple[str, ...]
    size: int
    fixed: tuple[dict[int, Fraction], ...] = ()


@dataclass(frozen=True, slots=True)
class SubBoxTest:
    """What :func:`try_box` found.

    ``status``: ``proven`` (every point of the box is Hurwitz), ``point`` (a corner where a
    condition fails, or the box's Hurwitz check point failed: the caller re-checks it as a
    witness), or ``inconclusive`` (split ``blame``). ``patches`` are the conditions'
    Bernstein patches over the box (for the halves), ``failing`` the label that resisted.
    """

    status: str
    point: tuple[Fraction, ...] | None
    blame: int | None
    patches: tuple[Patch, ...]
    failing: str = ""
    #: the least Bernstein coefficient of each condition over the box (a proof's data)
    least: tuple[Fraction, ...] = ()


@lru_cache(maxsize=16)
def _delta(coefficients: tuple[MultiPoly, ...], nvars: int) -> MultiPoly | None:
    """Delta_(n-1) of the family in the parameters, None when too large (cached: the margin
    searches ask for the same family over many boxes)."""
    return hurwitz_determinant_in(coefficients, nvars)


def hurwitz_conditions(family: UncertainPolynomial, point: Sequence[Fraction],
                       box: Box | None = None) -> Conditions | None:
    """a_n, a_0 and Delta_(n-1) in the parameters, each signed to be positive at the Hurwitz
    ``point`` and reduced by its monotone parameters over ``box`` (default: the family's);
    None when the family is too large for the test or ``point`` is not Hurwitz."""
    box = box or family.box
    coefficients = with_fixed_parts(family.coefficients, box.low, box.high)
    nvars = len(family.names)
    if family.degree > MAX_DEGREE or not is_hurwitz(family.coefficients_at(point)):
        return None
    polys = [coefficients[0], coefficients[-1]]
    if family.degree >= 2:
        delta = _delta(tuple(coefficients), nvars)
        if delta is None:
            return None
        polys.append(delta)
    intervals = as_intervals(box.intervals)
    signed, fixed = [], []
    for poly in polys:
        value = poly.evaluate(point)
        if value == 0:
            return None
        poly = poly if value > 0 else MultiPoly.linear_combination(nvars, [poly], [-1])
        ends = {i: box.low[i] if sign > 0 else box.high[i]
                for i, sign in enumerate(poly.derivative_signs(intervals)) if sign}
        signed.append(poly.substitute(ends) if ends else poly)
        fixed.append(ends)
    size = sum(tensor_size(p) for p in signed)
    if size > MAX_COEFFICIENTS:
        return None
    return Conditions(tuple(signed), LABELS[: len(signed)], size, tuple(fixed))


def try_box(conditions: Conditions, family: UncertainPolynomial, box: Box,
             patches: Sequence[Patch] | None = None) -> SubBoxTest:
    """Prove, refute at a corner, or blame a parameter, for one box (exact)."""
    if patches is None:
        patches = tuple(bernstein_patch(p, box.intervals) for p in conditions.polys)
    failing = [(label, patch) for label, patch in zip(conditions.labels, patches, strict=True)
               if not patch.positive()]
    keep = tuple(patches)  # for the halves (the subdivision decides whether to hold them)
    if not failing:
        check_point = box.low
        if is_hurwitz(family.coefficients_at(check_point)):
            return SubBoxTest("proven", None, None, keep, least=tuple(p.low() for p in patches))
        return SubBoxTest("point", check_point, None, keep, "Hurwitz check point")
    for label, patch in failing:
        ends, value = patch.least_corner()
        if value <= 0:
            fixed = conditions.fixed[conditions.labels.index(label)] if conditions.fixed else {}
            point = tuple(fixed[i] if i in fixed else box.high[i] if ends.get(i) else box.low[i]
                          for i in range(len(box.low)))
            return SubBoxTest("point", point, None, keep, label)
    label, patch = failing[0]
    spread = patch.spread()
    widths = box.widths()
    blame = max(spread, key=lambda i: (spread[i], widths[i])) if spread else None
    if blame is None or widths[blame] == 0:
        wide = [i for i, w in enumerate(widths) if w > 0]
        blame = max(wide, key=lambda i: widths[i]) if wide else None
    return SubBoxTest("inconclusive", None, blame, keep, label)
