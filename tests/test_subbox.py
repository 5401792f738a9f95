"""Tests for robust.analysis.subbox (the Bernstein test of the Hurwitz conditions) and the
decision engine and margins that use it, on correlated families.

Outside references:
- mechanical chains: with positive definite mass, damping and stiffness matrices every mode
  of M x'' + C x' + K x = 0 decays, so det(M s^2 + C s + K) is Hurwitz for every positive
  part value (the energy argument; Meirovitch, "Fundamentals of Vibrations", 2001, from
  memory); its roots are also found independently by mpmath (Johansson et al., mpmath, 2013-);
- the degree-3 Hurwitz condition a2*a1 > a3*a0 with positive coefficients (Gantmacher, "The
  Theory of Matrices", vol. 2, 1959, ch. XV, from memory), from which rho* of a family below is
  derived in closed form by hand;
- exact Routh tests on dense rational grids of the box for families the engine calls stable.
"""

from __future__ import annotations

import itertools
from fractions import Fraction

import mpmath
from hypothesis import given, settings
from hypothesis import strategies as st
from strategies import case_toml

from robust.analysis.margin import margin
from robust.analysis.subbox import hurwitz_conditions, try_box
from robust.analysis.verdict import check, decide
from robust.exact.routh import is_hurwitz
from robust.model.case import parse_case

CHAIN = "(m1*s^2 + (c1 + c2)*s + k1 + k2)*(m2*s^2 + c2*s + k2) - (c2*s + k2)^2"


def _chain_case(values: dict[str, Fraction], tolerance: str):
    params = {name: {"nominal": str(v), "tolerance": tolerance} for name, v in values.items()}
    return parse_case(case_toml(params, expression=CHAIN, title="two-mass chain"), "<chain>")


def _mpmath_stable(coefficients) -> bool:
    roots = mpmath.polyroots([mpmath.mpf(c.numerator) / c.denominator for c in coefficients],
                             maxsteps=200, extraprec=200)
    return all(mpmath.re(r) < 0 for r in roots)


def test_lightly_damped_two_mass_chain_is_proven_within_the_default_budget():
    """Our own chain: 2 kg and 0.5 kg, springs 8 and 2 kN/m, dampers 0.05 and 0.02 N*s/m (damping
    ratios about 1e-4), every part +-30 %. The overbound subdivision leaves almost all of it
    undecided after 2000 boxes; the Bernstein test proves it at once."""
    values = {"m1": Fraction(2), "m2": Fraction(1, 2), "k1": Fraction(8000), "k2": Fraction(2000),
              "c1": Fraction(1, 20), "c2": Fraction(1, 50)}
    case = _chain_case(values, "30%")
    assert case.family.kind == "multilinear"
    result = check(case)
    assert result.verdict == "stable" and result.boxes <= 10
    old = decide(case.family, max_boxes=2000, sub_box_test="overbound", search=False)
    assert old.verdict == "undecided" and old.unresolved > Fraction(1, 2)
    # the energy argument says stable everywhere; mpmath agrees at the corners
    for corner in itertools.islice(case.family.box.vertices(), 0, 64, 7):
        assert _mpmath_stable(case.family.coefficients_at(corner))


part = st.fractions(min_value=Fraction(1, 20), max_value=100, max_denominator=20)


@settings(max_examples=15, deadline=None)
@given(st.fixed_dictionaries({n: part for n in ("m1", "m2", "k1", "k2", "c1", "c2")}),
       st.sampled_from(["5%", "20%", "50%"]))
def test_every_positive_chain_is_proven_stable(values, tolerance):
    case = _chain_case(values, tolerance)
    result = check(case, max_boxes=3000)
    assert result.verdict == "stable", result.reason
    assert _mpmath_stable(case.family.coefficients_at(case.family.nominal))


THIN = ["1", "2 + x", "2 + y", "3 + x + y + x*y"]


def _thin_case(half_width: str):
    params = {n: {"nominal": "0", "range": [f"-{half_width}", half_width]} for n in ("x", "y")}
    return parse_case(case_toml(params, THIN, title="thin multilinear"), "<thin>")


