"""Welch-type and sandwich (HC0-HC3) standard errors inside contrast families.

References: scipy.stats.tukey_hsd(equal_var=False) (Games-Howell) and
scipy.stats.ttest_ind(equal_var=False) (Welch's t) as reference implementations;
statsmodels OLS with cov_type="HC0".."HC3" (use_t=True) for the sandwich standard errors;
Satterthwaite (1946) written out here for general contrasts.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from scipy import stats

import nestfit
from nestfit import contrasts as nc
from nestfit.errors import ContrastError
from tests.checks.layouts import random_layout, split


def _separate(data: pd.DataFrame) -> nestfit.Fit:
    return nestfit.groups(data, "y", "g").separate_means()


@pytest.mark.parametrize("seed", range(3))
def test_welch_tukey_is_games_howell_of_scipy(seed: int) -> None:
    data = random_layout(seed, k=4)
    fit = _separate(data)
    levels = list(fit.design.groups.factor.levels)
    ref = stats.tukey_hsd(*split(data, levels), equal_var=False)  # Games-Howell in scipy
    ci = ref.confidence_interval(0.95)
    result = nc.cell_means(fit, variance="welch").family(nc.all_pairs()).adjust("tukey")
    assert "Games-Howell" in result.method_name and result.variance == "welch"
    for row in result.rows:
        first, second = (lv for lv, _ in row.weights)
        i, j = levels.index(first), levels.index(second)
        sign = dict(row.weights)[first]
        assert sign * row.estimate == pytest.approx(ref.statistic[i, j], rel=1e-9)
        assert row.p_adjusted == pytest.approx(ref.pvalue[i, j], rel=1e-6, abs=1e-10)
        lo, hi = sorted(sign * np.array([row.lower, row.upper]))
        np.testing.assert_allclose([lo, hi], [ci.low[i, j], ci.high[i, j]], rtol=1e-7)
    assert math.isnan(result.critical_value)
    assert len(set(result.multipliers.round(12))) > 1


@pytest.mark.parametrize("seed", range(3))
def test_welch_pair_is_welchs_t_test(seed: int) -> None:
    data = random_layout(seed + 10, k=3)
    fit = _separate(data)
    levels = fit.design.groups.factor.levels
    a, b = split(data, list(levels))[:2]
    ref = stats.ttest_ind(a, b, equal_var=False)  # Welch (1947) in scipy
    means = nc.cell_means(fit, variance="welch")
    est = means.estimate(f"{levels[0]} - {levels[1]}")
    assert est.t == pytest.approx(ref.statistic, rel=1e-10)
    assert est.df == pytest.approx(ref.df, rel=1e-10)
    assert est.p == pytest.approx(ref.pvalue, rel=1e-9)
    np.testing.assert_allclose(est.conf_int(0.9), ref.confidence_interval(0.9), rtol=1e-9)
    # The same contrast as a one-member family: its max-t interval is Welch's.
    one = means.family([f"{levels[0]} - {levels[1]}"])
    row = one.adjust("max-t", level=0.9, rng=0).rows[0]
    np.testing.assert_allclose([row.lower, row.upper], ref.confidence_interval(0.9), rtol=1e-9)


def test_welch_general_contrast_is_satterthwaite() -> None:
    # Satterthwaite (1946), Biometrics Bulletin 2, 110-114, written out:
    # v_i = w_i^2 s_i^2 / n_i, se = sqrt(sum v_i), df = (sum v_i)^2 / sum v_i^2 / (n_i - 1).
    data = random_layout(4, k=4)
    fit = _separate(data)
    levels = list(fit.design.groups.factor.levels)
    ys = split(data, levels)
    w = np.array([1.0, -1 / 3, -1 / 3, -1 / 3])
    v = w ** 2 * np.array([y.var(ddof=1) / y.size for y in ys])
    df = v.sum() ** 2 / np.sum(v ** 2 / (np.array([y.size for y in ys]) - 1))
    est = nc.cell_means(fit, variance="welch").estimate(f"{levels[0]} - mean(...)")
    assert est.std_error == pytest.approx(math.sqrt(v.sum()), rel=1e-10)
    assert est.df == pytest.approx(df, rel=1e-10)
    assert est.estimate == pytest.approx(float(w @ [y.mean() for y in ys]), rel=1e-10)
    assert est.to_dict()["variance"] == "welch"


def test_welch_scheffe_and_bonferroni_use_each_contrasts_df() -> None:
    # Brown & Forsythe (1974), Technometrics 16, 129-132 (from memory): Scheffe's multiplier
    # with the contrast's own Satterthwaite df, sqrt(q F_{q, nu_i}(level)).
    data = random_layout(5, k=4)
    fam = nc.cell_means(_separate(data), variance="welch").family(nc.consecutive())
    scheffe = fam.adjust("scheffe", level=0.9)
    bonf = fam.adjust("bonferroni", level=0.9)
    q = fam.rank
    for row, e in zip(scheffe.rows, fam.estimates):
        assert row.critical_value == pytest.approx(
            math.sqrt(q * stats.f.ppf(0.9, q, e.df)), rel=1e-12)
        assert row.p_adjusted == pytest.approx(stats.f.sf(e.t ** 2 / q, q, e.df), rel=1e-12)
    for row, e in zip(bonf.rows, fam.estimates):
        assert row.p == pytest.approx(2 * stats.t.sf(abs(e.t), e.df), rel=1e-12)
        assert row.p_adjusted == pytest.approx(min(1.0, len(fam) * row.p), rel=1e-12)
        assert row.critical_value == pytest.approx(stats.t.ppf(1 - 0.1 / (2 * len(fam)), e.df),
                                                   rel=1e-12)


def test_welch_max_t_bounds_and_step_down() -> None:
    data = random_layout(6, k=4)
    fam = nc.cell_means(_separate(data), variance="welch").family(nc.versus_control("L0"))
    single = fam.adjust("dunnett", rng=3)
    down = fam.adjust("step-down-max-t", rng=3)
    holm = fam.adjust("holm")
    m = len(fam)
    for row, e in zip(single.rows, fam.estimates):
        # Exact bounds of a max-t critical value on nu_i df: the single-test and the
        # Bonferroni quantile (common practice, no source).
        assert stats.t.ppf(0.975, e.df) <= row.critical_value <= stats.t.ppf(1 - 0.025 / m,
                                                                               e.df) + 1e-9
        assert row.p <= row.p_adjusted <= min(1.0, m * row.p) + 1e-12
    assert all(d.p_adjusted <= h.p_adjusted + 1e-12 for d, h in zip(down.rows, holm.rows))


@pytest.mark.parametrize("kind", ["HC0", "HC1", "HC2", "HC3"])
def test_hc_contrast_agrees_with_statsmodels(kind: str) -> None:
    data = random_layout(7, k=4)
    fit = _separate(data)
    levels = list(fit.design.groups.factor.levels)
    ref = smf.ols("y ~ C(g) - 1", data).fit(cov_type=kind, use_t=True)  # sandwich in statsmodels
    w = np.array([1.0, -0.5, -0.5, 0.0])
    test = ref.t_test(w)
    est = nc.cell_means(fit, variance=kind.lower()).estimate(
        f"{levels[0]} - mean({levels[1]}, {levels[2]})")
    assert est.std_error == pytest.approx(float(np.asarray(test.sd).ravel()[0]), rel=1e-9)
    assert est.t == pytest.approx(float(np.asarray(test.tvalue).ravel()[0]), rel=1e-9)
    assert est.p == pytest.approx(float(test.pvalue), rel=1e-7)
    assert est.df == fit.residual_df and est.variance == kind


def test_hc3_on_a_formula_fit_with_a_covariate() -> None:
    # Adjusted means of an ANCOVA fit, HC3 standard errors; reference: statsmodels' HC3
    # covariance applied to the same contrast of the coefficients.
    rng = np.random.default_rng(8)
    data = random_layout(8, k=3)
    data["x"] = rng.normal(size=len(data))
    data["y"] = data["y"] + 0.7 * data["x"]
    fit = nestfit.fit("y ~ C(g) + x", data)
    ref = smf.ols("y ~ C(g) + x", data).fit(cov_type="HC3", use_t=True)
    means = nc.cell_means(fit, "g", data, variance="HC3")
    est = means.estimate("L1 - L0")
    test = ref.t_test("C(g)[T.L1] = 0")
    assert est.estimate == pytest.approx(float(np.asarray(test.effect).ravel()[0]), rel=1e-9)
    assert est.std_error == pytest.approx(float(np.asarray(test.sd).ravel()[0]), rel=1e-9)
    assert est.p == pytest.approx(float(test.pvalue), rel=1e-7)
    result = means.family(nc.all_pairs()).adjust("max-t", rng=1)
    assert result.variance == "HC3" and "HC3" in str(result)
    assert result.critical_value == pytest.approx(result.rows[0].critical_value)


def test_sums_of_squares_orthogonality_and_nested_test_stay_pooled() -> None:
    data = random_layout(9, k=3)
    fit = _separate(data)
    pooled = nc.cell_means(fit).family(nc.trends())
    welch = nc.cell_means(fit, variance="welch").family(nc.trends())
    np.testing.assert_allclose(welch.orthogonality(), pooled.orthogonality(), rtol=1e-12)
    for a, b in zip(welch.estimates, pooled.estimates):
        assert a.ss == pytest.approx(b.ss, rel=1e-12)
        assert a.std_error != pytest.approx(b.std_error, rel=1e-6)
        assert a.nested_test().steps[0].f == pytest.approx(b.t ** 2, rel=1e-9)
    assert welch.joint_test().steps[0].f == pytest.approx(pooled.joint_test().steps[0].f)


def test_pooled_default_is_unchanged() -> None:
    data = random_layout(10, k=4)
    fit = _separate(data)
    a = nc.cell_means(fit).family(nc.all_pairs()).adjust("tukey")
    b = nc.cell_means(fit, variance="pooled").family(nc.all_pairs()).adjust("tukey")
    assert a.to_dict() == b.to_dict()
    assert a.variance == "pooled" and all(r.df == fit.residual_df for r in a.rows)
    assert all(r.critical_value == a.critical_value for r in a.rows)


def test_text_and_report_name_the_variance() -> None:
    data = random_layout(11, k=3)
    fit = _separate(data)
    result = nc.cell_means(fit, variance="welch").family(nc.all_pairs()).adjust("holm")
    text = str(result)
    assert "Welch-type" in text and "multiplier" in text and "Satterthwaite" in text
    assert result.to_dict()["critical_value"] is None
    assert len(result.to_dict()["critical_values"]) == len(result.rows)
    models = nestfit.groups(data, "y", "g")
    doc = nestfit.worked_report(nestfit.compare(models.equal_means(), models.separate_means()),
                                models=models, contrasts=result, figures=False)
    md = doc.to_markdown()
    assert "Welch-type" in md and "Satterthwaite" in md and "multiplier" in md


def test_bad_variance_choices() -> None:
    data = random_layout(12, k=3, low=3)
    fit = _separate(data)
    with pytest.raises(ContrastError, match="variance must be one of pooled, welch, HC0"):
        nc.cell_means(fit, variance="robust")
    with pytest.raises(ContrastError, match="levels share means"):
        nc.cell_means(nestfit.groups(data, "y", "g").blocks("L0 | L1 L2"), variance="welch")
    with pytest.raises(ContrastError, match=r"formula fit.*variance='HC3'"):
        nc.cell_means(nestfit.fit("y ~ C(g)", data), "g", data, variance="welch")
    weighted = nestfit.groups(data.assign(w=1.0 + np.arange(len(data)) % 3), "y", "g",
                              weights="w").separate_means()
    with pytest.raises(ContrastError, match="is weighted"):
        nc.cell_means(weighted, variance="welch")
    single = pd.concat([data, pd.DataFrame({"y": [1.0], "g": ["L9"]})], ignore_index=True)
    one = _separate(single)
    with pytest.raises(ContrastError, match="level 'L9' of 'g' has 1"):
        nc.cell_means(one, variance="welch")
    with pytest.raises(ContrastError, match=r"HC3 divides by 1 - leverage.*leverage 1"):
        nc.cell_means(one, variance="HC3")
    flat = pd.DataFrame({"y": [1.0, 1.0, 2.0, 2.0], "g": ["A", "A", "B", "B"]})
    with pytest.raises(ContrastError, match=r"no residual degrees|no error estimate"):
        nc.cell_means(_separate(flat), variance="welch")


def test_adjusted_means_of_a_large_formula_fit_build_no_n_by_n_matrix() -> None:
    # The null space for estimability comes from the n x p design through its triangular
    # QR factor; an SVD of the design with full matrices would allocate n x n (28.8 GB here).
    import tracemalloc

    rng = np.random.default_rng(13)
    n = 60_000
    data = pd.DataFrame({"g": rng.integers(0, 8, n).astype(str), "x": rng.normal(size=n)})
    data["y"] = rng.normal(size=n) + data["x"]
    fit = nestfit.fit("y ~ C(g) + x", data)
    design_bytes = n * fit.design.n_columns * 8
    tracemalloc.start()
    try:
        means = nc.cell_means(fit, "g", data, variance="HC3")
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 12 * design_bytes, peak / design_bytes
    assert means.estimate('"1" - "0"').df == fit.residual_df


@pytest.mark.parametrize("variance", ["welch", "HC3"])
def test_the_coding_of_the_separate_means_model_does_not_matter(variance: str) -> None:
    # A contrast of level means is the same function whatever the coding (common practice,
    # no source); its Welch-type or sandwich standard error and df must not move either.
    data = random_layout(14, k=4)
    models = nestfit.groups(data, "y", "g")
    rows = []
    for coding in ("indicator", "helmert", "reference", "deviation"):
        e = nc.cell_means(models.separate_means(coding), variance=variance).estimate(
            "L0 - mean(...)")
        rows.append((e.estimate, e.std_error, e.df))
    np.testing.assert_allclose(rows, [rows[0]] * len(rows), rtol=1e-12)


def test_welch_contrast_of_levels_without_spread_is_refused() -> None:
    fit = nestfit.groups(y=[1.0, 1, 1, 2, 2, 2, 3, 4, 5], factor=list("AAABBBCCC")).separate_means()
    means = nc.cell_means(fit, variance="welch")
    with pytest.raises(ContrastError, match="has zero variance in model 'separate means'"):
        means.estimate("A - B")
    with pytest.raises(ContrastError, match="levels in the contrast have no spread"):
        means.df_for(np.array([1.0, -1.0, 0.0]))
