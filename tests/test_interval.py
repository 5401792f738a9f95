"""Tests for robust.exact.interval: interval polynomials and Kharitonov's theorem.

Truth comes from outside the project:

* the Kharitonov bound patterns are written out here from the theorem itself (Kharitonov,
  "Asymptotic stability of an equilibrium position of a family of systems of linear
  differential equations", Differentsial'nye Uravneniya 14, 1978), not read from the package;
* Hurwitz stability of single members is decided by an independent exact check written in this
  file: the leading principal minors of the Hurwitz matrix, with sympy Rational/Matrix (Hurwitz,
  "Ueber die Bedingungen, unter welchen eine Gleichung nur Wurzeln mit negativen reellen
  Theilen besitzt", Math. Annalen 46, 1895; sympy: Meurer et al., "SymPy: symbolic computing in
  Python", PeerJ Comput. Sci. 2017), and failing vertices also by their roots computed with
  mpmath at 50 digits (Johansson et al., "mpmath: a Python library for arbitrary-precision
  floating-point arithmetic", 2013);
* the reduced vertex sets for degree 3, 4, 5 are compared with the full four-vertex test
  (Anderson, Jury & Mansour, "On robust Hurwitz polynomials", IEEE TAC 32, 1987).
"""

from __future__ import annotations

import random
from fractions import Fraction

import mpmath
import pytest
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from robust.exact.interval import (
    KHARITONOV_PATTERNS,
    REDUCED_SETS,
    IntervalPolynomial,
    interval_from_bounds,
    kharitonov_test,
)
from robust.exact.routh import is_hurwitz

F = Fraction
LABELS = ("K1", "K2", "K3", "K4")

# The theorem's patterns in ascending powers a_0, a_1, a_2, a_3 (then period four), written
# out independently of the package (Kharitonov 1978): L = lower bound, H = upper bound.
THEOREM_PATTERNS = {"K1": "LLHH", "K2": "HHLL", "K3": "HLLH", "K4": "LHHL"}


# -- independent references -------------------------------------------------------------------


def hurwitz_by_determinants(coefficients_high_first) -> bool:
    """Hurwitz 1895: with a_n > 0, every root has Re < 0 iff all leading principal minors of
    the Hurwitz matrix are positive. Exact, with sympy Rational/Matrix (Meurer et al. 2017)."""
    c = [sp.Rational(F(x).numerator, F(x).denominator) for x in coefficients_high_first]
    while c and c[0] == 0:
        c.pop(0)
    assert c, "zero polynomial"
    if c[0] < 0:
        c = [-x for x in c]
    n = len(c) - 1
    if n == 0:
        return True

    def coef(k: int):
        return c[k] if 0 <= k <= n else sp.Integer(0)

    # H[i][j] = c_(2j - i) with 1-based i, j and c_0 the leading coefficient.
    matrix = sp.Matrix(n, n, lambda i, j: coef(2 * (j + 1) - (i + 1)))
    return all(matrix[:k, :k].det(method="bareiss") > 0 for k in range(1, n + 1))


def largest_real_part(coefficients_high_first) -> float:
    """Largest real part of the roots, by mpmath.polyroots at 50 digits (Johansson et al. 2013)."""
    with mpmath.workdps(50):
        coeffs = [mpmath.mpf(F(x).numerator) / F(x).denominator for x in coefficients_high_first]
        roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=300)
        return float(max(mpmath.re(z) for z in roots))


def theorem_vertex(low, high, label):
    """Kharitonov polynomial ``label`` (highest power first) of a family with positive leading
    interval, built from the theorem's ascending pattern (Kharitonov 1978)."""
    n = len(low) - 1
    out = []
    for k in range(n + 1):
        power = n - k
        out.append(low[k] if THEOREM_PATTERNS[label][power % 4] == "L" else high[k])
    return tuple(out)


def random_member(rng: random.Random, low, high):
    """A member of the family: every coefficient a random rational in its interval (ends included)."""
    out = []
    for lo, hi in zip(low, high, strict=True):
        pick = rng.random()
        if pick < 0.2:
            out.append(lo)
        elif pick < 0.4:
            out.append(hi)
        else:
            t = F(rng.randint(0, 1000), 1000)
            out.append(lo + (hi - lo) * t)
    return tuple(out)


# -- strategies -------------------------------------------------------------------------------


