"""Games-Howell pairs: against scipy.stats.tukey_hsd(equal_var=False) (reference
implementation) and against the published formula written out here."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit.checks import games_howell
from nestfit.errors import DataError
from tests.checks.layouts import random_layout, split


@pytest.mark.parametrize("seed", range(3))
def test_games_howell_agrees_with_scipy(seed: int) -> None:
    data = random_layout(seed, k=3 + seed % 2, offset=50.0)
    models = nestfit.groups(data, "y", "g")
    ys = split(data, list(models.levels))
    ref = stats.tukey_hsd(*ys, equal_var=False)
    ci = ref.confidence_interval(0.95)
    res = games_howell(models)
    assert len(res.pairs) == len(ys) * (len(ys) - 1) // 2
    for p in res.pairs:
        i, j = models.levels.index(p.first), models.levels.index(p.second)
        np.testing.assert_allclose(p.difference, ref.statistic[i, j], rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(p.p, ref.pvalue[i, j], rtol=1e-6, atol=1e-10)
        np.testing.assert_allclose([p.lower, p.upper], [ci.low[i, j], ci.high[i, j]],
                                   rtol=1e-7)


def test_games_howell_is_the_published_formula() -> None:
    # Games & Howell (1976), J. Educ. Stat. 1, 113-125: Welch-Satterthwaite df per pair,
    # q = |d| / sqrt((s_i^2/n_i + s_j^2/n_j) / 2) on the studentized range of k means.
    data = random_layout(9, k=4)
    models = nestfit.groups(data, "y", "g")
    ys = split(data, list(models.levels))
    res = games_howell(models, level=0.9)
    k = len(ys)
    for p in res.pairs:
        a, b = ys[models.levels.index(p.first)], ys[models.levels.index(p.second)]
        va, vb = a.var(ddof=1) / a.size, b.var(ddof=1) / b.size
        df = (va + vb) ** 2 / (va ** 2 / (a.size - 1) + vb ** 2 / (b.size - 1))
        q = abs(a.mean() - b.mean()) / math.sqrt((va + vb) / 2)
        assert p.df == pytest.approx(df, rel=1e-10)
        assert p.q == pytest.approx(q, rel=1e-10)
        assert p.p == pytest.approx(stats.studentized_range.sf(q, k, df), rel=1e-9)
        half = stats.studentized_range.ppf(0.9, k, df) * math.sqrt((va + vb) / 2)
        assert p.upper - p.lower == pytest.approx(2 * half, rel=1e-9)
    frame = res.to_frame()
    assert list(frame.columns) == ["first", "second", "difference", "std_error", "df", "q",
                                   "p", "lower", "upper"]
    assert "Games-Howell" in str(res) and res.to_dict()["level"] == 0.9


def test_bad_input() -> None:
    flat = pd.DataFrame({"y": [1.0, 1.0, 2.0, 3.0, 4.0, 7.0], "g": list("aabbcc")})
    with pytest.raises(DataError, match="level 'a' of 'g' has all its values equal"):
        games_howell(flat, "y", "g")
    with pytest.raises(DataError, match="level must be between 0 and 1"):
        games_howell(random_layout(0), "y", "g", level=0)
