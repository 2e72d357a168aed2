"""The statistics a worked report shows beyond the other result objects (nestfit._summary)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

import nestfit
from nestfit._summary import model_work, normal_quantiles, worked_analysis
from nestfit.errors import DataError, ModelError


@pytest.fixture(scope="module")
def models() -> nestfit.GroupModels:
    return nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")


def test_level_rss_adds_up_to_the_residual_ss(models: nestfit.GroupModels) -> None:
    for fit in (models.equal_means(), models.blocks("H4 | ..."), models.separate_means()):
        work = model_work(fit, "M")
        assert math.fsum(work.level_rss) == pytest.approx(fit.residual_ss, rel=1e-12)
        # By definition: each level's sum of squared deviations from its fitted mean.
        data = nestfit.datasets.load_fill_weights()
        for j, level in enumerate(models.levels):
            y = data.loc[data["head"] == level, "weight"].to_numpy()
            assert work.level_rss[j] == pytest.approx(np.sum((y - work.fitted_means[j]) ** 2),
                                                      rel=1e-10)


def test_hypothesis_matrix_maps_level_means_to_coefficients(
        models: nestfit.GroupModels) -> None:
    means = models.separate_means().group_fitted_means().to_numpy()
    for coding in ("deviation", "reference", "helmert", "successive"):
        fit = models.separate_means(coding)
        work = model_work(fit, "R")
        assert work.hypothesis is not None
        np.testing.assert_allclose(work.hypothesis @ means, fit.coefficients, rtol=1e-10)
    # A partition model: the block coefficient is the count-weighted mean of its levels.
    block = model_work(models.blocks("H4 | ..."), "M1")
    counts = models.sums.counts
    rest = [j for j, lv in enumerate(models.levels) if lv != "H4"]
    expected = counts[rest] / counts[rest].sum()
    np.testing.assert_allclose(block.hypothesis[1, rest], expected, rtol=1e-12)


def test_regression_view_is_the_oneway_analysis(models: nestfit.GroupModels) -> None:
    a = worked_analysis(models.chain("H4 | ..."), models=models)
    separate = models.separate_means()
    assert a.regression.fit.residual_ss == pytest.approx(separate.residual_ss, rel=1e-12)
    # Reference implementation: scipy's one-way analysis of variance.
    data = nestfit.datasets.load_fill_weights()
    ref = stats.f_oneway(*[data.loc[data["head"] == lv, "weight"] for lv in models.levels])
    step = a.regression_test.steps[0]
    assert step.f == pytest.approx(ref.statistic, rel=1e-10)
    assert step.p == pytest.approx(ref.pvalue, rel=1e-8)
    np.testing.assert_allclose(a.observations, data["weight"].to_numpy(), rtol=0, atol=1e-12)


def test_mean_intervals_are_t_intervals(models: nestfit.GroupModels) -> None:
    a = worked_analysis(models.oneway(), models=models, mean_method="bonferroni")
    fit = models.separate_means()
    k, df = len(models.levels), fit.residual_df
    t = stats.t.ppf(0.975, df)  # scipy reference quantiles
    t_bonf = stats.t.ppf(1 - 0.025 / k, df)
    for j, row in enumerate(a.mean_intervals.rows):
        se = fit.sigma / math.sqrt(models.sums.counts[j])
        assert row.std_error == pytest.approx(se, rel=1e-12)
        assert row.lower == pytest.approx(row.estimate - t * se, rel=1e-12)
        assert a.simultaneous_means.rows[j].upper == pytest.approx(row.estimate + t_bonf * se,
                                                                   rel=1e-12)


def test_normal_quantiles_match_scipy_probplot() -> None:
    x = np.array([0.3, -1.2, 2.2, 0.0, -0.4, 1.1])
    q = normal_quantiles(x)
    (osm, osr), _ = stats.probplot(x, dist="norm")  # reference: scipy
    np.testing.assert_allclose(q.theoretical, osm)
    np.testing.assert_allclose(q.ordered, osr)


def test_bad_input_is_named(models: nestfit.GroupModels) -> None:
    data = nestfit.datasets.load_fill_weights()
    dense = nestfit.compare(nestfit.fit("weight ~ 1", data), nestfit.fit("weight ~ C(head)", data))
    with pytest.raises(ModelError, match=r"formula fit.*nestfit\.groups"):
        worked_analysis(dense)
    with pytest.raises(ModelError, match="starts from a Comparison"):
        worked_analysis(models.separate_means())  # type: ignore[arg-type]
    with pytest.raises(DataError, match="alpha must be between 0 and 1"):
        worked_analysis(models.oneway(), alpha=1.5)
    other = nestfit.groups(data, "weight", "shift")
    with pytest.raises(ModelError, match=r"'shift', not the factor 'head' of the"):
        worked_analysis(models.oneway(), models=other)
    with pytest.raises(DataError, match="at least 2 finite"):
        normal_quantiles([1.0])