@st.composite
def stable_centred_families(draw, min_degree=1, max_degree=6):
    """Interval families around a Hurwitz centre (a product of stable factors), with relative
    spreads of up to 40 %: about half of them stay robustly stable."""
    n = draw(st.integers(min_degree, max_degree))
    s = sp.Symbol("s")
    centre = sp.Integer(1)
    degree = 0
    while degree < n:
        if n - degree >= 2 and draw(st.booleans()):
            a = sp.Rational(draw(st.integers(1, 12)), 4)
            b = sp.Rational(draw(st.integers(1, 16)), 2)
            centre *= s**2 + a * s + b
            degree += 2
        else:
            centre *= s + sp.Rational(draw(st.integers(1, 12)), 3)
            degree += 1
    coeffs = [F(int(x.p), int(x.q)) for x in sp.Poly(sp.expand(centre), s).all_coeffs()]
    spreads = st.integers(0, 8).map(lambda k: F(k, 20))
    low = tuple(c * (1 - draw(spreads)) for c in coeffs)
    high = tuple(c * (1 + draw(spreads)) for c in coeffs)
    return IntervalPolynomial(low, high)


@st.composite
def raw_families(draw, min_degree=0, max_degree=6, allow_non_positive=True):
    """Interval families with small rational bounds (lower bounds sometimes <= 0) and a
    positive leading interval."""
    n = draw(st.integers(min_degree, max_degree))
    lows, highs = [], []
    for k in range(n + 1):
        smallest = 1 if (k == 0 or not allow_non_positive) else -2
        lo = F(draw(st.integers(smallest, 30)), draw(st.sampled_from([1, 2, 4])))
        hi = lo + F(draw(st.integers(0, 12)), draw(st.sampled_from([1, 2, 5])))
        lows.append(lo)
        highs.append(hi)
    return IntervalPolynomial(tuple(lows), tuple(highs))


families = st.one_of(stable_centred_families(), raw_families())


# -- the vertex polynomials -------------------------------------------------------------------


def test_pattern_table_matches_the_theorem():
    """KHARITONOV_PATTERNS spells the published ascending bound patterns of K1..K4."""
    # Kharitonov 1978 (ascending powers, period 4).
    expected = {label: tuple("low" if ch == "L" else "high" for ch in text)
                for label, text in THEOREM_PATTERNS.items()}
    assert expected == KHARITONOV_PATTERNS


@pytest.mark.parametrize("degree", range(0, 10))
@pytest.mark.parametrize("label", LABELS)
def test_vertex_uses_the_published_bound_per_power(degree, label):
    """vertex() picks, for every power, the bound named by the theorem's period-four pattern."""
    # Distinct bounds per coefficient so that each pick is identifiable.
    low = tuple(F(10 * k + 1) for k in range(degree + 1))
    high = tuple(F(10 * k + 5) for k in range(degree + 1))
    fam = IntervalPolynomial(low, high)
    assert fam.vertex(label) == theorem_vertex(low, high, label)
    expected_pattern = tuple(
        "low" if THEOREM_PATTERNS[label][(degree - k) % 4] == "L" else "high"
        for k in range(degree + 1))
    assert fam.pattern(label) == expected_pattern


def test_degree_three_vertices_written_out():
    """For a cubic the four vertices are exactly the hand-written corner polynomials."""
    # a3 in [1, 2], a2 in [3, 4], a1 in [5, 6], a0 in [7, 8]; Kharitonov 1978, ascending a0..a3.
    fam = IntervalPolynomial((F(1), F(3), F(5), F(7)), (F(2), F(4), F(6), F(8)))
    assert fam.vertex("K1") == (F(2), F(4), F(5), F(7))  # a0 L, a1 L, a2 H, a3 H
    assert fam.vertex("K2") == (F(1), F(3), F(6), F(8))  # a0 H, a1 H, a2 L, a3 L
    assert fam.vertex("K3") == (F(2), F(3), F(5), F(8))  # a0 H, a1 L, a2 L, a3 H
    assert fam.vertex("K4") == (F(1), F(4), F(6), F(7))  # a0 L, a1 H, a2 H, a3 L


def test_negative_leading_interval_is_normalised_by_negation():
    """A family with a negative leading interval has the vertices of its negation, and the
    pattern names the bound of the family as given (flipped)."""
    low = (F(-3), F(-7), F(-9), F(-4), F(-2))
    high = (F(-2), F(-5), F(-8), F(-3), F(-1))
    fam = IntervalPolynomial(low, high)
    negated = IntervalPolynomial(tuple(-h for h in high), tuple(-lo for lo in low))
    assert fam.normalised() == negated
    for label in LABELS:
        assert fam.vertex(label) == negated.vertex(label)
        flipped = tuple("high" if w == "low" else "low" for w in negated.pattern(label))
        assert fam.pattern(label) == flipped
        # The vertex is the negation of the bound the pattern names, coefficient by coefficient.
        named = tuple(lo if w == "low" else hi
                      for lo, hi, w in zip(low, high, fam.pattern(label), strict=True))
        assert fam.vertex(label) == tuple(-x for x in named)


