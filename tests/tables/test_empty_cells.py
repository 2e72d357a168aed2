"""Designs with empty cells: detected, named, and handled (what stays estimable)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

import nestfit
import nestfit.tables as tables
from nestfit.errors import ContrastError, RankDeficiencyWarning
from tests.tables.helpers import rel


def with_empty(seed: int, empty: set[tuple[str, str]], reps: int = 3) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    rows = [(a, b) for a in "123" for b in "123" for _ in range(reps + (a == b))
            if (a, b) not in empty]
    data = pd.DataFrame(rows, columns=["a", "b"])
    data["y"] = rng.normal(size=len(data)) + data["a"].astype(int) * 0.4
    return data


@pytest.fixture
def one_empty() -> tables.FactorialModels:
    return tables.factorial("y ~ C(a) * C(b)", with_empty(1, {("2", "3")}))


def test_empty_cells_are_named(one_empty: tables.FactorialModels) -> None:
    cells = one_empty.cells
    assert cells.empty == ("a=2, b=3",)
    assert cells.aliased == one_empty.full.aliased == ("C(a)[T.2]:C(b)[T.3]",)
    assert ("C(a):C(b)", 4, 3) in cells.term_df
    assert ("C(a)", 2, 2) in cells.term_df
    assert not cells.balanced
    text = " ".join(str(cells).split())
    assert "Empty cells (no observations): a=2, b=3." in text
    assert "C(a):C(b) on 3 of 4 df" in text
    for kind in tables.KINDS:
        t = one_empty.table(kind)
        assert t.empty_cells == ("a=2, b=3",)
        flat = " ".join(str(t).split())
        assert "a=2, b=3" in flat and "C(a)[T.2]:C(b)[T.3]" in flat
        assert t.row("C(a):C(b)").df == 3
        assert "tested on 3 of its 4 columns" in t.row("C(a):C(b)").note


def test_each_last_rows_with_empty_cells_carry_a_caution(one_empty: tables.FactorialModels
                                                         ) -> None:
    t = one_empty.table("each-last")
    for term in ("C(a)", "C(b)"):
        assert "does not test equal unweighted marginal means" in t.row(term).note
    assert "depends on the sum-to-zero coding" not in one_empty.table("marginal").row("C(a)").note


@pytest.mark.filterwarnings("ignore:The design matrix is rank-deficient")
def test_sequential_and_marginal_with_empty_cells_match_statsmodels(
        one_empty: tables.FactorialModels) -> None:
    # statsmodels' typ=1 uses one QR of the (rank-deficient) design: fine for the main
    # effects. Its typ=2 uses Wald tests on the full model's covariance, which breaks under
    # aliasing, so the marginal rows are checked against anova_lm of the two ols models.
    data = with_empty(1, {("2", "3")})
    res = smf.ols("y ~ C(a) * C(b)", data).fit()
    ref = anova_lm(res, typ=1)
    seq = one_empty.table("sequential")
    for r in seq.rows[:2]:
        assert rel(r.ss, ref.loc[r.term, "sum_sq"]) < 1e-10
    assert rel(seq.residual_ss, res.ssr) < 1e-10 and seq.residual_df == int(res.df_resid)
    for r in one_empty.table("marginal").rows:
        pair = anova_lm(smf.ols(f"y ~ {r.smaller_model}", data).fit(),
                        smf.ols(f"y ~ {r.larger_model}", data).fit())
        assert r.df == int(pair["df_diff"].iloc[1])
        assert rel(r.ss, pair["ss_diff"].iloc[1]) < 1e-10


def test_models_of_rows_name_their_aliased_columns(one_empty: tables.FactorialModels) -> None:
    row = one_empty.table("marginal").row("C(a):C(b)")
    with pytest.warns(RankDeficiencyWarning, match=r"C\(a\)\[T.2\]:C\(b\)\[T.3\]"):
        small, large = row.models()
    assert large.aliased == ("C(a)[T.2]:C(b)[T.3]",)
    assert nestfit.compare(small, large).steps[0].df == 3


def test_non_estimable_means_are_marked_and_contrasts_refused(
        one_empty: tables.FactorialModels) -> None:
    cells = one_empty.cell_means()
    i = cells.labels.index("a=2, b=3")
    assert not cells.estimable[i] and np.isnan(cells.estimates[i])
    assert cells.estimable.sum() == 8
    assert "a=2, b=3: needs empty cell(s) a=2, b=3" in " ".join(str(cells).split())
    with pytest.raises(ContrastError, match=r"not estimable.*cell\(s\) with no observations: "
                                            r"a=2, b=3"):
        cells.contrast({"a=2, b=3": 1, "a=1, b=3": -1})
    with pytest.raises(ContrastError, match="a=2, b=3"):
        cells.interaction_contrast({"a": [1, -1, 0], "b": [0, 1, -1]})
    ok = cells.interaction_contrast({"a": [1, -1, 0], "b": [1, -1, 0]})
    assert np.isfinite(ok.estimate)
    equal = one_empty.marginal_means("a")
    assert list(equal.estimable) == [True, False, True]
    with pytest.raises(ContrastError, match="a=2, b=3"):
        equal.contrast({"1": 1, "2": -1})
    assert np.isfinite(equal.contrast({"1": 1, "3": -1}).estimate)
    # count-proportional weights leave the empty cell out, so level 2 has a mean
    prop = one_empty.marginal_means("a", weights="proportional")
    assert prop.estimable.all()
    assert np.isfinite(prop.contrast({"1": 1, "2": -1}).estimate)


def test_additive_model_predicts_empty_cells() -> None:
    data = with_empty(2, {("2", "3")})
    means = tables.factorial("y ~ C(a) + C(b)", data).cell_means()
    i = means.labels.index("a=2, b=3")
    assert means.estimable[i] and means.counts[i] == 0
    res = smf.ols("y ~ C(a) + C(b)", data).fit()
    pred = res.get_prediction(pd.DataFrame({"a": ["2"], "b": ["3"]})).summary_frame()
    assert rel(means.estimates[i], float(pred["mean"].iloc[0])) < 1e-10
    assert rel(means.std_errors[i], float(pred["mean_se"].iloc[0])) < 1e-10
    assert tables.factorial("y ~ C(a) + C(b)", data).cells.empty == ()


def test_confounded_design_rows_that_cannot_be_tested() -> None:
    # Only the diagonal cells: b is the same factor as a, and there is no interaction left.
    rng = np.random.default_rng(5)
    data = pd.DataFrame({"a": list("112233"), "b": list("112233")})
    data["y"] = rng.normal(size=6)
    models = tables.factorial("y ~ C(a) * C(b)", data)
    assert len(models.cells.empty) == 6
    seq = models.table("sequential")
    assert seq.row("C(b)").df == 0 and np.isnan(seq.row("C(b)").f)
    assert "not testable" in seq.row("C(b)").note
    assert seq.row("C(a):C(b)").df == 0
    assert seq.to_dict()["rows"][1]["f"] is None