def test_thin_multilinear_family_has_the_margin_derived_by_hand():
    """s^3 + (2 + x) s^2 + (2 + y) s + (3 + x + y + xy): a2*a1 - a3*a0 = 1 + x + y (by hand),
    and a0 >= 3 - 2r - r^2 > 0 for |x|, |y| <= r < 1, so with x, y in [-r, r] the family is
    stable exactly for r < 1/2. Over [-1/4, 1/4]: rho* = 2, proven although the interval
    overbound fails (a2 a1 >= (7/4)^2 against a0 <= 3 + 1/2 + 1/16)."""
    case = _thin_case("0.25")
    result = check(case)
    assert result.verdict == "stable" and result.overbound.stable is False
    m = margin(case, with_decay=False)
    assert m.margin.lower <= 2 <= m.margin.upper
    assert (m.margin.upper - m.margin.lower) / m.margin.upper <= Fraction(1, 10**6)


def test_a_corner_where_a_condition_fails_is_a_verified_witness():
    """The same family over [-0.6, 0.6]: 1 + x + y < 0 at x = y = -0.6 (by hand)."""
    case = _thin_case("0.6")
    result = check(case)
    assert result.verdict == "unstable"
    a3, a2, a1, a0 = case.family.coefficients_at(result.witness.point)
    assert not (a2 > 0 and a1 > 0 and a0 > 0 and a2 * a1 > a3 * a0)


@st.composite
def cubic_families(draw):
    """s^3 + (2 + u x) s^2 + (2 + v y) s + (3 + p x + q y + w x y) over [-r, r]^2."""
    u, v, p, q, w = (draw(st.integers(-2, 2)) for _ in range(5))
    r = draw(st.sampled_from(["0.1", "0.3", "0.5"]))
    coefficients = ["1", f"2 + {u}*x", f"2 + {v}*y", f"3 + {p}*x + {q}*y + {w}*x*y"]
    params = {n: {"nominal": "0", "range": [f"-{r}", r]} for n in ("x", "y")}
    return parse_case(case_toml(params, coefficients, title="cubic family"), "<cubic>")


@settings(max_examples=40, deadline=None)
@given(cubic_families())
def test_verdicts_agree_with_the_closed_form_on_a_dense_grid(case):
    family = case.family
    result = check(case, max_boxes=2000)
    if result.verdict == "stable":
        (x0, x1), (y0, y1) = family.box.intervals
        for i, j in itertools.product(range(17), repeat=2):
            point = (x0 + (x1 - x0) * Fraction(i, 16), y0 + (y1 - y0) * Fraction(j, 16))
            a3, a2, a1, a0 = family.coefficients_at(point)
            assert a2 > 0 and a1 > 0 and a0 > 0 and a2 * a1 > a3 * a0, point
    elif result.verdict == "unstable":
        assert not is_hurwitz(family.coefficients_at(result.witness.point))


def test_the_sub_box_test_blames_a_parameter_and_its_halves_prove():
    """Over [-0.45, 0.45]^2 the conditions hold (1 + x + y >= 0.1) but the whole-box
    Bernstein coefficients of Delta_2 = 1 + x + y and a0 are decided at once, while a box
    that straddles the failing corner region is blamed on a parameter that has an axis."""
    case = _thin_case("0.45")
    family = case.family
    conditions = hurwitz_conditions(family, family.nominal)
    assert conditions is not None and len(conditions.polys) == 3
    test = try_box(conditions, family, family.box)
    assert test.status == "proven"
    wide = _thin_case("0.55").family
    test = try_box(hurwitz_conditions(wide, wide.nominal), wide, wide.box)
    assert test.status == "point"  # the corner (-0.55, -0.55): 1 + x + y = -0.1
    assert not is_hurwitz(wide.coefficients_at(test.point))


@st.composite
def quartic_families(draw):
    """Degree 4, parameters u and v of nominal 1: the coefficients of a product of stable
    factors plus integer multiples of (u - 1), (v - 1), (u - 1)(v - 1) and (u - 1)^2, so the
    dependence is polynomial and Delta_3 has interior extrema."""
    base = [Fraction(1)]
    for _ in range(4):
        r = draw(st.integers(1, 3))
        base = [a + r * b for a, b in zip([*base, Fraction(0)], [Fraction(0), *base], strict=True)]
    formulas = []
    for c in base:
        terms = [str(c)]
        for monomial in ("(u - 1)", "(v - 1)", "(u - 1)*(v - 1)", "(u - 1)^2"):
            d = draw(st.integers(-3, 3))
            if d:
                terms.append(f"{d}*{monomial}")
        formulas.append(" + ".join(terms))
    width = draw(st.sampled_from(["0.2", "0.5", "0.8"]))
    params = {n: {"nominal": "1", "tolerance": width} for n in ("u", "v")}
    return parse_case(case_toml(params, formulas, title="quartic family"), "<quartic>"), formulas