@given(families)
@settings(max_examples=60, deadline=None)
def test_negating_a_family_keeps_its_verdict(fam):
    """Negating every coefficient interval changes no root, so the verdict is unchanged."""
    negated = IntervalPolynomial(tuple(-h for h in fam.high), tuple(-lo for lo in fam.low))
    assert kharitonov_test(negated).stable == kharitonov_test(fam).stable


def test_interval_polynomial_refuses_reversed_or_unequal_bounds():
    """An interval with low > high, or bounds of different lengths, is refused."""
    with pytest.raises(ValueError):
        IntervalPolynomial((F(2),), (F(1),))
    with pytest.raises(ValueError):
        IntervalPolynomial((F(1), F(2)), (F(1),))


def test_interval_from_bounds_builds_tuples():
    """interval_from_bounds accepts lists and stores tuples."""
    fam = interval_from_bounds([F(1), F(2)], [F(3), F(4)])
    assert fam == IntervalPolynomial((F(1), F(2)), (F(3), F(4)))
    assert fam.degree == 1


# -- degree invariance and the sign condition -------------------------------------------------


@pytest.mark.parametrize("leading", [(F(-1), F(1)), (F(0), F(1)), (F(-1), F(0)), (F(0), F(0))])
def test_leading_interval_containing_zero_is_refused_for_degree(leading):
    """A leading interval containing zero gives reason "degree" and no verdict of stability."""
    fam = IntervalPolynomial((leading[0], F(2), F(3)), (leading[1], F(3), F(4)))
    assert not fam.degree_invariant
    result = kharitonov_test(fam)
    assert result.stable is False
    assert result.reason == "degree"
    assert result.vertices == ()


def test_non_positive_lower_bound_gives_reason_sign_with_its_position():
    """A lower bound <= 0 (after normalisation) fails the sign condition at its position."""
    fam = IntervalPolynomial((F(1), F(2), F(0), F(3)), (F(2), F(3), F(1), F(4)))
    result = kharitonov_test(fam)
    assert (result.stable, result.reason, result.failing_coefficient) == (False, "sign", 2)
    # Stodola's necessary condition (common practice, no source): the all-low member has a
    # zero coefficient, so it is not Hurwitz by the determinant test either.
    assert not hurwitz_by_determinants(fam.low)


def test_full_set_reports_failing_vertices_when_a_bound_is_not_positive():
    """Without the reduced sets, a non-positive lower bound shows up as failing vertices."""
    fam = IntervalPolynomial((F(1), F(2), F(-1), F(3)), (F(2), F(3), F(1), F(4)))
    result = kharitonov_test(fam, tables=True, reduced=False)
    assert result.stable is False
    assert result.reason == "vertex"
    # K1 and K3 use the low a1 bound (Kharitonov 1978): they must fail; every reported
    # vertex verdict agrees with the Hurwitz minors (Hurwitz 1895, sympy).
    assert {"K1", "K3"} <= set(result.failing)
    assert result.checked == LABELS
    for v in result.vertices:
        assert v.hurwitz == hurwitz_by_determinants(v.coefficients)


def test_tables_are_kept_for_every_vertex_on_request():
    """tables=True keeps an exact Routh table for each of the four vertices."""
    fam = IntervalPolynomial((F(1), F(5), F(8), F(3)), (F(1), F(6), F(10), F(4)))
    result = kharitonov_test(fam, tables=True, reduced=False)
    assert result.stable and result.reason == ""
    assert [v.label for v in result.vertices] == list(LABELS)
    for v in result.vertices:
        assert v.table is not None and v.table.is_hurwitz
        assert v.coefficients == fam.vertex(v.label)
        assert hurwitz_by_determinants(v.coefficients)


@pytest.mark.parametrize("degree, labels", [(3, ("K3",)), (4, ("K2", "K3")), (5, ("K2", "K3", "K4"))])
def test_reduced_sets_are_the_published_ones(degree, labels):
    """Degrees 3, 4, 5 check K3; K2, K3; K2, K3, K4 (Anderson, Jury & Mansour 1987)."""
    assert REDUCED_SETS[degree] == labels
    # (s + 1)^n, widened by 1/100 either side: stable, so every vertex of the set is checked.
    from math import comb

    centre = [F(comb(degree, k)) for k in range(degree + 1)]
    fam = IntervalPolynomial(tuple(c - F(1, 100) for c in centre), tuple(c + F(1, 100) for c in centre))
    result = kharitonov_test(fam)
    assert result.stable and result.reduced
    assert result.checked == labels


