"""The decay-rate margin: the largest sigma with every root of every member in Re(s) < -sigma.

Found on the shifted family p(s - sigma), which is Hurwitz exactly when every root of p has
real part below -sigma.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from fractions import Fraction

from ..exact.numbers import short_between
from ..exact.polynomials import MultiPoly
from ..exact.routh import routh_table
from ..model.family import UncertainPolynomial
from .bracket import Bracket, bisect_margin
from .verdict import Witness, decide

__all__ = ["DecayResult", "decay_rate", "shifted_family"]


@dataclass(frozen=True, slots=True)
class DecayResult:
    """Certified bracket on sigma*, with the 2 % settling-time reading 4/sigma."""

    bracket: Bracket
    requirement: Fraction | None
    passed: bool | None

    def settling_time(self) -> float | None:
        """About 4/sigma seconds to settle within 2 % (common practice, no source)."""
        low = self.bracket.lower
        return None if low <= 0 else 4.0 / float(low)

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        data = self.bracket.as_dict()
        data["settling_time_2pct_at_most"] = self.settling_time()
        data["requirement"] = None if self.requirement is None else float(self.requirement)
        data["passed"] = self.passed
        return data


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


def _decay_upper(family: UncertainPolynomial, seed: int = 0):
    """An upper bound on sigma* from the slowest sampled member: (sigma, witness) or None."""
    import numpy as np

    from .search import _to_point

    box = family.box
    k = len(family.names)
    rng = np.random.default_rng(seed)
    t = rng.random((256, k))
    points = [family.nominal]
    if 2 ** k <= 256:
        points += box.vertices()
    points += [_to_point(row, box) for row in t[:64]]
    best = None
    for point in points:
        coeffs = [float(c) for c in family.coefficients_at(point)]
        rate = -max(r.real for r in np.roots(coeffs))
        if best is None or rate < best[0]:
            best = (rate, point)
    rate, point = best
    if rate <= 0:
        return None
    exact_coeffs = family.coefficients_at(point)
    for factor in (Fraction(1, 10**9), Fraction(1, 10**6), Fraction(1, 100)):
        guess = Fraction(rate) * (1 + factor)
        sigma = short_between(guess, guess * (1 + factor)) or guess
        table = routh_table(list(exact_coeffs), shift=sigma)
        if not table.is_hurwitz:
            return sigma, Witness(family.names, tuple(point), exact_coeffs, table.roots,
                                  f"slowest sampled member (roots counted right of Re(s) = -{float(sigma):.6g})")
    return None


def decay_rate(family: UncertainPolynomial, requirement: Fraction | None = None,
               rel_tol: float = 1e-6, max_seconds: float = 30.0, max_boxes: int = 5000) -> DecayResult:
    """Certified bracket on the worst-case decay rate over the family's box."""
    deadline = time.perf_counter() + max_seconds

    def test(sigma: Fraction, seconds: float) -> tuple[str, Witness | None]:
        res = decide(shifted_family(family, sigma) if sigma else family, family.box,
                     max_seconds=seconds, max_boxes=max_boxes, search=sigma == 0)
        return res.verdict, res.witness

    verdict, witness = test(Fraction(0), max_seconds / 3)
    if verdict != "stable":
        note = ("the family is not robustly stable: no positive decay rate" if verdict == "unstable"
                else "robust stability itself is undecided")
        return DecayResult(Bracket(Fraction(0), Fraction(0) if verdict == "unstable" else None,
                                   witness=witness, note=note),
                           requirement, False if requirement is not None and verdict == "unstable" else None)
    found = _decay_upper(family)
    if found is not None:
        upper, witness = found
        lower = short_between(upper * (1 - Fraction(rel_tol) / 2), upper * (1 - Fraction(rel_tol) / 4)) \
            or upper * (1 - Fraction(rel_tol) / 2)
        verdict, _ = test(lower, max(min(10.0, deadline - time.perf_counter()), 0.5))
        if verdict == "stable":
            bracket = Bracket(lower, upper, witness=witness)
        else:
            bracket = bisect_margin(test, upper, rel_tol, deadline, upper=upper, witness=witness)
    else:
        bracket = Bracket(Fraction(0), None, note="no slow member found")
    passed = None
    if requirement is not None:
        if bracket.lower >= requirement:
            passed = True
        elif bracket.upper is not None and bracket.upper <= requirement:
            passed = False
        else:
            verdict, _ = test(requirement, max(deadline - time.perf_counter(), 2.0))
            passed = True if verdict == "stable" else False if verdict == "unstable" else None
    return DecayResult(bracket, requirement, passed)
