"""One contrast: estimate, standard error, t test, interval, SS and the restricted model."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from scipy import stats

import nestfit
from nestfit import contrasts as nc
from nestfit.errors import (
    ColumnError,
    ContrastError,
    DataError,
    NestfitWarning,
    ParseError,
)
from tests.contrasts._helpers import groups_frame, load, printed, random_groups, separate


def test_nist_planned_contrast() -> None:
    """NIST/SEMATECH e-Handbook 7.4.7.2 (nist_handbook_planned_contrast.json): C1 =
    (mu1 + mu2)/2 - (mu3 + mu4)/2, estimate -.5, standard error .5158, 95% upper limit 0.594
    (printed); t and p are the file's computed values."""
    case = load("nist_handbook_planned_contrast.json")
    fit = separate(groups_frame(case["data"]["groups"]))
    e = nc.cell_means(fit).estimate("(level_1 + level_2)/2 - (level_3 + level_4)/2")
    pub = case["published_results"]
    printed(e.estimate, pub["C1_estimate"])
    printed(e.std_error, pub["standard_error"], slack=2.0)  # printed truncated: 0.51590
    printed(e.conf_int(0.95)[1], pub["single_contrast_95pct_upper_limit"])
    computed = case["reproduction"]["values"]
    assert e.t == pytest.approx(float(computed["t_statistic"]), rel=1e-7)
    assert e.p == pytest.approx(float(computed["two_sided_p"]), rel=1e-7)
    assert e.t ** 2 == pytest.approx(float(computed["F_1_16"]), rel=1e-7)


@pytest.mark.parametrize("seed", range(4))
def test_against_statsmodels_t_test(seed: int) -> None:
    """Estimate, SE = sigma sqrt(sum w^2/n), t and p against statsmodels OLS t_test on the
    cell-means model y ~ C(g) - 1 (reference implementation), unbalanced groups."""
    data = random_groups(seed, [3, 9, 5, 12, 4])
    rng = np.random.default_rng(seed)
    w = rng.normal(size=5)
    w -= w.mean()
    e = nc.cell_means(separate(data)).estimate(w.tolist())
    ref = smf.ols("y ~ C(g) - 1", data).fit().t_test(w[np.newaxis, :])
    assert e.estimate == pytest.approx(float(ref.effect[0]), rel=1e-10)
    assert e.std_error == pytest.approx(float(ref.sd[0, 0]), rel=1e-10)
    assert e.t == pytest.approx(float(ref.tvalue[0, 0]), rel=1e-10)
    assert e.p == pytest.approx(float(ref.pvalue), rel=1e-8)
    n = data.groupby("g").size().to_numpy()
    sigma = separate(data).sigma
    assert e.std_error == pytest.approx(sigma * np.sqrt(np.sum(w ** 2 / n)), rel=1e-12)
    assert e.ss == pytest.approx(e.estimate ** 2 / np.sum(w ** 2 / n), rel=1e-12)
    lo, hi = e.conf_int(0.9)
    q = stats.t.ppf(0.95, e.df)
    assert (lo, hi) == pytest.approx((e.estimate - q * e.std_error, e.estimate + q * e.std_error))


def test_one_sided_alternatives() -> None:
    means = nc.cell_means(separate(random_groups(7, [6, 7, 8])))
    two = means.estimate("L1 - L0")
    greater = means.estimate("L1 - L0", alternative="greater")
    less = means.estimate("L1 - L0", alternative="less")
    assert greater.p == pytest.approx(stats.t.sf(two.t, two.df), rel=1e-12)
    assert less.p == pytest.approx(stats.t.cdf(two.t, two.df), rel=1e-12)
    assert two.p == pytest.approx(2 * min(greater.p, less.p), rel=1e-12)
    q = stats.t.ppf(0.95, two.df)
    assert greater.conf_int(0.95) == pytest.approx((two.estimate - q * two.std_error, np.inf))
    assert less.conf_int(0.95) == pytest.approx((-np.inf, two.estimate + q * two.std_error))
    with pytest.raises(ContrastError, match="alternative must be one of two-sided, greater, less"):
        means.estimate("L1 - L0", alternative="bigger")
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        two.conf_int(1.5)


