"""Residual diagnostics: against statsmodels' OLSInfluence (reference implementation) on
dense, grouped and weighted fits; the flag rules on planted outliers."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats
from statsmodels.stats.outliers_influence import OLSInfluence

import nestfit
from nestfit.checks import residual_diagnostics
from nestfit.errors import DataError
from tests.checks.layouts import random_layout


def _reference(X: np.ndarray, y: np.ndarray) -> OLSInfluence:
    return OLSInfluence(sm.OLS(y, X).fit())


def _compare(diag, infl: OLSInfluence) -> None:
    tol = {"rtol": 1e-10, "atol": 1e-12}
    np.testing.assert_allclose(diag.leverages, infl.hat_matrix_diag, **tol)
    np.testing.assert_allclose(diag.standardized, infl.resid_studentized_internal, **tol)
    np.testing.assert_allclose(diag.studentized, infl.resid_studentized_external, **tol)
    np.testing.assert_allclose(diag.cooks_distance, infl.cooks_distance[0], **tol)
    np.testing.assert_allclose(diag.dffits, infl.dffits[0], **tol)


@pytest.mark.parametrize("seed", range(5))
def test_dense_fit_agrees_with_statsmodels(seed: int) -> None:
    rng = np.random.default_rng(seed)
    n = 30 + 5 * seed
    data = pd.DataFrame({"x1": rng.normal(size=n), "x2": rng.exponential(size=n)})
    data["y"] = 2 + data["x1"] - 3 * data["x2"] + rng.standard_t(4, size=n)
    fit = nestfit.fit("y ~ x1 + x2", data)
    X = sm.add_constant(data[["x1", "x2"]].to_numpy())
    _compare(residual_diagnostics(fit), _reference(X, data["y"].to_numpy()))


@pytest.mark.parametrize("seed", range(4))
def test_grouped_fits_agree_with_statsmodels(seed: int) -> None:
    data = random_layout(seed, k=5)
    models = nestfit.groups(data, "y", "g")
    for fit in (models.separate_means(), models.blocks("L0 | ..."), models.equal_means()):
        _compare(residual_diagnostics(fit), _reference(fit.design.to_dense(),
                                                       data["y"].to_numpy()))


def test_weighted_fit_equals_ols_on_the_transformed_problem() -> None:
    # WLS is OLS on sqrt(w) X, sqrt(w) y (common practice, no source).
    rng = np.random.default_rng(3)
    n = 35
    data = pd.DataFrame({"x": rng.normal(size=n), "w": rng.uniform(0.5, 4, size=n)})
    data["y"] = 1 - data["x"] + rng.normal(size=n) / np.sqrt(data["w"])
    fit = nestfit.fit("y ~ x", data, weights="w")
    r = np.sqrt(data["w"].to_numpy())
    X = sm.add_constant(data[["x"]].to_numpy()) * r[:, None]
    _compare(residual_diagnostics(fit), _reference(X, data["y"].to_numpy() * r))


def test_flags_and_rules() -> None:
    rng = np.random.default_rng(8)
    n = 50
    x = rng.normal(size=n)
    x[0] = 8.0  # far out in x: high leverage
    y = 1 + x + rng.normal(scale=0.5, size=n)
    y[0] += 6.0  # and off the line: influential
    y[10] += 5.0  # an outlier at ordinary leverage
    data = pd.DataFrame({"x": x, "y": y}, index=[f"r{i}" for i in range(n)])
    diag = residual_diagnostics(nestfit.fit("y ~ x", data))
    p, nu = 2, n - 2
    assert diag.leverage_cutoff == pytest.approx(2 * p / n)
    assert diag.outlier_cutoff == pytest.approx(stats.t.isf(0.05 / (2 * n), nu - 1))
    assert diag.cook_cutoff == pytest.approx(stats.f.ppf(0.5, p, nu))
    assert diag.dffits_cutoff == pytest.approx(2 * np.sqrt(p / n))
    frame = diag.to_frame()
    assert frame.loc["r0", "high_leverage"] and frame.loc["r0", "influential"]
    assert frame.loc["r10", "outlier"] and not frame.loc["r10", "high_leverage"]
    np.testing.assert_array_equal(diag.outlier, np.abs(diag.studentized) > diag.outlier_cutoff)
    np.testing.assert_array_equal(diag.high_leverage, diag.leverages > 2 * p / n)
    np.testing.assert_array_equal(diag.influential, diag.cooks_distance > diag.cook_cutoff)
    four = residual_diagnostics(nestfit.fit("y ~ x", data), cook_rule="4/n")
    assert four.cook_cutoff == pytest.approx(4 / n) and four.influential.sum() >= 1
    text = str(diag)
    assert "Bonferroni" in text and "r0" in text and "r10" in text and "not to observations" \
        in text
    payload = json.loads(json.dumps(diag.to_dict(), allow_nan=False))
    assert "r0" in payload["flagged_rows"] and len(payload["observations"]["studentized"]) == n


def test_unit_leverage_gives_nan_and_a_leverage_flag() -> None:
    data = pd.DataFrame({"y": [1.0, 2.0, 4.0, 3.0, 9.0], "g": ["a", "a", "a", "a", "b"]})
    diag = residual_diagnostics(nestfit.groups(data, "y", "g").separate_means())
    assert diag.leverages[4] == pytest.approx(1.0)
    assert np.isnan(diag.studentized[4]) and np.isnan(diag.cooks_distance[4])
    assert diag.high_leverage[4] and not diag.outlier[4]
    json.dumps(diag.to_dict(), allow_nan=False)


def test_bad_input() -> None:
    data = pd.DataFrame({"y": [1.0, 2.0, 4.0], "x": [0.0, 1.0, 3.0]})
    with pytest.raises(DataError, match="1 residual degrees of freedom; studentized residuals"):
        residual_diagnostics(nestfit.fit("y ~ x", data))
    flat = nestfit.groups(pd.DataFrame({"y": [1.0, 1, 1, 2, 2, 2], "g": list("aaabbb")}),
                          "y", "g").separate_means()
    with pytest.raises(DataError, match="fits the data exactly"):
        residual_diagnostics(flat)
    good = nestfit.groups(random_layout(0), "y", "g").separate_means()
    with pytest.raises(DataError, match="alpha must be"):
        residual_diagnostics(good, alpha=0)
    with pytest.raises(DataError, match="cook_rule must be"):
        residual_diagnostics(good, cook_rule="half")  # type: ignore[arg-type]
    with pytest.raises(DataError, match="takes a Fit"):
        residual_diagnostics(random_layout(0))  # type: ignore[arg-type]


def test_weighted_grouped_fit_equals_ols_on_the_transformed_problem() -> None:
    data = random_layout(6, k=4).assign(w=lambda d: np.linspace(0.5, 3.0, len(d)))
    models = nestfit.groups(data, "y", "g", weights="w")
    r = np.sqrt(data["w"].to_numpy())
    for fit in (models.separate_means(), models.blocks("L0 L1 | ...")):
        assert fit.method == "grouped"
        X = fit.design.to_dense() * r[:, None]
        _compare(residual_diagnostics(fit), _reference(X, data["y"].to_numpy() * r))
