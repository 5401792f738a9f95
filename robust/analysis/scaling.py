"""Scaled boxes: box(rho), the box whose tolerance half-widths are scaled by rho about nominal.

Three scalings are used: every parameter at once (the robust margin rho*), one parameter
with the others at nominal (a part's margin alone), and one parameter with the others over
their full ranges (a part's margin with the others as given). Along rho every vertex of
box(rho) moves on a straight line, value = a + b*rho per parameter, which is what the exact
first-crossing and first-limit computations use.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from fractions import Fraction
from itertools import product

from ..model.family import Box, UncertainPolynomial

__all__ = ["Scaling"]


@dataclass(frozen=True, slots=True)
class Scaling:
    """box(rho) of a family: the parameters in ``scaled`` have their half-widths scaled by rho;
    the others sit at nominal (``others_full`` False) or over their full range (True)."""

    family: UncertainPolynomial
    scaled: tuple[int, ...]
    others_full: bool = False
    #: +1: the scaled parameters move up only, -1: down only, 0: both ways
    side: int = 0

    @staticmethod
    def everything(family: UncertainPolynomial) -> Scaling:
        """Every tolerance scaled together (rho*)."""
        return Scaling(family, tuple(range(len(family.names))), True)

    @staticmethod
    def one(family: UncertainPolynomial, i: int, others_full: bool) -> Scaling:
        """Parameter ``i`` alone; the others at nominal or over their full range."""
        return Scaling(family, (i,), others_full)

    def _ends(self, i: int, rho: Fraction) -> tuple[Fraction, Fraction]:
        fam = self.family
        n, lo, hi = fam.nominal[i], fam.box.low[i], fam.box.high[i]
        if i in self.scaled:
            return (n if self.side > 0 else n - rho * (n - lo)), (n if self.side < 0 else n + rho * (hi - n))
        return (lo, hi) if self.others_full else (n, n)

    def box(self, rho: Fraction) -> Box:
        """box(rho)."""
        ends = [self._ends(i, rho) for i in range(len(self.family.names))]
        return Box(self.family.names, tuple(a for a, _ in ends), tuple(b for _, b in ends))

    def free(self) -> tuple[int, ...]:
        """Parameters that move inside box(rho) for rho > 0."""
        fam = self.family
        out = []
        for i in range(len(fam.names)):
            n, lo, hi = fam.nominal[i], fam.box.low[i], fam.box.high[i]
            if i in self.scaled:
                moves = (self.side <= 0 and lo < n) or (self.side >= 0 and hi > n)
            else:
                moves = self.others_full and hi > lo
            if moves:
                out.append(i)
        return tuple(out)

    def vertex_paths(self, used: Sequence[int]) -> Iterator[tuple[tuple[Fraction, Fraction], ...]]:
        """For each vertex of box(rho) over the parameters ``used`` (the others at nominal):
        per parameter (a, b) with value a + b*rho."""
        fam = self.family
        choices = []
        for i in range(len(fam.names)):
            n, lo, hi = fam.nominal[i], fam.box.low[i], fam.box.high[i]
            if i not in used or hi == lo or (i not in self.scaled and not self.others_full):
                choices.append(((n, Fraction(0)),))
            elif i in self.scaled:
                ways = (((n, -(n - lo)),) if self.side <= 0 else ()) + (((n, hi - n),) if self.side >= 0 else ())
                choices.append(tuple(dict.fromkeys(ways)))
            else:
                choices.append(((lo, Fraction(0)), (hi, Fraction(0))))
        yield from product(*choices)

    def physical_end(self) -> tuple[Fraction, tuple[str, ...], tuple[Fraction, ...]] | None:
        """The least rho at which a scaled parameter reaches one of its physical limits, which
        parameters do and the limits they reach (exact: the limits are exclusive, so box(rho)
        is valid below it)."""
        fam = self.family
        best: Fraction | None = None
        names: list[str] = []
        values: list[Fraction] = []
        for i in self.scaled:
            n, lo, hi = fam.nominal[i], fam.box.low[i], fam.box.high[i]
            lo_limit, hi_limit = fam.limit_of(i)
            for rho, limit in ((((n - lo_limit) / (n - lo)) if lo_limit is not None and lo < n
                                and self.side <= 0 else None, lo_limit),
                               (((hi_limit - n) / (hi - n)) if hi_limit is not None and hi > n
                                and self.side >= 0 else None, hi_limit)):
                if rho is None or limit is None:
                    continue
                if best is None or rho < best:
                    best, names, values = rho, [fam.names[i]], [limit]
                elif rho == best and fam.names[i] not in names:
                    names.append(fam.names[i])
                    values.append(limit)
        return None if best is None else (best, tuple(names), tuple(values))

    def scale_of_point(self, point: Sequence[Fraction]) -> Fraction:
        """The least rho whose box(rho) holds ``point``'s scaled coordinates (the other
        coordinates are not looked at)."""
        fam = self.family
        rho = Fraction(0)
        for i in self.scaled:
            x, n, lo, hi = point[i], fam.nominal[i], fam.box.low[i], fam.box.high[i]
            if x > n and hi > n:
                rho = max(rho, (x - n) / (hi - n))
            elif x < n and lo < n:
                rho = max(rho, (n - x) / (n - lo))
        return rho

    def base_of(self, point: Sequence[Fraction]) -> tuple[Fraction, ...]:
        """Where the way to ``point`` starts at rho = 0: nominal on the scaled parameters,
        ``point``'s own values on the others."""
        return tuple(self.family.nominal[i] if i in self.scaled else x for i, x in enumerate(point))
