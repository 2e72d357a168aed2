"""The multiplicity adjustment worked step by step (nestfit._stepwise)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nestfit._stepwise import adjustment_trace
from nestfit.contrasts import ContrastRow, FamilyResult, adjust_pvalues
from tests.contrasts._helpers import load


def _result(p: list[float], method: str, alpha: float = 0.05, t: list[float] | None = None,
            critical: float = np.nan) -> FamilyResult:
    adjusted = adjust_pvalues(p, method) if method in (
        "none", "bonferroni", "sidak", "holm", "holm-sidak", "hochberg", "bh", "by") else p
    t = t if t is not None else [1.0] * len(p)
    rows = tuple(ContrastRow(f"c{i + 1}", (("A", 1.0), ("B", -1.0)), 0.0, 1.0, 10, t[i],
                             float(p[i]), float(adjusted[i]), -1.0, 1.0)
                 for i in range(len(p)))
    return FamilyResult(family="test", kind="custom", method=method, method_name=method,
                        error_rate="family-wise error rate", level=1 - alpha,
                        alternative="two-sided", response="y", factor="g", model="m",
                        n_obs=20, df=10, rank=len(p), rows=rows, interval="per-contrast",
                        critical_value=critical)


def test_holm_thresholds_of_the_published_example() -> None:
    """Holm (1979) example with four p-values (holm_four_hypotheses.json; Wikipedia,
    "Holm-Bonferroni method", example section): thresholds and decisions as published."""
    case = load("holm_four_hypotheses.json")
    labels = list(case["data"]["p_values"])
    p = [float(case["data"]["p_values"][k]) for k in labels]
    trace = adjustment_trace(_result(p, "holm", float(case["data"]["alpha"])))
    ordered = [f"{labels[int(r.label[1:]) - 1]} {r.p:g}" for r in trace.rows]
    assert ", ".join(ordered) == case["published_results"]["ordered"]
    for r in trace.rows:
        name = labels[int(r.label[1:]) - 1]
        published = case["published_results"]["thresholds"][name]
        decimals = len(published.split(".")[1])
        assert round(r.threshold, decimals) == pytest.approx(float(published))
        assert r.rejected == (case["published_results"]["decisions"][name] == "reject")
    assert trace.kind == "step-down" and "alpha / m" in trace.rule


def test_holm_sidak_thresholds_as_reproduced() -> None:
    case = load("holm_four_hypotheses.json")
    p = [float(v) for v in case["data"]["p_values"].values()]
    trace = adjustment_trace(_result(p, "holm-sidak"))
    expected = [float(v) for v in case["reproduction"]["values"]["holm_sidak_thresholds"]]
    np.testing.assert_allclose([r.threshold for r in trace.rows], expected, rtol=1e-5)


p_lists = st.lists(st.floats(min_value=1e-6, max_value=1.0), min_size=1, max_size=12)


@settings(max_examples=150, deadline=None)
@given(p=p_lists, alpha=st.sampled_from([0.01, 0.05, 0.1]))
def test_step_down_rejects_the_prefix_that_passes(p: list[float], alpha: float) -> None:
    for method in ("holm", "holm-sidak"):
        trace = adjustment_trace(_result(p, method, alpha))
        first_fail = next((r.rank for r in trace.rows if not r.passes), len(p) + 1)
        for r in trace.rows:
            if abs(r.p_adjusted - alpha) > 1e-12:  # skip exact ties at the boundary
                assert r.rejected == (r.rank < first_fail)


@settings(max_examples=150, deadline=None)
@given(p=p_lists, alpha=st.sampled_from([0.01, 0.05, 0.1]))
def test_step_up_rejects_up_to_the_last_pass(p: list[float], alpha: float) -> None:
    for method in ("hochberg", "bh", "by"):
        trace = adjustment_trace(_result(p, method, alpha))
        last = max((r.rank for r in trace.rows if r.passes), default=0)
        for r in trace.rows:
            if abs(r.p_adjusted - alpha) > 1e-12:
                assert r.rejected == (r.rank <= last)


@settings(max_examples=100, deadline=None)
@given(p=p_lists, alpha=st.sampled_from([0.01, 0.05]))
def test_single_step_thresholds(p: list[float], alpha: float) -> None:
    m = len(p)
    for method, value in (("none", alpha), ("bonferroni", alpha / m),
                          ("sidak", 1 - (1 - alpha) ** (1 / m))):
        trace = adjustment_trace(_result(p, method, alpha))
        assert all(r.threshold == pytest.approx(value, rel=1e-12) for r in trace.rows)
        for r in trace.rows:
            if abs(r.p_adjusted - alpha) > 1e-12:
                assert r.rejected == r.passes


def test_critical_value_methods_order_by_t() -> None:
    trace = adjustment_trace(_result([0.5, 0.01, 0.2], "tukey", t=[0.7, -3.1, 1.4],
                                     critical=2.5))
    assert trace.kind == "critical-value"
    assert [r.label for r in trace.rows] == ["c2", "c3", "c1"]
    assert [r.passes for r in trace.rows] == [True, False, False]
    assert all(r.threshold == 2.5 for r in trace.rows)


def test_methods_without_threshold_table() -> None:
    trace = adjustment_trace(_result([0.03, 0.01], "hommel"))
    assert trace.kind == "adjusted-only"
    assert all(r.threshold is None and r.passes is None for r in trace.rows)