def _fits(seed: int) -> list[tuple[nc.CellMeans, str]]:
    """Grouped, partition, offset and formula-with-covariate fits, with a contrast each."""
    data = random_groups(seed, [5, 8, 6, 9])
    rng = np.random.default_rng(seed)
    data["x"] = rng.normal(size=len(data))
    shifted = data.assign(y=data.y + 1e6)
    models = nestfit.groups(data, "y", "g")
    return [
        (nc.cell_means(models.separate_means()), "L0 - mean(L1, L2)"),
        (nc.cell_means(models.separate_means("helmert")), "2*L3 - L1 - L0"),
        (nc.cell_means(models.blocks("L0 | L1 L2 | L3")), "L0 - mean(...)"),
        (nc.cell_means(nestfit.groups(shifted, "y", "g").separate_means()), "L2 - L3"),
        (nc.cell_means(nestfit.fit("y ~ C(g) + x", data), "g", data), "L1 - mean(L0, L3)"),
    ]


@pytest.mark.parametrize("seed", range(3))
def test_t_squared_equals_nested_f(seed: int) -> None:
    """t^2 = F of compare(restricted, full) for every kind of fit (Seber & Lee 2003, sec. 4.3,
    from memory); also for a general function (weights not summing to zero)."""
    for means, text in _fits(seed):
        e = means.estimate(text)
        comparison = e.nested_test()
        step = comparison.steps[0]
        assert step.df == 1
        assert e.t ** 2 == pytest.approx(step.f, rel=1e-8)
        assert e.ss == pytest.approx(step.ss, rel=1e-8)
        assert e.p == pytest.approx(step.p, rel=1e-7)
    general = _fits(seed)[0][0].estimate("L0", general=True)
    assert general.t ** 2 == pytest.approx(general.nested_test().steps[0].f, rel=1e-8)


def test_restricted_fit_satisfies_the_constraint() -> None:
    means = nc.cell_means(separate(random_groups(3, [4, 6, 5, 7])))
    e = means.estimate("L0 - mean(L1, L2)")
    restricted = e.restricted_fit()
    fitted = restricted.group_fitted_means().to_numpy()
    assert float(e.weights @ fitted) == pytest.approx(0.0, abs=1e-10)
    assert restricted.rank == means.fit.rank - 1
    assert restricted.residual_df == means.fit.residual_df + 1


def test_adjusted_means_against_statsmodels() -> None:
    """y ~ C(g) + x: the adjusted difference L1 - L0 is the treatment coefficient, and the
    adjusted mean of L0 is the prediction at x = mean(x) (statsmodels OLS as reference)."""
    data = random_groups(11, [6, 9, 7])
    data["x"] = np.random.default_rng(11).normal(3.0, 2.0, size=len(data))
    data["y"] += 0.7 * data["x"]
    means = nc.cell_means(nestfit.fit("y ~ C(g) + x", data), "g", data)
    ref = smf.ols("y ~ C(g) + x", data).fit()
    diff = means.estimate("L1 - L0")
    assert diff.estimate == pytest.approx(ref.params["C(g)[T.L1]"], rel=1e-10)
    assert diff.std_error == pytest.approx(ref.bse["C(g)[T.L1]"], rel=1e-10)
    level = means.estimate("L0", general=True)
    pred = ref.get_prediction(pd.DataFrame({"g": ["L0"], "x": [data.x.mean()]}))
    assert level.estimate == pytest.approx(float(pred.predicted_mean[0]), rel=1e-10)
    assert level.std_error == pytest.approx(float(pred.se_mean[0]), rel=1e-10)
    assert means.adjusted and "covariates at their means" in str(means)


