"""Cell and marginal means, their covariance and contrasts, against statsmodels and by hand.

References: statsmodels OLS get_prediction (mean and its standard error at given rows) and
t_test (a linear function of the coefficients), reference implementations; the sample
cell means (common practice, no source).
"""

from __future__ import annotations

import itertools

import numpy as np
import pandas as pd
import patsy
import pytest
import statsmodels.formula.api as smf

import nestfit.tables as tables
from tests.tables.helpers import rel, unbalanced


def sm_rows(result, grid: pd.DataFrame) -> np.ndarray:
    info = result.model.data.model_spec  # statsmodels 0.15 keeps the patsy DesignInfo here
    return np.asarray(patsy.build_design_matrices([info], grid)[0])


@pytest.mark.parametrize("seed", range(4))
def test_cell_means_of_the_full_model_are_the_sample_cell_means(seed: int) -> None:
    data = unbalanced(seed, n=50, levels=(3, 2))
    models = tables.factorial("y ~ C(a) * C(b)", data)
    means = models.cell_means()
    sample = data.groupby(["a", "b"])["y"].agg(["mean", "count"])
    sigma2 = models.full.mean_square
    for (a, b), row in sample.iterrows():
        i = means.labels.index(f"a={a}, b={b}")
        assert rel(means.estimates[i], row["mean"]) < 1e-12
        assert means.counts[i] == row["count"]
        assert rel(means.std_errors[i], np.sqrt(sigma2 / row["count"])) < 1e-10
    assert means.levels[0] == ("A1", "B1") and means.factors == ("a", "b")


@pytest.mark.parametrize("seed", range(3))
@pytest.mark.parametrize("formula", ["y ~ C(a) * C(b)", "y ~ C(a) + C(b)"])
def test_cell_means_and_covariance_match_statsmodels_predictions(seed: int, formula: str) -> None:
    data = unbalanced(seed, n=45, levels=(3, 3))
    means = tables.factorial(formula, data).cell_means()
    res = smf.ols(formula, data).fit()
    grid = pd.DataFrame([lv for lv in means.levels], columns=["a", "b"])
    pred = res.get_prediction(grid).summary_frame()
    np.testing.assert_allclose(means.estimates, pred["mean"], rtol=1e-10)
    np.testing.assert_allclose(means.std_errors, pred["mean_se"], rtol=1e-10)
    X = sm_rows(res, grid)
    np.testing.assert_allclose(means.covariance, X @ res.cov_params().to_numpy() @ X.T,
                               rtol=1e-9, atol=1e-14)
    np.testing.assert_allclose(means.coefficient_map, X, atol=1e-15)


@pytest.mark.parametrize("seed", range(3))
def test_marginal_means_with_both_weightings(seed: int) -> None:
    data = unbalanced(seed, n=60, levels=(3, 4))
    models = tables.factorial("y ~ C(a) * C(b)", data)
    res = smf.ols("y ~ C(a) * C(b)", data).fit()
    cells = data.groupby(["a", "b"])["y"].agg(["mean", "count"])
    equal = models.marginal_means("a")
    prop = models.marginal_means("a", weights="proportional")
    for i, (level,) in enumerate(equal.levels):
        sub = cells.loc[level]
        # equal weights: the unweighted average of the cell means over b
        assert rel(equal.estimates[i], sub["mean"].mean()) < 1e-12
        # proportional: in the full model, the raw mean of the level
        assert rel(prop.estimates[i], data.loc[data["a"] == level, "y"].mean()) < 1e-12
        grid = pd.DataFrame({"a": level, "b": list(sub.index)})
        X = sm_rows(res, grid)
        for means, w in [(equal, np.full(len(sub), 1 / len(sub))),
                         (prop, sub["count"].to_numpy() / sub["count"].sum())]:
            t = res.t_test(w @ X)
            assert rel(means.estimates[i], float(t.effect[0])) < 1e-10
            assert rel(means.std_errors[i], float(t.sd[0, 0])) < 1e-10
    assert equal.weighting == "equal" and prop.weighting == "proportional"
    assert equal.averaged_over == ("b",)
    np.testing.assert_allclose(equal.cell_weights.sum(axis=1), 1.0)


