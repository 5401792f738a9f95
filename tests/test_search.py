"""Tests for robust.analysis.search: the floating-point screening score and the witness search.

The score is checked row by row against numpy.roots and mpmath.polyroots; every point the
search returns is checked to lie in the box (exact Fractions) and to be unstable by an
independent root computation.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from robust.analysis.search import batch_worst_angle, search_witness, worst_root_angle
from robust.exact.routh import is_hurwitz
from robust.model.case import parse_case


def _angle_by_numpy(row) -> float:
    """max Re(r)/|r| over numpy.roots of one row (Harris et al., "Array programming with
    NumPy", Nature 585, 2020)."""
    roots = np.roots(row)
    return max(0.0 if abs(r) == 0 else r.real / abs(r) for r in roots)


def _angle_by_mpmath(row) -> float:
    """The same score from mpmath.polyroots at 50 digits (Johansson et al., mpmath, a Python
    library for arbitrary-precision floating-point arithmetic, 2013-)."""
    with mpmath.workdps(50):
        roots = mpmath.polyroots([mpmath.mpf(float(c)) for c in row], maxsteps=500, extraprec=300)
        return float(max(0 if abs(r) == 0 else mpmath.re(r) / abs(r) for r in roots))


_rows = hnp.arrays(
    np.float64,
    st.tuples(st.integers(1, 40), st.integers(2, 9)),
    elements=st.floats(-10, 10, allow_nan=False).map(lambda x: round(x, 3)),
)


@settings(max_examples=80, deadline=None)
@given(_rows)
def test_batch_worst_angle_matches_numpy_roots_per_row(rows):
    """Each row's score equals max Re(r)/|r| over numpy.roots, and +1 where the lead is 0."""
    scores = batch_worst_angle(rows)
    assert scores.shape == (rows.shape[0],)
    for row, score in zip(rows, scores, strict=True):
        if row[0] == 0:
            assert score == 1.0
            continue
        roots = np.roots(row)
        if not np.all(np.isfinite(roots)):
            continue
        assert -1.0 <= score <= 1.0
        gaps = [abs(a - b) for i, a in enumerate(roots) for b in roots[i + 1 :]]
        if gaps and min(gaps) < 1e-3 * max(1.0, float(np.max(np.abs(roots)))):
            continue  # (near-)multiple roots: both methods are ill-conditioned there
        assert score == pytest.approx(_angle_by_numpy(row), abs=1e-6)


def test_batch_worst_angle_matches_mpmath_on_fixed_rows():
    """On rows with well-separated roots the score agrees with mpmath.polyroots to 1e-9."""
    cubics = np.array(
        [
            [1.0, 6.0, 11.0, 6.0],  # (s + 1)(s + 2)(s + 3): score -1
            [1.0, -1.0, 4.0, -4.0],  # (s - 1)(s^2 + 4): roots 1, +-2j, score +1
            [1.0, 0.2, 0.2, 0.505],  # an unstable cubic: a2*a1 < a3*a0
            [3.0, 1.0, 2.0, 0.5],
        ]
    )
    scores = batch_worst_angle(cubics)
    for row, score in zip(cubics, scores, strict=True):
        assert score == pytest.approx(_angle_by_mpmath(row), abs=1e-9)
    quartic = np.array([[2.0, 1.0, 3.0, 0.5, 0.25]])
    assert batch_worst_angle(quartic)[0] == pytest.approx(_angle_by_mpmath(quartic[0]), abs=1e-9)
    assert scores[0] == pytest.approx(-1.0)
    assert scores[1] == pytest.approx(1.0)


def test_score_sign_follows_the_half_plane_of_the_worst_root():
    """A Hurwitz polynomial scores below 0, one with a right-half-plane root above 0, and a
    pure imaginary pair scores 0."""
    assert worst_root_angle([1.0, 3.0, 3.0, 1.0]) < 0
    assert worst_root_angle([1.0, 0.0, 1.0, 1.0]) > 0  # s^3 + s + 1 misses the s^2 term
    assert worst_root_angle([1.0, 0.0, 4.0]) == pytest.approx(0.0, abs=1e-12)
    # a negative leading coefficient has the same roots
    assert worst_root_angle([-1.0, -3.0, -3.0, -1.0]) == pytest.approx(worst_root_angle([1.0, 3.0, 3.0, 1.0]))


def test_degree_zero_rows_score_like_constants():
    """A non-zero constant has no roots (score -1); a zero one counts as a degree drop (+1)."""
    scores = batch_worst_angle(np.array([[2.0], [0.0], [-3.0]]))
    assert list(scores) == [-1.0, 1.0, -1.0]


def _case(parameters: dict[str, tuple[str, str, str]], coefficients: list[str]):
    lines = ['title = "search test"']
    for name, (low, high, nominal) in parameters.items():
        lines += [f"[parameters.{name}]", f'range = ["{low}", "{high}"]', f'nominal = "{nominal}"']
    lines += ["[polynomial]", "coefficients = [" + ", ".join(f'"{c}"' for c in coefficients) + "]"]
    return parse_case("\n".join(lines), "<search test>")


def _max_real_mpmath(coefficients) -> mpmath.mpf:
    """Largest root real part at 50 digits (mpmath, Johansson et al., 2013-)."""
    with mpmath.workdps(50):
        roots = mpmath.polyroots(
            [mpmath.mpf(c.numerator) / c.denominator for c in coefficients], maxsteps=500, extraprec=400
        )
        return max(mpmath.re(r) for r in roots)


def test_search_finds_a_point_in_an_interior_unstable_band():
    """With stable corners and nominal but an unstable band 0.4 < k < 0.6, the search returns
    an exact point of the band inside the box."""
    # a1 = 4 (k - 1/2)^2 + 0.46 < 0.5 = a3*a0 / a2 exactly when |k - 1/2| < 0.1
    case = _case({"k": ("0", "1", "0.1")}, ["1", "1", "4*(k - 1/2)^2 + 0.46", "0.5"])
    family = case.family
    found = search_witness(family, family.box, seed=3)
    assert found is not None
    point, how = found
    assert isinstance(how, str) and how
    (k,) = point
    assert Fraction(0) <= k <= Fraction(1)
    assert abs(k - Fraction(1, 2)) < Fraction(1, 10)
    coeffs = family.coefficients_at(point)
    assert not is_hurwitz(coeffs)
    # degree-3 Hurwitz condition, a2*a1 > a3*a0 (Gantmacher, "The Theory of Matrices", vol. 2,
    # 1959, ch. XV, from memory), fails; mpmath sees the right-half-plane pair
    a3, a2, a1, a0 = coeffs
    assert a2 * a1 <= a3 * a0
    assert _max_real_mpmath(coeffs) > 0


def test_search_returns_nothing_on_a_family_stable_everywhere():
    """On (s + a)(s^2 + b s + c) with positive ranges every member is Hurwitz, so no
    candidate survives the exact re-check."""
    case = _case(
        {"a": ("0.5", "2", "1"), "b": ("0.1", "1", "0.5"), "c": ("1", "9", "4")},
        ["1", "a + b", "a*b + c", "a*c"],
    )
    family = case.family
    assert search_witness(family, family.box, seed=0) is None


def test_search_respects_its_deadline():
    """A deadline already past stops the search before any candidate is produced."""
    case = _case({"k": ("0", "1", "0.1")}, ["1", "1", "4*(k - 1/2)^2 + 0.46", "0.5"])
    family = case.family
    assert search_witness(family, family.box, deadline=0.0) is None


@st.composite
def _cubic_cases(draw):
    """A two-parameter cubic family a3 = 1, a2 = 1 + x, a1 = q + y*x, a0 = r + y with
    rational ranges: sometimes unstable somewhere, sometimes not."""
    q = draw(st.fractions(Fraction(1, 10), Fraction(3), max_denominator=10))
    r = draw(st.fractions(Fraction(1, 10), Fraction(3), max_denominator=10))
    return _case({"x": ("0", "2", "1"), "y": ("-0.05", "1", "0")}, ["1", "1 + x", f"{q} + y*x", f"{r} + y"])


@pytest.mark.slow
@settings(max_examples=25, deadline=None)
@given(_cubic_cases(), st.integers(0, 2**16))
def test_search_candidates_are_inside_the_box_and_unstable(case, seed):
    """Whatever the search returns is an exact point of the box whose polynomial fails the
    exact Routh test and the degree-3 Hurwitz condition (Gantmacher 1959, from memory)."""
    family = case.family
    found = search_witness(family, family.box, seed=seed, samples=64, local=1)
    if found is None:
        return
    point, _ = found
    assert family.box.contains(point)
    assert all(isinstance(x, Fraction) for x in point)
    coeffs = family.coefficients_at(point)
    assert not is_hurwitz(coeffs)
    a3, a2, a1, a0 = coeffs
    assert not (a3 > 0 and a2 > 0 and a1 > 0 and a0 > 0 and a2 * a1 > a3 * a0)
    assert _max_real_mpmath(coeffs) >= mpmath.mpf("-1e-40")
