"""Gain and phase margins, damping ratio and spectral radius: certified brackets against
closed forms derived here, mpmath, and worst cases inside the box that corners miss.

Sources beside each check. The closed forms:
* K / (s (s + a) (s + b)) closes to s^3 + (a + b) s^2 + a b s + k K, Hurwitz exactly when
  k K < a b (a + b) (Routh's test, a textbook fact): the gain margin is a b (a + b) / K.
* K / (s (s + a)): |L(j w)| = 1 at w_c^2 = (sqrt(a^4 + 4 K^2) - a^2) / 2, and the phase
  margin is 180 deg - 90 deg - atan(w_c / a) = atan(a / w_c) (derived here by hand).
* s^2 + 2 zeta s + 1 with zeta < 1 has roots -zeta +- j sqrt(1 - zeta^2), of modulus 1 and
  damping ratio exactly zeta (derived here).
"""

from __future__ import annotations

from fractions import Fraction as F

import mpmath
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from robust.analysis.criteria import DAMPING, GAIN_DOWN, GAIN_UP, PHASE, RADIUS, decide_criterion, measure_criterion
from robust.analysis.margin import margin
from robust.analysis.outcomes import Outcome, Verdict
from robust.analysis.requirements import check_requirements
from robust.exact.regions import damping_of, damping_parameter, sector_product
from robust.exact.routh import is_hurwitz
from robust.model.case import parse_case


def _case(parameters: str, polynomial: str, extra: str = "", requirements: str = "") -> object:
    text = f'title = "t"\n{extra}{parameters}\n{polynomial}\n'
    if requirements:
        text += f"[requirements]\n{requirements}\n"
    return parse_case(text, "t.toml")


def _db(x) -> mpmath.mpf:
    return 20 * mpmath.log10(mpmath.mpf(x.numerator) / x.denominator if isinstance(x, F) else x)


THIRD_ORDER = """[parameters.K]
range = [2, 3]
[parameters.a]
range = [1, 2]
[parameters.b]
range = [4, 5]
"""


def test_gain_margin_of_a_third_order_loop_is_the_routh_closed_form():
    """Worst case a b (a + b) / K at a = 1, b = 4, K = 3: 20/3 (closed form, Routh)."""
    case = _case(THIRD_ORDER, '[polynomial.loop]\nplant = "K/(s*(s + a)*(s + b))"')
    result = measure_criterion(case.family, GAIN_UP)
    exact = _db(F(20, 3))
    assert result.low <= exact <= result.high
    assert result.high - result.low < 1e-4
    limited = result.bracket.witness.parameters
    assert (limited["K"], limited["a"], limited["b"]) == (3, 1, 4)  # the Routh worst corner
    # lowering the gain keeps this loop stable for every k > 0 (a_0 = k K > 0, and
    # (a + b) a b > k K): at least the 120 dB cap
    down = measure_criterion(case.family, GAIN_DOWN)
    assert down.high is None and down.low >= 119.99


def test_gain_margin_worst_case_inside_the_box_that_corners_miss():
    """a = 1 + (x - 1)^2 is least at x = 1, inside [1/2, 3/2]: the worst gain margin is
    1 * 2 * 3 / K = 6 / K there, while every corner gives 1.25 * 2 * 3.25 / K (closed form)."""
    case = _case("[parameters.x]\nrange = [0.5, 1.5]\n[parameters.K]\nnominal = 1\ntolerance = 0\n",
                 '[polynomial.loop]\nplant = "K/(s*(s + 1 + (x - 1)^2)*(s + 2))"')
    result = measure_criterion(case.family, GAIN_UP)
    inside, corner = _db(F(6)), _db(F(65, 8))
    assert result.low <= inside <= result.high
    assert result.high < corner - 1  # a corner sweep would report about 2.6 dB more
    assert result.bracket.witness.parameters["x"] not in (F(1, 2), F(3, 2))


def test_phase_margin_of_a_second_order_loop_is_the_closed_form():
    """K / (s (s + a)), K in [4, 9], a = 2: the worst phase margin is at K = 9 (the highest
    crossover), atan(a / w_c) with w_c^2 = (sqrt(a^4 + 4 K^2) - a^2) / 2 (derived here); the
    nominal margin is checked against a dense mpmath frequency response too."""
    case = _case("[parameters.K]\nrange = [4, 9]\n", '[polynomial.loop]\nplant = "K/(s*(s + 2))"')
    result = measure_criterion(case.family, PHASE)
    mpmath.mp.dps = 30
    a, k = mpmath.mpf(2), mpmath.mpf(9)
    wc = mpmath.sqrt((mpmath.sqrt(a**4 + 4 * k**2) - a**2) / 2)
    exact = mpmath.degrees(mpmath.atan(a / wc))
    assert result.low <= exact <= result.high
    assert result.high - result.low < 1e-3
    # the same margin from the frequency response itself: |L(j w)| = 1 found by mpmath's
    # root finder, the phase read off L (mpmath, Johansson et al., mpmath 1.3)
    w = mpmath.findroot(lambda w: abs(k / (1j * w * (1j * w + a))) - 1, 2.5)
    from_response = 180 + mpmath.degrees(mpmath.arg(k / (1j * w * (1j * w + a))))
    assert abs(from_response - exact) < 1e-12


