"""The damping sector by zero exclusion on its boundary ray (robust.exact.rays,
robust.analysis.sector) and its use for the damping-ratio criterion.

Outside references, beside each check:
* sympy's exact complex arithmetic for Re and Im of p(rho d) (Meurer et al., "SymPy: symbolic
  computing in Python", PeerJ Computer Science 3:e103, 2017);
* numpy's roots for root moduli and damping ratios at sampled points (Harris et al., "Array
  programming with NumPy", Nature 585, 2020);
* closed forms derived here: s^2 + 2 z w s + w^2 with 0 < z < 1, w > 0 has the roots
  w (-z +- j sqrt(1 - z^2)), of modulus w and damping ratio exactly z, so over a box of
  (z, w) the least damping ratio is the least z; a product of two such factors has the least
  of both.
"""

from __future__ import annotations

import random
from fractions import Fraction as F

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.analysis.criteria import DAMPING, decide_criterion, measure_criterion
from robust.analysis.outcomes import Verdict
from robust.analysis.sector import prove_sector
from robust.exact.rays import direction_powers, ray_parts, root_bound
from robust.exact.regions import damping_of, damping_parameter
from robust.model.case import load_case, parse_case
from robust.model.family import Box


def _family(parameters: str, expression: str):
    text = f'title = "t"\n{parameters}\n[polynomial]\nexpression = "{expression}"\n'
    return parse_case(text, "t.toml").family


def _least_damping(coefficients) -> float:
    """The least damping ratio -Re(r)/|r| over numpy's roots (Harris et al. 2020)."""
    roots = np.roots([float(c) for c in coefficients])
    return min(-r.real / abs(r) for r in roots)


_CUBIC = _family("[parameters.x]\nrange = [1, 3]\n[parameters.y]\nrange = [2, 5]\n",
                 "s^3 + (x + y)*s^2 + (x*y + 3)*s + 2*y - x/2")


def test_ray_parts_are_the_real_and_imaginary_parts_of_p_on_the_ray():
    """Re p(rho d) and Im p(rho d) / rho, as polynomials, equal sympy's exact real and imaginary
    parts at random rational points (sympy: Meurer et al., PeerJ CS 2017)."""
    import sympy as sp

    rng = random.Random(7)
    s = sp.Symbol("s")
    for _ in range(6):
        t = F(rng.randint(0, 40), 41)
        real, imag = ray_parts(_CUBIC.coefficients, t)
        point = (F(rng.randint(10, 30), 10), F(rng.randint(20, 50), 10))
        rho = F(rng.randint(1, 90), 7)
        sine = sp.Rational(2 * t.numerator * t.denominator, t.denominator**2 + t.numerator**2)
        cosine = sp.Rational(t.denominator**2 - t.numerator**2, t.denominator**2 + t.numerator**2)
        direction = -sine + sp.I * cosine  # j e^(j alpha)
        coefficients = [sp.Rational(c.numerator, c.denominator) for c in _CUBIC.coefficients_at(point)]
        at = sp.Rational(rho.numerator, rho.denominator) * direction
        value = sp.expand(sp.Poly(coefficients, s).as_expr().subs(s, at))
        assert sp.re(value) == sp.Rational(*_pair(real.evaluate((*point, rho))))
        assert sp.im(value) == sp.Rational(*_pair(rho * imag.evaluate((*point, rho))))
        # the direction has modulus 1 and real part -damping (derived here: Re(j e^(j alpha)) = -sin alpha)
        c1, s1 = direction_powers(1, t)[1]
        assert c1 * c1 + s1 * s1 == 1 and -c1 == damping_of(t)


def _pair(x: F) -> tuple[int, int]:
    return x.numerator, x.denominator


@settings(max_examples=30, deadline=None)
@given(st.lists(st.integers(-50, 50), min_size=3, max_size=7), st.integers(1, 9))
def test_root_bound_holds_for_numpy_roots(coefficients, lead):
    """Every numpy root of a polynomial has modulus at most root_bound (Cauchy and Fujiwara
    bounds, from memory; numpy: Harris et al. 2020)."""
    a = [F(lead), *map(F, coefficients)]
    bound = root_bound([abs(c) for c in a], abs(a[0]))
    assert max(abs(r) for r in np.roots([float(c) for c in a])) <= float(bound) * (1 + 1e-9)


_PAIR = "[parameters.z]\nrange = [0.6, 0.8]\n[parameters.w]\nrange = [2, 7]\n"


def test_second_order_family_is_proven_just_below_its_closed_form_worst_damping():
    """s^2 + 2 z w s + w^2, z in [3/5, 4/5]: the least damping ratio is 3/5 (closed form derived
    here), reached on the ray of t = 1/3 itself; the test proves every sector below it and no
    sector at or above it."""
    family = _family(_PAIR, "s^2 + 2*z*w*s + w^2")
    assert damping_of(F(1, 3)) == F(3, 5)
    for zeta in (F(1, 10), F(1, 2), F(59, 100)):
        assert prove_sector(family, damping_parameter(zeta, +1), max_boxes=2000).status == "proven"
    assert prove_sector(family, F(1, 3), max_boxes=200).status != "proven"  # roots on the ray
    refuted = prove_sector(family, damping_parameter(F(61, 100), -1))
    assert refuted.status == "refuted"
    assert _least_damping(family.coefficients_at(refuted.point)) < 0.61


