"""What ends a scaled box before any root crosses: a part's physical limit, the leading
coefficient reaching zero (the degree drops), or a divided-out factor reaching zero.

Each is the least rho at which a polynomial in the parameters (the leading coefficient, a
cleared factor) first vanishes somewhere on box(rho), or at which a parameter reaches its
limit. For a polynomial that is multilinear in the moving parameters the extremes over a box
sit at its vertices (a multilinear function is affine along every edge), and each vertex of
box(rho) moves on a straight line in rho; so the first zero is the least positive root over
the vertex lines, found exactly. Otherwise that root is only an upper end (a real zero point),
and the proven lower end comes from sound sign bounds on box(rho), bisected.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp

from ..exact.numbers import approx_text, format_fraction, short_between
from ..exact.polynomials import MultiPoly
from ..model.family import sign_over_box
from .crossings import first_positive_root, path_expressions, substitute_expressions
from .outcomes import LIMIT_PRECEDENCE, LimitKind
from .scaling import Scaling

__all__ = ["ScaleEnd", "end_of_scaling"]

_R = sp.Symbol("r")


@dataclass(frozen=True, slots=True)
class ScaleEnd:
    """The scale at which box(rho) stops standing for the loop (or the cap).

    ``scale`` is exact or a proven lower end (box(rho) is valid for every rho < scale);
    ``upper`` >= scale is where it certainly happened (equal when exact); ``exact`` is the
    exact text of the value when known.
    """

    kind: LimitKind
    parameters: tuple[str, ...]
    scale: Fraction
    upper: Fraction
    exact: str | None
    note: str = ""
    #: False when the search stopped before it could tell that this is what ends the margin
    #: (an undecided stretch lies below it).
    proven: bool = True
    #: For a physical limit: the limit each named part reaches.
    values: tuple[Fraction, ...] = ()

    def as_dict(self) -> dict[str, object]:
        """JSON (DESIGN.md section 5): kind, parameters, scale; plus exact text and proof."""
        data: dict[str, object] = {"kind": self.kind.value, "parameters": list(self.parameters),
                                   "scale": float(self.scale), "scale_exact": self.exact,
                                   "proven": self.proven, "note": self.note}
        if self.values:
            data["limits_reached"] = [format_fraction(v) for v in self.values]
        return data

    def sentence(self, what: str = "the family", units: Mapping[str, str] | None = None) -> str:
        """The end in plain words (``what`` names the scaled tolerances; ``units`` gives a
        part's unit beside the limit it reaches)."""
        units = units or {}
        at = f"x{approx_text(self.scale, 6)}"
        names = ", ".join(self.parameters)
        text = {
            LimitKind.CROSSING: f"a root reaches the imaginary axis {'at' if self.exact else 'near'} {at}"
                                + (f" (driven by {names})" if names else ""),
            LimitKind.PHYSICAL_LIMIT: "stable until " + (", ".join(
                f"{n} reaches its physical limit {approx_text(v, 6)}{_beside(units.get(n, ''))}"
                for n, v in zip(self.parameters, self.values, strict=True))
                if self.values else f"{names} reaches its physical limit") + f" at {at}; no root crosses before",
            LimitKind.DEGREE_LOSS: f"stable until the leading coefficient reaches zero at {at} "
                                   f"(through {names}): the model loses an order there; no root crosses before",
            LimitKind.DENOMINATOR: f"stable until a divided-out factor (in {names}) reaches zero at {at}; "
                                   "no root crosses before",
            LimitKind.CAP: f"stable at least up to the largest scale tried, {at}",
        }[self.kind]
        if not self.proven:
            text += " (not proven: an undecided stretch lies below it)"
        return text


def _beside(unit: str) -> str:
    return f" {unit}" if unit else ""


def _zero_end(poly: MultiPoly, scaling: Scaling, cap: Fraction) -> tuple[Fraction, Fraction, str | None] | None:
    """(proven lower end, upper end, exact text or None) of the least rho in (0, cap] at
    which ``poly`` vanishes on box(rho); None when it keeps its sign up to ``cap``."""
    free = [i for i in scaling.free() if i in poly.variables()]
    if not free:
        return None
    polys = [sp.Poly(substitute_expressions(poly, path_expressions(path)), _R)
             for path in scaling.vertex_paths(free)]
    found = first_positive_root(polys, cap)
    if all(poly.degree_in(i) <= 1 for i in free):
        if found is None:
            return None
        return found.lower, found.upper, found.text
    # not multilinear: the vertex root is a real zero point (an upper end); prove the lower
    top = found.upper if found is not None else cap
    lower, upper = Fraction(0), top
    if found is None and sign_over_box(poly, scaling.box(cap)) in (1, -1):
        return None
    for _ in range(40):
        mid = short_between(lower + (upper - lower) / 4, upper - (upper - lower) / 4) or (lower + upper) / 2
        sign = sign_over_box(poly, scaling.box(mid))
        if sign in (1, -1):
            lower = mid
        else:
            upper = mid
        if upper - lower <= upper * Fraction(1, 10**9):
            break
    return lower, (found.upper if found is not None else upper), None


def end_of_scaling(scaling: Scaling, cap: Fraction) -> ScaleEnd:
    """The least rho in (0, cap] at which box(rho) stops standing for the loop, and why.

    Ends are compared by their proven lower ends; at the same scale the part's physical
    limit is named first (see :data:`robust.analysis.outcomes.LIMIT_PRECEDENCE`).
    """
    family = scaling.family
    candidates: list[ScaleEnd] = [ScaleEnd(LimitKind.CAP, (), cap, cap, format_fraction(cap))]
    physical = scaling.physical_end()
    if physical is not None and physical[0] <= cap:
        value, names, limits = physical
        candidates.append(ScaleEnd(LimitKind.PHYSICAL_LIMIT, names, value, value, format_fraction(value),
                                   values=limits))
    sources = [(LimitKind.DEGREE_LOSS, family.coefficients[0])]
    sources += [(LimitKind.DENOMINATOR, factor) for factor in family.factors]
    for kind, poly in sources:
        found = _zero_end(poly, scaling, cap)
        if found is not None:
            lower, upper, text = found
            names = tuple(family.names[i] for i in sorted(poly.variables()) if i in scaling.free())
            note = "" if text is not None else "bracketed by sound bounds (not multilinear)"
            candidates.append(ScaleEnd(kind, names, lower, upper, text, note))
    return min(candidates, key=lambda c: (c.scale, LIMIT_PRECEDENCE.index(c.kind)))