def test_damping_worst_case_inside_the_box():
    """s^2 + 2 (3/10 + (x - 1)^2) s + 1 over x in [1/2, 3/2]: the least damping ratio is 3/10 at
    x = 1; the corners give 11/20 (closed form)."""
    case = _case("[parameters.x]\nrange = [0.5, 1.5]\n",
                 '[polynomial]\nexpression = "s^2 + 2*(3/10 + (x - 1)^2)*s + 1"')
    result = measure_criterion(case.family, DAMPING)
    assert result.low <= 0.3 <= result.high
    assert result.high - result.low < 1e-5
    assert result.high < 0.55
    limited = result.bracket.witness.parameters["x"]
    assert abs(limited - 1) < F(1, 100)


def test_damping_requirement_passes_and_fails_on_the_right_side():
    """Requirements just below and above the closed-form 3/10 pass and fail."""
    below = _case("[parameters.x]\nrange = [0.5, 1.5]\n",
                  '[polynomial]\nexpression = "s^2 + 2*(3/10 + (x - 1)^2)*s + 1"', requirements="damping_ratio = 0.29")
    above = _case("[parameters.x]\nrange = [0.5, 1.5]\n",
                  '[polynomial]\nexpression = "s^2 + 2*(3/10 + (x - 1)^2)*s + 1"', requirements="damping_ratio = 0.31")
    assert [r.outcome for r in check_requirements(below)] == [Outcome.PASS]
    failed = check_requirements(above)[0]
    assert failed.outcome is Outcome.FAIL and failed.witness is not None


def test_gain_requirement_in_db_is_decided_on_both_sides_of_the_closed_form():
    """The gain margin 20/3 is 16.478 dB (closed form above): 16.4 dB passes, 16.6 dB fails."""
    case = _case(THIRD_ORDER, '[polynomial.loop]\nplant = "K/(s*(s + a)*(s + b))"')
    from robust.analysis.criteria import GAIN_BOTH

    met, _, _ = decide_criterion(case.family, GAIN_BOTH, F("16.4"), 2000, 60)
    missed, witness, _ = decide_criterion(case.family, GAIN_BOTH, F("16.6"), 2000, 60)
    assert met is Verdict.STABLE and missed is Verdict.UNSTABLE
    assert witness is not None


def test_spectral_radius_of_a_fixed_discrete_polynomial_is_its_largest_root_modulus():
    """A z polynomial with no tolerance: the bracket holds mpmath's largest root modulus
    (mpmath.polyroots, Johansson et al., mpmath 1.3)."""
    case = _case("[parameters.c]\nnominal = 0.3\ntolerance = 0\n",
                 '[polynomial]\ncoefficients = ["1", "-1.2", "0.5", "-c/3"]', extra='variable = "z"\n')
    result = measure_criterion(case.family, RADIUS)
    mpmath.mp.dps = 30
    largest = max(abs(r) for r in mpmath.polyroots([1, mpmath.mpf("-1.2"), mpmath.mpf("0.5"),
                                                    -mpmath.mpf("0.1")], maxsteps=200, extraprec=100))
    assert result.low <= largest <= result.high
    assert result.high - result.low < 1e-5


def test_a_published_jury_example_is_stable_with_every_root_inside():
    """z^4 - 1.2 z^3 + 0.07 z^2 + 0.3 z - 0.08, stable by Jury's test (K. Ogata, "Discrete-Time
    Control Systems", 2nd ed., 1995, the Jury stability test example; from memory); mpmath
    places its roots at 0.4, 0.5, 0.5, 0.8, so the spectral radius is 0.8."""
    case = _case("[parameters.c]\nnominal = 1\ntolerance = 0\n",
                 '[polynomial]\ncoefficients = ["1", "-1.2", "0.07", "0.3", "-0.08*c"]',
                 extra='variable = "z"\n', requirements="radius = 0.81")
    assert [r.outcome for r in check_requirements(case)] == [Outcome.PASS]
    result = measure_criterion(case.family, RADIUS)
    assert result.low <= 0.8 <= result.high
    moduli = sorted(abs(r) for r in mpmath.polyroots([1, -1.2, 0.07, 0.3, -0.08], maxsteps=200, extraprec=100))
    assert [float(x) for x in moduli] == pytest.approx([0.4, 0.5, 0.5, 0.8], abs=1e-6)


