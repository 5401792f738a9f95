"""Tests for robust.analysis.edges: exact segment decisions and the edges of a box.

Every verdict of ``check_segment`` is checked against methods outside the project: a dense
rational grid decided by the exact Routh test and by numpy's root finder, Bialas' eigenvalue
condition computed with numpy, sympy root isolation (tests/reference.py) at witnesses, and
the degree-3 Hurwitz condition in closed form.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import numpy as np
import pytest
import sympy as sp
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from robust.analysis.edges import box_edges, check_segment
from robust.exact.hurwitz import hurwitz_matrix
from robust.exact.routh import is_hurwitz

try:  # tests/ on sys.path (pytest's default rootdir-relative import)
    from reference import reference_counts
except ImportError:  # tests/ imported as a package
    from tests.reference import reference_counts

# -- local strategies ---------------------------------------------------------------------


def _multiply(p: list[Fraction], q: list[Fraction]) -> list[Fraction]:
    out = [Fraction(0)] * (len(p) + len(q) - 1)
    for i, a in enumerate(p):
        for j, b in enumerate(q):
            out[i + j] += a * b
    return out


_positive = st.fractions(min_value=Fraction(1, 5), max_value=5, max_denominator=20)
_real_factor = _positive.map(lambda r: [Fraction(1), r])  # s + r
_quadratic_factor = st.tuples(_positive, _positive).map(lambda bc: [Fraction(1), bc[0], bc[1]])


@st.composite
def hurwitz_polynomials(draw, min_degree: int = 3, max_degree: int = 6) -> list[Fraction]:
    """A Hurwitz polynomial with rational coefficients, built from stable factors and a
    positive leading coefficient (every factor s + r, s^2 + b s + c with r, b, c > 0)."""
    degree = draw(st.integers(min_degree, max_degree))
    poly = [draw(st.fractions(min_value=Fraction(1, 10), max_value=10, max_denominator=10))]
    while len(poly) - 1 < degree:
        room = degree - (len(poly) - 1)
        factor = draw(_quadratic_factor if room >= 2 and draw(st.booleans()) else _real_factor)
        poly = _multiply(poly, factor)
    return poly


def _combine(p0, p1, lam: Fraction) -> list[Fraction]:
    return [(1 - lam) * a + lam * b for a, b in zip(p0, p1, strict=True)]


def _hurwitz_matrix_numpy(coefficients) -> np.ndarray:
    """n x n Hurwitz matrix written out independently: entry (i, j), 1-based, is a_(2j - i)
    with p = a_0 s^n + a_1 s^(n-1) + ... + a_n (Gantmacher, "The Theory of Matrices",
    vol. 2, 1959, ch. XV, from memory)."""
    a = [float(c) for c in coefficients]
    n = len(a) - 1
    h = np.zeros((n, n))
    for i in range(1, n + 1):
        for j in range(1, n + 1):
            k = 2 * j - i
            if 0 <= k <= n:
                h[i - 1, j - 1] = a[k]
    return h


def _bialas_stable(p0, p1) -> bool | None:
    """Bialas' test with numpy: for Hurwitz p0, p1 the whole segment is Hurwitz iff
    H(p0)^-1 H(p1) has no real non-positive eigenvalue (Bialas, "A necessary and sufficient
    condition for the stability of convex combinations of stable polynomials or matrices",
    Bull. Polish Acad. Sci. 33, 1985). None when the example is too close to degenerate
    for floating point to tell."""
    h0, h1 = _hurwitz_matrix_numpy(p0), _hurwitz_matrix_numpy(p1)
    if np.linalg.cond(h0) > 1e8 or np.linalg.cond(h1) > 1e8:
        return None
    eig = np.linalg.eigvals(np.linalg.solve(h0, h1))
    scale = max(1.0, float(np.max(np.abs(eig))))
    bad = False
    for mu in eig:
        re, im = float(mu.real), abs(float(mu.imag))
        near_real = im <= 1e-9 * scale
        clearly_complex = im >= 1e-5 * scale
        if not near_real and not clearly_complex:
            return None  # a near-real pair: floating point cannot say which side
        if near_real:
            if abs(re) <= 1e-7 * scale:
                return None  # an eigenvalue near 0: a member at an end is near the boundary
            if re < 0:
                bad = True
    return not bad


def _mpmath_max_real(coefficients) -> mpmath.mpf:
    """Largest real part of the roots, by mpmath's polyroots at 60 digits (Johansson et al.,
    mpmath, a Python library for arbitrary-precision floating-point arithmetic, 2013-)."""
    with mpmath.workdps(60):
        coeffs = [mpmath.mpf(c.numerator) / c.denominator for c in coefficients]
        roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=400)
        return max(mpmath.re(r) for r in roots)


def _has_root_with_non_negative_real_part(coefficients) -> bool:
    """True when mpmath finds a root with Re >= 0 (to 40 digits: members on the boundary
    have roots exactly on the axis)."""
    return _mpmath_max_real(coefficients) >= mpmath.mpf("-1e-40")


def _numpy_max_real(coefficients) -> float:
    return float(np.max(np.roots([float(c) for c in coefficients]).real))


# -- closed-form examples ------------------------------------------------------------------


def test_segment_between_two_stable_cubics_can_lose_stability():
    """The segment from s^3 + 0.2 s^2 + 0.2 s + 0.01 to 0.01 s^3 + 0.2 s^2 + 0.2 s + 1 has
    Hurwitz ends but an unstable middle, and the rational witness is exactly unstable."""
    p0 = [Fraction(1), Fraction(1, 5), Fraction(1, 5), Fraction(1, 100)]
    p1 = [Fraction(1, 100), Fraction(1, 5), Fraction(1, 5), Fraction(1)]
    # degree-3 Hurwitz condition (all a_i > 0 and a2*a1 > a3*a0; Gantmacher, "The Theory of
    # Matrices", vol. 2, 1959, ch. XV, from memory): both ends pass (0.04 > 0.01) ...
    for p in (p0, p1):
        assert all(c > 0 for c in p) and p[1] * p[2] > p[0] * p[3]
    mid = _combine(p0, p1, Fraction(1, 2))
    assert not mid[1] * mid[2] > mid[0] * mid[3]  # ... the midpoint fails (0.04 < 0.255)
    result = check_segment(p0, p1)
    assert not result.stable
    assert result.crossing == "imaginary pair"
    lam = result.witness_l
    assert lam is not None and 0 <= lam <= 1
    member = _combine(p0, p1, lam)
    assert not member[1] * member[2] > member[0] * member[3]
    assert _has_root_with_non_negative_real_part(member)  # mpmath (Johansson et al.)


def test_segment_between_shifted_cubes_is_stable():
    """Every convex combination of (s + 1)^3 and (s + 2)^3 is Hurwitz: a2*a1 >= 9 > 8 >= a3*a0."""
    p0 = [Fraction(c) for c in (1, 3, 3, 1)]
    p1 = [Fraction(c) for c in (1, 6, 12, 8)]
    assert check_segment(p0, p1).stable
    # degree-3 Hurwitz condition (Gantmacher 1959, ch. XV, from memory) on a dense grid
    for j in range(101):
        a3, a2, a1, a0 = _combine(p0, p1, Fraction(j, 100))
        assert a2 * a1 > a3 * a0


def test_segment_touching_the_axis_at_a_rational_member_is_refuted_there():
    """A segment whose Delta_2 is a perfect square (l - 1/2)^2 / 4 has its one marginal member
    (s + 1)(s^2 + 1) at l = 1/2, and that exact member is the witness."""
    # a3 = 1, a2 = a1 = 1 + t/2, a0 = 1 + t with t = l - 1/2: a2*a1 - a3*a0 = t^2 / 4
    p0 = [Fraction(1), Fraction(3, 4), Fraction(3, 4), Fraction(1, 2)]
    p1 = [Fraction(1), Fraction(5, 4), Fraction(5, 4), Fraction(3, 2)]
    assert is_hurwitz(p0) and is_hurwitz(p1)
    result = check_segment(p0, p1)
    assert not result.stable
    assert result.witness_l == Fraction(1, 2)
    member = _combine(p0, p1, result.witness_l)
    assert member == [1, 1, 1, 1]
    # sympy root isolation (Meurer et al., PeerJ Comput. Sci. 2017): roots -1, +-j
    assert reference_counts(member) == (0, 2, 1)
    # Bialas (Bull. Polish Acad. Sci. 33, 1985): a real negative eigenvalue, here -1
    assert _bialas_stable(p0, p1) is False


def test_unstable_end_is_reported_as_the_witness():
    """A segment with a non-Hurwitz end is refuted at that end (l = 0 or l = 1)."""
    good = [Fraction(1), Fraction(3), Fraction(3), Fraction(1)]
    bad = [Fraction(1), Fraction(1), Fraction(1), Fraction(2)]  # a2*a1 = 1 < 2 = a3*a0
    assert check_segment(bad, good) == check_segment(bad, good)
    first = check_segment(bad, good)
    assert not first.stable and first.witness_l == 0 and first.crossing == "end"
    second = check_segment(good, bad)
    assert not second.stable and second.witness_l == 1 and second.crossing == "end"


def test_leading_coefficient_through_zero_is_an_infinity_crossing():
    """Joining a Hurwitz polynomial to the negative of another passes a member whose leading
    coefficient vanishes, so the segment is refuted."""
    p0 = [Fraction(1), Fraction(2), Fraction(1)]
    p1 = [Fraction(-1), Fraction(-5), Fraction(-6)]  # -(s + 2)(s + 3): Hurwitz as well
    assert is_hurwitz(p0) and is_hurwitz(p1)
    result = check_segment(p0, p1)
    assert not result.stable
    assert result.witness_l is not None
    member = _combine(p0, p1, result.witness_l)
    assert not is_hurwitz(member)
    assert member[0] <= 0 or _has_root_with_non_negative_real_part(member)


def test_hurwitz_matrix_matches_an_independent_construction():
    """edges.hurwitz_matrix equals the textbook n x n Hurwitz matrix for a degree-5 example."""
    coeffs = [Fraction(c) for c in (2, 3, 5, 7, 11, 13)]
    ours = hurwitz_matrix([sp.Rational(c.numerator, c.denominator) for c in coeffs], 5)
    theirs = _hurwitz_matrix_numpy(coeffs)
    assert np.array_equal(np.array(ours.tolist(), dtype=float), theirs)


def test_box_edges_join_corners_that_differ_in_one_parameter():
    """A box with k free parameters has k * 2^(k-1) edges, each flipping exactly one bit."""
    for k in range(1, 6):
        edges = box_edges(2**k, list(range(k)))
        assert len(edges) == k * 2 ** (k - 1)
        assert len(set(edges)) == len(edges)
        for a, b in edges:
            assert a < b and bin(a ^ b).count("1") == 1


# -- properties -----------------------------------------------------------------------------


@st.composite
def hurwitz_pairs(draw):
    """Two Hurwitz polynomials of one degree (different factor structures, so some segments
    are stable and some are not)."""
    p0 = draw(hurwitz_polynomials())
    degree = len(p0) - 1
    p1 = draw(hurwitz_polynomials(min_degree=degree, max_degree=degree))
    if draw(st.booleans()):
        # s^n p1(1/s) is Hurwitz too (roots 1/r); joined to p0 it often leaves the stable set
        p1 = p1[::-1]
    return p0, p1


@pytest.mark.slow
@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(hurwitz_pairs())
def test_segment_verdict_agrees_with_a_dense_rational_grid(pair):
    """An unstable grid member forces 'unstable'; an 'unstable' answer comes with an exact
    member whose roots (numpy, sympy) include one with Re >= 0."""
    p0, p1 = pair
    result = check_segment(p0, p1)
    grid = [Fraction(j, 200) for j in range(201)]
    unstable_on_grid = [lam for lam in grid if not is_hurwitz(_combine(p0, p1, lam))]
    # numpy's roots (companion eigenvalues) independently agree with the exact grid away from
    # the boundary (Harris et al., "Array programming with NumPy", Nature 585, 2020)
    for lam in grid[::20]:
        member = _combine(p0, p1, lam)
        worst = _numpy_max_real(member)
        if abs(worst) > 1e-6:
            assert (worst < 0) == is_hurwitz(member)
    if unstable_on_grid:
        assert not result.stable
    if not result.stable:
        lam = result.witness_l
        assert lam is not None and 0 <= lam <= 1
        member = _combine(p0, p1, lam)
        assert not is_hurwitz(member)
        assert _has_root_with_non_negative_real_part(member)  # mpmath (Johansson et al.)


@pytest.mark.slow
@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(hurwitz_pairs())
def test_segment_verdict_agrees_with_bialas_eigenvalue_test(pair):
    """check_segment says stable exactly when H(p0)^-1 H(p1) has no real non-positive
    eigenvalue (Bialas 1985), on well-conditioned examples."""
    p0, p1 = pair
    expected = _bialas_stable(p0, p1)
    assume(expected is not None)
    assert check_segment(p0, p1).stable == expected


def test_bialas_reference_sees_both_outcomes_on_fixed_examples():
    """The numpy Bialas reference itself calls the two cubic examples unstable and stable."""
    unstable = (
        [Fraction(1), Fraction(1, 5), Fraction(1, 5), Fraction(1, 100)],
        [Fraction(1, 100), Fraction(1, 5), Fraction(1, 5), Fraction(1)],
    )
    stable = ([Fraction(c) for c in (1, 3, 3, 1)], [Fraction(c) for c in (1, 6, 12, 8)])
    assert _bialas_stable(*unstable) is False
    assert _bialas_stable(*stable) is True
    assert check_segment(*unstable).stable is False
    assert check_segment(*stable).stable is True