def test_marginal_means_over_two_of_three_factors() -> None:
    data = unbalanced(9, n=80, levels=(2, 3, 2))
    models = tables.factorial("y ~ C(a) * C(b) * C(c)", data)
    ab = models.marginal_means(["a", "b"])
    cell = models.cell_means()
    for i, (a, b) in enumerate(ab.levels):
        rows = [j for j, lv in enumerate(cell.levels) if lv[:2] == (a, b)]
        assert rel(ab.estimates[i], cell.estimates[rows].mean()) < 1e-12
    # the same factor by code or by column name
    by_code = models.marginal_means("C(a)")
    np.testing.assert_array_equal(by_code.estimates, models.marginal_means("a").estimates)


@pytest.mark.parametrize("seed", range(3))
def test_contrasts_of_means_match_statsmodels_t_test(seed: int) -> None:
    data = unbalanced(seed, n=60, levels=(3, 2))
    models = tables.factorial("y ~ C(a) * C(b)", data)
    res = smf.ols("y ~ C(a) * C(b)", data).fit()
    means = models.marginal_means("a")
    c = means.contrast({"A1": 1, "A3": -1}, level=0.9)
    t = res.t_test(means.coefficient_weights({"A1": 1, "A3": -1}))
    assert rel(c.estimate, float(t.effect[0])) < 1e-10
    assert rel(c.std_error, float(t.sd[0, 0])) < 1e-10
    assert rel(c.t, float(t.tvalue[0, 0])) < 1e-10
    assert rel(c.p, float(t.pvalue)) < 1e-10
    lo, hi = t.conf_int(alpha=0.1)[0]
    assert rel(c.lower, lo) < 1e-10 and rel(c.upper, hi) < 1e-10
    assert c.df == int(res.df_resid)
    # the contrast of the estimates, with the covariance of the means
    w = means.weights_vector({"a=A1": 1, "a=A3": -1})
    assert rel(c.estimate, float(w @ means.estimates)) < 1e-12
    assert rel(c.std_error, float(np.sqrt(w @ means.covariance @ w))) < 1e-10


@pytest.mark.parametrize("seed", range(3))
def test_interaction_contrast_is_a_contrast_of_contrasts(seed: int) -> None:
    data = unbalanced(seed, n=70, levels=(3, 3))
    models = tables.factorial("y ~ C(a) * C(b)", data)
    cells = models.cell_means()
    ic = cells.interaction_contrast({"a": {"A1": 1, "A2": -1}, "b": {"B1": 1, "B2": -1}})
    mu = {lab: e for lab, e in zip(cells.labels, cells.estimates)}
    by_hand = ((mu["a=A1, b=B1"] - mu["a=A2, b=B1"]) - (mu["a=A1, b=B2"] - mu["a=A2, b=B2"]))
    assert rel(ic.estimate, by_hand) < 1e-10
    res = smf.ols("y ~ C(a) * C(b)", data).fit()
    t = res.t_test(ic.coefficient_weights)
    assert rel(ic.std_error, float(t.sd[0, 0])) < 1e-10
    assert ic.label == "(a=A1 - a=A2) x (b=B1 - b=B2)"
    # a list of weights in level order is the same contrast
    same = cells.interaction_contrast({"a": [1, -1, 0], "b": [1, -1, 0]})
    assert same.estimate == ic.estimate
    # in the additive model every interaction contrast is zero
    add = tables.factorial("y ~ C(a) + C(b)", data).cell_means()
    zero = add.interaction_contrast({"a": [1, -1, 0], "b": [0, 1, -1]})
    assert abs(zero.estimate) < 1e-12


def test_means_carry_what_an_interaction_plot_needs() -> None:
    data = unbalanced(2, n=40, levels=(2, 3))
    means = tables.factorial("y ~ C(a) * C(b)", data).cell_means()
    frame = means.to_frame()
    assert list(frame.columns[:2]) == ["a", "b"]
    assert set(frame["a"]) == {"A1", "A2"} and set(frame["b"]) == {"B1", "B2", "B3"}
    ci = means.conf_int(0.9)
    assert (ci["lower"] < means.estimates).all() and (ci["upper"] > means.estimates).all()
    d = means.to_dict()
    assert d["means"][0]["levels"] == ["A1", "B1"] and d["df"] == means.df
    assert list(itertools.chain(*means.levels))[:2] == ["A1", "B1"]
    assert "one at a time" in " ".join(str(means).split())
