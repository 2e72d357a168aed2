"""Bad requests get one clear nestfit error naming what is wrong."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import nestfit.tables as tables
from nestfit.errors import (
    ColumnError,
    ContrastError,
    DataError,
    FactorError,
    ModelError,
    ZeroResidualDfWarning,
)
from tests.tables.helpers import unbalanced


@pytest.fixture
def data() -> pd.DataFrame:
    return unbalanced(0, n=48, levels=(3, 2), covariate=True)


@pytest.fixture
def models(data: pd.DataFrame) -> tables.FactorialModels:
    return tables.factorial("y ~ C(a) * C(b)", data)


def test_formula_problems(data: pd.DataFrame) -> None:
    with pytest.raises(ModelError, match="no intercept"):
        tables.factorial("y ~ 0 + C(a) + C(b)", data)
    with pytest.raises(ModelError, match="no intercept"):
        tables.factorial("y ~ C(a) - 1", data)
    with pytest.raises(ModelError, match="no term besides the intercept"):
        tables.factorial("y ~ 1", data)
    with pytest.raises(ColumnError, match="'q'"):
        tables.factorial("y ~ C(q)", data)
    with pytest.raises(ModelError, match="two-sided"):
        tables.factorial("C(a) + C(b)", data)


def test_unknown_kind(models: tables.FactorialModels) -> None:
    with pytest.raises(ModelError, match="kind must be one of sequential, marginal, each-last"):
        models.table("type III")


@pytest.mark.parametrize("coding", ['Blocks("A1 | A2 A3")', "Polynomial(degree=1)"])
def test_each_last_refuses_codings_that_restrict_the_means(data: pd.DataFrame,
                                                          coding: str) -> None:
    m = tables.factorial(f"y ~ C(a, {coding}) * C(b)", data)
    assert m.table("marginal").rows  # the other kinds stay available
    with pytest.raises(ModelError, match=r"restricts the means.*'sequential' or 'marginal'"):
        m.table("each-last")


def test_means_requests(models: tables.FactorialModels, data: pd.DataFrame) -> None:
    with pytest.raises(FactorError, match="no factor 'z'; its factors are: a, b"):
        models.marginal_means("z")
    with pytest.raises(FactorError, match="named twice"):
        models.marginal_means(["a", "C(a)"])
    with pytest.raises(FactorError, match="at least one factor"):
        models.marginal_means([])
    with pytest.raises(DataError, match="weights must be 'equal' or 'proportional'"):
        models.marginal_means("a", weights="counts")
    with pytest.raises(ColumnError, match="not a covariate"):
        models.cell_means(at={"x": 1.0})
    ancova = tables.factorial("y ~ C(a) + x", data)
    with pytest.raises(FactorError, match="'x' is a covariate, not a factor"):
        ancova.marginal_means("x")
    with pytest.raises(DataError, match="not finite"):
        ancova.marginal_means("a", at={"x": np.inf})
    with pytest.raises(DataError, match="must be a number"):
        ancova.marginal_means("a", at={"x": "high"})
    with pytest.raises(ModelError, match="no categorical factor"):
        tables.factorial("y ~ x", data).cell_means()
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        models.cell_means().conf_int(1.5)


def test_factor_from_an_expression_has_no_cells(data: pd.DataFrame) -> None:
    m = tables.factorial("y ~ C(a + b)", data)
    assert m.table("sequential").rows
    with pytest.raises(ModelError, match="built from an expression"):
        m.cell_means()


def test_contrast_weights(models: tables.FactorialModels) -> None:
    means = models.marginal_means("a")
    with pytest.raises(ContrastError, match="no mean labelled 'A9'"):
        means.contrast({"A9": 1, "A1": -1})
    with pytest.raises(ContrastError, match="2 contrast weights given for 3 means"):
        means.contrast([1, -1])
    with pytest.raises(ContrastError, match="all zero"):
        means.contrast([0, 0, 0])
    with pytest.raises(ContrastError, match="not finite"):
        means.contrast([1, np.nan, 0])
    with pytest.raises(ContrastError, match="not a number"):
        means.contrast({"A1": "one"})
    with pytest.raises(ContrastError, match="not the text"):
        means.contrast("A1 - A2")
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        means.contrast([1, -1, 0], level=0)
    with pytest.raises(ContrastError, match="needs means over two or more factors"):
        means.interaction_contrast({"a": [1, -1, 0]})


def test_interaction_contrast_spec(models: tables.FactorialModels) -> None:
    cells = models.cell_means()
    with pytest.raises(ContrastError, match="missing: b"):
        cells.interaction_contrast({"a": [1, -1, 0]})
    with pytest.raises(ContrastError, match="no factor 'c'"):
        cells.interaction_contrast({"a": [1, -1, 0], "b": [1, -1], "c": [1, -1]})
    with pytest.raises(ContrastError, match="sum to 1, not 0"):
        cells.interaction_contrast({"a": [1, 0, 0], "b": [1, -1]})
    with pytest.raises(ContrastError, match="3 weights given for the 2 levels of 'b'"):
        cells.interaction_contrast({"a": [1, -1, 0], "b": [1, -1, 0]})
    with pytest.raises(ContrastError, match="no level 'B7'"):
        cells.interaction_contrast({"a": [1, -1, 0], "b": {"B7": 1, "B1": -1}})


def test_equal_slopes_requests(data: pd.DataFrame, models: tables.FactorialModels) -> None:
    with pytest.raises(ModelError, match="has no covariate"):
        models.equal_slopes()
    two = tables.factorial("y ~ C(a) + C(b) + x", data)
    with pytest.raises(ModelError, match="several factors"):
        two.equal_slopes()
    with pytest.raises(FactorError, match="no factor 'g'"):
        two.equal_slopes(factor="g")
    with pytest.raises(ModelError, match="already lets the slope"):
        tables.factorial("y ~ C(a) * x", data).equal_slopes()


def test_saturated_model_warns_and_has_no_tests() -> None:
    data = pd.DataFrame({"a": ["1", "1", "2", "2"], "b": ["u", "v", "u", "v"],
                         "y": [1.0, 2.0, 4.0, 3.5]})
    m = tables.factorial("y ~ C(a) * C(b)", data)
    with pytest.warns(ZeroResidualDfWarning, match="no residual degrees of freedom"):
        t = m.table("marginal")
    assert all(np.isnan(r.f) for r in t.rows)
