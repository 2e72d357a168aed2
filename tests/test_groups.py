"""Group models: the grouped path against the dense QR path, exact arithmetic,
scipy.stats.f_oneway and statsmodels (reference implementations)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats

import nestfit
from nestfit import Design, compare
from nestfit._fit import fit_design
from tests.exact import exact_f, exact_partition_rss, rel_err


def random_groups(seed: int, k: int = 5, offset: float = 0.0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    sizes = rng.integers(2, 12, size=k)
    labels = np.repeat([f"L{j}" for j in range(k)], sizes)
    means = rng.normal(0, 1, size=k)
    y = offset + np.repeat(means, sizes) + rng.normal(0, 0.5, size=labels.size)
    order = rng.permutation(labels.size)
    return pd.DataFrame({"y": y[order], "g": labels[order]})


def dense_copy(fit: nestfit.Fit) -> nestfit.Fit:
    """The same model with its design materialised, fitted by the general QR path."""
    d = fit.design
    dense = Design(d.name, d.columns, d.n_rows, d.description, matrix=d.to_dense())
    return fit_design(dense, fit.y, response_name=fit.response_name, weights=fit.weights)


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("offset", [0.0, 1e6, 1e9])
def test_grouped_path_agrees_with_dense_qr(seed: int, offset: float) -> None:
    data = random_groups(seed, offset=offset)
    models = nestfit.groups(data, "y", "g")
    fits = [models.equal_means(), models.blocks("L0 L1 | ..."), models.separate_means(),
            models.separate_means("helmert")]
    for f in fits:
        assert f.method == "grouped"
        d = dense_copy(f)
        assert d.method == "dense QR"
        assert d.rank == f.rank
        np.testing.assert_allclose(f.residual_ss, d.residual_ss, rtol=1e-12)
        np.testing.assert_allclose(f.coefficients, d.coefficients, rtol=1e-12,
                                   atol=1e-12 * max(1.0, abs(offset)))
        np.testing.assert_allclose(f.std_errors, d.std_errors, rtol=1e-10)
        np.testing.assert_allclose(f.leverages, d.leverages, rtol=1e-10, atol=1e-14)
        np.testing.assert_allclose(f.fitted, d.fitted, rtol=1e-14)
    grouped = compare(fits[0], fits[1], fits[2])
    dense = compare(*(dense_copy(f) for f in fits[:3]))
    for s, t in zip(grouped.steps, dense.steps):
        np.testing.assert_allclose(s.ss, t.ss, rtol=1e-11)
        np.testing.assert_allclose(s.f, t.f, rtol=1e-11)


@pytest.mark.parametrize("seed", range(8))
@pytest.mark.parametrize("offset", [0.0, 1e8, 1e12])
def test_residual_ss_and_f_match_exact_rational_arithmetic(seed: int, offset: float) -> None:
    data = random_groups(seed, k=6, offset=offset)
    models = nestfit.groups(data, "y", "g")
    comp = models.chain("L0 | ...")
    codes = models.factor.codes
    eq_b = np.zeros_like(codes)
    two_b = (codes != 0).astype(int)
    rss_eq, rss_two, f1 = exact_f(data["y"].to_numpy(), eq_b, two_b, den_blocks=codes)
    rss_sep = exact_partition_rss(data["y"].to_numpy(), codes)
    assert rel_err(comp.models[0].residual_ss, rss_eq) < 1e-11
    assert rel_err(comp.models[1].residual_ss, rss_two) < 1e-11
    assert rel_err(comp.models[2].residual_ss, rss_sep) < 1e-11
    assert rel_err(comp.steps[0].f, f1) < 1e-11
    # the same through the dense QR path
    dense = compare(*(dense_copy(f) for f in comp.fits))
    assert rel_err(dense.models[2].residual_ss, rss_sep) < 1e-11
    assert rel_err(dense.steps[0].f, f1) < 1e-11


@pytest.mark.parametrize("seed", range(5))
def test_oneway_matches_scipy_f_oneway(seed: int) -> None:
    data = random_groups(seed, k=4)
    comp = nestfit.groups(data, "y", "g").oneway()
    samples = [g["y"].to_numpy() for _, g in data.groupby("g")]
    ref = stats.f_oneway(*samples)  # scipy.stats as reference implementation
    np.testing.assert_allclose(comp.steps[0].f, ref.statistic, rtol=1e-9)
    np.testing.assert_allclose(comp.steps[0].p, ref.pvalue, rtol=1e-9)


@pytest.mark.parametrize("seed", range(4))
def test_chain_matches_statsmodels_ols_and_anova(seed: int) -> None:
    data = random_groups(seed, k=5)
    data["two"] = np.where(data["g"] == "L0", "a", "b")
    models = nestfit.groups(data, "y", "g")
    comp = models.chain("L0 | ...")
    # statsmodels as reference implementation (OLS and its nested-model ANOVA)
    from statsmodels.formula.api import ols
    from statsmodels.stats.anova import anova_lm

    m0 = ols("y ~ 1", data).fit()
    m1 = ols("y ~ C(two)", data).fit()
    m2 = ols("y ~ C(g)", data).fit()
    table = anova_lm(m0, m1, m2)
    np.testing.assert_allclose([m.residual_ss for m in comp.models], table["ssr"], rtol=1e-9)
    np.testing.assert_allclose([s.ss for s in comp.steps], table["ss_diff"][1:], rtol=1e-9)
    np.testing.assert_allclose([s.f for s in comp.steps], table["F"][1:], rtol=1e-9)
    # statsmodels' multi-model table takes the F denominator from the largest model
    # but evaluates p on each row's own residual df; with the largest model's mean
    # square as denominator the F reference distribution has the largest model's df
    # (Seber & Lee 2003, sec. 4.3), so p is checked against scipy on those df.
    df_largest = table["df_resid"].iloc[-1]
    np.testing.assert_allclose(
        [s.p for s in comp.steps],
        stats.f.sf(table["F"][1:], table["df_diff"][1:], df_largest), rtol=1e-9)
    # step by step, each pair's table is unambiguous and must agree exactly
    each = models.chain("L0 | ...", denominator="each")
    for step, (small, large) in zip(each.steps, [(m0, m1), (m1, m2)]):
        pair = anova_lm(small, large)
        np.testing.assert_allclose(step.f, pair["F"].iloc[1], rtol=1e-9)
        np.testing.assert_allclose(step.p, pair["Pr(>F)"].iloc[1], rtol=1e-9)
    sep = models.separate_means()
    np.testing.assert_allclose(sep.r_squared, m2.rsquared, rtol=1e-9)
    np.testing.assert_allclose(sep.adj_r_squared, m2.rsquared_adj, rtol=1e-9)


def test_weighted_group_model_matches_statsmodels_wls() -> None:
    data = random_groups(3, k=4)
    rng = np.random.default_rng(11)
    data["w"] = rng.uniform(0.5, 3.0, size=len(data))
    sep = nestfit.groups(data, "y", "g", weights="w").separate_means()
    X = pd.get_dummies(data["g"]).to_numpy(dtype=float)
    ref = sm.WLS(data["y"].to_numpy(), X, weights=data["w"].to_numpy()).fit()
    np.testing.assert_allclose(sep.coefficients, ref.params, rtol=1e-10)
    np.testing.assert_allclose(sep.std_errors, ref.bse, rtol=1e-9)
    np.testing.assert_allclose(sep.residual_ss, ref.ssr, rtol=1e-10)
    # hat matrix of the weighted design, W^1/2 X (X'WX)^-1 X' W^1/2, formed directly
    sw = np.sqrt(data["w"].to_numpy())[:, None] * X
    hat = np.einsum("ij,ji->i", sw @ np.linalg.inv(sw.T @ sw), sw.T)
    np.testing.assert_allclose(sep.leverages, hat, rtol=1e-9)


def test_codings_give_same_fit_and_documented_coefficients() -> None:
    data = random_groups(5, k=4)
    models = nestfit.groups(data, "y", "g")
    means = data.groupby("g")["y"].mean().to_numpy()
    ind = models.separate_means()
    np.testing.assert_allclose(ind.coefficients, means, rtol=1e-12)
    assert ind.design.column_names == ("g[L0]", "g[L1]", "g[L2]", "g[L3]")
    for name in ["reference", "deviation", "helmert", "successive"]:
        f = models.separate_means(name)
        np.testing.assert_allclose(f.residual_ss, ind.residual_ss, rtol=1e-12)
        assert f.design.column_names[0] == "Intercept"
    ref = models.separate_means("reference")
    np.testing.assert_allclose(ref.coefficients, [means[0], *(means[1:] - means[0])], rtol=1e-10)


def test_linear_trend_model_sits_between_equal_and_separate() -> None:
    rng = np.random.default_rng(2)
    dose = np.repeat([0.0, 1.0, 2.0, 4.0], 6)
    y = 3 + 0.5 * dose + rng.normal(0, 0.3, dose.size)
    models = nestfit.groups(y=y, factor=dose)
    trend = models.coded(nestfit.Polynomial(spacing=[0, 1, 2, 4], degree=1), name="linear")
    comp = compare(models.equal_means(), trend, models.separate_means())
    slope = sm.OLS(y, sm.add_constant(dose)).fit()  # statsmodels: straight line in dose
    np.testing.assert_allclose(trend.residual_ss, slope.ssr, rtol=1e-10)
    assert [s.df for s in comp.steps] == [1, 2]


def test_blocks_accepts_mapping_and_partition() -> None:
    data = random_groups(1, k=3)
    models = nestfit.groups(data, "y", "g")
    a = models.blocks({"first": ["L0"], "rest": ["L1", "L2"]})
    b = models.blocks(nestfit.Partition.parse("L0 | L1 L2", models.levels))
    assert a.design.column_names == ("g[first]", "g[rest]")
    np.testing.assert_allclose(a.residual_ss, b.residual_ss, rtol=1e-14)


def test_array_input() -> None:
    m = nestfit.groups(y=[1.0, 2.0, 3.0, 4.0, 6.0], factor=["a", "a", "b", "b", "b"])
    f = m.separate_means()
    np.testing.assert_allclose(f.coefficients, [1.5, 13 / 3], rtol=1e-14)
