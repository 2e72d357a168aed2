"""Properties of the three kinds: every row is a comparison the user can refit."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import nestfit
import nestfit.tables as tables
from tests.tables.helpers import rel, unbalanced

CODINGS = [  # patsy's codings and ours, each inside C(a, ...) and C(b, ...)
    "C(a)", "C(a, Treatment)", "C(a, Treatment(reference='A2'))", "C(a, Sum)", "C(a, Helmert)",
    "C(a, Reference(baseline='A3'))", "C(a, Deviation())", "C(a, Helmert())", "a",
    "C(a, Polynomial())",
]


@pytest.mark.parametrize("seed", range(3))
def test_each_last_rows_do_not_depend_on_the_coding(seed: int) -> None:
    data = unbalanced(seed, n=55, levels=(3, 4))
    reference = tables.factorial("y ~ C(a) * C(b)", data).table("each-last")
    for code in CODINGS:
        other = code.replace("a", "b", 1).replace("A2", "B2").replace("A3", "B3")
        if code == "a":
            other = "b"
        t = tables.factorial(f"y ~ {code} * {other}", data).table("each-last")
        assert t.coding == "sum-to-zero (deviation) for every factor"
        for r, s in zip(reference.rows, t.rows):
            assert r.df == s.df
            assert rel(s.ss, r.ss) < 1e-10, (code, s.term, s.ss, r.ss)
            assert rel(s.f, r.f) < 1e-10


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("formula", ["y ~ C(a) * C(b)", "y ~ C(b) * C(a)", "y ~ C(a) + C(b)",
                                     "y ~ C(a) * C(b) * C(c)"])
def test_sequential_rows_add_up_to_the_model_ss(seed: int, formula: str) -> None:
    data = unbalanced(seed, n=70, levels=(3, 2, 2))
    t = tables.factorial(formula, data).table("sequential")
    total = sum(r.ss for r in t.rows)
    fit = nestfit.fit(formula, data)
    assert rel(total, t.model_ss) < 1e-10
    assert rel(t.model_ss, fit.total_ss - fit.residual_ss) < 1e-10
    assert sum(r.df for r in t.rows) == fit.rank - 1


@pytest.mark.parametrize("replicates", [1, 2, 4])
def test_balanced_data_make_the_three_kinds_agree(replicates: int) -> None:
    rng = np.random.default_rng(replicates)
    cells = [(a, b) for a in ["p", "q", "r"] for b in ["u", "v", "w", "z"]] * (replicates + 1)
    data = pd.DataFrame(cells, columns=["a", "b"])
    data["y"] = rng.normal(size=len(data)) + (data["a"] == "q") * 0.5
    models = tables.factorial("y ~ C(a) * C(b)", data)
    assert models.cells.balanced
    t1, t2, t3 = (models.table(k) for k in tables.KINDS)
    for r1, r2, r3 in zip(t1.rows, t2.rows, t3.rows):
        assert r1.df == r2.df == r3.df
        assert rel(r2.ss, r1.ss) < 1e-10 and rel(r3.ss, r1.ss) < 1e-10


def test_unbalanced_data_make_the_kinds_differ() -> None:
    data = unbalanced(11, n=40)
    models = tables.factorial("y ~ C(a) * C(b)", data)
    assert not models.cells.balanced
    ss = [models.table(k).row("C(a)").ss for k in tables.KINDS]
    assert rel(ss[0], ss[1]) > 1e-6 and rel(ss[1], ss[2]) > 1e-6


@pytest.mark.parametrize("kind", tables.KINDS)
@pytest.mark.parametrize("formula", ["y ~ C(a) * C(b)", "y ~ C(a) * x", "y ~ x + C(a) + C(b)"])
def test_every_row_is_reproduced_by_compare_on_its_two_models(kind: str, formula: str) -> None:
    data = unbalanced(3, n=60, levels=(3, 2), covariate=True)
    models = tables.factorial(formula, data)
    t = models.table(kind)
    for r in t.rows:
        small, large = r.models()
        assert small.name == r.smaller_model and large.name == r.larger_model
        step = nestfit.compare(small, large).steps[0]
        assert step.df == r.df
        assert rel(step.ss, r.ss) < 1e-10
        # with the full model's residual as denominator, as in the table
        first = r.comparison().steps[0]
        assert (first.smaller, first.larger) == (r.smaller_model, r.larger_model)
        assert rel(first.ss, r.ss) < 1e-10
        assert rel(first.f, r.f) < 1e-10 and rel(first.p, r.p) < 1e-10
        assert first.denominator_df == t.residual_df


@pytest.mark.parametrize("kind", ["sequential", "marginal"])
def test_hierarchical_rows_are_the_formulas_refitted(kind: str) -> None:
    # Sequential and marginal models keep every term a kept term contains, so refitting
    # the named formula with nestfit.fit gives the same comparison whatever the coding.
    data = unbalanced(5, n=60)
    models = tables.factorial("y ~ C(a, Helmert()) * C(b)", data)
    t = models.table(kind)
    full = nestfit.fit("y ~ C(a, Helmert()) * C(b)", data)
    for r in t.rows:
        small = nestfit.fit(f"y ~ {r.smaller_model}", data)
        large = nestfit.fit(f"y ~ {r.larger_model}", data)
        chain = [small, large] + ([full] if large.rank < full.rank else [])
        step = nestfit.compare(*chain).steps[0]
        assert rel(step.ss, r.ss) < 1e-10 and rel(step.f, r.f) < 1e-10


def test_sequential_follows_the_formula_order() -> None:
    data = unbalanced(8, n=50, levels=(3, 2), covariate=True)
    t = tables.factorial("y ~ x + C(a)", data).table("sequential")
    assert [r.term for r in t.rows] == ["x", "C(a)"]
    assert t.row("C(a)").smaller_model == "1 + x"
    three = tables.factorial("y ~ C(a) * C(b) * C(c)", unbalanced(1, levels=(2, 2, 2)))
    assert [r.term for r in three.table("sequential").rows] == [
        "C(a)", "C(b)", "C(c)", "C(a):C(b)", "C(a):C(c)", "C(b):C(c)", "C(a):C(b):C(c)"]


def test_marginal_models_respect_marginality() -> None:
    data = unbalanced(2, n=70, levels=(2, 3, 2))
    t = tables.factorial("y ~ C(a) * C(b) * C(c)", data).table("marginal")
    assert t.row("C(a)").smaller_model == "1 + C(b) + C(c) + C(b):C(c)"
    assert t.row("C(a):C(b)").smaller_model == "1 + C(a) + C(b) + C(c) + C(a):C(c) + C(b):C(c)"
    assert t.row("C(a):C(b):C(c)").larger_model == t.full_model


@settings(max_examples=10, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), shift=st.floats(-1e3, 1e3), scale=st.floats(0.1, 10.0))
def test_tables_are_invariant_to_the_units_of_the_response(seed: int, shift: float,
                                                           scale: float) -> None:
    data = unbalanced(seed, n=40, levels=(2, 3))
    moved = data.assign(y=shift + scale * data["y"])
    for kind in tables.KINDS:
        a = tables.factorial("y ~ C(a) * C(b)", data).table(kind)
        b = tables.factorial("y ~ C(a) * C(b)", moved).table(kind)
        for r, s in zip(a.rows, b.rows):
            assert s.df == r.df
            assert rel(s.ss, scale**2 * r.ss) < 1e-8
            assert rel(s.f, r.f) < 1e-7


def test_table_conversion() -> None:
    data = unbalanced(4, n=40)
    t = tables.factorial("y ~ C(a) * C(b)", data).table("marginal")
    d = t.to_dict()
    assert d["kind"] == "marginal"
    assert set(d["rows"][0]) >= {"term", "smaller_model", "larger_model", "df", "ss",
                                 "mean_square", "f", "p"}
    assert d["residual"] == {"df": t.residual_df, "ss": t.residual_ss}
    frame = t.to_frame()
    assert list(frame.index) == [r.term for r in t.rows]
    assert frame.loc["C(a)", "ss"] == t.row("C(a)").ss
    text = str(t)
    assert "1 + C(a) + C(b) + C(a):C(b)" in text and "independent, normally distributed" in text
    assert "qualified statistician" in " ".join(text.split())
    with pytest.raises(KeyError, match="no row for term"):
        t.row("C(z)")
