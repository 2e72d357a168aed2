"""Analysis of covariance: adjusted means and the equal-slopes test against statsmodels.

References: statsmodels OLS get_prediction at the covariate mean (adjusted means and
their standard errors), t_test, and anova_lm of the two nested models (the F test of
equal slopes); reference implementations.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

import nestfit.tables as tables
from tests.tables.helpers import rel, unbalanced


@pytest.mark.parametrize("seed", range(5))
def test_adjusted_means_match_predictions_at_the_covariate_mean(seed: int) -> None:
    data = unbalanced(seed, n=50, levels=(4, 1), covariate=True)
    models = tables.factorial("y ~ C(a) + x", data)
    means = models.marginal_means("a")
    assert means.at["x"] == pytest.approx(data["x"].mean(), rel=1e-15)
    res = smf.ols("y ~ C(a) + x", data).fit()
    grid = pd.DataFrame({"a": [lv[0] for lv in means.levels], "x": data["x"].mean()})
    pred = res.get_prediction(grid).summary_frame()
    np.testing.assert_allclose(means.estimates, pred["mean"], rtol=1e-10)
    np.testing.assert_allclose(means.std_errors, pred["mean_se"], rtol=1e-10)


@pytest.mark.parametrize("value", [0.0, 3.5, 9.0])
def test_adjusted_means_at_a_chosen_value(value: float) -> None:
    data = unbalanced(3, n=60, levels=(3, 1), covariate=True)
    res = smf.ols("y ~ C(a) * x", data).fit()
    means = tables.factorial("y ~ C(a) * x", data).marginal_means("a", at={"x": value})
    grid = pd.DataFrame({"a": ["A1", "A2", "A3"], "x": value})
    pred = res.get_prediction(grid).summary_frame()
    np.testing.assert_allclose(means.estimates, pred["mean"], rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(means.std_errors, pred["mean_se"], rtol=1e-10)


@pytest.mark.parametrize("seed", range(4))
def test_contrast_of_adjusted_means_is_the_group_coefficient(seed: int) -> None:
    data = unbalanced(seed, n=40, levels=(3, 1), covariate=True)
    res = smf.ols("y ~ C(a) + x", data).fit()
    c = tables.factorial("y ~ C(a) + x", data).marginal_means("a").contrast({"A2": 1, "A1": -1})
    # in parallel-lines models the difference of adjusted means is the coefficient of A2
    assert rel(c.estimate, res.params["C(a)[T.A2]"]) < 1e-10
    assert rel(c.std_error, res.bse["C(a)[T.A2]"]) < 1e-10
    assert rel(c.p, res.pvalues["C(a)[T.A2]"]) < 1e-10


@pytest.mark.parametrize("seed", range(5))
def test_equal_slopes_matches_anova_lm_of_the_two_models(seed: int) -> None:
    data = unbalanced(seed, n=55, levels=(3, 1), covariate=True)
    comp = tables.factorial("y ~ C(a) + x", data).equal_slopes()
    ref = anova_lm(smf.ols("y ~ C(a) + x", data).fit(), smf.ols("y ~ C(a) + x + C(a):x",
                                                               data).fit())
    step = comp.steps[0]
    assert (step.smaller, step.larger) == ("1 + C(a) + x", "1 + C(a) + x + C(a):x")
    assert step.df == int(ref["df_diff"].iloc[1])
    assert rel(step.ss, ref["ss_diff"].iloc[1]) < 1e-10
    assert rel(step.f, ref["F"].iloc[1]) < 1e-10
    assert rel(step.p, ref["Pr(>F)"].iloc[1]) < 1e-10


def test_equal_slopes_picks_the_named_factor_and_covariate() -> None:
    data = unbalanced(1, n=60, levels=(3, 2), covariate=True)
    data["z"] = np.random.default_rng(0).normal(size=len(data))
    models = tables.factorial("y ~ C(a) + C(b) + x + z", data)
    comp = models.equal_slopes(factor="b", covariate="z")
    assert comp.steps[0].larger.endswith("C(b):z")
    ref = anova_lm(smf.ols("y ~ C(a) + C(b) + x + z", data).fit(),
                   smf.ols("y ~ C(a) + C(b) + x + z + C(b):z", data).fit())
    assert rel(comp.steps[0].f, ref["F"].iloc[1]) < 1e-10


def test_sequential_ancova_adjusts_the_groups_for_the_covariate_first() -> None:
    data = unbalanced(4, n=50, levels=(3, 1), covariate=True)
    t = tables.factorial("y ~ x + C(a)", data).table("sequential")
    res = anova_lm(smf.ols("y ~ x", data).fit(), smf.ols("y ~ x + C(a)", data).fit())
    assert t.row("C(a)").smaller_model == "1 + x"
    assert rel(t.row("C(a)").ss, res["ss_diff"].iloc[1]) < 1e-10
