"""The three kinds of table against statsmodels' anova_lm (reference implementation).

statsmodels.stats.anova.anova_lm with typ=1, 2 and 3 on ols fits of the same formula; for
typ=3 with sum-to-zero coding, C(a, Sum), as its documentation requires for the usual
type III hypotheses. Tolerance 1e-10 relative on SS, F and p (p compared where > 1e-300).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.formula.api as smf
from statsmodels.stats.anova import anova_lm

import nestfit.tables as tables
from tests.tables.helpers import rel, unbalanced

KIND_OF = {1: "sequential", 2: "marginal", 3: "each-last"}

# (our formula, the same formula with sum-to-zero coding for statsmodels' typ=3, data shape)
CASES = [
    ("y ~ C(a) * C(b)", "y ~ C(a, Sum) * C(b, Sum)", (3, 3), False),
    ("y ~ C(a) + C(b)", "y ~ C(a, Sum) + C(b, Sum)", (3, 4), False),
    ("y ~ C(a) + C(b) + C(a):C(b)", "y ~ C(a, Sum) + C(b, Sum) + C(a, Sum):C(b, Sum)", (2, 3),
     False),
    ("y ~ C(a) * C(b) * C(c)", "y ~ C(a, Sum) * C(b, Sum) * C(c, Sum)", (2, 3, 2), False),
    ("y ~ C(a) * x", "y ~ C(a, Sum) * x", (3, 2), True),
    ("y ~ C(a) + C(b) + x", "y ~ C(a, Sum) + C(b, Sum) + x", (3, 2), True),
]


def _statsmodels_rows(formula: str, data: pd.DataFrame, typ: int) -> pd.DataFrame:
    res = anova_lm(smf.ols(formula, data).fit(), typ=typ)
    res = res.drop(index=[i for i in res.index if i in ("Intercept", "Residual")])
    res.index = [i.replace(", Sum", "") for i in res.index]
    return res


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize(("formula", "sum_formula", "levels", "covariate"), CASES)
@pytest.mark.parametrize("typ", [1, 2, 3])
def test_table_matches_anova_lm(seed: int, formula: str, sum_formula: str,
                                levels: tuple[int, ...], covariate: bool, typ: int) -> None:
    data = unbalanced(100 * seed + typ, n=70, levels=levels, covariate=covariate)
    ref = _statsmodels_rows(sum_formula if typ == 3 else formula, data, typ)
    table = tables.factorial(formula, data).table(KIND_OF[typ])
    assert [r.term for r in table.rows] == list(ref.index)  # same terms, same order
    for r in table.rows:
        want = ref.loc[r.term]
        assert r.df == int(want["df"])
        assert rel(r.ss, want["sum_sq"]) < 1e-10, (r.term, r.ss, want["sum_sq"])
        assert rel(r.f, want["F"]) < 1e-10
        assert rel(r.p, want["PR(>F)"]) < 1e-10
    fit = smf.ols(formula, data).fit()
    assert rel(table.residual_ss, fit.ssr) < 1e-10
    assert table.residual_df == int(fit.df_resid)


@pytest.mark.parametrize("seed", range(3))
def test_sequential_in_patsy_order_matches_anova_lm_with_covariate_interaction(seed: int) -> None:
    # The sequential table follows the formula (lower order first); statsmodels follows the
    # column order patsy chose. Written so that both orders are the same.
    data = unbalanced(seed, n=80, levels=(3, 2), covariate=True)
    formula = "y ~ C(a) + C(b) + C(a):C(b) + x + C(b):x"
    ref = _statsmodels_rows(formula, data, 1)
    table = tables.factorial(formula, data).table("sequential")
    ours = {r.term: r for r in table.rows}
    assert set(ours) == set(ref.index)
    for term, want in ref.iterrows():
        if term in ("C(a):C(b)", "x"):  # the only pair whose order differs; checked below
            continue
        assert rel(ours[term].ss, want["sum_sq"]) < 1e-10
    # x after C(a):C(b) (statsmodels) versus x before it (ours): both are nested comparisons
    models = tables.factorial(formula, data)
    smaller = models.fit_terms(["C(a)", "C(b)", "C(a):C(b)"])
    larger = models.fit_terms(["C(a)", "C(b)", "C(a):C(b)", "x"])
    from nestfit import compare

    step = compare(smaller, larger).steps[0]
    assert rel(step.ss, ref.loc["x", "sum_sq"]) < 1e-10


def test_each_last_needs_sum_to_zero_in_statsmodels_but_not_here() -> None:
    # With treatment coding statsmodels' typ=3 main-effect rows test something else
    # (simple effects at the baseline); ours recode, so they equal statsmodels with Sum.
    data = unbalanced(7, n=60)
    ours = tables.factorial("y ~ C(a) * C(b)", data).table("each-last")
    treat = _statsmodels_rows("y ~ C(a) * C(b)", data, 3)
    summed = _statsmodels_rows("y ~ C(a, Sum) * C(b, Sum)", data, 3)
    assert rel(ours.row("C(a)").ss, summed.loc["C(a)", "sum_sq"]) < 1e-10
    assert rel(ours.row("C(a)").ss, treat.loc["C(a)", "sum_sq"]) > 1e-6


@pytest.mark.parametrize("seed", range(3))
def test_large_offset_in_the_response_keeps_the_digits(seed: int) -> None:
    data = unbalanced(seed, n=50)
    shifted = data.assign(y=data["y"] + 1e9)
    a = tables.factorial("y ~ C(a) * C(b)", data).table("each-last")
    b = tables.factorial("y ~ C(a) * C(b)", shifted).table("each-last")
    for r, s in zip(a.rows, b.rows):
        # the shifted response carries about 1e9 * eps ~ 1e-7 absolute rounding per value
        assert rel(s.ss, r.ss) < 1e-6
    assert np.isfinite([r.f for r in b.rows]).all()
