"""Shapiro-Wilk on residuals: against scipy.stats.shapiro (reference implementation)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit.checks import shapiro_wilk
from nestfit.errors import DataError
from tests.checks.layouts import random_layout


@pytest.mark.parametrize("seed", range(5))
def test_separate_means_residuals_agree_with_scipy(seed: int) -> None:
    data = random_layout(seed, offset=1e3)
    models = nestfit.groups(data, "y", "g")
    resid = data["y"] - data.groupby("g")["y"].transform("mean")
    ref = stats.shapiro(resid.to_numpy())  # reference implementation on y - ybar_i
    for res in (shapiro_wilk(models), shapiro_wilk(data, "y", "g")):
        np.testing.assert_allclose(res.statistic, ref.statistic, rtol=1e-9)
        np.testing.assert_allclose(res.p, ref.pvalue, rtol=1e-7)
        assert res.df == () and res.to_dict()["df"] is None


def test_any_fit_and_weighted_fits() -> None:
    rng = np.random.default_rng(5)
    data = pd.DataFrame({"x": rng.normal(size=40), "w": rng.uniform(0.5, 2, 40)})
    data["y"] = 1 + 2 * data["x"] + rng.normal(size=40) / np.sqrt(data["w"])
    fit = nestfit.fit("y ~ x", data)
    np.testing.assert_allclose(shapiro_wilk(fit).statistic,
                               stats.shapiro(np.asarray(fit.residuals)).statistic, rtol=1e-12)
    wfit = nestfit.fit("y ~ x", data, weights="w")
    scaled = np.asarray(wfit.residuals) * np.sqrt(data["w"].to_numpy())
    np.testing.assert_allclose(shapiro_wilk(wfit).statistic, stats.shapiro(scaled).statistic,
                               rtol=1e-12)


def test_caveats_for_small_and_large_samples() -> None:
    rng = np.random.default_rng(0)
    small = pd.DataFrame({"y": rng.normal(size=12), "g": np.repeat(["a", "b"], 6)})
    assert "little power" in shapiro_wilk(small, "y", "g").reading
    large = pd.DataFrame({"y": rng.standard_t(5, size=6000), "g": np.repeat(["a", "b"], 3000)})
    res = shapiro_wilk(large, "y", "g")
    assert "too small to matter" in res.reading
    assert "may be inaccurate" in res.reading  # scipy's warning above 5000, kept as a caveat


def test_too_few_residuals_and_perfect_fit() -> None:
    exact = nestfit.groups(pd.DataFrame({"y": [1.0, 1.0, 4.0, 4.0], "g": ["a", "a", "b", "b"]}),
                           "y", "g")
    with pytest.raises(DataError, match="residuals of model 'separate means' are all zero"):
        shapiro_wilk(exact)
    two = nestfit.fit("y ~ 1", pd.DataFrame({"y": [1.0, 2.0]}))
    with pytest.raises(DataError, match=r"at least 3 residuals; model .* has 2"):
        shapiro_wilk(two)
    with pytest.raises(DataError, match="alpha must be"):
        shapiro_wilk(two, alpha=1.5)
    with pytest.raises(DataError, match="give a fit alone"):
        shapiro_wilk(two, "y", "g")
