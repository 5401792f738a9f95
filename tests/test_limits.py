"""What ends a margin: a crossing, a part's physical limit, a loss of degree, a divided-out
factor; and the one requirement rule that check, margin and report share.

Each expected end is derived by hand in closed form, stated beside its case:

* a second-order polynomial s^2 + a s + b is Hurwitz exactly when a, b > 0, and a cubic
  s^3 + a2 s^2 + a1 s + a0 exactly when every a_i > 0 and a2 a1 > a0 (Gantmacher, "The
  Theory of Matrices", vol. 2, 1959, ch. XV, from memory);
* a part with nominal n and half-width w reaches the limit L at the scale (n - L) / w
  (DESIGN.md section 4: limits are exclusive, default (0, inf) for a positive range).

Roots of witnesses are checked independently with mpmath at 50 digits (Johansson et al.,
mpmath, 2013-).
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
from hypothesis import HealthCheck, assume, given, settings
from strategies import case_toml, small_families

from robust.analysis.margin import margin
from robust.analysis.outcomes import LimitKind, Outcome, Verdict, box_problem, requirement_outcome
from robust.analysis.rank import rank
from robust.analysis.requirements import check_requirements
from robust.analysis.verdict import check
from robust.errors import CaseError
from robust.model.case import parse_case


def _case(parameters, coefficients, requirements=None):
    return parse_case(case_toml(parameters, coefficients, requirements=requirements, title="limit case"))


def _max_real_part(coefficients) -> mpmath.mpf:
    """Largest real part of the roots (mpmath, 50 digits)."""
    with mpmath.workdps(50):
        roots = mpmath.polyroots([mpmath.mpf(c.numerator) / c.denominator for c in coefficients],
                                 maxsteps=400, extraprec=400)
        return max(mpmath.re(r) for r in roots)


UNLIMITED = ["-inf", "inf"]


def test_part_reaching_its_limit_ends_the_margin_before_any_crossing():
    """s^2 + R s + 1, R = 2 +- 50 %: stable for every R > 0, and R reaches its limit 0 at
    scale 2 / 1 = 2: the margin is 2, ended by R's physical limit, with no witness."""
    result = margin(_case({"R": {"nominal": "2", "tolerance": "50%"}}, ["1", "R", "1"]), with_decay=False)
    assert result.limit.kind is LimitKind.PHYSICAL_LIMIT
    assert result.limit.parameters == ("R",)
    assert result.limit.scale == 2 and result.limit.proven
    assert result.margin.upper == 2 and 2 * (1 - Fraction(1, 10**6)) <= result.margin.lower < 2
    assert result.margin.witness is None
    assert result.as_dict()["limit"]["kind"] == "physical_limit"


def test_leading_coefficient_reaching_zero_ends_the_margin_as_a_degree_loss():
    """tau s^2 + s + 1, tau = 1 +- 50 % with no physical limit: tau = 1 - rho/2 reaches 0 at
    rho = 2, where the model loses an order (and past it tau < 0 is unstable)."""
    params = {"tau": {"nominal": "1", "tolerance": "50%", "limits": UNLIMITED}}
    result = margin(_case(params, ["tau", "1", "1"]), with_decay=False)
    assert (result.limit.kind, result.limit.parameters, result.limit.scale) == (LimitKind.DEGREE_LOSS, ("tau",), 2)
    assert result.margin.upper == 2 and result.margin.witness is None


def test_at_the_same_scale_the_part_limit_is_named_before_the_degree_loss():
    """With tau's default limit (0, inf), tau reaches its limit exactly where the degree is lost:
    the limit is what happens (the degree is lost only at that excluded point)."""
    result = margin(_case({"tau": {"nominal": "1", "tolerance": "50%"}}, ["tau", "1", "1"]), with_decay=False)
    assert (result.limit.kind, result.limit.scale) == (LimitKind.PHYSICAL_LIMIT, 2)


