"""Tests for robust.analysis.montecarlo: seeded draws, the float Routh screen and the yield interval.

Truth comes from outside the project: families whose stable region is a known fraction of
the box by the degree-3 Hurwitz condition (a_i > 0 and a2*a1 > a3*a0; Gantmacher, "The
Theory of Matrices", vol. 2, 1959, ch. XV, from memory); the Clopper-Pearson interval
(Clopper & Pearson, "The use of confidence or fiducial limits illustrated in the case of the
binomial", Biometrika 26, 1934) recomputed here from beta quantiles and by
scipy.stats.binomtest (Virtanen et al., "SciPy 1.0", Nature Methods 17, 2020); the normal
tail mass beyond 3 sigma from scipy.stats.norm; root signs of screened rows from mpmath at
60 digits (Johansson et al., mpmath, 2013-). The screen is also compared with the exact
Routh test robust.exact.routh.is_hurwitz on every row.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import stats
from strategies import case_toml

from robust.analysis.montecarlo import draw_parameters, estimate_yield, float_routh_screen
from robust.analysis.verdict import check
from robust.exact.routh import is_hurwitz
from robust.model.case import parse_case


def _case_text(parameters: dict[str, dict[str, str]], coefficients: list[str]) -> str:
    """TOML text of a case (see strategies.case_toml)."""
    return case_toml(parameters, coefficients, title="yield test case")


def _clopper_pearson(stable: int, n: int, confidence: float = 0.95) -> tuple[float, float]:
    """The exact binomial interval from beta quantiles (Clopper & Pearson, Biometrika 26, 1934)."""
    alpha = 1 - confidence
    low = 0.0 if stable == 0 else stats.beta.ppf(alpha / 2, stable, n - stable + 1)
    high = 1.0 if stable == n else stats.beta.ppf(1 - alpha / 2, stable + 1, n - stable)
    return float(low), float(high)


# -- yield of families with a known stable fraction ---------------------------------------

_KNOWN = {
    # a0 = K in [-0.3, 0.7], a2 a1 = 3 a >= 6 > K: stable exactly when K > 0 -> 0.7
    "a coefficient changing sign at 0": (
        {"a": {"range": ["2", "4"]}, "K": {"range": ["-0.3", "0.7"]}}, ["1", "a", "3", "K"], 0.7),
    # a2 a1 = 6 > a0 = K in [1, 11]: stable exactly when K < 6 -> 0.5
    "the Hurwitz condition a2 a1 > a3 a0": (
        {"K": {"range": ["1", "11"]}}, ["1", "2", "3", "K"], 0.5),
    # a2 a1 = 2 (2 + g) > 5 exactly when g > 0.5, g uniform in [0, 2] -> 0.75
    "a gain that must exceed a threshold": (
        {"g": {"range": ["0", "2"]}}, ["1", "2", "2 + g", "5"], 0.75),
}


@pytest.mark.parametrize("label", sorted(_KNOWN))
def test_clopper_pearson_interval_contains_the_true_stable_fraction(label):
    """With N = 20000 seeded draws the 95 % interval holds the stable fraction known in closed form."""
    params, coefficients, truth = _KNOWN[label]
    case = parse_case(_case_text(params, coefficients))
    result = estimate_yield(case, n=20_000, seed=11)
    assert result.draws == 20_000
    assert result.interval[0] <= truth <= result.interval[1]
    assert result.interval == pytest.approx(_clopper_pearson(result.stable, result.draws), rel=1e-9)
    ci = stats.binomtest(result.stable, result.draws).proportion_ci(0.95, method="exact")
    assert result.interval == pytest.approx((ci.low, ci.high), rel=1e-9)
    # the interval of 20000 draws is narrow: about +- 2 sqrt(p(1-p)/N) (common practice, no source)
    assert result.interval[1] - result.interval[0] < 4 * np.sqrt(truth * (1 - truth) / 20_000) * 1.1


def test_stable_count_equals_an_independent_count_of_the_same_draws():
    """Replaying the seeded draws, the stable count is the number of draws with K > 0."""
    params, coefficients, _ = _KNOWN["a coefficient changing sign at 0"]
    case = parse_case(_case_text(params, coefficients))
    result = estimate_yield(case, n=5_000, seed=4)
    draws = draw_parameters(case, 5_000, np.random.default_rng(4))
    k = draws[:, case.family.names.index("K")]
    assert result.stable == int(np.sum(k > 0))
    assert result.fraction == result.stable / 5_000
    lo, hi = dict((n, (a, b)) for n, a, b in result.unstable_ranges)["K"]
    assert lo == pytest.approx(k[k <= 0].min()) and hi == pytest.approx(k[k <= 0].max())


def test_chunks_draw_from_their_own_streams_and_count_like_a_replay():
    """Past 100,000 draws each chunk draws from the seed sequence [seed, k]: replaying those
    streams with numpy gives the same stable count (draws with K > 0, the closed form of this
    family) and the same unstable range."""
    from robust.analysis.montecarlo import chunk_generator

    params, coefficients, _ = _KNOWN["a coefficient changing sign at 0"]
    case = parse_case(_case_text(params, coefficients))
    result = estimate_yield(case, n=250_000, seed=4)
    replay = np.concatenate([draw_parameters(case, size, chunk_generator(4, k))
                             for k, size in enumerate((100_000, 100_000, 50_000))])
    assert np.array_equal(draw_parameters(case, 10, chunk_generator(4, 0)),
                          draw_parameters(case, 10, np.random.default_rng(4)))
    k = replay[:, case.family.names.index("K")]
    assert result.stable == int(np.sum(k > 0))
    lo, hi = dict((n, (a, b)) for n, a, b in result.unstable_ranges)["K"]
    assert lo == pytest.approx(k[k <= 0].min()) and hi == pytest.approx(k[k <= 0].max())


def test_the_yield_is_the_same_on_two_processes():
    """The chunks decided on two local processes give every count and range of the run here."""
    from robust.analysis.executor import TaskRunner

    params, coefficients, _ = _KNOWN["the Hurwitz condition a2 a1 > a3 a0"]
    case = parse_case(_case_text(params, coefficients))
    here = estimate_yield(case, n=230_000, seed=9)
    with TaskRunner(2) as runner:
        there = estimate_yield(case, n=230_000, seed=9, run=runner.run)
    fields = ("draws", "stable", "interval", "exact_rechecks", "unstable_ranges", "unstable_ranges_exact")
    assert [getattr(here, f) for f in fields] == [getattr(there, f) for f in fields]
    assert 0 < here.stable < here.draws


def test_same_seed_gives_the_same_result():
    """Two runs with one seed agree in every count; another seed draws other builds."""
    params, coefficients, _ = _KNOWN["the Hurwitz condition a2 a1 > a3 a0"]
    case = parse_case(_case_text(params, coefficients))
    first, second = estimate_yield(case, n=3_000, seed=7), estimate_yield(case, n=3_000, seed=7)
    assert (first.stable, first.interval, first.unstable_ranges, first.exact_rechecks) == (
        second.stable, second.interval, second.unstable_ranges, second.exact_rechecks)
    a = draw_parameters(case, 100, np.random.default_rng(7))
    b = draw_parameters(case, 100, np.random.default_rng(8))
    assert not np.array_equal(a, b)


def test_normal_draws_are_clipped_to_the_range():
    """Normal parts (tolerance = 3 sigma) stay inside the range; the clipped share is the
    two-sided normal tail beyond 3 sigma (scipy.stats.norm)."""
    params = {"R": {"nominal": "10", "tolerance": "10%", "distribution": "normal"},
              "C": {"nominal": "2", "tolerance": "0.5"}}
    case = parse_case(_case_text(params, ["1", "R", "C", "1"]))
    n = 40_000
    draws = draw_parameters(case, n, np.random.default_rng(5))
    r = draws[:, 0]
    assert r.min() >= 9.0 and r.max() <= 11.0
    clipped = int(np.sum((r == 9.0) | (r == 11.0)))
    tail = 2 * stats.norm.sf(3.0)  # about 0.0027
    ci = stats.binomtest(clipped, n).proportion_ci(0.999, method="exact")
    assert ci.low <= tail <= ci.high
    # the standard deviation of the unclipped normal is a third of the tolerance
    assert np.std(r) == pytest.approx(1 / 3, rel=0.03)
    c = draws[:, 1]
    assert c.min() >= 1.5 and c.max() <= 2.5 and np.all((c > 1.5) & (c < 2.5))  # uniform: no clipping


def test_fixed_parameter_is_drawn_at_its_value():
    """A parameter with zero tolerance is the same in every draw."""
    params = {"a": {"nominal": "3", "tolerance": "0"}, "b": {"range": ["1", "2"]}}
    case = parse_case(_case_text(params, ["1", "a", "b", "1"]))
    draws = draw_parameters(case, 50, np.random.default_rng(0))
    assert np.all(draws[:, 0] == 3.0)


def test_boundary_members_are_rechecked_exactly():
    """(s^2 + 1)(s + a) sits on the stability boundary for every a: the float screen cannot
    trust its sign, the exact re-check says unstable, and the yield is 0."""
    case = parse_case(_case_text({"a": {"range": ["1", "2"]}}, ["1", "a", "1", "a"]))
    result = estimate_yield(case, n=500, seed=2)
    assert result.stable == 0
    assert result.exact_rechecks > 0
    assert result.interval[0] == 0.0
    assert result.interval == pytest.approx(_clopper_pearson(0, 500))


# -- the float screen against exact answers -----------------------------------------------


def _exact_hurwitz(row: np.ndarray) -> bool:
    """is_hurwitz on the exact binary values of the floats (Fraction(float) is exact)."""
    return is_hurwitz([Fraction(float(x)) for x in row])


def _check_screen(rows: np.ndarray) -> None:
    stable, clear = float_routh_screen(rows)
    for row, s, c in zip(rows, stable, clear, strict=True):
        if c:
            assert bool(s) == _exact_hurwitz(row), row


_magnitude = st.floats(-12, 6).map(lambda e: 10.0**e)


@st.composite
def coefficient_rows(draw):
    """A batch of float rows of one degree (1-8), highest power first, non-zero leading
    coefficient, magnitudes spanning 1e-12 .. 1e6, mostly positive signs."""
    degree = draw(st.integers(1, 8))
    count = draw(st.integers(1, 12))
    rows = []
    for _ in range(count):
        row = [m * (1 if draw(st.integers(0, 9)) else -1)
               for m in draw(st.lists(_magnitude, min_size=degree + 1, max_size=degree + 1))]
        if draw(st.booleans()):
            row = [abs(x) for x in row]
        rows.append(row)
    return np.array(rows)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(coefficient_rows())
def test_screen_is_right_on_every_row_it_marks_clear(rows):
    """For random badly scaled rows, every clear decision equals the exact Routh test."""
    _check_screen(rows)


@st.composite
def rows_from_roots(draw):
    """Rows built from roots (real, or pairs -x +- jy) with a common scale 10^-6 .. 10^6 and
    a few roots near or on the imaginary axis: the sign of the real parts decides."""
    degree = draw(st.integers(3, 8))
    scale = 10.0 ** draw(st.floats(-6, 6))
    poly = np.array([draw(st.floats(0.1, 10))])
    left = degree
    while left > 0:
        re = draw(st.sampled_from([-2.0, -1.0, -0.5, -1e-3, -1e-9, 0.0, 1e-6, 0.3]))
        if left >= 2 and draw(st.booleans()):
            im = draw(st.floats(0.1, 5))
            factor = np.array([1.0, -2 * re * scale, (re * re + im * im) * scale * scale])
            left -= 2
        else:
            factor = np.array([1.0, -re * scale if re else -scale * draw(st.sampled_from([-1.0, 2.0]))])
            left -= 1
        poly = np.polymul(poly, factor)
    return poly


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(rows_from_roots(), min_size=1, max_size=1))
def test_screen_is_right_on_rows_built_from_roots(batch):
    """For rows built from scaled roots near the axis, every clear decision is exact."""
    _check_screen(np.array(batch))


@pytest.mark.parametrize("degree", [3, 5, 8])
def test_screen_is_clear_and_right_on_generic_rows(degree):
    """On 2000 seeded rows of moderate positive coefficients nearly every row is clear, and
    every clear row agrees with the exact Routh test."""
    rows = np.random.default_rng(degree).uniform(0.5, 5.0, size=(2000, degree + 1))
    stable, clear = float_routh_screen(rows)
    exact = np.array([_exact_hurwitz(r) for r in rows])
    assert np.array_equal(stable[clear], exact[clear])
    assert clear.mean() > 0.99
    assert 0 < exact.sum() < len(rows) or degree == 8  # both answers occur (degree 8: rarely stable)


def test_screen_on_known_rows_matches_mpmath_roots():
    """Badly scaled and boundary rows: a clear screen decision matches the sign of the largest
    real part by mpmath at 60 digits; an exact boundary row is never called stable."""
    rows = [
        np.polymul(np.polymul([1, 1e-6], [1, 1e6]), [1, 1.0, 1.0]),  # stable, scales 1e-6..1e6
        np.polymul(np.polymul([1, 1e-6], [1, -1e-3]), [1, 1e5, 1e12]),  # one root at +1e-3
        np.polymul([1, 0.0, 1.0], [1, 3.0]),  # (s^2 + 1)(s + 3): boundary
        np.polymul([1, 0.0, 4e10], [1, 1e-4]),  # (s^2 + 4e10)(s + 1e-4): boundary, badly scaled
        np.array([1e-12, 1e-6, 1.0, 1e6]),  # a2 a1 = 1e-6 = a3 a0 up to binary rounding
        # (s^2 + 1)(s + 1e-3)^2 rounded: a pair at Re = +8e-20 behind two cancellations
        # (found by hypothesis; the screen once called it clear and stable)
        np.array([1.0, 0.002, 1.000001, 0.002, 1e-06]),
    ]
    for row in rows:
        stable, clear = float_routh_screen(row[None, :])
        with mpmath.workdps(60):
            exact = [Fraction(float(x)) for x in row]
            roots = mpmath.polyroots([mpmath.mpf(q.numerator) / q.denominator for q in exact],
                                     maxsteps=500, extraprec=500)
            worst = max(mpmath.re(z) for z in roots)
            truth = worst < -mpmath.mpf(10) ** -40
        assert truth == _exact_hurwitz(row)
        if clear[0]:
            assert bool(stable[0]) == truth
        if not truth:
            assert not (stable[0] and clear[0])


# -- numbers far outside the float range --------------------------------------------------------


def test_yield_of_a_stable_family_with_tiny_parameters_is_full():
    """s^2 + R^2 s + R^2 with R near 1e-200 (coefficients near 1e-400, below every float) is
    stable for every R > 0 (degree 2: all coefficients positive; Gantmacher 1959, from
    memory): the yield is 100 %, not the 0 % of an underflowed screen."""
    case = parse_case(_case_text({"R": {"nominal": "1e-200", "tolerance": "10%"}}, ["1", "R^2", "R^2"]))
    result = estimate_yield(case, n=2_000, seed=3)
    assert result.stable == 2_000
    assert check(case).verdict == "stable"


def _scaled_third_order(lam: int, mult: int, stable: bool) -> str:
    """s^3 + A s^2 + B s + C times 10^mult, with A = a 10^lam, B = b 10^(2 lam), C = c 10^(3 lam):
    the roots of the unscaled cubic times 10^lam. a, b in [2, 3]; c in [1, 3] gives a b >= 4 > c
    everywhere (stable), c in [10, 12] gives a b <= 9 < c everywhere (unstable)."""
    low, high = ("1", "3") if stable else ("10", "12")
    params = {"A": {"range": [f"2e{lam}", f"3e{lam}"]},
              "B": {"range": [f"2e{2 * lam}", f"3e{2 * lam}"]},
              "C": {"range": [f"{low}e{3 * lam}", f"{high}e{3 * lam}"]}}
    return _case_text(params, [f"1e{mult}", f"1e{mult}*A", f"1e{mult}*B", f"1e{mult}*C"])


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.integers(-130, 130), st.integers(-100, 100), st.booleans())
def test_yield_agrees_with_check_at_any_scale(lam, mult, stable):
    """Scaled by 10^k (roots) and 10^j (coefficients), far beyond the float range, a family
    stable everywhere has yield 100 % and one unstable everywhere 0 %, as check proves (the
    degree-3 Hurwitz condition a2 a1 > a3 a0 decides by construction; Gantmacher 1959)."""
    case = parse_case(_scaled_third_order(lam, mult, stable))
    result = estimate_yield(case, n=300, seed=1)
    assert result.stable == (300 if stable else 0)
    assert check(case, max_seconds=30).verdict == ("stable" if stable else "unstable")


@settings(max_examples=60, deadline=None)
@given(st.integers(1, 10**6), st.data(), st.sampled_from([0.9, 0.95, 0.99]))
def test_clopper_pearson_without_scipy_matches_scipy(trials, data, confidence):
    """Our beta-quantile interval equals scipy.stats.binomtest's exact interval to 1e-8
    (Virtanen et al., "SciPy 1.0", Nature Methods 17, 2020). scipy's own quantile is good to
    about 1e-9 (scipy 1.17 gives 5.8969341458e-05 for 1 success in 85 trials at 99 %, where
    the closed form below gives 5.8969341517e-05, as ours does): the closed forms are the
    tight check."""
    from scipy import stats

    from robust.analysis.binomial import clopper_pearson

    successes = data.draw(st.integers(0, trials))
    low, high = clopper_pearson(successes, trials, confidence)
    ci = stats.binomtest(successes, trials).proportion_ci(confidence_level=confidence, method="exact")
    assert low == pytest.approx(ci.low, rel=1e-8, abs=1e-300)
    assert high == pytest.approx(ci.high, rel=1e-8)


@settings(max_examples=40, deadline=None)
@given(st.integers(2, 10**6), st.sampled_from([0.9, 0.95, 0.99]))
def test_clopper_pearson_meets_its_closed_forms(trials, confidence):
    """With one success, the lower end is the a/2 quantile of Beta(1, n), whose distribution
    function is 1 - (1 - x)^n: low = 1 - (1 - a/2)^(1/n); with n - 1 successes the upper end is
    the 1 - a/2 quantile of Beta(n, 1), whose distribution function is x^n: high =
    (1 - a/2)^(1/n) (derived here from the beta densities), evaluated with mpmath at 30 digits
    (Johansson et al., mpmath 1.3, 2023)."""
    import mpmath

    from robust.analysis.binomial import clopper_pearson

    mpmath.mp.dps = 30
    tail = 1 - (1 - mpmath.mpf(confidence)) / 2
    root = tail ** (mpmath.mpf(1) / trials)
    low, _ = clopper_pearson(1, trials, confidence)
    _, high = clopper_pearson(trials - 1, trials, confidence)
    assert low == pytest.approx(float(1 - root), rel=1e-11)
    assert high == pytest.approx(float(root), rel=1e-12)
