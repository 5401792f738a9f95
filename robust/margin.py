"""Robust margins: how far the tolerances can grow, and the guaranteed decay rate.

rho* is the largest scale of every tolerance half-width about nominal for which the
family stays robustly stable (box(rho): nominal - rho (nominal - low) .. nominal +
rho (high - nominal)). It is reported as a certified bracket [lower, upper]: the family is
proven stable over box(lower) and a verified witness lies in box(upper).

* Families with no parameter in two coefficients and monotone coefficients: every
  Kharitonov polynomial of box(rho) has coefficients polynomial in rho (affine when the
  coefficients are the parameters themselves), so a vertex first fails where its a_0, a_n or
  Hurwitz determinant Delta_(n-1) vanishes (a root at 0, at infinity, or a pair r, -r:
  Orlando's formula, Gantmacher 1959, ch. XV). rho* is the least positive real root of those
  polynomials: an exact algebraic number (sympy real-root isolation).
* One parameter alone (rank): the same argument along the two directions of its range.
* Otherwise: bisection on rho with the decision ladder of :mod:`robust.verdict` at each step.

The decay-rate margin sigma* is the largest sigma with every root of every member in
Re(s) < -sigma, found the same way on the shifted family p(s - sigma).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction

import sympy as sp
from sympy.polys.matrices import DomainMatrix

from .edges import hurwitz_matrix
from .exact import format_fraction
from .family import Box, UncertainPolynomial
from .polynomials import MultiPoly, as_intervals
from .routh import routh_table
from .verdict import Witness, decide

__all__ = [
    "Bracket",
    "DecayResult",
    "MarginResult",
    "bisect_margin",
    "decay_rate",
    "margin",
    "path_margin",
    "shifted_family",
]

DEFAULT_CAP = Fraction(100)
_R = sp.Symbol("r")


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
            "lower": _float_down(self.lower),
            "upper": None if self.upper is None else _float_up(self.upper),
            "lower_exact": format_fraction(self.lower),
            "upper_exact": None if self.upper is None else format_fraction(self.upper),
            "exact": self.exact,
            "decimal": self.decimal,
            "note": self.note,
        }


def _float_down(x: Fraction) -> float:
    f = float(x)
    return math.nextafter(f, -math.inf) if Fraction(f) > x else f


def _float_up(x: Fraction) -> float:
    f = float(x)
    return math.nextafter(f, math.inf) if Fraction(f) < x else f


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


@dataclass(frozen=True, slots=True)
class MarginResult:
    """Result of :func:`margin`."""

    margin: Bracket
    method: str
    decay: DecayResult | None
    requirement: Fraction | None
    passed: bool | None
    seconds: float

    def as_dict(self) -> dict[str, object]:
        """JSON per DESIGN.md section 5: margin {lower, upper}, exact, decay_rate."""
        data: dict[str, object] = {
            "margin": {"lower": _float_down(self.margin.lower),
                       "upper": None if self.margin.upper is None else _float_up(self.margin.upper)},
            "exact": self.margin.exact,
            "margin_detail": self.margin.as_dict(),
            "method": self.method,
            "requirement": None if self.requirement is None else float(self.requirement),
            "passed": self.passed,
            "seconds": round(self.seconds, 4),
        }
        if self.margin.witness is not None:
            data["witness"] = self.margin.witness.as_dict()
        if self.decay is not None:
            data["decay_rate"] = {"lower": _float_down(self.decay.bracket.lower),
                                  "upper": None if self.decay.bracket.upper is None
                                  else _float_up(self.decay.bracket.upper)}
            data["decay_rate_detail"] = self.decay.as_dict()
        return data


# -- exact one-dimensional crossings ------------------------------------------------------


def _crossing_polys(coeffs: Sequence[sp.Expr]) -> list[sp.Poly]:
    """a_0, a_n and Delta_(n-1) of a polynomial whose coefficients are polynomials in r."""
    n = len(coeffs) - 1
    out = [sp.Poly(sp.expand(coeffs[-1]), _R), sp.Poly(sp.expand(coeffs[0]), _R)]
    if n >= 2:
        # the determinant in exact polynomial arithmetic over QQ[r]: sympy's expression-level
        # Berkowitz + expand takes minutes at degree 10 (and ignores every time budget)
        ring = sp.QQ[_R]
        matrix = DomainMatrix.from_Matrix(hurwitz_matrix([sp.expand(c) for c in coeffs], n - 1))
        out.append(sp.Poly(ring.to_sympy(matrix.convert_to(ring).det()), _R))
    return out


def _first_root(polys: Sequence[sp.Poly], cap: Fraction) -> tuple[sp.Expr, Fraction, Fraction] | None:
    """Least real root in (0, cap] over the polynomials: (exact root, isolating low, high)."""
    sup = sp.Rational(cap.numerator, cap.denominator)
    firsts = []
    for poly in polys:
        if poly.is_zero or poly.degree() <= 0:
            continue
        for (lo, hi), _ in poly.intervals(inf=0, sup=sup):
            if hi <= 0:
                continue  # the root at 0 (cannot happen for a stable start)
            # isolating intervals of different polynomials overlap in general, so their
            # coarse ends do not order the roots: refine each least positive root first
            if lo != hi:
                lo, hi = poly.refine_root(lo, hi, eps=hi * sp.Rational(1, 10**20))
            firsts.append((Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q)), poly))
            break  # intervals come sorted: the first positive one is the least
    if not firsts:
        return None
    lo_min, _, poly = min(firsts, key=lambda f: f[0])
    hi_min = min(f[1] for f in firsts)  # the least root lies in [least low end, least high end]
    roots = [r for r in poly.real_roots() if r > 0]
    root = min(roots, key=lambda r: float(r.evalf(30)))
    # refine the isolating interval to ~1e-15 relative
    lo_f, hi_f = _refine(poly, root)
    return root, min(lo_f, lo_min), min(hi_f, hi_min)


def _refine(poly: sp.Poly, root: sp.Expr) -> tuple[Fraction, Fraction]:
    if root.is_Rational:
        value = Fraction(int(root.p), int(root.q))
        return value, value
    value = float(root.evalf(40))
    eps = sp.Rational(1, 10**18) * max(1, abs(int(value)) + 1)
    for (lo, hi), _ in poly.intervals(eps=eps):
        lo_f, hi_f = Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q))
        if lo_f <= Fraction(value) * (1 + Fraction(1, 10**9)) and hi_f >= Fraction(value) * (1 - Fraction(1, 10**9)):
            return lo_f, hi_f
    exact = Fraction(value)
    return exact, exact


def _describe(root: sp.Expr) -> tuple[str, str]:
    text = sp.sstr(root)
    if len(text) > 200:
        poly = sp.minimal_polynomial(root, _R) if not isinstance(root, sp.CRootOf) else root.poly
        text = f"root of {sp.sstr(poly.as_expr() if hasattr(poly, 'as_expr') else poly)} near {float(root.evalf(20)):.12g}"
    return text, sp.sstr(root.evalf(20))


def path_margin(family: UncertainPolynomial, index: int, cap: Fraction = DEFAULT_CAP,
                others: Sequence[Fraction] | None = None) -> tuple[Fraction, str | None, str | None]:
    """Exact margin of one parameter alone (the others fixed at ``others``, default nominal).

    Returns (value as a close rational, exact text, decimal text); the value is the cap
    when the polynomial stays Hurwitz along both directions up to the cap.
    """
    point = list(others if others is not None else family.nominal)
    nom = family.nominal[index]
    lo, hi = family.box.low[index], family.box.high[index]
    best = None
    for end, span in ((hi, hi - nom), (lo, nom - lo)):
        if span == 0:
            continue
        direction = 1 if end >= nom else -1
        symbols = []
        for i, v in enumerate(point):
            if i == index:
                symbols.append(sp.Rational(nom.numerator, nom.denominator)
                               + direction * sp.Rational(span.numerator, span.denominator) * _R)
            else:
                symbols.append(sp.Rational(v.numerator, v.denominator))
        coeffs = [_multipoly_at(c, symbols) for c in family.coefficients]
        found = _first_root(_crossing_polys(coeffs), cap)
        if found is not None and (best is None or found[1] < best[1]):
            best = found
    if best is None:
        return cap, None, None
    root, lo_f, hi_f = best
    text, dec = _describe(root)
    return lo_f, text, dec


def _multipoly_at(poly: MultiPoly, values: Sequence[sp.Expr]) -> sp.Expr:
    total = sp.Integer(0)
    for e, c in poly.terms:
        term = sp.Rational(int(c.numerator), int(c.denominator))
        for v, k in zip(values, e, strict=True):
            if k:
                term *= v**k
        total += term
    return sp.expand(total)


def _rho_of(family: UncertainPolynomial, point: Sequence[Fraction]) -> Fraction:
    """The least rho with ``point`` inside box(rho)."""
    rho = Fraction(0)
    for x, n, lo, hi in zip(point, family.nominal, family.box.low, family.box.high, strict=True):
        if x > n:
            rho = max(rho, (x - n) / (hi - n)) if hi > n else rho
        elif x < n:
            rho = max(rho, (n - x) / (n - lo)) if lo < n else rho
    return rho


def _ray_witness(family: UncertainPolynomial, target: Sequence[Fraction], limit: Fraction
                 ) -> tuple[Fraction, Witness] | None:
    """First exact crossing on the ray nominal + t (target - nominal), 0 < t <= limit, and a
    verified witness just beyond it: (rho of the witness, witness)."""
    from .verdict import _make_witness

    values = [sp.Rational(n.numerator, n.denominator)
              + sp.Rational((c - n).numerator, (c - n).denominator) * _R
              for n, c in zip(family.nominal, target, strict=True)]
    found = _first_root(_crossing_polys([_multipoly_at(c, values) for c in family.coefficients]), limit)
    if found is None:
        return None
    _, _, hi_f = found
    for beyond in (_short_between(hi_f, hi_f * (1 + Fraction(1, 10**9))), hi_f * (1 + Fraction(1, 10**7)),
                   hi_f * Fraction(101, 100)):
        if beyond is None:
            continue
        point = tuple(n + beyond * (c - n) for n, c in zip(family.nominal, target, strict=True))
        rho = _rho_of(family, point)
        w = _make_witness(family, point, "point on a ray from nominal", family.box.scaled(family.nominal, rho))
        if w is not None:
            return rho, w
    return None


def _tightener(family: UncertainPolynomial) -> Callable[[Witness], tuple[Fraction, Witness]]:
    """Slide a witness towards nominal along its ray, to the first crossing."""

    def tighten(witness: Witness) -> tuple[Fraction, Witness]:
        rho = _rho_of(family, witness.point)
        found = _ray_witness(family, witness.point, Fraction(1))
        if found is not None and found[0] <= rho:
            return found
        return rho, witness

    return tighten


def _ray_upper(family: UncertainPolynomial, cap: Fraction, rays: int = 64, seed: int = 0):
    """An upper bound on rho* from straight rays nominal -> corner: (rho, witness) or None.

    Floats pick the rays that leave the stable region first; their first crossing is then
    found exactly (as for one parameter) and a short rational just beyond it is verified.
    """
    import numpy as np

    from .search import batch_worst_angle

    k = len(family.names)
    nominal = np.array([float(x) for x in family.nominal])
    up = np.array([float(h - n) for h, n in zip(family.box.high, family.nominal, strict=True)])
    down = np.array([float(n - lo) for lo, n in zip(family.box.low, family.nominal, strict=True)])
    free = [i for i in range(k) if up[i] > 0 or down[i] > 0]
    if not free:
        return None
    rng = np.random.default_rng(seed)
    if 2 ** len(free) <= rays:
        signs = np.array([[1 if (v >> b) & 1 else -1 for b in range(len(free))]
                          for v in range(2 ** len(free))])
    else:
        signs = rng.choice([-1, 1], size=(rays, len(free)))
    directions = np.zeros((len(signs), k))
    for j, i in enumerate(free):
        directions[:, i] = np.where(signs[:, j] > 0, up[i], -down[i])
    grid = np.concatenate([np.linspace(0, 1, 41)[1:], np.geomspace(1, float(cap), 60)[1:]])
    first = np.full(len(directions), np.inf)
    for t in grid:
        points = nominal + t * directions
        bad = (batch_worst_angle(family.coefficients_float(points)) > 0) & ~np.isfinite(first)
        first[bad] = t
    order = [int(i) for i in np.argsort(first) if np.isfinite(first[i])][:3]
    best = None
    for idx in order:
        corner = []
        for i in range(k):
            if i in free:
                j = free.index(i)
                corner.append(family.box.high[i] if signs[idx][j] > 0 else family.box.low[i])
            else:
                corner.append(family.nominal[i])
        found = _ray_witness(family, corner, cap)
        if found is not None and (best is None or found[0] < best[0]):
            best = found
    return best


def _exact_interval_margin(family: UncertainPolynomial, cap: Fraction):
    """rho* for an independent family with monotone coefficients over box(cap), else None."""
    if family.structure != "independent":
        return None
    big = family.box.scaled(family.nominal, cap)
    intervals = as_intervals(big.intervals)
    n = family.degree
    lows, highs = [], []
    for k, coeff in enumerate(family.coefficients):
        signs = coeff.derivative_signs(intervals, family.derivatives()[k])
        if any(s is None for s in signs):
            return None
        ends = []
        for want_high in (False, True):
            values = []
            for i, s in enumerate(signs):
                nom = family.nominal[i]
                nom_q = sp.Rational(nom.numerator, nom.denominator)
                up = family.box.high[i] - nom
                down = nom - family.box.low[i]
                if s == 0:
                    values.append(nom_q)
                elif (s > 0) == want_high:
                    values.append(nom_q + sp.Rational(up.numerator, up.denominator) * _R)
                else:
                    values.append(nom_q - sp.Rational(down.numerator, down.denominator) * _R)
            ends.append(_multipoly_at(coeff, values))
        lows.append(ends[0])
        highs.append(ends[1])
    lead_positive = family.coefficients[0].evaluate(family.nominal) > 0
    if not lead_positive:
        lows, highs = [-h for h in highs], [-lo for lo in lows]
    polys = [sp.Poly(lo, _R) for lo in lows]  # every lower bound must stay positive
    for pattern in (("low", "low", "high", "high"), ("high", "high", "low", "low"),
                    ("high", "low", "low", "high"), ("low", "high", "high", "low")):
        vertex = [lows[k] if pattern[(n - k) % 4] == "low" else highs[k] for k in range(n + 1)]
        polys += _crossing_polys(vertex)
    return _first_root(polys, cap)


# -- bisection with the decision ladder ---------------------------------------------------


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
        mid = _short_between(lower + (upper - lower) / 4, upper - (upper - lower) / 4) \
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


def _short_between(a: Fraction, b: Fraction) -> Fraction | None:
    """A rational with a small denominator in [a, b] (continued-fraction search)."""
    if a > b:
        return None
    mid = (a + b) / 2
    for limit in (10, 100, 1000, 10**4, 10**6, 10**9, 10**12):
        x = mid.limit_denominator(limit)
        if a <= x <= b:
            return x
    return None


def _family_tester(family: UncertainPolynomial, box_of: Callable[[Fraction], Box],
                   max_boxes: int) -> Tester:
    def test(rho: Fraction, seconds: float) -> tuple[str, Witness | None]:
        box = box_of(rho)
        if not family.valid_on(box):
            return "undecided", None
        res = decide(family, box, max_seconds=seconds, max_boxes=max_boxes)
        return res.verdict, res.witness

    return test


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
        sigma = _short_between(guess, guess * (1 + factor)) or guess
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
        lower = _short_between(upper * (1 - Fraction(rel_tol) / 2), upper * (1 - Fraction(rel_tol) / 4)) \
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


def margin(case_or_family, cap: Fraction | float = DEFAULT_CAP, rel_tol: float | None = None,
           max_seconds: float = 60.0, max_boxes: int = 5000, with_decay: bool = True) -> MarginResult:
    """The robust margin rho* of a case (certified bracket), and its decay-rate margin.

    Parameters
    ----------
    cap
        Largest scale tried; a family stable up to it is reported as "at least cap".
    rel_tol
        Relative bracket width asked for (default 1e-9 for interval families, 1e-6 otherwise).

    Examples
    --------
    >>> import robust
    >>> m = robust.margin(robust.load_case("cases/interval_measured.toml"), with_decay=False)
    >>> m.margin.lower > 1
    True
    """
    started = time.perf_counter()
    family: UncertainPolynomial = getattr(case_or_family, "family", case_or_family)
    requirements = getattr(case_or_family, "requirements", None)
    cap = Fraction(cap) if not isinstance(cap, Fraction) else cap
    deadline = started + max_seconds
    nominal = family.coefficients_at(family.nominal)
    decay = None
    if with_decay:
        decay = decay_rate(family, getattr(requirements, "decay_rate", None),
                           max_seconds=max_seconds / 3, max_boxes=max_boxes)
    req = getattr(requirements, "margin", None)

    def done(bracket: Bracket, method: str) -> MarginResult:
        passed = None
        if req is not None:
            passed = True if bracket.lower >= req else (
                False if bracket.upper is not None and bracket.upper < req else None)
            if passed is None:
                res = decide(family, family.box.scaled(family.nominal, req), max_seconds=10)
                passed = True if res.verdict == "stable" else False if res.verdict == "unstable" else None
        return MarginResult(bracket, method, decay, req, passed, time.perf_counter() - started)

    if not routh_table(list(nominal)).is_hurwitz:
        return done(Bracket(Fraction(0), Fraction(0), note="the nominal design is not stable"), "nominal")
    exact = _exact_interval_margin(family, cap)
    if exact is not None:
        root, lo_f, hi_f = exact
        text, dec = _describe(root)
        tol = Fraction(rel_tol if rel_tol is not None else 1e-9)
        # short rationals just outside the isolating interval, within the asked width
        # strictly inside/outside: a rational root has lo_f == hi_f == root, where the
        # family is on the stability boundary and neither proof nor witness exists
        lower = _short_between(lo_f * (1 - tol / 2), lo_f * (1 - tol / 4)) or lo_f * (1 - tol / 4)
        upper = _short_between(hi_f * (1 + tol / 4), hi_f * (1 + tol / 2)) or hi_f * (1 + tol / 4)
        proof = decide(family, family.box.scaled(family.nominal, lower), max_seconds=10, search=False)
        refute = decide(family, family.box.scaled(family.nominal, upper), max_seconds=10)
        if proof.verdict == "stable" and refute.verdict == "unstable":
            return done(Bracket(lower, upper, text, dec, refute.witness), "exact (Kharitonov vertices)")
    tol = rel_tol if rel_tol is not None else (1e-9 if family.structure == "independent" else 1e-6)
    tester = _family_tester(family, lambda rho: family.box.scaled(family.nominal, rho), max_boxes)
    ray = _ray_upper(family, cap)
    if ray is not None:
        upper, witness = ray
        lower = _short_between(upper * (1 - Fraction(tol) / 2), upper * (1 - Fraction(tol) / 4)) \
            or upper * (1 - Fraction(tol) / 2)
        verdict, _ = tester(lower, max(min(20.0, (deadline - time.perf_counter()) / 2), 0.5))
        if verdict == "stable":
            return done(Bracket(lower, upper, witness=witness), "ray bound, proven by the decision ladder")
        bracket = bisect_margin(tester, cap, tol, deadline, upper=upper, witness=witness,
                                tighten=_tightener(family))
        return done(bracket, "bisection with the decision ladder")
    bracket = bisect_margin(tester, cap, tol, deadline, tighten=_tightener(family))
    if bracket.upper is None and bracket.lower >= cap:
        return done(bracket, "bisection (stable up to the cap)")
    return done(bracket, "bisection with the decision ladder")


@dataclass(frozen=True, slots=True)
class RequirementCheck:
    """One requirement of the case, decided directly (not through a bracket)."""

    name: str  # "margin" | "decay_rate"
    required: Fraction
    passed: bool | None
    witness: Witness | None

    def as_dict(self) -> dict[str, object]:
        """JSON form."""
        return {"required": float(self.required), "passed": self.passed,
                "witness": self.witness.as_dict() if self.witness else None}


def check_requirements(case, max_seconds: float = 30.0, max_boxes: int = 5000) -> tuple[RequirementCheck, ...]:
    """Decide the case's requirements: stable over box(margin), and every root left of
    Re(s) = -decay_rate over the box."""
    family: UncertainPolynomial = case.family
    req = case.requirements
    out = []
    if req.margin is not None:
        box = family.box.scaled(family.nominal, req.margin)
        if family.valid_on(box):
            res = decide(family, box, max_seconds=max_seconds, max_boxes=max_boxes)
            passed = {"stable": True, "unstable": False}.get(res.verdict)
            out.append(RequirementCheck("margin", req.margin, passed, res.witness))
        else:
            out.append(RequirementCheck("margin", req.margin, None, None))
    if req.decay_rate is not None:
        shifted = shifted_family(family, req.decay_rate)
        res = decide(shifted, family.box, max_seconds=max_seconds, max_boxes=max_boxes)
        passed = {"stable": True, "unstable": False}.get(res.verdict)
        out.append(RequirementCheck("decay_rate", req.decay_rate, passed, res.witness))
    return tuple(out)