def _quartic_hurwitz(a4, a3, a2, a1, a0) -> bool:
    """Degree-4 Hurwitz condition after making a4 > 0: all a_i > 0 and
    a3 a2 a1 > a4 a1^2 + a3^2 a0 (Gantmacher 1959, ch. XV, from memory)."""
    if a4 < 0:
        a4, a3, a2, a1, a0 = -a4, -a3, -a2, -a1, -a0
    return (a4 > 0 and a3 > 0 and a2 > 0 and a1 > 0 and a0 > 0
            and a3 * a2 * a1 > a4 * a1 * a1 + a3 * a3 * a0)


@settings(max_examples=60, deadline=None)
@given(quartic_families())
def test_quartic_verdicts_agree_with_the_closed_form(data):
    """Whatever the engine decides on a polynomial family of degree 4 agrees with the degree-4
    condition: 'stable' on a dense rational grid of the box (and the box's corners), a witness
    by the condition itself and by mpmath's roots."""
    case, _ = data
    family = case.family
    result = check(case, max_boxes=3000)
    if result.verdict == "stable":
        (u0, u1), (v0, v1) = family.box.intervals
        for i, j in itertools.product(range(21), repeat=2):
            point = (u0 + (u1 - u0) * Fraction(i, 20), v0 + (v1 - v0) * Fraction(j, 20))
            assert _quartic_hurwitz(*family.coefficients_at(point)), point
    elif result.verdict == "unstable":
        coefficients = family.coefficients_at(result.witness.point)
        assert family.box.contains(result.witness.point)
        assert not _quartic_hurwitz(*coefficients)
        assert coefficients[0] == 0 or not _mpmath_stable(coefficients)


def test_high_degree_families_keep_the_overbound():
    """Above MAX_DEGREE the generic Hurwitz determinant is too large to expand (it has
    hundreds of thousands of terms at degree 16), so the conditions are not built and the
    engine keeps the overbound; a product of 16 stable factors with one shared gain (our own)
    is still decided."""
    from robust.analysis.subbox import MAX_DEGREE

    params = {"g": {"nominal": "1", "tolerance": "1%"}}
    case = parse_case(case_toml(params, expression="(s + 1)^16 + g*(s + 1)^15 - (s + 1)^15",
                                title="degree 16"), "<deg16>")
    assert case.family.degree == 16 > MAX_DEGREE
    assert hurwitz_conditions(case.family, case.family.nominal) is None
    result = check(case, max_boxes=200)
    assert result.verdict == "stable"
    # (s + 1)^15 (s + g): every root at -1 or -g (closed form)


def test_subdivision_with_the_bernstein_test_does_not_depend_on_the_memory_cap(monkeypatch):
    """A chain whose masses range over a factor of 200 needs sub-boxes; the halves' patches by
    de Casteljau (kept in memory) and by a fresh expansion (cap 0) are the same numbers, so
    the verdict and the box count agree. Stable, by the energy argument (every part positive)."""
    import robust.analysis.verdict as engine

    values = {"m1": Fraction(2), "m2": Fraction(1, 2), "k1": Fraction(8000), "k2": Fraction(2000),
              "c1": Fraction(1, 20), "c2": Fraction(1, 50)}
    params = {name: {"nominal": str(v), "tolerance": "10%"} for name, v in values.items()}
    params["m1"] = {"range": ["0.02", "4"]}
    params["m2"] = {"range": ["0.02", "1"]}
    case = parse_case(case_toml(params, expression=CHAIN, title="wide chain"), "<wide chain>")
    kept = decide(case.family, search=False)
    monkeypatch.setattr(engine, "MAX_STORED", 0)
    fresh = decide(case.family, search=False)
    assert kept.verdict == fresh.verdict == "stable"
    assert kept.method == "subdivision" and kept.boxes == fresh.boxes > 1
