"""Group sizes in fixed ratios (``PowerPlan.group_size(target, allocation=...)``): round
trips, the rounding rule, agreement with the equal-size search, statsmodels'
TTestIndPower and the noncentral F computed directly with scipy, and every bad input."""

from __future__ import annotations

import json
import math
from fractions import Fraction

import numpy as np
import pytest
from scipy import integrate, stats
from statsmodels.stats.power import TTestIndPower

from nestfit.errors import DataError
from nestfit.power import plan_comparison, plan_contrast, plan_effect_size, power_t

MEANS = {"control": 500.0, "A": 500.0, "B": 500.8}  # invented planning numbers


def _expected_sizes(m: int, ratios: tuple[Fraction, ...]) -> tuple[int, ...]:
    # The documented rule n_i = ceil(m * r_i / min(r)), in exact rational arithmetic.
    low = min(ratios)
    return tuple(math.ceil(m * r / low) for r in ratios)


def _plans() -> list:
    return [plan_comparison(MEANS, 1.2),
            plan_comparison({"a": 1.0, "b": 1.0, "c": 2.0}, 1.0, smaller="a b c",
                            larger="a b | c", alpha=0.01),
            plan_contrast([0.0, 0.2, 0.5], [-1, 0, 1], 1.0),
            plan_contrast([0.0, 0.5], [-1, 1], 1.0, alternative="greater"),
            plan_effect_size(0.25, 4)]


@pytest.mark.parametrize("target", [0.5, 0.8, 0.95])
def test_equal_ratios_give_the_equal_size_answer(target: float) -> None:
    for plan in _plans():
        equal = plan.group_size(target)
        for ratios in ((1,) * plan.n_levels, (2.5,) * plan.n_levels,
                       dict(zip(reversed(plan.levels), [3] * plan.n_levels))):
            g = plan.group_size(target, allocation=ratios)
            assert g.n == equal.n and g.sizes == equal.sizes == (equal.n,) * plan.n_levels
            assert g.power == equal.power and g.power_below == equal.power_below
            assert g.sizes_below == (equal.n - 1,) * plan.n_levels
            assert g.to_dict()["n_per_level"] == equal.n
            assert "per level" in str(g)


UNEQUAL = [  # (plan, allocation as exact fractions, whether power is monotone in m)
    (plan_comparison(MEANS, 1.2), (2, 1, 1), True),
    (plan_comparison(MEANS, 1.2), (Fraction(3, 2), 1, Fraction(5, 2)), True),
    (plan_comparison({"O1": 41.0, "O2": 41.0, "O3": 41.0, "O4": 42.5}, 2.0,
                     larger="O4 | ..."), (1, 1, 1, 3), True),
    (plan_comparison({"a": 0.0, "b": 1.0, "c": 0.5}, 1.0, larger="a b | c"),
     (1, Fraction(17, 10), 1), False),
    (plan_contrast([0.0, 0.2, 0.5], [-1, 0, 1], 1.0), (1, 2, Fraction(7, 4)), True),
    (plan_contrast([0.0, 0.5], [-1, 1], 1.0, alternative="greater"), (4, 1), True),
    (plan_contrast([5.0, 6.0, 5.5, 8.0], [1, 1, 1, -3], 1.3), (1, 1, 1, Fraction(9, 4)), True),
]


