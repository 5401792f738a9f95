"""Certified brackets on a scale, and bisection with a sound decision at each step.

A bracket [lower, upper] on the largest scale with some property (stable over box(rho), or
every root left of Re(s) = -sigma): ``lower`` is proven, ``upper`` carries a verified witness
(or is None: "at least lower").
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

from ..exact.numbers import format_fraction, short_between
from .verdict import Witness

__all__ = ["Bracket", "Tester", "bisect_margin", "float_down", "float_up"]


@dataclass(frozen=True, slots=True)
class Bracket:
    """A certified bracket: proven at ``lower``; a verified witness at ``upper`` (None: none
    found up to the cap, "at least lower"). ``exact`` is the algebraic value when known."""

    lower: Fraction
    upper: Fraction | None
    exact: str | None = None
    decimal: str | None = None
    witness: Witness | None = None
    note: str = ""

    @property
    def relative_width(self) -> float | None:
        """(upper - lower) / upper, or None for an open bracket."""
        if self.upper is None or self.upper == 0:
            return None
        return float((self.upper - self.lower) / self.upper)

    def as_dict(self) -> dict[str, object]:
        """JSON: lower/upper as floats rounded outwards, plus exact strings."""
        return {
            "lower": float_down(self.lower),
            "upper": None if self.upper is None else float_up(self.upper),
            "lower_exact": format_fraction(self.lower),
            "upper_exact": None if self.upper is None else format_fraction(self.upper),
            "exact": self.exact,
            "decimal": self.decimal,
            "note": self.note,
        }


def float_down(x: Fraction) -> float:
    f = float(x)
    return math.nextafter(f, -math.inf) if Fraction(f) > x else f


def float_up(x: Fraction) -> float:
    f = float(x)
    return math.nextafter(f, math.inf) if Fraction(f) < x else f


Tester = Callable[[Fraction, float], tuple[str, Witness | None]]


def bisect_margin(test: Tester, cap: Fraction, rel_tol: float, deadline: float,
                  start: Fraction = Fraction(1), lower: Fraction = Fraction(0),
                  upper: Fraction | None = None, witness: Witness | None = None,
                  tighten: Callable[[Witness], tuple[Fraction, Witness]] | None = None) -> Bracket:
    """Certified bracket on the largest rho with ``test(rho) == "stable"``.

    ``test(rho, seconds)`` returns ("stable" | "unstable" | "undecided", witness). Assumes
    monotonicity in rho (nested boxes) and stability at rho = 0. A known proven ``lower``
    and a known refuted ``upper`` (with its witness) may be passed in. ``tighten`` maps a
    witness to a smaller scale that still holds a verified witness.
    """
    note = ""
    if upper is None:
        rho = max(min(start, cap), lower)
        while True:  # grow by doubling until unstable or the cap
            remaining = deadline - time.perf_counter()
            if remaining <= 0:
                return Bracket(lower, None, note="time budget exhausted while bracketing")
            verdict, w = test(rho, max(remaining / 4, 0.5))
            if verdict == "stable":
                lower = rho
                if rho >= cap:
                    return Bracket(lower, None, note=f"stable up to the cap {format_fraction(cap)}")
                rho = min(rho * 2, cap)
            elif verdict == "unstable":
                upper, witness = _upper_from(rho, w, tighten), w
                break
            else:
                tried = rho
                rho = (lower + rho) / 2 if lower > 0 else rho / 4
                if rho < tried / 1000:
                    return Bracket(lower, None, note="undecided near the start")
    while (upper - lower) > Fraction(rel_tol) * upper:
        remaining = deadline - time.perf_counter()
        if remaining <= 0:
            note = "time budget exhausted; bracket wider than asked"
            break
        # a short rational inside the middle half keeps the exact arithmetic small
        mid = short_between(lower + (upper - lower) / 4, upper - (upper - lower) / 4) \
            or (lower + upper) / 2
        verdict, w = test(mid, max(remaining / 8, 0.5))
        if verdict == "stable":
            lower = mid
        elif verdict == "unstable":
            upper, witness = _upper_from(mid, w, tighten), w
            if tighten is not None and w is not None:
                witness = tighten(w)[1]
        else:
            note = f"undecided at {float(mid):.9g}; bracket left wider than asked"
            break
    return Bracket(lower, upper, witness=witness, note=note)


def _upper_from(rho: Fraction, witness: Witness | None,
                tighten: Callable[[Witness], tuple[Fraction, Witness]] | None) -> Fraction:
    if tighten is None or witness is None:
        return rho
    return min(rho, tighten(witness)[0])