def test_estimation_errors() -> None:
    data = random_groups(5, [5, 6, 7])
    models = nestfit.groups(data, "y", "g")
    with pytest.raises(ContrastError, match="identically zero in model 'L0 \\| L1 L2'"):
        nc.cell_means(models.blocks("L0 | L1 L2")).estimate("L1 - L2")
    with pytest.raises(ContrastError, match="identically zero in model 'equal means'"):
        nc.cell_means(models.equal_means()).estimate("L1 - L2")
    with pytest.raises(ContrastError, match="weights summing to 1, not 0"):
        nc.cell_means(models.separate_means()).estimate("L1")
    with pytest.raises(ParseError, match="product of two level expressions"):
        nc.cell_means(models.separate_means()).estimate("L1 * L2")
    with pytest.raises(ContrastError, match="grouped by 'g', not 'h'"):
        nc.cell_means(models.separate_means(), factor="h")
    formula = nestfit.fit("y ~ C(g)", data)
    with pytest.raises(ContrastError, match="is a formula fit: name its factor"):
        nc.cell_means(formula)
    with pytest.raises(DataError, match="pass the data frame it was fitted on"):
        nc.cell_means(formula, "g")
    with pytest.raises(ColumnError, match="no column named 'h' in data"):
        nc.cell_means(formula, "h", data)
    with pytest.raises(ContrastError, match="factor 'y' is not a term of model"):
        nc.cell_means(formula, "y", data)
    with pytest.raises(DataError, match="index has repeated labels"):
        nc.cell_means(formula, "g", pd.concat([data, data]))
    with pytest.raises(DataError, match="do not contain all rows"):
        nc.cell_means(formula, "g", data.iloc[:5])
    data["x"] = np.arange(len(data), dtype=float)
    with pytest.raises(ContrastError, match="varies within levels of 'g' \\(an interaction"):
        nc.cell_means(nestfit.fit("y ~ C(g) * x", data), "g", data)
    with pytest.raises(nestfit.errors.ModelError, match="cell_means takes a Fit"):
        nc.cell_means(models)  # type: ignore[arg-type]


def test_not_estimable_with_aliased_columns() -> None:
    """A covariate equal to level L1's indicator aliases that level's column: the adjusted
    difference L1 - L0 is not estimable, L2 - L0 still is."""
    data = random_groups(9, [5, 6, 7])
    data["z"] = (data.g == "L1").astype(float)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", NestfitWarning)  # the fit may warn of aliasing
        fit = nestfit.fit("y ~ C(g) + z", data)
    assert fit.aliased
    means = nc.cell_means(fit, "g", data)
    with pytest.raises(ContrastError, match=r"'L1 - L0' is not estimable in model .*aliased "
                                            r"columns C\(g\)\[T.L1\], z"):
        means.estimate("L1 - L0")
    ok = means.estimate("L2 - L0")
    assert ok.t ** 2 == pytest.approx(ok.nested_test().steps[0].f, rel=1e-8)


def test_no_error_estimate() -> None:
    data = pd.DataFrame({"y": [1.0, 2.0, 4.0], "g": ["a", "b", "c"]})
    with pytest.warns(nestfit.errors.ZeroResidualDfWarning):
        fit = nestfit.fit("y ~ C(g)", data)
    with pytest.raises(ContrastError, match="residual df 0"):
        nc.cell_means(fit, "g", data)


def test_conversions_and_text() -> None:
    e = nc.cell_means(separate(random_groups(1, [4, 5, 6]))).estimate("first = L0 - L1")
    d = e.to_dict()
    assert d["label"] == "first" and d["weights"] == {"L0": 1.0, "L1": -1.0}
    assert d["t"] == pytest.approx(e.t) and d["upper"] == pytest.approx(e.conf_int()[1])
    text = str(e)
    assert "Contrast 'first'" in text and "weights: L0 - L1" in text and "Assumptions" in text