@pytest.mark.parametrize("target", [0.5, 0.8, 0.9])
@pytest.mark.parametrize(("plan", "ratios", "monotone"), UNEQUAL)
def test_unequal_allocation_round_trips(plan, ratios, monotone, target: float) -> None:
    g = plan.group_size(target, allocation=[float(r) for r in ratios])
    m = g.n
    assert g.sizes == _expected_sizes(m, ratios) and min(g.sizes) == m
    assert plan.power(g.sizes).power == g.power >= target
    assert g.sizes_below == _expected_sizes(m - 1, ratios)
    assert g.power_below is not None and g.power_below < target
    assert plan.power(g.sizes_below).power == g.power_below
    assert g.n_total == sum(g.sizes)
    if monotone and m <= 200:
        # Power never falls with m here (see group_size's Notes), so no smaller m may
        # reach the target: check every one.
        first = 1 if sum(_expected_sizes(1, ratios)) > plan.n_levels else 2
        assert all(plan.power(_expected_sizes(j, ratios)).power < target
                   for j in range(first, m))
    out = g.to_dict()
    json.dumps(out, allow_nan=False)
    assert out["n_per_level"] is None and out["smallest_group"] == m
    assert out["sizes"] == dict(zip(plan.levels, g.sizes))
    assert out["sizes_at_n_minus_1"] == dict(zip(plan.levels, g.sizes_below))
    assert out["allocation"] == pytest.approx(
        {lev: float(r / min(ratios)) for lev, r in zip(plan.levels, ratios)})


def test_allocation_by_level_name_and_text_output() -> None:
    plan = plan_comparison(MEANS, 1.2)
    g = plan.group_size(0.8, allocation={"B": 1, "control": 2, "A": 1})
    assert g.sizes == plan.group_size(0.8, allocation=[2, 1, 1]).sizes
    assert g.sizes == (2 * g.n, g.n, g.n)
    text = str(g)
    assert "in the ratios 2 : 1 : 1" in text and f"smallest group {g.n}" in text
    assert f"control      2  {2 * g.n}  " in text
    assert f"N = {sum(g.sizes_below)}) it is" in text and "qualified statistician" in text
    frame = g.to_frame()
    assert frame.loc[0, "sizes"] == ",".join(str(s) for s in g.sizes)
    assert frame.loc[0, "n_total"] == g.n_total and frame.loc[0, "n_per_level"] is None
    levels = g.sizes_frame()
    assert levels["level"].tolist() == ["control", "A", "B"]
    assert levels["n"].tolist() == list(g.sizes)
    assert levels["n_at_n_minus_1"].tolist() == list(g.sizes_below)
    assert levels["ratio"].tolist() == [2.0, 1.0, 1.0]


def test_rounding_counts_near_whole_products_as_whole() -> None:
    # 2.1 / 0.7 is 3.0000000000000004 and 0.07 / 0.01 is 7.000000000000001 in floating
    # point: a plain ceil would give 3 m + 1 and 7 m + 1.
    plan = plan_contrast([0.0, 0.4], [-1, 1], 1.0)
    for ratios, factor in (((0.7, 2.1), 3), ((0.01, 0.07), 7), ((0.1, 0.3), 3),
                           ((1 / 3, 1.0), 3)):
        g = plan.group_size(0.8, allocation=ratios)
        assert g.sizes == (g.n, factor * g.n)
        assert g.sizes_below == (g.n - 1, factor * (g.n - 1))


def test_smallest_group_of_one_when_it_leaves_error_df() -> None:
    g = plan_contrast([0.0, 100.0], [-1, 1], 1.0).group_size(0.8, allocation=(1, 2))
    assert g.sizes == (1, 2) and g.power_below is None and g.sizes_below is None
    assert g.result.df == (1.0,)
    # Equal sizes of 1 leave no error df, so the equal search starts at 2.
    assert plan_contrast([0.0, 100.0], [-1, 1], 1.0).group_size(0.8).n == 2


