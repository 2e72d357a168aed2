"""check_assumptions: every test in one result; tests that cannot run say why."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

import nestfit
from nestfit.checks import (
    bartlett,
    brown_forsythe,
    check_assumptions,
    levene,
    shapiro_wilk,
    summarize_groups,
    welch_anova,
)
from nestfit.errors import DataError
from tests.checks.layouts import random_layout


def test_collects_the_individual_tests() -> None:
    data = random_layout(5)
    models = nestfit.groups(data, "y", "g")
    res = check_assumptions(models)
    assert [t.name for t in res.tests] == ["Levene", "Brown-Forsythe", "Bartlett",
                                           "Shapiro-Wilk", "Welch"]
    for single, f in zip(res.tests, (levene, brown_forsythe, bartlett, shapiro_wilk,
                                     welch_anova)):
        assert single == f(models)
    payload = json.loads(json.dumps(res.to_dict(), allow_nan=False))
    assert [set(t) >= {"name", "statistic", "df", "p", "reading"} for t in payload["tests"]] \
        == [True] * 5
    assert payload["tests"][3]["df"] is None and payload["tests"][2]["df"] == 3
    assert len(payload["groups"]) == 4
    frame = res.to_frame()
    assert list(frame["name"]) == [t.name for t in res.tests]
    assert res.test("Welch").df[1] == pytest.approx(welch_anova(models).df[1])
    with pytest.raises(KeyError, match="no test named 'Student'"):
        res.test("Student")
    text = str(res)
    assert "qualified statistician" in text and "Welch" in text


def test_a_test_that_cannot_run_says_why() -> None:
    data = pd.DataFrame({"y": [1.0, 1.0, 1.0, 2.0, 3.0, 5.0, 4.0, 4.5, 6.0],
                         "g": list("aaabbbccc")})
    res = check_assumptions(data, "y", "g")
    assert np.isfinite(res.test("Levene").statistic)
    bart = res.test("Bartlett")
    assert np.isnan(bart.statistic) and bart.reading.startswith("Not computed:")
    assert "level 'a'" in bart.reading
    assert res.test("Welch").reading.startswith("Not computed:")
    payload = json.loads(json.dumps(res.to_dict(), allow_nan=False))
    assert payload["tests"][2]["statistic"] is None and payload["tests"][2]["p"] is None


def test_group_summary_keeps_the_offset() -> None:
    data = random_layout(2, offset=1e9)
    summary = summarize_groups(data, "y", "g")
    np.testing.assert_allclose(summary.means, data.groupby("g")["y"].mean().to_numpy(),
                               rtol=1e-15)
    assert summary.to_frame().shape == (4, 4) and "std dev" in str(summary)


def test_errors_that_stop_everything() -> None:
    one = pd.DataFrame({"y": [1.0, 2.0, 3.0, 2.0], "g": list("aaab")})
    with pytest.raises(DataError, match=r"at least 2 observations in every level.*level 'b'"):
        check_assumptions(one, "y", "g")
    with pytest.raises(DataError, match="unweighted"):
        check_assumptions(nestfit.groups(random_layout(0).assign(w=1.0), "y", "g", weights="w"))
    with pytest.raises(DataError, match="alpha must be"):
        check_assumptions(random_layout(0), "y", "g", alpha=5)