def test_discrete_loop_gain_margin_matches_the_jury_boundary():
    """P(z) = K / (z (z - 1/2)) in unity feedback: z^2 - z/2 + k K. Both roots are inside the
    unit circle exactly when |k K| < 1 and |z-coefficient| < 1 + k K (the second-order Jury
    conditions, a textbook fact): with K in [1/4, 1/2] the worst gain margin is 1 / (1/2) = 2."""
    case = _case("[parameters.K]\nrange = [0.25, 0.5]\n", '[polynomial.loop]\nplant = "K/(z*(z - 1/2))"',
                 extra='variable = "z"\n')
    result = measure_criterion(case.family, GAIN_UP)
    assert result.low <= _db(F(2)) <= result.high
    assert result.high - result.low < 1e-4


# -- the damping sector, exactly ------------------------------------------------------------------

_PAIRS = st.tuples(st.fractions(F(1, 10), F(5), max_denominator=100), st.fractions(F(0), F(5), max_denominator=100))


@settings(max_examples=40, deadline=None)
@given(st.lists(_PAIRS, min_size=1, max_size=2), st.fractions(F(1, 20), F(19, 20), max_denominator=100))
def test_sector_product_is_hurwitz_exactly_when_every_root_is_damped_enough(pairs, zeta):
    """Roots -sigma +- j omega (sigma > 0) have damping sigma / sqrt(sigma^2 + omega^2)
    (its definition, common practice, no source); the sector product is Hurwitz exactly when
    every one is above damping_of(t), for t on either side of zeta."""
    poly = [F(1)]
    dampings = []
    for sigma, omega in pairs:  # (s + sigma)^2 + omega^2
        quadratic = [F(1), 2 * sigma, sigma * sigma + omega * omega]
        poly = [sum(poly[i] * quadratic[k - i] for i in range(len(poly)) if 0 <= k - i < 3)
                for k in range(len(poly) + 2)]
        modulus2 = sigma**2 + omega**2
        dampings.append(mpmath.mpf(sigma.numerator) / sigma.denominator
                        / mpmath.sqrt(mpmath.mpf(modulus2.numerator) / modulus2.denominator))
    least = min(dampings)
    for side in (1, -1):
        t = damping_parameter(zeta, side)
        sector = damping_of(t)
        boundary = mpmath.mpf(sector.numerator) / sector.denominator
        if abs(least - boundary) < mpmath.mpf(10) ** -9:
            continue  # too close to tell in floats
        assert is_hurwitz(sector_product(poly, t)) == (least > boundary)


def test_damping_parameter_is_on_the_asked_side_and_close():
    """damping_of(t) brackets zeta from the asked side within 1e-12, and is exact for a
    Pythagorean zeta (3/5 = 2t/(1 + t^2) at t = 1/3)."""
    assert damping_parameter(F(3, 5), 1) == damping_parameter(F(3, 5), -1) == F(1, 3)
    for zeta in (F(1, 2), F(2, 5), F(707, 1000)):
        up, down = damping_of(damping_parameter(zeta, 1)), damping_of(damping_parameter(zeta, -1))
        assert down <= zeta <= up and (up - down) / zeta < F(3, 10**12)


# -- the two shipped cases -----------------------------------------------------------------------


def test_shipped_servo_meets_its_gain_and_damping_requirements():
    """cases/servo_lead_criteria.toml: its header's numpy sweep gives about 15 dB and a least
    damping of about 0.52 (for orientation); the certified brackets must hold them."""
    from robust.model.case import load_case

    case = load_case("cases/servo_lead_criteria.toml")
    result = margin(case, max_boxes=300, max_tests=30, with_decay=False)
    by_name = {c.measure.name: c for c in result.criteria}
    assert 15.0 < by_name["gain_margin_db"].low <= by_name["gain_margin_db"].high < 15.5
    assert 0.5 < by_name["damping_ratio"].low <= by_name["damping_ratio"].high < 0.55
    outcomes = {name: outcome for name, _, outcome in result.outcomes()}
    assert outcomes["gain_margin_db"] is Outcome.PASS and outcomes["damping_ratio"] is Outcome.PASS


# -- bad input: one line, exit 2, what to write instead --------------------------------------------