@pytest.mark.parametrize(("ratios", "alternative", "sm_alternative"), [
    ((1, 2), "two-sided", "two-sided"),
    ((3, 1), "two-sided", "two-sided"),
    ((1, 1.5), "greater", "larger"),
    ((1, 3), "greater", "larger"),
])
@pytest.mark.parametrize("target", [0.8, 0.9])
def test_two_group_contrast_agrees_with_statsmodels(ratios, alternative, sm_alternative,
                                                    target: float) -> None:
    mu, sigma = [0.0, 0.45], 1.1
    d = (mu[1] - mu[0]) / sigma
    plan = plan_contrast(mu, [-1, 1], sigma, alternative=alternative)
    g = plan.group_size(target, allocation=ratios)
    # Reference: statsmodels.stats.power.TTestIndPower, nobs2 = nobs1 * ratio.
    for sizes, power in ((g.sizes, g.power), (g.sizes_below, g.power_below)):
        ref = TTestIndPower().power(effect_size=d, nobs1=sizes[0], alpha=0.05,
                                    ratio=sizes[1] / sizes[0], alternative=sm_alternative)
        assert power == pytest.approx(ref, rel=1e-9)
    if ratios[0] == 1 and float(ratios[1]).is_integer():
        # With n2 = r * n1 exactly, the continuous solution of statsmodels' solve_power
        # rounded up is the smallest group size.
        n1 = TTestIndPower().solve_power(effect_size=d, nobs1=None, alpha=0.05, power=target,
                                         ratio=ratios[1], alternative=sm_alternative)
        assert g.n == math.ceil(n1)


@pytest.mark.parametrize("ratios", [(3, 1, 1, 1), (1, 1.5, 2, 1.25)])
def test_f_test_power_agrees_with_scipy_noncentral_f(ratios) -> None:
    means = np.array([10.0, 11.0, 12.0, 10.5])
    sigma, alpha, target = 2.0, 0.01, 0.9
    g = plan_comparison(means, sigma, alpha=alpha).group_size(target, allocation=ratios)
    for sizes, power in ((g.sizes, g.power), (g.sizes_below, g.power_below)):
        n = np.array(sizes, dtype=float)
        total, k = n.sum(), means.size
        # lambda = sum n_i (mu_i - weighted mean)^2 / sigma^2 on (k - 1, N - k) df
        # (Scheffe 1959, sec. 2.8, from memory); power from scipy.stats.ncf directly.
        lam = float(np.sum(n * (means - np.sum(n * means) / total) ** 2) / sigma ** 2)
        crit = stats.f.isf(alpha, k - 1, total - k)
        assert power == pytest.approx(stats.ncf.sf(crit, k - 1, total - k, lam), rel=1e-10)
    assert g.power >= target > g.power_below


def test_t_power_lower_tail_stays_finite_far_out() -> None:
    # scipy's nct.cdf gives NaN far in the lower tail with df = 1. Reference: the lower tail
    # P(T' < -c) = E[Phi(-c sqrt(V) - delta)], V ~ chi2(1), by numerical integration
    # (definition of the noncentral t, common practice, no source).
    delta, df = 16.0, 1
    crit = stats.t.isf(0.025, df)
    lower, _ = integrate.quad(lambda v: stats.norm.cdf(-crit * math.sqrt(v / df) - delta)
                              * stats.chi2.pdf(v, df), 0, np.inf)
    assert power_t(delta, df) == pytest.approx(stats.nct.sf(crit, df, delta) + lower, rel=1e-9)
    one_sided = stats.t.isf(0.05, df)
    less, _ = integrate.quad(lambda v: stats.norm.cdf(-one_sided * math.sqrt(v / df) + delta)
                             * stats.chi2.pdf(v, df), 0, np.inf)
    assert power_t(-delta, df, alternative="less") == pytest.approx(less, rel=1e-9)


