"""The formula bridge's ``C(g)``: a pandas Categorical for patsy gives patsy's own design.

The reference is patsy itself (``patsy.dmatrix`` with ``patsy.builtins.C``,
which sniffs the levels value by value): the shortcut must give the same
column names and the same matrix, bit for bit.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import patsy
import patsy.builtins
import pytest

import nestfit
from nestfit.design._formula import _namespace, categorical, design_from_formula


def _frame() -> pd.DataFrame:
    rng = np.random.default_rng(11)
    n = 60
    return pd.DataFrame({
        "y": rng.normal(size=n),
        "g": rng.integers(-2, 5, size=n),  # integers, negative ones too
        "s": rng.choice(["beta", "alpha", "Gamma", "b10", "b9"], size=n),  # text
        "c": pd.Categorical(rng.choice(["lo", "mid", "hi"], size=n),
                            categories=["lo", "mid", "hi"]),  # own order
        "u": rng.integers(0, 3, size=n).astype(np.uint8),
        "x": rng.normal(size=n),
    })


FORMULAS = [
    "y ~ C(g) + x",
    "y ~ C(s)",
    "y ~ C(c) * x",
    "y ~ C(u) + C(g)",
    "y ~ C(g):C(s)",
    "y ~ C(g, Sum)",  # a contrast: passed to patsy's C unchanged
    "y ~ C(s, levels=['b9', 'b10', 'alpha', 'beta', 'Gamma'])",
]


@pytest.mark.parametrize("formula", FORMULAS)
def test_same_design_as_patsy_sniffing(formula: str) -> None:
    data = _frame()
    ours = design_from_formula(formula, data)
    env = patsy.EvalEnvironment.capture(0).with_outer_namespace(
        {**_namespace(), "C": patsy.builtins.C})
    ref = patsy.dmatrix(formula.split("~")[1], data, eval_env=env, return_type="matrix")
    assert list(ours.design.column_names) == ref.design_info.column_names
    np.testing.assert_array_equal(ours.design.matrix, np.asarray(ref))


def test_shortcut_is_taken_only_for_plain_marks() -> None:
    s = pd.Series([3, 1, 2, 1])
    out = categorical(s)
    assert isinstance(out.dtype, pd.CategoricalDtype)
    assert list(out.cat.categories) == [1, 2, 3]
    assert out.index.equals(s.index)
    assert isinstance(categorical(s, "Sum"), type(patsy.builtins.C(s, "Sum")))
    floats = pd.Series([1.5, 2.0])
    assert not isinstance(categorical(floats), pd.Series)  # left to patsy's C
    assert isinstance(categorical(np.array([2, 1])), pd.Categorical)


def test_fit_with_the_shortcut_matches_statsmodels() -> None:
    sm = pytest.importorskip("statsmodels.formula.api")
    data = _frame()
    ours = nestfit.fit("y ~ C(g) + C(s) + x", data)
    theirs = sm.ols("y ~ C(g) + C(s) + x", data).fit()  # statsmodels OLS (pinv)
    np.testing.assert_allclose(ours.coefficients, theirs.params.to_numpy(), rtol=1e-10,
                               atol=1e-12)
    assert ours.residual_ss == pytest.approx(theirs.ssr, rel=1e-12)


def test_a_callers_own_c_still_wins() -> None:
    # Names in the caller's scope come first (patsy's rule); the result is the same.
    calls = []

    def C(data, contrast=None, levels=None):  # the formula's name
        calls.append(1)
        return patsy.builtins.C(data, contrast, levels)

    data = _frame()
    a = nestfit.fit("y ~ C(g) + x", data)
    assert calls, "the caller's C was not used"
    n_calls = len(calls)
    del C
    b = nestfit.fit("y ~ C(g) + x", data)  # now nestfit's own C
    assert len(calls) == n_calls
    assert a.design.column_names == b.design.column_names
    np.testing.assert_array_equal(a.design.matrix, b.design.matrix)
