"""The model set: term structure, sub-models by name, conversions of the results."""

from __future__ import annotations

import json

import numpy as np
import pytest

import nestfit
import nestfit.tables as tables
from tests.tables.helpers import rel, unbalanced


@pytest.fixture
def models() -> tables.FactorialModels:
    return tables.factorial("y ~ C(a) * C(b) + x", unbalanced(3, n=50, levels=(3, 2),
                                                               covariate=True))


def test_term_structure(models: tables.FactorialModels) -> None:
    terms = models.terms
    assert models.model_terms == ("C(a)", "C(b)", "x", "C(a):C(b)")
    assert terms.term("C(a):C(b)").factors == frozenset({"C(a)", "C(b)"})
    assert terms.term("C(a):C(b)").contains(terms.term("C(a)"))
    assert not terms.term("C(a)").contains(terms.term("C(a)"))
    assert [f.name for f in terms.categorical] == ["a", "b"]
    assert [f.name for f in terms.numeric] == ["x"]
    assert terms.factor("C(a)").level_labels == ("A1", "A2", "A3")
    assert models.name == "1 + C(a) + C(b) + x + C(a):C(b)"
    text = str(models)
    assert "C(a):C(b): a (categorical), b (categorical); 2 column(s)" in text
    assert "a x b" in text


def test_sub_models_by_name(models: tables.FactorialModels, ) -> None:
    f = models.fit_terms(["C(a)", "x"])
    assert f.name == "1 + C(a) + x"
    ref = nestfit.fit("y ~ C(a) + x", models.frame.assign(y=models.y))
    assert rel(f.residual_ss, ref.residual_ss) < 1e-12 and f.rank == ref.rank
    d = models.design_of(["C(b)", "C(a):C(b)"], sum_to_zero=True)
    assert d.name == "1 + C(b) + C(a):C(b) [sum-to-zero]"
    assert [c.term for c in d.columns] == ["Intercept", "C(b)", "C(a):C(b)", "C(a):C(b)"]
    assert models.sum_to_zero_design.n_columns == models.design.n_columns
    with pytest.raises(nestfit.errors.ModelError, match="no term 'C\\(z\\)'"):
        models.fit_terms(["C(z)"])


def test_results_convert_to_plain_data(models: tables.FactorialModels) -> None:
    cells = models.cells
    assert cells.to_dict()["crossings"][0]["factors"] == ["a", "b"]
    assert cells.to_frame()["count"].sum() == models.n_obs
    means = models.marginal_means("b", weights="proportional")
    c = means.contrast([1, -1], label="B1 vs B2")
    d = c.to_dict()
    assert d["label"] == "B1 vs B2" and d["weights"] == {"b=B1": 1.0, "b=B2": -1.0}
    assert c.to_frame().loc["B1 vs B2", "estimate"] == c.estimate
    assert "Holm" in str(c)
    for obj in (models.table("each-last").to_dict(), means.to_dict(), cells.to_dict(), d):
        json.dumps(obj, allow_nan=False)
    assert "covariates at x =" in str(means) and "Adjusted means of b" in str(means)
    assert means.at["x"] == pytest.approx(float(np.mean(models.frame["x"])), rel=1e-14)