def test_divided_out_factor_reaching_zero_ends_the_margin():
    """c s^2 + c a s + c b: the factor c = 1 +- 50 % (no physical limit) is divided out and
    reaches 0 at rho = 2; s^2 + a s + b stays Hurwitz while a, b > 0 (a = 3 +- 10 % reaches 0
    only at 10). The margin ends at 2 with kind denominator, not at 10."""
    params = {"c": {"nominal": "1", "tolerance": "50%", "limits": UNLIMITED},
              "a": {"nominal": "3", "tolerance": "10%"}, "b": {"nominal": "2", "tolerance": "10%"}}
    result = margin(_case(params, ["c", "c*a", "c*b"]), with_decay=False)
    assert (result.limit.kind, result.limit.parameters, result.limit.scale) == (LimitKind.DENOMINATOR, ("c",), 2)


def test_margin_requirement_past_a_factor_sign_change_fails_in_check_and_margin():
    """The same family with margin = 5: box(5) takes c through 0, so the requirement FAILS in
    margin and in check alike (it used to pass with rho* = 10)."""
    params = {"c": {"nominal": "1", "tolerance": "50%", "limits": UNLIMITED},
              "a": {"nominal": "3", "tolerance": "10%"}, "b": {"nominal": "2", "tolerance": "10%"}}
    case = _case(params, ["c", "c*a", "c*b"], requirements={"margin": "5"})
    result = margin(case, with_decay=False)
    assert result.outcome is Outcome.FAIL
    (direct,) = check_requirements(case)
    assert direct.outcome is Outcome.FAIL
    assert direct.problem is not None and direct.problem.kind is LimitKind.DENOMINATOR and direct.problem.proven


def test_real_crossing_ends_the_margin_with_a_witness():
    """s^3 + 2 s^2 + 2 s + K, K = 3 +- 10 %: Hurwitz while 2*2 > K, so K = 3 + 0.3 rho = 4 at
    rho = 10/3, before K reaches 0 at rho = 10. The witness has a root on or right of the
    imaginary axis (mpmath)."""
    result = margin(_case({"K": {"nominal": "3", "tolerance": "10%"}}, ["1", "2", "2", "K"]), with_decay=False)
    assert result.limit.kind is LimitKind.CROSSING
    assert result.margin.lower <= Fraction(10, 3) <= result.margin.upper
    assert result.margin.upper < 10
    assert _max_real_part(result.margin.witness.coefficients) > -mpmath.mpf(10) ** -30


def test_part_dragging_a_root_to_the_origin_at_its_limit_is_named_as_the_limit():
    """s^3 + 2 s^2 + 2 s + K, K = 1 +- 50 %: K = 1 - rho/2 reaches its limit 0 at rho = 2, where a
    root would reach the origin; the crossing K = 4 comes only at rho = 6. No root crosses
    while K > 0, so the end is K's limit."""
    result = margin(_case({"K": {"nominal": "1", "tolerance": "50%"}}, ["1", "2", "2", "K"]), with_decay=False)
    assert (result.limit.kind, result.limit.parameters, result.limit.scale) == (LimitKind.PHYSICAL_LIMIT, ("K",), 2)


def test_limits_keep_the_scaled_box_inside_them_in_every_search():
    """A stated limit below the default one: R = 2 +- 50 % with limits [0.5, inf] ends at
    (2 - 0.5) / 1 = 1.5, and no decided box of the search reaches R = 0.5."""
    case = _case({"R": {"nominal": "2", "tolerance": "50%", "limits": ["0.5", "inf"]}}, ["1", "R", "1"])
    result = margin(case, with_decay=False)
    assert (result.limit.kind, result.limit.scale) == (LimitKind.PHYSICAL_LIMIT, Fraction(3, 2))
    assert case.family.box.scaled(case.family.nominal, result.margin.lower).low[0] > Fraction(1, 2)


