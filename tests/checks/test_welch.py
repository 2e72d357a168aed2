"""Welch's one-way test and Welch-type contrasts: against statsmodels' anova_oneway and
scipy's Welch t test (reference implementations), and the Satterthwaite formula."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.stats.oneway import anova_oneway

import nestfit
from nestfit.checks import summarize_groups, welch_anova, welch_contrast, welch_contrast_se
from nestfit.errors import ContrastError, DataError
from tests.checks.layouts import random_layout, split


@pytest.mark.parametrize("seed", range(10))
def test_welch_anova_agrees_with_statsmodels(seed: int) -> None:
    data = random_layout(seed, k=2 + seed % 6, offset=100.0 * seed)
    models = nestfit.groups(data, "y", "g")
    ref = anova_oneway(split(data, list(models.levels)), use_var="unequal")
    ours = welch_anova(models)
    np.testing.assert_allclose(ours.statistic, ref.statistic, rtol=1e-10)
    np.testing.assert_allclose(ours.df, ref.df, rtol=1e-10)
    np.testing.assert_allclose(ours.p, ref.pvalue, rtol=1e-9)
    assert isinstance(ours.to_dict()["df"], list) and len(ours.to_dict()["df"]) == 2


def test_two_levels_give_the_square_of_welch_t() -> None:
    data = random_layout(4, k=2)
    models = nestfit.groups(data, "y", "g")
    a, b = split(data, list(models.levels))
    ref = stats.ttest_ind(a, b, equal_var=False)  # scipy Welch t test
    ours = welch_anova(models)
    np.testing.assert_allclose(ours.statistic, ref.statistic ** 2, rtol=1e-11)
    np.testing.assert_allclose(ours.p, ref.pvalue, rtol=1e-10)
    np.testing.assert_allclose(ours.df[1], ref.df, rtol=1e-11)
    c = welch_contrast(models, [1, -1])
    np.testing.assert_allclose(c.t, ref.statistic, rtol=1e-11)
    np.testing.assert_allclose(c.df, ref.df, rtol=1e-11)
    np.testing.assert_allclose(c.p, ref.pvalue, rtol=1e-10)
    ci = ref.confidence_interval(0.9)
    c90 = welch_contrast(models, {models.levels[0]: 1, models.levels[1]: -1}, level=0.9)
    np.testing.assert_allclose([c90.lower, c90.upper], [ci.low, ci.high], rtol=1e-10)


def test_welch_contrast_se_is_the_satterthwaite_formula() -> None:
    # Satterthwaite (1946) written out for three weighted levels (common practice).
    c = np.array([1.0, -0.5, -0.5, 0.0])
    s2 = np.array([2.0, 0.5, 1.5, 9.0])
    n = np.array([5, 8, 11, 1])
    v = c ** 2 * s2 / n
    se, df = welch_contrast_se(c, s2, n)
    assert se == pytest.approx(math.sqrt(v.sum()), rel=1e-14)
    keep = c != 0
    assert df == pytest.approx(v.sum() ** 2 / np.sum(v[keep] ** 2 / (n[keep] - 1)), rel=1e-13)


def test_welch_contrast_on_several_levels_and_offsets() -> None:
    data = random_layout(7, k=5, offset=1e8)
    models = nestfit.groups(data, "y", "g")
    summary = summarize_groups(models)
    w = {"L0": 1.0, "L2": -0.5, "L4": -0.5}
    res = welch_contrast(models, w)
    means = data.groupby("g")["y"].mean()
    # Means near 1e8 carry ~8 fewer digits in the direct computation.
    assert res.estimate == pytest.approx(means["L0"] - (means["L2"] + means["L4"]) / 2, abs=1e-7)
    v = data.groupby("g")["y"].var()
    cnt = data.groupby("g")["y"].count()
    se = math.sqrt(v["L0"] / cnt["L0"] + 0.25 * v["L2"] / cnt["L2"] + 0.25 * v["L4"] / cnt["L4"])
    assert res.std_error == pytest.approx(se, rel=1e-8)
    np.testing.assert_allclose(summary.variances, v.to_numpy(), rtol=1e-7)
    assert res.weights["L1"] == 0.0 and "Welch-type" in str(res)
    single = welch_contrast(models, {"L0": 1.0})  # a single mean (no zero sum needed)
    assert single.estimate == pytest.approx(means["L0"], rel=1e-15)


def test_bad_input() -> None:
    data = random_layout(1)
    models = nestfit.groups(data, "y", "g")
    with pytest.raises(ContrastError, match="'L9', which is not a level"):
        welch_contrast(models, {"L9": 1.0, "L0": -1.0})
    with pytest.raises(ContrastError, match="3 contrast weights for 4 levels"):
        welch_contrast(models, [1.0, -1.0, 0.0])
    with pytest.raises(ContrastError, match="every contrast weight is zero"):
        welch_contrast(models, [0, 0, 0, 0])
    with pytest.raises(ContrastError, match="must be finite"):
        welch_contrast(models, [1.0, np.nan, 0, 0])
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        welch_contrast(models, [1, -1, 0, 0], level=1.0)
    with pytest.raises(DataError, match="one value per level each"):
        welch_contrast_se([1, -1], [1.0, 2.0, 3.0], [3, 3])
    with pytest.raises(DataError, match="at least 2 observations in every level with a nonzero"):
        welch_contrast_se([1, -1], [1.0, 2.0], [1, 3])
    with pytest.raises(DataError, match="no spread"):
        welch_contrast_se([1, -1], [0.0, 0.0], [3, 3])
    with pytest.raises(DataError, match="finite and non-negative"):
        welch_contrast_se([1, -1], [-1.0, 2.0], [3, 3])
    flat = pd.DataFrame({"y": [1.0, 1.0, 1.0, 2.0, 3.0, 5.0], "g": list("aaabbb")})
    with pytest.raises(DataError, match="level 'a' of 'g' has all its values equal"):
        welch_anova(flat, "y", "g")
    one = pd.DataFrame({"y": [1.0, 2.0, 3.0, 2.0], "g": list("aaab")})
    with pytest.raises(DataError, match=r"at least 2 observations in every level.*level 'b'"):
        welch_anova(one, "y", "g")
    with pytest.raises(DataError, match="unweighted"):
        welch_anova(nestfit.groups(data.assign(w=2.0), "y", "g", weights="w"))
