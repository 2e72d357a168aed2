"""Standardized difference of a contrast: hand computation, scaling, the noncentral-t
interval's equations, and (slow) its coverage."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit.effects import contrast_effect, scaled_contrast_weights, standardized_difference
from nestfit.errors import ContrastError, DataError
from tests.checks.layouts import random_layout


def test_hand_computation_and_scaling() -> None:
    data = random_layout(4, k=4, offset=1e6)
    models = nestfit.groups(data, "y", "g")
    means = data.groupby("g")["y"].mean()
    counts = data.groupby("g")["y"].count()
    sigma = models.separate_means().sigma
    psi = means["L3"] - (means["L0"] + means["L1"] + means["L2"]) / 3
    for w in ({"L3": 3, "L0": -1, "L1": -1, "L2": -1}, [-0.5, -0.5, -0.5, 1.5],
              [-1 / 3, -1 / 3, -1 / 3, 1]):
        d = contrast_effect(models, w)
        assert d.estimate == pytest.approx(psi / sigma, rel=1e-8)
        assert d.contrast_estimate == pytest.approx(psi, rel=1e-8)
        se = sigma * math.sqrt(1 / counts["L3"] + sum(1 / 9 / counts[f"L{j}"] for j in range(3)))
        assert d.std_error == pytest.approx(se, rel=1e-10)
        assert d.df == len(data) - 4
        assert sum(v for v in d.weights.values() if v > 0) == pytest.approx(1.0)
    np.testing.assert_allclose(scaled_contrast_weights([2, -1, -1]), [1, -0.5, -0.5])


def test_interval_solves_the_noncentral_t_equations() -> None:
    models = nestfit.groups(random_layout(2, k=3), "y", "g")
    d = contrast_effect(models, [1, -1, 0], level=0.9)
    ratio = d.std_error / d.sigma
    # P(T' <= t; delta_L) = 0.95 and P(T' <= t; delta_U) = 0.05 with delta = d / ratio.
    assert stats.nct.cdf(d.t, d.df, d.lower / ratio) == pytest.approx(0.95, abs=1e-9)
    assert stats.nct.cdf(d.t, d.df, d.upper / ratio) == pytest.approx(0.05, abs=1e-9)
    assert d.lower < d.estimate < d.upper
    low = standardized_difference(d.contrast_estimate, d.std_error, d.df, d.sigma, level=0.9)
    assert (low.lower, low.upper) == (d.lower, d.upper)
    assert "noncentral t" in str(d) and d.to_frame().shape[0] == 1


def test_reduced_grouped_fit() -> None:
    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    fit = models.blocks("H4 | ...")
    d = contrast_effect(fit, {"H4": 1, "H1": -1})
    means = fit.group_fitted_means()
    assert d.contrast_estimate == pytest.approx(means["H4"] - means["H1"], rel=1e-10)
    assert d.sigma == fit.sigma and d.df == fit.residual_df
    with pytest.raises(ContrastError, match="identically zero in model"):
        contrast_effect(fit, {"H2": 1, "H1": -1})


def test_bad_input() -> None:
    models = nestfit.groups(random_layout(1), "y", "g")
    with pytest.raises(ContrastError, match="sum to 1, not 0"):
        contrast_effect(models, [1, 0, 0, 0])
    with pytest.raises(ContrastError, match="'L7', which is not a level"):
        contrast_effect(models, {"L7": 1, "L0": -1})
    dense = nestfit.fit("y ~ C(g)", random_layout(1))
    with pytest.raises(DataError, match="is not a grouped fit"):
        contrast_effect(dense, [1, -1, 0, 0])
    flat = nestfit.groups(pd.DataFrame({"y": [1.0, 1, 2, 2], "g": list("aabb")}), "y", "g")
    with pytest.raises(DataError, match="has no error variance"):
        contrast_effect(flat, [1, -1])
    with pytest.raises(DataError, match="must be positive"):
        standardized_difference(1.0, 0.0, 10, 1.0)
    with pytest.raises(DataError, match="must be a finite number"):
        standardized_difference(float("nan"), 1.0, 10, 1.0)
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        standardized_difference(1.0, 0.5, 10, 1.0, level=0.0)
    with pytest.raises(ContrastError, match="no positive weight"):
        scaled_contrast_weights([0.0, -1.0])


@pytest.mark.slow
def test_coverage_of_the_interval_for_psi_over_sigma() -> None:
    # 2000 seeded layouts, 95% interval for psi*/sigma; Monte Carlo SE 0.0049, allow 3.5.
    rng = np.random.default_rng(20260612)
    sizes = np.array([5, 9, 7])
    mu = np.array([0.0, 0.6, 0.1])
    sigma = 2.0
    c = np.array([1.0, -0.5, -0.5])
    codes = np.repeat(np.arange(3), sizes)
    n, k = sizes.sum(), 3
    true_d = (c @ mu) / sigma
    factor = math.sqrt(np.sum(c ** 2 / sizes))
    draws, covered = 2000, 0
    labels = np.array(list("abc"))[codes]
    for i in range(draws):
        y = mu[codes] + sigma * rng.normal(size=n)
        means = np.bincount(codes, y) / sizes
        s = math.sqrt(((y - means[codes]) ** 2).sum() / (n - k))
        res = standardized_difference(c @ means, s * factor, n - k, s)
        covered += res.lower <= true_d <= res.upper
        if i < 5:
            public = contrast_effect(nestfit.groups(y=y, factor=labels), c)
            assert public.lower == pytest.approx(res.lower, rel=1e-9, abs=1e-12)
            assert public.upper == pytest.approx(res.upper, rel=1e-9, abs=1e-12)
    assert abs(covered / draws - 0.95) < 3.5 * math.sqrt(0.95 * 0.05 / draws)