def test_rank_reports_the_limit_of_each_part():
    """Each part alone in (s^2 + R s + 1)(s^3 + 2 s^2 + 2 s + K): R = 2 +- 50 % reaches its
    limit 0 at rho = 2 with no crossing before (the quadratic factor needs only R > 0);
    K = 3 +- 10 % crosses at 10/3 (the cubic factor needs 2*2 > K). The part that crosses is
    ranked first, the one that only reaches its limit after it."""
    params = {"K": {"nominal": "3", "tolerance": "10%"}, "R": {"nominal": "2", "tolerance": "50%"}}
    # (s^2 + R s + 1)(s^3 + 2 s^2 + 2 s + K): Hurwitz exactly when both factors are
    result = rank(parse_case(case_toml(params, expression="(s^2 + R*s + 1)*(s^3 + 2*s^2 + 2*s + K)")))
    by = {p.name: p for p in result.parameters}
    assert [p.name for p in result.parameters] == ["K", "R"]
    assert by["K"].limit_alone.kind is LimitKind.CROSSING
    assert by["K"].margin_alone.lower <= Fraction(10, 3) <= by["K"].margin_alone.upper
    assert (by["R"].limit_alone.kind, by["R"].limit_alone.scale) == (LimitKind.PHYSICAL_LIMIT, 2)
    assert by["R"].as_dict()["limit"]["kind"] == "physical_limit"


def test_range_reaching_a_stated_limit_is_bad_input():
    """A range that touches its own limit (limits are exclusive) is refused with the field named."""
    with pytest.raises(CaseError, match="limits"):
        _case({"R": {"range": ["0", "3"], "limits": ["0", "inf"]}}, ["1", "R", "1"])


def test_box_problem_names_a_part_at_its_limit():
    """The one validity rule: a box reaching a part's limit is refused, with the part named."""
    case = _case({"R": {"nominal": "2", "tolerance": "50%"}}, ["1", "R", "1"])
    family = case.family
    problem = box_problem(family, family.box.scaled(family.nominal, Fraction(2)))
    assert problem is not None and problem.kind is LimitKind.PHYSICAL_LIMIT and problem.parameters == ("R",)
    assert box_problem(family, family.box) is None


def test_requirement_rule_lets_a_decided_verdict_rule_and_bounds_decide_the_rest():
    """The pass/fail rule: direct stable/unstable rule; else a proven lower end at or above the
    requirement passes, a certified upper end at or below fails, otherwise open."""
    one = Fraction(1)
    assert requirement_outcome(one, Verdict.STABLE, lower=Fraction(0)) is Outcome.PASS
    assert requirement_outcome(one, Verdict.UNSTABLE, lower=Fraction(2)) is Outcome.FAIL
    assert requirement_outcome(one, Verdict.UNDECIDED, lower=Fraction(3, 2)) is Outcome.PASS
    assert requirement_outcome(one, None, lower=Fraction(1, 2), upper=one) is Outcome.FAIL
    assert requirement_outcome(one, None, lower=Fraction(1, 2), upper=Fraction(2)) is Outcome.OPEN


@pytest.mark.slow
@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(small_families())
def test_check_margin_and_report_agree(spec):
    """Over generated families (with the requirement margin = 1): a margin proven at or above 1
    means check proves stable; a check witness means a margin upper end at or below 1; and
    check's direct requirement outcome equals margin's (which the report shows) when decided."""
    params, formulas, _ = spec
    case = parse_case(case_toml(params, formulas, requirements={"margin": "1"}, title="agreement"))
    verdict = check(case, max_boxes=4000)
    result = margin(case, with_decay=False)
    assume(verdict.verdict is not Verdict.UNDECIDED)
    if result.margin.lower >= 1:
        assert verdict.verdict is Verdict.STABLE
    if verdict.witness is not None:
        assert result.margin.upper is not None and result.margin.upper <= 1
        assert result.outcome is Outcome.FAIL
    (direct,) = check_requirements(case)
    if direct.outcome is not Outcome.OPEN:
        assert direct.outcome is result.outcome