def test_damping_bracket_of_a_fourth_order_family_holds_the_closed_form():
    """A product of two damped pairs, multiplied out (degree 4, four parameters): the least
    damping ratio is min(z, y) = 1/2 (closed form derived here). The ladder alone on the
    degree-8 family leaves [0, 1]; with the ray test the bracket holds 1/2, its upper end within
    1e-6 (a witness) and its lower end above 0.48 (a proof)."""
    family = _family("[parameters.z]\nrange = [0.6, 0.8]\n[parameters.w]\nrange = [2, 3]\n"
                     "[parameters.y]\nrange = [0.5, 0.55]\n[parameters.v]\nrange = [10, 12]\n",
                     "(s^2 + 2*z*w*s + w^2)*(s^2 + 2*y*v*s + v^2)")
    result = measure_criterion(family, DAMPING, max_boxes=500, stable=True)
    assert 0.48 < result.low <= 0.5 <= result.high < 0.5 + 1e-6
    met, _, _ = decide_criterion(family, DAMPING, F(47, 100), 500, 60.0)
    failed, witness, _ = decide_criterion(family, DAMPING, F(51, 100), 500, 60.0)
    assert met is Verdict.STABLE and failed is Verdict.UNSTABLE
    assert _least_damping(family.coefficients_at(witness.point[:4])) < 0.51


def test_second_order_bracket_closes_on_the_closed_form():
    """s^2 + 2 z w s + w^2, z in [3/5, 4/5]: the bracket holds the closed-form 3/5 within 1e-6."""
    result = measure_criterion(_family(_PAIR, "s^2 + 2*z*w*s + w^2"), DAMPING, max_boxes=250, stable=True)
    assert 0.6 - 1e-6 < result.low <= 0.6 <= result.high < 0.6 + 1e-6


def _boxes():
    ends = st.fractions(F(1, 2), F(6), max_denominator=8)
    return st.tuples(ends, ends, ends, ends).map(
        lambda e: Box(("x", "y"), (min(e[0], e[1]), min(e[2], e[3])), (max(e[0], e[1]), max(e[2], e[3]))))


@settings(max_examples=25, deadline=None)
@given(_boxes(), st.fractions(F(0), F(1, 2), max_denominator=20), st.randoms(use_true_random=False))
def test_a_proven_sector_holds_at_sampled_points_of_the_box(box, t, rng):
    """Soundness: whenever the ray test proves the sector for a box, every root at the box's
    corners, centre and random rational points has damping ratio above damping_of(t) (numpy's
    roots, Harris et al. 2020; the points are exact, the root check in floats with 1e-9 slack)."""
    family = _CUBIC.with_box(box)
    found = prove_sector(family, t, max_boxes=150)
    if found.status != "proven":
        return
    zeta = float(damping_of(t))
    points = [*box.vertices(), box.center]
    for _ in range(6):
        points.append(tuple(lo + (hi - lo) * F(rng.randint(0, 16), 16) for lo, hi in box.intervals))
    for point in points:
        assert _least_damping(family.coefficients_at(point)) > zeta - 1e-9


def test_shipped_servo_damping_is_bracketed_well_above_zero():
    """cases/servo_pid.toml (degree 5, six parameters), which the degree-10 family's ladder left
    at [0, 1]: the ray test proves a lower end above 0.14, within 1e-4 of the upper end and below
    the nominal damping (numpy's roots at the nominal point, about 0.376, Harris et al. 2020);
    the upper end's witness has a root of that damping (numpy). The worst case is a box
    corner, about 0.1443: well below the nominal."""
    family = load_case("cases/servo_pid.toml").family
    result = measure_criterion(family, DAMPING, max_boxes=250, stable=True)
    nominal = _least_damping(family.coefficients_at(family.nominal))
    assert 0.14 < result.low <= result.high <= nominal and result.high - result.low < 1e-4
    point = result.bracket.witness.point[:len(family.names)]
    assert abs(_least_damping(family.coefficients_at(point)) - result.high) < 1e-5


@pytest.mark.parametrize("zeta", [F(1, 2), F(3, 5)])
def test_shipped_cascaded_drive_damping_is_proven_where_the_ladder_was_not(zeta):
    """cases/cascaded_motor_drive.toml (degree 6): damping above 1/2 and 3/5 proven over the box,
    consistent with numpy's roots at its corners (Harris et al. 2020)."""
    family = load_case("cases/cascaded_motor_drive.toml").family
    assert prove_sector(family, damping_parameter(zeta, +1), max_boxes=250).status == "proven"
    for corner in family.box.vertices()[:32]:
        assert _least_damping(family.coefficients_at(corner)) > float(zeta)
