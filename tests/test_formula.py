"""nestfit.fit: formulas through the patsy bridge, codings inside formulas, bad input."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf

import nestfit
from nestfit.errors import ColumnError, DataError, ModelError


@pytest.fixture
def data() -> pd.DataFrame:
    rng = np.random.default_rng(7)
    n = 40
    a = rng.choice(["a1", "a2", "a3"], n)
    b = rng.choice(["b1", "b2"], n)
    x = rng.normal(size=n)
    y = 2 + (a == "a2") * 1.0 - (b == "b2") * 0.5 + 0.3 * x + rng.normal(0, 0.4, n)
    return pd.DataFrame({"y": y, "a": a, "b": b, "x": x})


@pytest.mark.parametrize("formula", ["y ~ C(a)", "y ~ C(a) + x", "y ~ C(a) * C(b)",
                                     "y ~ C(a, Sum) + C(b) + x", "np.log(y + 10) ~ C(a) + x"])
def test_against_statsmodels_ols(data: pd.DataFrame, formula: str) -> None:
    ours = nestfit.fit(formula, data)
    ref = smf.ols(formula, data).fit()  # statsmodels OLS as reference implementation
    assert ours.design.column_names == tuple(ref.params.index)
    np.testing.assert_allclose(ours.coefficients, ref.params, rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(ours.std_errors, ref.bse, rtol=1e-9)
    np.testing.assert_allclose(ours.residual_ss, ref.ssr, rtol=1e-10)
    np.testing.assert_allclose(ours.r_squared, ref.rsquared, rtol=1e-10)
    np.testing.assert_allclose(ours.adj_r_squared, ref.rsquared_adj, rtol=1e-10)
    np.testing.assert_allclose(ours.fitted, ref.fittedvalues, rtol=1e-10)
    np.testing.assert_allclose(ours.leverages, ref.get_influence().hat_matrix_diag, rtol=1e-9)
    np.testing.assert_allclose(ours.p_values(), ref.pvalues, rtol=1e-8, atol=1e-300)
    ci = ours.conf_int(0.9)
    np.testing.assert_allclose(ci.to_numpy(), ref.conf_int(0.1).to_numpy(), rtol=1e-9)


def test_weights_column_matches_statsmodels_wls(data: pd.DataFrame) -> None:
    data = data.assign(w=np.linspace(0.5, 2.0, len(data)))
    ours = nestfit.fit("y ~ C(a) + x", data, weights="w")
    ref = smf.wls("y ~ C(a) + x", data, weights=data["w"]).fit()
    np.testing.assert_allclose(ours.coefficients, ref.params, rtol=1e-10)
    np.testing.assert_allclose(ours.std_errors, ref.bse, rtol=1e-9)


def test_term_metadata(data: pd.DataFrame) -> None:
    f = nestfit.fit("y ~ C(a) * C(b)", data)
    terms = [c.term for c in f.design.columns]
    assert terms[0] == "Intercept" and "C(a):C(b)" in terms
    col = f.design.columns[1]
    assert (col.name, col.term, col.label) == ("C(a)[T.a2]", "C(a)", "T.a2")


def test_our_codings_and_blocks_inside_formulas(data: pd.DataFrame) -> None:
    helm = nestfit.fit("y ~ C(a, Helmert())", data)
    treat = nestfit.fit("y ~ C(a)", data)
    np.testing.assert_allclose(helm.residual_ss, treat.residual_ss, rtol=1e-12)
    assert helm.design.column_names[1] == "C(a, Helmert())[a2-a1]"
    blocks = nestfit.fit('y ~ C(a, Blocks("a2 | ..."))', data)
    two = nestfit.groups(data, "y", "a").blocks("a2 | ...")
    np.testing.assert_allclose(blocks.residual_ss, two.residual_ss, rtol=1e-12)


def test_missing_values_dropped_and_reported(data: pd.DataFrame) -> None:
    data = data.copy()
    data.loc[[0, 3], "y"] = np.nan
    data.loc[[3, 5], "a"] = None
    f = nestfit.fit("y ~ C(a)", data)
    assert f.n_obs == len(data) - 3
    assert f.missing.n_dropped == 3 and f.missing.by_column == {"y": 2, "a": 2}
    assert "3 of 40 rows dropped" in str(f.missing)
    with pytest.raises(DataError, match=r"missing values in column\(s\) y \(2\), a \(2\)"):
        nestfit.fit("y ~ C(a)", data, missing="raise")


def test_rank_deficiency_is_reported_by_name(data: pd.DataFrame) -> None:
    data = data.assign(x2=2 * data["x"])
    with pytest.warns(nestfit.errors.RankDeficiencyWarning, match="column\\(s\\) 'x2' are"):
        f = nestfit.fit("y ~ x + x2", data)
    with pytest.raises(nestfit.errors.RankDeficientError, match="'x \\+ x2' is rank deficient"):
        nestfit.fit("y ~ x + x2", data, aliased="raise")
    assert f.aliased == ("x2",)
    assert np.isnan(f.coefficients[2]) and f.rank == 2
    ref = smf.ols("y ~ x", data).fit()
    np.testing.assert_allclose(f.residual_ss, ref.ssr, rtol=1e-10)


@pytest.mark.parametrize(
    ("formula", "error", "match"),
    [
        ("C(a)", ModelError, "two-sided"),
        ("z ~ C(a)", ColumnError, "'z' in formula 'z ~ C\\(a\\)' is not a column"),
        ("y ~ C(q)", ColumnError, "names something unknown"),
        ("y ~ C(a) +", ModelError, "could not be built"),
        ("a ~ x", ColumnError, "column 'a' must be numeric"),
        ("y ~ 0", ModelError, "no columns"),
    ],
)
def test_bad_formulas(data: pd.DataFrame, formula: str, error: type, match: str) -> None:
    with pytest.raises(error, match=match):
        nestfit.fit(formula, data)


def test_infinite_values_named(data: pd.DataFrame) -> None:
    bad = data.copy()
    bad.loc[2, "x"] = np.inf
    with pytest.raises(DataError, match="design column 'x' has NaN or infinite"):
        nestfit.fit("y ~ x", bad)
    bad = data.copy()
    bad.loc[2, "y"] = -np.inf
    with pytest.raises(DataError, match="column 'y' has an infinite value"):
        nestfit.fit("y ~ x", bad)


def test_bad_weights(data: pd.DataFrame) -> None:
    with pytest.raises(DataError, match="one value per row"):
        nestfit.fit("y ~ x", data, weights=[1.0, 2.0])
    with pytest.raises(DataError, match="zero or negative"):
        nestfit.fit("y ~ x", data.assign(w=0.0), weights="w")


def test_fit_is_immutable_and_prints(data: pd.DataFrame) -> None:
    f = nestfit.fit("y ~ C(a) + x", data)
    with pytest.raises(AttributeError):
        f.rank = 3  # type: ignore[misc]
    with pytest.raises(ValueError):
        f.coefficients[0] = 0.0
    text = str(f)
    assert "C(a)[T.a2]" in text and "residual df 36" in text
    d = f.to_dict()
    assert d["coefficients"][0]["name"] == "Intercept" and d["rank"] == 4


def test_bad_aliased_option(data: pd.DataFrame) -> None:
    message = re.escape("aliased must be 'warn' or 'raise'. Got 'ignore'")
    with pytest.raises(DataError, match=message):
        nestfit.fit("y ~ x", data, aliased="ignore")