def test_gimbal_vertex_failure_is_found_and_is_a_member():
    """The failing vertex of a known unstable family is K3: upper a4, a3, a0 and lower a2, a1."""
    # Our own numbers (cases/interval_unstable.toml): the vertex 1.1, 3.4, 3.7, 3.0, 2.9 has a
    # pair of roots near 0.0566 +- 0.9727j (computed with numpy.roots, from memory of the file).
    fam = IntervalPolynomial((F("0.9"), F("2.2"), F("3.7"), F("3.0"), F("1.9")),
                             (F("1.1"), F("3.4"), F("5.5"), F("4.4"), F("2.9")))
    result = kharitonov_test(fam, tables=True, reduced=False)
    assert result.stable is False and result.reason == "vertex"
    assert result.failing == ("K3",)  # ascending a0 H, a1 L, a2 L, a3 H, a4 H: K3's pattern
    assert fam.vertex("K3") == (F("1.1"), F("3.4"), F("3.7"), F("3.0"), F("2.9"))
    assert largest_real_part(fam.vertex("K3")) == pytest.approx(0.0566, abs=1e-3)  # mpmath
    assert not hurwitz_by_determinants(fam.vertex("K3"))


# -- agreement with independent checks (property tests) ---------------------------------------


@given(families)
@settings(max_examples=150, deadline=None)
def test_reduced_sets_agree_with_all_four_vertices(fam):
    """The reduced vertex sets plus positivity decide exactly as the full four-vertex test."""
    # Anderson, Jury & Mansour 1987: for degree <= 5 fewer vertices suffice.
    assert kharitonov_test(fam, reduced=True).stable == kharitonov_test(fam, reduced=False).stable


@pytest.mark.slow
@given(families)
@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
def test_verdict_equals_the_theorem_applied_with_hurwitz_determinants(fam):
    """The family is stable exactly when the theorem's four vertices pass the Hurwitz-minor test."""
    # Kharitonov 1978 with our own vertices, each decided by Hurwitz 1895 (sympy).
    vertices = [theorem_vertex(fam.low, fam.high, label) for label in LABELS]
    assert kharitonov_test(fam).stable == all(hurwitz_by_determinants(v) for v in vertices)


@pytest.mark.slow
@given(stable_centred_families(), st.randoms(use_true_random=False))
@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
def test_interval_verdict_agrees_with_dense_sampling(fam, rng):
    """A stable verdict holds for every sampled member, and an unstable one names a vertex that
    is a member which an independent exact check finds not Hurwitz."""
    result = kharitonov_test(fam)
    if result.stable:
        members = [random_member(rng, fam.low, fam.high) for _ in range(60)]
        assert all(is_hurwitz(m) for m in members)
        # a few of them also by the Hurwitz determinants (Hurwitz 1895, sympy)
        assert all(hurwitz_by_determinants(m) for m in members[:5])
    elif result.reason == "vertex":
        for label in result.failing:
            vertex = fam.vertex(label)
            assert all(lo <= x <= hi for x, lo, hi in zip(vertex, fam.low, fam.high, strict=True))
            assert not hurwitz_by_determinants(vertex)
            assert largest_real_part(vertex) > -1e-30  # mpmath roots, 50 digits
    else:
        assert result.reason == "sign"
        assert fam.low[result.failing_coefficient] <= 0
        assert not hurwitz_by_determinants(fam.low)


def test_sampling_strategy_produces_both_verdicts():
    """The centred family strategy is not degenerate: it yields stable and unstable families."""
    rng = random.Random(7)
    seen = set()
    s = sp.Symbol("s")
    for _ in range(200):
        centre = sp.Poly(sp.expand((s + rng.randint(1, 4)) * (s**2 + sp.Rational(rng.randint(1, 8), 4) * s
                                                                + rng.randint(1, 8))), s)
        coeffs = [F(int(c.p), int(c.q)) for c in centre.all_coeffs()]
        w = F(rng.randint(0, 8), 20)
        fam = IntervalPolynomial(tuple(c * (1 - w) for c in coeffs), tuple(c * (1 + w) for c in coeffs))
        seen.add(kharitonov_test(fam).stable)
    assert seen == {True, False}


@pytest.mark.parametrize("degree", [1, 2])
def test_low_degree_families_decided_by_positivity(degree):
    """Degree 1 and 2 families with positive bounds are stable; one non-positive bound is not."""
    # A polynomial of degree 1 or 2 is Hurwitz iff its coefficients share one sign
    # (common practice, no source).
    low = tuple(F(k + 1) for k in range(degree + 1))
    high = tuple(F(k + 3) for k in range(degree + 1))
    assert kharitonov_test(IntervalPolynomial(low, high)).stable
    bad_low = (*low[:-1], F(-1))
    assert not kharitonov_test(IntervalPolynomial(bad_low, high)).stable
    assert not hurwitz_by_determinants(bad_low)