_BAD = [
    ('variable = "s"\n', '[polynomial]\nexpression = "s + R"', "radius = 0.9", "decay_rate"),
    ('variable = "z"\n', '[polynomial]\nexpression = "z - R/2"', "decay_rate = 1", "radius"),
    ("", '[polynomial]\nexpression = "s + R"', "gain_margin_db = 6", "[polynomial.loop]"),
    ("", '[polynomial]\nexpression = "s + R"', "damping_ratio = 1.2", "(0, 0.99]"),
    ('variable = "z"\n', '[polynomial]\nexpression = "z - R/2"', "damping_ratio = 0.5", "radius"),
    ("", '[polynomial.loop]\nplant = "R/(s*(s + 1))"', "gain_margin_db = 1e30", "(0, 120]"),
    ('sample_time = "1m"\n', '[polynomial]\nexpression = "s + R"', "", 'variable = "z"'),
]


@pytest.mark.parametrize("extra, polynomial, requirement, hint", _BAD)
def test_requirements_that_do_not_fit_the_case_are_refused_with_what_to_write(tmp_path, extra, polynomial,
                                                                               requirement, hint):
    """A requirement of the other time domain, a loop criterion without a loop, a ratio out of
    range, a sample time in continuous time: exit 2, one line naming the file and the field."""
    from click.testing import CliRunner

    from robust.cli import main

    text = f'title = "t"\n{extra}[parameters.R]\nnominal = 1\ntolerance = "5%"\n{polynomial}\n'
    if requirement:
        text += f"[requirements]\n{requirement}\n"
    path = tmp_path / "bad.toml"
    path.write_text(text)
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    line = result.stderr.strip()
    assert line.count("\n") == 0 and str(path) in line and hint in line


# -- discrete time at the circle's edge, and criteria of a family that is not stable ----------------


def test_a_root_at_z_minus_one_is_a_witness_on_the_circle():
    """(z + a)(z - 1/2) with a in [1/2, 1] has its root -a on the unit circle at a = 1 (by
    hand): unstable, with the witness's counts saying "on the circle"; the same with a fixed
    at 1 at the nominal point."""
    reaching = _case("[parameters.a]\nrange = [0.5, 1]\n", '[polynomial]\nexpression = "(z + a)*(z - 0.5)"',
                     extra='variable = "z"\n')
    from robust.analysis.verdict import check

    result = check(reaching)
    assert result.verdict == "unstable"
    assert result.witness.parameters["a"] == 1 and result.witness.roots.on_circle == 1
    fixed = _case("[parameters.a]\nnominal = 1\ntolerance = 0\n", '[polynomial]\nexpression = "(z + a)*(z - 0.5)"',
                  extra='variable = "z"\n')
    assert check(fixed).verdict == "unstable"


def test_criteria_of_an_unstable_discrete_family_claim_only_what_x_zero_shows():
    """(z - a)(z + 1/5) with a in [1/2, 3/2] has the root 3/2 outside the circle (by hand): the
    spectral radius is at least 1 and no upper end is claimed."""
    case = _case("[parameters.a]\nrange = [0.5, 1.5]\n", '[polynomial]\nexpression = "(z - a)*(z + 0.2)"',
                 extra='variable = "z"\n')
    result = measure_criterion(case.family, RADIUS)
    assert result.stable is False and (result.low, result.high) == (1.0, None)
    assert result.as_dict()["upper"] is None


def test_margin_command_reports_the_criteria_and_skips_them_on_request(tmp_path):
    """margin --json carries gain_margin_db (with lower_direction), phase_margin_deg and
    damping_ratio for a loop, and none of them with --no-criteria; the gain margin holds the
    Routh closed form a b (a + b) / K = 20/3 (above)."""
    import json

    from click.testing import CliRunner

    from robust.cli import main

    path = tmp_path / "loop.toml"
    path.write_text(f'title = "t"\n{THIRD_ORDER}[polynomial.loop]\nplant = "K/(s*(s + a)*(s + b))"\n')
    data = json.loads(CliRunner().invoke(main, ["margin", str(path), "--json", "--no-decay"]).stdout)
    gain = data["gain_margin_db"]
    assert gain["lower"] <= _db(F(20, 3)) <= gain["upper"]
    assert gain["lower_direction"]["upper"] is None and {"phase_margin_deg", "damping_ratio"} <= set(data)
    assert gain["limited_by"]["K"] == "3"
    skipped = json.loads(CliRunner().invoke(main, ["margin", str(path), "--json", "--no-criteria"]).stdout)
    assert not {"gain_margin_db", "phase_margin_deg", "damping_ratio"} & set(skipped)
