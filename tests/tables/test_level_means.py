"""Factorial means as contrast-family level means (EstimatedMeans.level_means).

References: statsmodels OLS on the cell-means parametrisation ``y ~ C(a):C(b) - 1``
(t_test of the same contrast, pooled and HC3 covariance) and statsmodels' anova_lm typ=3
with sum-to-zero coding for the joint test of equal marginal means (equal weights).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

import nestfit.tables as tables
from nestfit import contrasts as nc
from nestfit.errors import ContrastError


def _two_way(seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    a = rng.choice(["p", "q", "r"], size=72)
    b = rng.choice(["u", "v"], size=72)
    y = rng.normal(size=72) + (a == "q") * 0.6 + (b == "v") * 0.3 + ((a == "r") & (b == "v"))
    return pd.DataFrame({"a": a, "b": b, "y": y})


@pytest.mark.parametrize("variance", ["pooled", "HC3"])
def test_cell_mean_contrasts_agree_with_statsmodels(variance: str) -> None:
    data = _two_way(1)
    models = tables.factorial("y ~ C(a) * C(b)", data)
    means = models.cell_means().level_means(variance=variance)
    cov_type = "nonrobust" if variance == "pooled" else variance
    ref = smf.ols("y ~ C(a):C(b) - 1", data).fit(cov_type=cov_type, use_t=True)
    names = list(ref.params.index)  # e.g. "C(a)[p]:C(b)[u]"
    result = means.family(nc.all_pairs()).adjust("bonferroni")
    assert result.variance == variance
    for row in result.rows[:6]:
        w = np.zeros(len(names))
        for label, weight in row.weights:  # "a=p, b=u"
            a, b = (part.split("=")[1] for part in label.split(", "))
            w[names.index(f"C(a)[{a}]:C(b)[{b}]")] = weight
        test = ref.t_test(w)
        assert row.estimate == pytest.approx(float(np.ravel(test.effect)[0]), rel=1e-9)
        assert row.std_error == pytest.approx(float(np.ravel(test.sd)[0]), rel=1e-9)
        assert row.p == pytest.approx(float(test.pvalue), rel=1e-7)


def test_marginal_means_family_matches_single_contrasts_and_the_each_last_test() -> None:
    data = _two_way(2)
    models = tables.factorial("y ~ C(a) * C(b)", data)
    marginal = models.marginal_means("a")
    means = marginal.level_means()
    assert means.levels == ("p", "q", "r") and "marginal means of 'a'" in means.description
    fam = means.family(nc.all_pairs())
    for e in fam.estimates:
        one = marginal.contrast(dict(e.weight_map))
        assert e.estimate == pytest.approx(one.estimate, rel=1e-12)
        assert e.std_error == pytest.approx(one.std_error, rel=1e-12)
        assert e.p == pytest.approx(one.p, rel=1e-10)
    # Equal marginal means (equal weights) in the interaction model is the each-last
    # hypothesis for a; reference: statsmodels anova_lm typ=3 with sum-to-zero coding.
    ref = anova_lm(smf.ols("y ~ C(a, Sum) * C(b, Sum)", data).fit(), typ=3)
    joint = fam.joint_test().steps[0]
    assert joint.df == 2
    assert joint.f == pytest.approx(float(ref.loc["C(a, Sum)", "F"]), rel=1e-9)
    assert joint.f == pytest.approx(models.table("each-last").row("C(a)").f, rel=1e-9)


def test_adjusted_means_of_an_ancova() -> None:
    data = _two_way(3)
    data["x"] = np.random.default_rng(3).normal(size=len(data))
    data["y"] = data["y"] + 0.5 * data["x"]
    models = tables.factorial("y ~ C(a) + x", data)
    means = models.marginal_means("a").level_means()
    assert "adjusted means of 'a' at x = " in means.description
    ref = smf.ols("y ~ C(a) + x", data).fit()
    est = means.estimate("q - p")
    test = ref.t_test("C(a)[T.q] = 0")  # reference (treatment) coding, baseline p
    assert est.estimate == pytest.approx(float(np.ravel(test.effect)[0]), rel=1e-9)
    assert est.std_error == pytest.approx(float(np.ravel(test.sd)[0]), rel=1e-9)


def test_not_estimable_means_and_welch_are_refused() -> None:
    data = _two_way(4)
    data = data[~((data.a == "q") & (data.b == "v"))].reset_index(drop=True)
    models = tables.factorial("y ~ C(a) * C(b)", data)  # the empty cell is reported, not warned
    assert models.cells.empty == ("a=q, b=v",)
    with pytest.raises(ContrastError, match=r"cell means 'a=q, b=v' .* not estimable"):
        models.cell_means().level_means()
    full = tables.factorial("y ~ C(a) * C(b)", _two_way(5))
    with pytest.raises(ContrastError, match=r"variance='welch' needs a grouped fit"):
        full.marginal_means("a").level_means(variance="welch")
