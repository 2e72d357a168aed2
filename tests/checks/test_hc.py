"""HC0-HC3 sandwich covariance: against statsmodels OLS/WLS cov_type="HC*" (reference
implementation), on dense, grouped, weighted and rank-deficient fits."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm

import nestfit
from nestfit import ColumnInfo, Design
from nestfit._fit import fit_design
from nestfit.checks import hc_covariance, hc_group_mean_covariance, summarize_groups
from nestfit.errors import DataError, RankDeficiencyWarning
from tests.checks.layouts import random_layout

KINDS = ["HC0", "HC1", "HC2", "HC3"]


def _regression(seed: int, n: int = 40) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    x1, x2 = rng.normal(size=n), rng.uniform(0, 5, size=n)
    y = 1 + 0.5 * x1 - x2 + rng.normal(size=n) * (0.2 + x2)
    return pd.DataFrame({"y": y, "x1": x1, "x2": x2, "w": rng.uniform(0.5, 3, size=n)})


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("kind", KINDS)
def test_dense_fit_agrees_with_statsmodels(seed: int, kind: str) -> None:
    data = _regression(seed)
    fit = nestfit.fit("y ~ x1 + x2", data)
    X = sm.add_constant(data[["x1", "x2"]].to_numpy())
    ref = sm.OLS(data["y"].to_numpy(), X).fit(cov_type=kind).cov_params()
    np.testing.assert_allclose(hc_covariance(fit, kind), ref, rtol=1e-10, atol=1e-14)


@pytest.mark.parametrize("kind", KINDS)
def test_weighted_fit_agrees_with_statsmodels_wls(kind: str) -> None:
    data = _regression(11)
    fit = nestfit.fit("y ~ x1 + x2", data, weights="w")
    X = sm.add_constant(data[["x1", "x2"]].to_numpy())
    ref = sm.WLS(data["y"].to_numpy(), X, weights=data["w"].to_numpy()).fit(
        cov_type=kind).cov_params()
    np.testing.assert_allclose(hc_covariance(fit, kind), ref, rtol=1e-10, atol=1e-14)


@pytest.mark.parametrize("seed", range(3))
@pytest.mark.parametrize("kind", KINDS)
def test_grouped_fits_agree_with_statsmodels(seed: int, kind: str) -> None:
    data = random_layout(seed, k=4, offset=1e4)
    models = nestfit.groups(data, "y", "g")
    for fit in (models.separate_means(), models.separate_means("helmert"),
                models.blocks("L0 L1 | ...")):
        assert fit.method == "grouped"
        X = fit.design.to_dense()
        ref = sm.OLS(data["y"].to_numpy(), X).fit(cov_type=kind).cov_params()
        # The offset of 1e4 costs statsmodels (raw values) about 4 digits.
        np.testing.assert_allclose(hc_covariance(fit, kind), ref, rtol=1e-8, atol=1e-12)


def test_hc2_of_separate_means_is_the_welch_variance() -> None:
    data = random_layout(3, k=5)
    models = nestfit.groups(data, "y", "g")
    v = hc_group_mean_covariance(models.separate_means(), "HC2")
    summary = summarize_groups(models)
    np.testing.assert_allclose(np.diag(v), summary.variances / summary.counts, rtol=1e-12)
    np.testing.assert_allclose(v - np.diag(np.diag(v)), 0.0, atol=1e-15)
    helmert = hc_group_mean_covariance(models.separate_means("helmert"), "HC2")
    np.testing.assert_allclose(helmert, v, rtol=1e-10, atol=1e-15)


def test_aliased_columns_get_nan() -> None:
    data = _regression(2).assign(x3=lambda d: d["x1"] + d["x2"])
    with pytest.warns(RankDeficiencyWarning):
        fit = nestfit.fit("y ~ x1 + x2 + x3", data)
    v = hc_covariance(fit, "HC3")
    assert v.shape == (4, 4)
    aliased = [fit.design.column_names.index(a) for a in fit.aliased]
    assert aliased and np.all(np.isnan(v[aliased, :])) and np.all(np.isnan(v[:, aliased]))
    keep = [j for j in range(4) if j not in aliased]
    X = fit.design.to_dense()[:, keep]
    ref = sm.OLS(data["y"].to_numpy(), X).fit(cov_type="HC3").cov_params()
    np.testing.assert_allclose(v[np.ix_(keep, keep)], ref, rtol=1e-9)
    models = nestfit.groups(random_layout(1), "y", "g")
    k = len(models.levels)
    coding = np.column_stack([np.eye(k), np.ones(k)])
    columns = [ColumnInfo(f"g{j}", "g") for j in range(k)] + [ColumnInfo("extra", "extra")]
    design = Design.grouped("redundant", models.factor, coding, columns)
    with pytest.warns(RankDeficiencyWarning):
        redundant = fit_design(design, models.y)
    with pytest.raises(DataError, match="model 'redundant' has aliased columns"):
        hc_group_mean_covariance(redundant)


def test_bad_input() -> None:
    fit = nestfit.fit("y ~ x1", _regression(0))
    with pytest.raises(DataError, match="kind must be one of HC0, HC1, HC2, HC3"):
        hc_covariance(fit, "HC4")  # type: ignore[arg-type]
    with pytest.raises(DataError, match="takes a Fit"):
        hc_covariance("fit")  # type: ignore[arg-type]
    with pytest.raises(DataError, match="needs a grouped fit"):
        hc_group_mean_covariance(fit)
    lone = pd.DataFrame({"y": [1.0, 2.0, 3.0, 7.0], "g": ["a", "a", "a", "b"]})
    sep = nestfit.groups(lone, "y", "g").separate_means()
    with pytest.raises(DataError, match="observation 3 of model 'separate means' has leverage 1"):
        hc_covariance(sep, "HC3")
    assert np.isfinite(hc_covariance(sep, "HC0")).all()
    from nestfit.errors import ZeroResidualDfWarning

    with pytest.warns(ZeroResidualDfWarning):
        exact = nestfit.fit("y ~ x1", _regression(0).iloc[:2])
    with pytest.raises(DataError, match="no residual degrees of freedom"):
        hc_covariance(exact)


@pytest.mark.parametrize("kind", KINDS)
def test_weighted_grouped_fit_agrees_with_statsmodels_wls(kind: str) -> None:
    data = random_layout(8, k=4).assign(w=lambda d: np.linspace(0.5, 3.0, len(d)))
    fit = nestfit.groups(data, "y", "g", weights="w").separate_means("helmert")
    assert fit.method == "grouped"
    ref = sm.WLS(data["y"].to_numpy(), fit.design.to_dense(),
                 weights=data["w"].to_numpy()).fit(cov_type=kind).cov_params()
    np.testing.assert_allclose(hc_covariance(fit, kind), ref, rtol=1e-10, atol=1e-14)
