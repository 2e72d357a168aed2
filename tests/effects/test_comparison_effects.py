"""Effect sizes of comparison steps: hand computation on the NIST e-Handbook one-way table,
the interval's defining equations, and (slow) a coverage simulation."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit.effects import effect_sizes, noncentrality_interval_f
from nestfit.errors import DataError
from tests.checks.worked_examples import grouped_frame, load


@pytest.fixture
def resistors() -> nestfit.GroupModels:
    case = load("nist_handbook_oneway_resistors")
    return nestfit.groups(grouped_frame(case), "y", "g", levels=list(case["data"]["groups"]))


def test_point_values_on_the_published_anova_table(resistors: nestfit.GroupModels) -> None:
    # NIST/SEMATECH e-Handbook 7.4.3 (vendored nist_handbook_oneway_resistors.json):
    # SST(treatments) 27.897, SSE 17.452, SS total 45.349, MSE 1.454, df 2 and 12 as printed.
    # Hand formulas (Cohen 1988; Hays 1963; Kelley 1935) on the printed numbers; the printed
    # MSE has 4 digits, so agreement is to about 1e-4 relative.
    pub = load("nist_handbook_oneway_resistors")["published_results"]
    ss, sse, sst = (float(pub[k]) for k in ("ss_treatments", "ss_error", "ss_total_corrected"))
    mse, df = float(pub["ms_error"]), int(pub["df_treatments"])
    step = effect_sizes(resistors.oneway()).steps[0]
    hand = {
        "eta_squared": ss / sst,
        "partial_eta_squared": ss / (ss + sse),
        "omega_squared": (ss - df * mse) / (sst + mse),
        "epsilon_squared": (ss - df * mse) / sst,
        "cohens_f": math.sqrt(ss / sse),
    }
    for measure, value in hand.items():
        assert step[measure].estimate == pytest.approx(value, rel=2e-4), measure
    assert step.df == 2 and step.denominator_df == 12
    assert f"{step.f:.2f}" == pub["f"]


def test_point_values_exactly_from_the_data(resistors: nestfit.GroupModels) -> None:
    data = pd.DataFrame({"y": resistors.y, "g": np.asarray(resistors.levels)[
        resistors.factor.codes]})
    grand = data["y"].mean()
    within = ((data["y"] - data.groupby("g")["y"].transform("mean")) ** 2).sum()
    total = ((data["y"] - grand) ** 2).sum()
    between = total - within
    mse = within / 12
    step = effect_sizes(resistors.oneway()).steps[0]
    assert step["eta_squared"].estimate == pytest.approx(between / total, rel=1e-12)
    assert step["omega_squared"].estimate == pytest.approx((between - 2 * mse) / (total + mse),
                                                           rel=1e-12)
    assert step["epsilon_squared"].estimate == pytest.approx((between - 2 * mse) / total,
                                                             rel=1e-12)


def test_interval_solves_its_defining_equations(resistors: nestfit.GroupModels) -> None:
    comp = resistors.oneway()
    fx = effect_sizes(comp, level=0.9)
    step = fx.steps[0]
    f_obs = comp.steps[0].f
    lo, hi = step.noncentrality_lower, step.noncentrality_upper
    # Steiger (2004): P(F' <= F_obs; lambda_L) = 1 - a/2 and P(F' <= F_obs; lambda_U) = a/2.
    assert stats.ncf.cdf(f_obs, 2, 12, lo) == pytest.approx(0.95, abs=1e-9)
    assert stats.ncf.cdf(f_obs, 2, 12, hi) == pytest.approx(0.05, abs=1e-9)
    n = 15
    assert step["partial_eta_squared"].lower == pytest.approx(lo / (lo + n), rel=1e-12)
    assert step["cohens_f"].upper == pytest.approx(math.sqrt(hi / n), rel=1e-12)
    # A one-step comparison from equal means: eta, omega, epsilon share theta's interval.
    for m in ("eta_squared", "omega_squared", "epsilon_squared"):
        assert (step[m].lower, step[m].upper) == (step["partial_eta_squared"].lower,
                                                  step["partial_eta_squared"].upper)
    json.dumps(fx.to_dict(), allow_nan=False)
    assert fx.to_frame().shape == (5, 6) and "noncentral F" in str(fx)


def test_lower_limit_is_zero_when_f_is_small() -> None:
    lo, hi = noncentrality_interval_f(0.3, 3, 20, 0.95)
    assert lo == 0.0 and hi > 0
    assert stats.ncf.cdf(0.3, 3, 20, hi) == pytest.approx(0.025, abs=1e-9)
    lo, hi = noncentrality_interval_f(0.01, 3, 20, 0.95)
    assert (lo, hi) == (0.0, 0.0)  # F below its 2.5% point: both limits at zero
    assert noncentrality_interval_f(math.inf, 3, 20)[0] != noncentrality_interval_f(
        math.inf, 3, 20)[0]  # NaN for a non-finite F


def test_chain_reports_partial_intervals_only() -> None:
    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    fx = effect_sizes(models.chain("H4 | ..."))
    assert len(fx.steps) == 2
    for step in fx.steps:
        assert math.isnan(step["eta_squared"].lower) and math.isnan(step["omega_squared"].upper)
        assert math.isfinite(step["partial_eta_squared"].upper)
    comp = models.chain("H4 | ...")
    total = comp.fits[0].total_ss
    assert sum(s["eta_squared"].estimate for s in fx.steps) == pytest.approx(
        (total - comp.residual.residual_ss) / total, rel=1e-12)
    assert fx.to_dict()["steps"][0]["measures"]["eta_squared"]["lower"] is None


def test_bad_input(resistors: nestfit.GroupModels) -> None:
    with pytest.raises(DataError, match="takes a Comparison"):
        effect_sizes(resistors.separate_means())  # type: ignore[arg-type]
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        effect_sizes(resistors.oneway(), level=1.5)
    data = pd.DataFrame({"y": [1.0, 2.0, 4.0, 3.0, 5.0], "x": [1.0, 2.0, 3.0, 4.0, 5.0],
                         "z": [0.5, 0.1, 0.3, 0.9, 0.2]})
    no_const = nestfit.compare(nestfit.fit("y ~ 0 + x", data), nestfit.fit("y ~ 0 + x + z", data))
    with pytest.raises(DataError, match="does not contain the constant"):
        effect_sizes(no_const)
    with pytest.raises(DataError, match="degrees of freedom must be positive"):
        noncentrality_interval_f(2.0, 0, 10)
    with pytest.raises(DataError, match="cannot be negative"):
        noncentrality_interval_f(-1.0, 2, 10)


@pytest.mark.slow
def test_coverage_of_the_interval_for_theta() -> None:
    # 2000 seeded one-way layouts with known noncentrality; the 95% interval for
    # theta = lambda / (lambda + N) must cover it 95% of the time (exact method):
    # Monte Carlo standard error sqrt(.95 * .05 / 2000) = 0.0049; allow 3.5 of them.
    rng = np.random.default_rng(20260611)
    sizes = np.array([6, 8, 10, 7])
    mu = np.array([0.0, 0.4, 0.9, 0.2])
    codes = np.repeat(np.arange(4), sizes)
    n, k = sizes.sum(), 4
    mbar = (sizes * mu).sum() / n
    lam = (sizes * (mu - mbar) ** 2).sum()  # sigma = 1
    theta, f_true = lam / (lam + n), math.sqrt(lam / n)
    draws, covered, covered_f = 2000, 0, 0
    labels = np.array(list("abcd"))[codes]
    for i in range(draws):
        y = mu[codes] + rng.normal(size=n)
        means = np.bincount(codes, y) / sizes
        within = ((y - means[codes]) ** 2).sum()
        between = (sizes * (means - y.mean()) ** 2).sum()
        f_obs = (between / (k - 1)) / (within / (n - k))
        lo, hi = noncentrality_interval_f(f_obs, k - 1, n - k)
        covered += lo / (lo + n) <= theta <= hi / (hi + n)
        covered_f += math.sqrt(lo / n) <= f_true <= math.sqrt(hi / n)
        if i < 5:  # the public path gives the same limits
            step = effect_sizes(nestfit.groups(y=y, factor=labels).oneway()).steps[0]
            assert step["partial_eta_squared"].lower == pytest.approx(lo / (lo + n), abs=1e-10)
            assert step["partial_eta_squared"].upper == pytest.approx(hi / (hi + n), rel=1e-9)
    assert abs(covered / draws - 0.95) < 3.5 * math.sqrt(0.95 * 0.05 / draws)
    assert covered_f == covered
