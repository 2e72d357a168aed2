"""Adjusted p-values against statsmodels (a reference implementation) and Holm's worked example."""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from statsmodels.stats.multitest import multipletests

from nestfit import contrasts as nc
from nestfit.errors import ContrastError, DataError
from tests.contrasts._helpers import load

# Our method names -> statsmodels.stats.multitest.multipletests names.
STATSMODELS = {"bonferroni": "bonferroni", "sidak": "sidak", "holm": "holm",
               "holm-sidak": "holm-sidak", "hochberg": "simes-hochberg", "hommel": "hommel",
               "bh": "fdr_bh", "by": "fdr_by"}


def reference(p: np.ndarray, method: str) -> np.ndarray:
    with warnings.catch_warnings():  # statsmodels warns on log1p(-1) for p = 1
        warnings.simplefilter("ignore", RuntimeWarning)
        return multipletests(p, method=STATSMODELS[method])[1]


@pytest.mark.parametrize("method", sorted(STATSMODELS))
def test_agrees_with_statsmodels_on_random_p_vectors(method: str) -> None:
    """Exact agreement (1e-12) with statsmodels 0.15 multipletests on 120 random vectors,
    including ties (rounded p), p = 0 and p = 1 (30 for Holm, where statsmodels runs a full
    garbage collection on every call)."""
    rng = np.random.default_rng(20240611)
    for trial in range(30 if method == "holm" else 120):
        m = int(rng.integers(1, 60))
        p = rng.uniform(0.0, 1.0, m) ** rng.uniform(0.2, 5.0)
        if trial % 4 == 0:
            p = np.round(p, 2)  # ties
        if trial % 10 == 0:
            p[0], p[-1] = 0.0, 1.0
        np.testing.assert_allclose(nc.adjust_pvalues(p, method), reference(p, method),
                                   rtol=0, atol=1e-12)


def test_holm_worked_example() -> None:
    """Holm (1979) example with four p-values (holm_four_hypotheses.json; Wikipedia,
    "Holm-Bonferroni method", section Example): H1 and H4 rejected at 0.05, H2 and H3 not."""
    case = load("holm_four_hypotheses.json")
    names = list(case["data"]["p_values"])
    p = np.array([float(v) for v in case["data"]["p_values"].values()])
    alpha = float(case["data"]["alpha"])
    adjusted = nc.adjust_pvalues(p, "holm")
    decisions = case["published_results"]["decisions"]
    for name, value in zip(names, adjusted):
        assert (value <= alpha) == (decisions[name] == "reject"), name
    # The published thresholds alpha / (m - i + 1): each rejected p is below its threshold.
    thresholds = {k: float(v) for k, v in case["published_results"]["thresholds"].items()}
    order = np.argsort(p)
    for rank, i in enumerate(order):
        assert thresholds[names[i]] == pytest.approx(alpha / (len(p) - rank), abs=5e-5)
    # Adjusted values computed (not published) in the file's reproduction section.
    computed = case["reproduction"]["values"]
    for method, key in (("holm", "holm_adjusted_p"), ("bonferroni", "bonferroni_adjusted_p"),
                        ("sidak", "sidak_adjusted_p")):
        got = nc.adjust_pvalues(p, method)
        want = [float(computed[key][n]) for n in names]
        np.testing.assert_allclose(got, want, rtol=1e-5)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.floats(0.0, 1.0), min_size=1, max_size=30),
       st.floats(0.001, 0.5))
def test_rejection_orderings(p: list[float], alpha: float) -> None:
    """Holm rejects everything Bonferroni rejects; Hochberg and Hommel everything Holm does;
    BH everything Hochberg does; every adjusted p is at least the raw p (common practice,
    no source: each follows from the procedures' definitions)."""
    arr = np.array(p)
    adj = {m: nc.adjust_pvalues(arr, m) for m in nc.P_METHODS}
    for weaker, stronger in (("bonferroni", "holm"), ("holm", "hochberg"),
                             ("hochberg", "hommel"), ("hochberg", "bh"), ("sidak", "holm-sidak"),
                             ("holm", "holm-sidak"), ("by", "bh")):
        # (1e-12 of slack: 1 - (1 - p)^1 rounds to p plus an ulp)
        assert np.all((adj[weaker] <= alpha) <= (adj[stronger] <= alpha * (1 + 1e-12))), \
            (weaker, stronger)
    for m, values in adj.items():
        assert np.all(values >= arr - 1e-15) and np.all(values <= 1.0), m


def test_adjust_errors() -> None:
    with pytest.raises(ContrastError, match="unknown p-value adjustment 'fdr'; valid methods"):
        nc.adjust_pvalues([0.1], "fdr")
    with pytest.raises(DataError, match=r"p-value 1.5 at position 2 is not in \[0, 1\]"):
        nc.adjust_pvalues([0.1, 1.5], "holm")
    with pytest.raises(DataError, match=r"p-value nan at position 1"):
        nc.adjust_pvalues([float("nan")], "holm")
    with pytest.raises(DataError, match="non-empty one-dimensional"):
        nc.adjust_pvalues([], "holm")
    with pytest.raises(DataError, match="must be numbers"):
        nc.adjust_pvalues(["x"], "holm")
