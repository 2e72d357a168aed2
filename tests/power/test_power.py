"""Power and group sizes: against statsmodels' FTestAnovaPower and TTestIndPower
(reference implementations), noise-free fits, and sample-size round trips."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.power import FTestAnovaPower, TTestIndPower

import nestfit
from nestfit.errors import ContrastError, DataError, FactorError, NotNestedError
from nestfit.power import (
    plan_comparison,
    plan_contrast,
    plan_effect_size,
    power_f,
    power_t,
)

CASES = [  # (means, sigma, n per level, alpha), invented planning numbers
    ([500.0, 500.0, 500.8], 1.2, 20, 0.05),
    ([10.0, 11.0, 12.0, 10.5], 2.0, 8, 0.01),
    ([0.0, 0.3], 1.0, 50, 0.05),
    ([3.0, 3.2, 2.5, 3.9, 3.1, 3.0], 0.9, 5, 0.1),
]


@pytest.mark.parametrize(("means", "sigma", "n", "alpha"), CASES)
def test_equal_means_vs_separate_means_agrees_with_statsmodels(means, sigma, n, alpha) -> None:
    mu = np.array(means)
    k = mu.size
    f = math.sqrt(np.mean((mu - mu.mean()) ** 2)) / sigma  # Cohen's f, equal n
    # statsmodels: effect_size is Cohen's f and nobs is the total N.
    ref = FTestAnovaPower().power(effect_size=f, nobs=n * k, alpha=alpha, k_groups=k)
    res = plan_comparison(means, sigma, alpha=alpha).power(n)
    assert res.power == pytest.approx(ref, rel=1e-10)
    assert res.noncentrality == pytest.approx(n * np.sum((mu - mu.mean()) ** 2) / sigma ** 2,
                                              rel=1e-10)
    assert res.df == (k - 1, n * k - k)
    assert res.effect == pytest.approx(f, rel=1e-10)
    eff = plan_effect_size(f, k, alpha=alpha).power(n)
    assert eff.power == pytest.approx(ref, rel=1e-10)


def test_unequal_sizes_and_partitions_match_a_noise_free_fit() -> None:
    # lambda is the extra SS of the comparison fitted to the means themselves, / sigma^2.
    levels = ["A", "B", "C", "D"]
    means = {"A": 4.0, "B": 4.5, "C": 6.0, "D": 4.2}
    sizes = [3, 7, 5, 9]
    sigma = 1.5
    y = np.repeat(list(means.values()), sizes)
    labels = np.repeat(levels, sizes)
    models = nestfit.groups(y=y, factor=labels, levels=levels)
    for smaller, larger in ((None, None), ("...", "C | ..."), ("C | ...", None),
                            ("A B | C D", "A B | C | D")):
        plan = plan_comparison(means, sigma, smaller=smaller, larger=larger)
        small = models.blocks(smaller) if smaller else models.equal_means()
        large = models.blocks(larger) if larger else models.separate_means()
        ss = nestfit._compare.extra_ss(small, large)
        res = plan.power(sizes)
        assert res.noncentrality == pytest.approx(ss / sigma ** 2, rel=1e-10, abs=1e-12)
        df1 = large.rank - small.rank
        assert res.df == (df1, sum(sizes) - 4)
        crit = stats.f.isf(0.05, df1, sum(sizes) - 4)
        assert res.power == pytest.approx(stats.ncf.sf(crit, df1, sum(sizes) - 4,
                                                       ss / sigma ** 2), rel=1e-10)


@pytest.mark.parametrize("alternative", ["two-sided", "greater", "less"])
def test_two_level_contrast_agrees_with_statsmodels_t_power(alternative: str) -> None:
    mu, sigma, n = [1.0, 1.7], 1.4, 15
    d = (mu[1] - mu[0]) / sigma
    sm_alt = {"two-sided": "two-sided", "greater": "larger", "less": "smaller"}[alternative]
    ref = TTestIndPower().power(effect_size=d, nobs1=n, alpha=0.05, ratio=1,
                                alternative=sm_alt)
    plan = plan_contrast(mu, [-1, 1], sigma, alternative=alternative)  # type: ignore[arg-type]
    res = plan.power(n)
    assert res.power == pytest.approx(ref, rel=1e-9)
    assert res.noncentrality == pytest.approx(d * math.sqrt(n / 2), rel=1e-12)
    assert res.effect == pytest.approx(d, rel=1e-12)


def test_contrast_noncentrality_formula() -> None:
    mu, c, sizes, sigma = [5.0, 6.0, 5.5, 8.0], [1, 1, 1, -3], [4, 6, 8, 5], 1.3
    res = plan_contrast(mu, c, sigma).power(sizes)
    delta = (np.dot(c, mu)) / (sigma * math.sqrt(sum(w * w / n for w, n in zip(c, sizes))))
    assert res.noncentrality == pytest.approx(delta, rel=1e-12)
    crit = stats.t.isf(0.025, sum(sizes) - 4)
    assert res.power == pytest.approx(stats.nct.sf(crit, sum(sizes) - 4, delta)
                                      + stats.nct.cdf(-crit, sum(sizes) - 4, delta), rel=1e-12)
    # d uses weights scaled so the positive ones sum to 1: (mean of 1-3) - mu_4, over sigma
    assert res.effect == pytest.approx((np.mean(mu[:3]) - mu[3]) / sigma, rel=1e-12)


@pytest.mark.parametrize("target", [0.5, 0.8, 0.9, 0.99])
def test_group_size_round_trips(target: float) -> None:
    plans = [plan_comparison([500.0, 500.0, 500.8], 1.2),
             plan_comparison({"a": 1.0, "b": 1.0, "c": 2.0}, 1.0, smaller="a b c",
                             larger="a b | c", alpha=0.01),
             plan_contrast([0.0, 0.2, 0.5], [-1, 0, 1], 1.0),
             plan_contrast([0.0, 0.5], [-1, 1], 1.0, alternative="greater"),
             plan_effect_size(0.25, 4)]
    for plan in plans:
        g = plan.group_size(target)
        assert plan.power(g.n).power >= target
        assert g.power_below is not None and g.power_below < target
        assert plan.power(g.n - 1).power == g.power_below
        json.dumps(g.to_dict(), allow_nan=False)


def test_group_size_matches_statsmodels_solve_power() -> None:
    for f, k in ((0.25, 4), (0.1, 3), (0.4, 5)):
        total = FTestAnovaPower().solve_power(effect_size=f, alpha=0.05, power=0.8, k_groups=k)
        assert plan_effect_size(f, k).group_size(0.8).n == math.ceil(total / k)


def test_group_size_two_is_enough_for_a_huge_effect() -> None:
    g = plan_comparison([0.0, 100.0], 1.0).group_size(0.8)
    assert g.n == 2 and g.power_below is None and "2 per level" in str(g)


def test_power_curve() -> None:
    plan = plan_comparison([500.0, 500.0, 500.8], 1.2)
    curve = plan.curve(range(2, 61, 2))
    frame = curve.to_frame()
    assert list(frame.columns) == ["n_per_level", "n_total", "df_denominator", "noncentrality",
                                   "power"]
    assert frame["n_per_level"].tolist() == list(range(2, 61, 2))
    assert np.all(np.diff(frame["power"]) > 0)
    assert frame.loc[9, "power"] == pytest.approx(plan.power(20).power, rel=1e-15)
    json.dumps(curve.to_dict(), allow_nan=False)
    assert "qualified statistician" in str(curve)


def test_power_formulas() -> None:
    assert power_f(0.0, 2, 10, 0.05) == pytest.approx(0.05, rel=1e-12)
    assert power_t(0.0, 10, 0.05) == pytest.approx(0.05, rel=1e-12)
    assert power_t(0.0, 10, 0.05, "greater") == pytest.approx(0.05, rel=1e-12)
    assert power_t(-2.0, 10, 0.05, "less") == pytest.approx(power_t(2.0, 10, 0.05, "greater"))


def test_bad_input() -> None:
    plan = plan_comparison([1.0, 2.0, 3.0], 1.0)
    for alpha in (0.0, 1.0, 1.2, float("nan")):
        with pytest.raises(DataError, match="alpha must be between 0 and 1"):
            plan_comparison([1.0, 2.0], 1.0, alpha=alpha)
    for target in (0.0, 1.0, 1.5):
        with pytest.raises(DataError, match="target power must be between 0 and 1"):
            plan.group_size(target)
    with pytest.raises(DataError, match=r"target power 0\.01 is not above alpha = 0\.05"):
        plan.group_size(0.01)
    with pytest.raises(DataError, match="power never rises above alpha"):
        plan_comparison([1.0, 1.0, 1.0], 1.0).group_size(0.8)
    with pytest.raises(DataError, match="goes against the 'less' alternative"):
        plan_contrast([0.0, 1.0], [-1, 1], 1.0, alternative="less").group_size(0.8)
    with pytest.raises(DataError, match="not reached with 100 observations per level"):
        plan_comparison([0.0, 0.01], 1.0).group_size(0.9, max_n=100)
    with pytest.raises(DataError, match="sigma must be a positive finite number"):
        plan_comparison([1.0, 2.0], 0.0)
    with pytest.raises(DataError, match="means must be finite"):
        plan_comparison([1.0, float("nan")], 1.0)
    with pytest.raises(DataError, match="at least two levels"):
        plan_comparison([1.0], 1.0)
    with pytest.raises(DataError, match="one whole number per level"):
        plan.power([10, 10])
    with pytest.raises(DataError, match="one whole number per level"):
        plan.power(10.5)  # type: ignore[arg-type]
    with pytest.raises(DataError, match="no error degrees of freedom"):
        plan.power(1)
    with pytest.raises(DataError, match="at least 1 observation"):
        plan.power([0, 5, 5])
    with pytest.raises(NotNestedError, match="is not nested in"):
        plan_comparison([1.0, 2.0, 3.0], 1.0, smaller="1 2 | 3", larger="1 | 2 3")
    with pytest.raises(NotNestedError, match="are the same: nothing to test"):
        plan_comparison([1.0, 2.0, 3.0], 1.0, smaller="1 | 2 3", larger="2 3 | 1")
    with pytest.raises(FactorError, match="not a level"):
        plan_comparison([1.0, 2.0, 3.0], 1.0, smaller="1 | 9")
    with pytest.raises(DataError, match="level names for"):
        plan_comparison([1.0, 2.0], 1.0, levels=["a", "b", "c"])
    with pytest.raises(ContrastError, match="must sum to zero"):
        plan_contrast([1.0, 2.0], [1, 1], 1.0)
    with pytest.raises(DataError, match="alternative must be"):
        plan_contrast([1.0, 2.0], [1, -1], 1.0, alternative="both")  # type: ignore[arg-type]
    with pytest.raises(DataError, match="Cohen's f must be a finite number >= 0"):
        plan_effect_size(-0.1, 3)
    with pytest.raises(DataError, match="at least 2"):
        plan_effect_size(0.2, 1)
    with pytest.raises(DataError, match="at least one group size"):
        plan.curve([])
    with pytest.raises(DataError, match="noncentrality must be a finite number >= 0"):
        power_f(-1.0, 2, 10)
    with pytest.raises(DataError, match="degrees of freedom must be positive"):
        power_t(1.0, 0)
    with pytest.raises(DataError, match="alternative must be"):
        power_t(1.0, 5, 0.05, "up")  # type: ignore[arg-type]


def test_one_df_comparison_equals_the_two_sided_contrast() -> None:
    # F(1, nu) with lambda = delta^2 is the square of a two-sided t (common practice). The
    # block model "O4 | ..." pools the other levels with weights n_j, so the matching
    # contrast weights the other levels by n_j / sum(n_rest) (equal weights for equal n).
    means = {"O1": 41.0, "O2": 41.0, "O3": 41.2, "O4": 42.5}
    block = plan_comparison(means, 2.0, larger="O4 | ...")
    for n in (4, 9, [3, 5, 7, 6]):
        sizes = np.broadcast_to(n, (4,)).astype(float)
        rest = sizes[:3] / sizes[:3].sum()
        contrast = plan_contrast(means, [*(-rest), 1.0], 2.0)
        b, c = block.power(n), contrast.power(n)
        assert b.noncentrality == pytest.approx(c.noncentrality ** 2, rel=1e-12)
        assert b.power == pytest.approx(c.power, rel=1e-9)
    equal = plan_contrast(means, {"O4": 3, "O1": -1, "O2": -1, "O3": -1}, 2.0)
    assert block.group_size(0.8).n == equal.group_size(0.8).n