def test_bad_allocation() -> None:
    plan = plan_comparison({"A": 1.0, "B": 2.0, "C": 3.0}, 1.0)
    cases = [
        ({"A": 1, "B": 2}, r"gives no ratio for level 'C'; give one ratio for every level"),
        ({"A": 1, "B": 2, "C": 1, "D": 1}, r"names 'D', which is not a level \(levels: A, B, C\)"),
        ([1, 2], r"one ratio per level \(3: A, B, C\)\. Got 2\."),
        ([1, 2, 3, 4], r"one ratio per level \(3: A, B, C\)\. Got 4\."),
        ([1, 0, 1], r"ratio for level 'B' must be a positive finite number\. Got 0\."),
        ({"A": 1, "B": 1, "C": -2}, r"ratio for level 'C' must be a positive finite number"),
        ([float("nan"), 1, 1], r"ratio for level 'A' must be a positive finite number"),
        ([1, float("inf"), 1], r"ratio for level 'B' must be a positive finite number"),
        ([1, "2", 1], r"ratio for level 'B' must be a positive finite number"),
        ([1, 1, True], r"ratio for level 'C' must be a positive finite number"),
        ("2,1,1", r"must be \{level: ratio\} or one ratio per level in level order"),
        (2, r"must be \{level: ratio\} or one ratio per level in level order"),
    ]
    for allocation, message in cases:
        with pytest.raises(DataError, match=message):
            plan.group_size(0.8, allocation=allocation)


def test_bad_search_settings_with_allocation() -> None:
    plan = plan_comparison({"A": 1.0, "B": 2.0, "C": 3.0}, 1.0)
    with pytest.raises(DataError, match="an unequal allocation cannot be planned from Cohen's f"):
        plan_effect_size(0.25, 3).group_size(0.8, allocation=[2, 1, 1])
    with pytest.raises(DataError, match="max_n must be a whole number of at least 2"):
        plan.group_size(0.8, max_n=1)
    with pytest.raises(DataError, match="max_n must be a whole number of at least 2"):
        plan.group_size(0.8, max_n=50.5)  # type: ignore[arg-type]
    with pytest.raises(DataError, match="max_n must be a whole number of at least 1"):
        plan.group_size(0.8, allocation=[2, 1, 1], max_n=0)
    with pytest.raises(DataError, match=r"not reached with 50 observations in the smallest "
                                        r"group \(1 100, 2 50\)"):
        plan_contrast([0.0, 0.01], [-1, 1], 1.0).group_size(0.9, allocation=[2, 1], max_n=50)
    with pytest.raises(DataError, match="power never rises above alpha"):
        plan_comparison([1.0, 1.0, 1.0], 1.0).group_size(0.8, allocation=[2, 1, 1])
    with pytest.raises(DataError, match="goes against the 'less' alternative"):
        plan_contrast([0.0, 1.0], [-1, 1], 1.0, alternative="less").group_size(
            0.8, allocation=[1, 3])
    with pytest.raises(DataError, match="target power must be between 0 and 1"):
        plan.group_size(1.0, allocation=[2, 1, 1])


def test_pooled_comparison_with_dipping_power_returns_the_smallest_m() -> None:
    # Larger model "A B | C" pools levels with different means, ratios not whole numbers:
    # rounding to whole observations makes power dip between neighbouring m, so bisection
    # alone can stop above the smallest m. group_size scans below it (brute force here).
    from nestfit.power._inputs import allocated_sizes, read_allocation
    from nestfit.power._search import first_meeting

    plan = plan_comparison({"A": -2.37, "B": 1.23, "C": 0.34}, 1.5,
                           smaller="A B C", larger="A B | C")
    ratios = (1.81, 2.82, 1.09)
    q = read_allocation(ratios, plan.levels)  # r_i / min(r), as group_size uses them
    powers = [math.nan] + [plan.power(allocated_sizes(m, q)).power for m in range(1, 260)]
    assert any(b < a for a, b in zip(powers[1:], powers[2:]))  # power does dip here
    bisection_alone_misses = 0
    for target in (0.5, 0.8, 0.9, 0.9195, 0.9414, 0.9585, 0.9706):
        brute = next(m for m in range(1, 260) if powers[m] >= target)
        got = plan.group_size(target, allocation=ratios)
        assert got.n == brute, target
        assert got.result.power >= target and (got.n == 1 or got.power_below < target)
        bisection_alone_misses += first_meeting(lambda m, t=target: powers[m] >= t, 1,
                                                259) != brute
    assert bisection_alone_misses >= 1
