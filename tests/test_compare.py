"""compare(): ordering, denominators, the checks on rows, response and nesting."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit.errors import NotNestedError


@pytest.fixture
def data() -> pd.DataFrame:
    rng = np.random.default_rng(20261202)
    g = np.repeat(["A", "B", "C", "D"], [5, 7, 6, 8])
    y = rng.normal(10, 1, g.size) + (g == "B") * 1.5
    return pd.DataFrame({"y": y, "g": g, "x": rng.normal(size=g.size)})


def test_oneway_table_is_the_classical_decomposition(data: pd.DataFrame) -> None:
    comp = nestfit.groups(data, "y", "g").oneway()
    # classical between/within decomposition, written out (common practice, no source)
    grand = data["y"].mean()
    stats_g = data.groupby("g")["y"].agg(["mean", "count"])
    between = float((stats_g["count"] * (stats_g["mean"] - grand) ** 2).sum())
    within = float(((data["y"] - data.groupby("g")["y"].transform("mean")) ** 2).sum())
    step = comp.steps[0]
    assert step.df == 3 and comp.residual.residual_df == len(data) - 4
    np.testing.assert_allclose(step.ss, between, rtol=1e-12)
    np.testing.assert_allclose(comp.residual.residual_ss, within, rtol=1e-12)
    f = (between / 3) / (within / (len(data) - 4))
    np.testing.assert_allclose(step.f, f, rtol=1e-12)
    np.testing.assert_allclose(step.p, stats.f.sf(f, 3, len(data) - 4), rtol=1e-12)


def test_fits_are_sorted_smallest_first(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    comp = nestfit.compare(m.separate_means(), m.equal_means(), m.blocks("B | ..."))
    assert [x.name for x in comp.models] == ["equal means", "B | A C D", "separate means"]


def test_denominator_each_uses_each_larger_model(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    eq, two, sep = m.equal_means(), m.blocks("B | ..."), m.separate_means()
    comp = nestfit.compare(eq, two, sep, denominator="each")
    s0 = comp.steps[0]
    np.testing.assert_allclose(s0.f, s0.mean_square / two.mean_square, rtol=1e-13)
    assert s0.denominator_df == two.residual_df
    largest = nestfit.compare(eq, two, sep)
    np.testing.assert_allclose(largest.steps[0].f, s0.mean_square / sep.mean_square, rtol=1e-13)


def test_steps_add_up_to_total(data: pd.DataFrame) -> None:
    comp = nestfit.groups(data, "y", "g").chain("B | ...", "B | A | C D")
    total = comp.models[0].residual_ss - comp.models[-1].residual_ss
    np.testing.assert_allclose(sum(s.ss for s in comp.steps), total, rtol=1e-12)


def test_formula_fits_compare_like_group_fits(data: pd.DataFrame) -> None:
    f0 = nestfit.fit("y ~ 1", data)
    f1 = nestfit.fit("y ~ C(g)", data)
    f2 = nestfit.fit("y ~ C(g) + x", data)
    comp = nestfit.compare(f0, f1, f2)
    ref = nestfit.groups(data, "y", "g").oneway()
    np.testing.assert_allclose(comp.steps[0].ss, ref.steps[0].ss, rtol=1e-11)
    assert comp.steps[1].df == 1


def test_to_dict_is_json_with_the_documented_keys(data: pd.DataFrame) -> None:
    d = nestfit.groups(data, "y", "g").oneway().to_dict()
    text = json.dumps(d, allow_nan=False)
    back = json.loads(text)
    assert [set(m) for m in back["models"]] == [{"name", "parameters", "residual_df",
                                                  "residual_ss"}] * 2
    assert set(back["steps"][0]) == {"from", "to", "df", "ss", "mean_square", "f", "p"}


def test_to_frame_and_text(data: pd.DataFrame) -> None:
    comp = nestfit.groups(data, "y", "g").chain("B | ...")
    frame = comp.to_frame()
    assert list(frame.columns) == ["smaller", "larger", "df", "ss", "mean_square", "f", "p"]
    assert len(frame) == 2
    text = str(comp)
    assert "M0 -> M1" in text and "B | A C D" in text
    with pytest.raises(KeyError, match="no step"):
        comp.step("separate means", "equal means")


def test_not_nested_names_both_models(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    with pytest.raises(NotNestedError, match=r"'A B \| C D' is not nested in model 'B \| A C D'"):
        nestfit.compare(m.blocks("A B | C D"), m.blocks("B | ..."))


def test_not_nested_dense(data: pd.DataFrame) -> None:
    with pytest.raises(NotNestedError, match=r"is not nested in model 'C\(g\)'.*column 'x'"):
        nestfit.compare(nestfit.fit("y ~ x", data), nestfit.fit("y ~ C(g)", data))


def test_same_column_space_refused(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    with pytest.raises(NotNestedError, match="span the same column space"):
        nestfit.compare(m.separate_means(), m.separate_means("helmert"))


def test_different_rows_response_weights_refused(data: pd.DataFrame) -> None:
    full = nestfit.fit("y ~ C(g)", data)
    with pytest.raises(NotNestedError, match="different numbers of rows"):
        nestfit.compare(nestfit.fit("y ~ 1", data.iloc[1:]), full)
    other = data.assign(z=data["y"] * 2)
    with pytest.raises(NotNestedError, match="different responses"):
        nestfit.compare(nestfit.fit("z ~ 1", other), full)
    shuffled = data.assign(y=data["y"].to_numpy()[::-1])
    with pytest.raises(NotNestedError, match="different response values"):
        nestfit.compare(nestfit.fit("y ~ 1", shuffled), full)
    w = np.linspace(1, 2, len(data))
    with pytest.raises(NotNestedError, match="different weights"):
        nestfit.compare(nestfit.fit("y ~ 1", data, weights=w), full)


@pytest.mark.parametrize(
    ("args", "kwargs", "match"),
    [
        ((), {}, "at least two fits"),
        (("a", "b"), {}, "takes Fit objects"),
    ],
)
def test_bad_arguments(args: tuple, kwargs: dict, match: str) -> None:
    with pytest.raises(NotNestedError, match=match):
        nestfit.compare(*args, **kwargs)


def test_bad_denominator(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    with pytest.raises(NotNestedError, match="denominator must be 'largest' or 'each'"):
        nestfit.compare(m.equal_means(), m.separate_means(), denominator="smallest")


def test_perfect_fit_of_larger_model() -> None:
    y = np.array([1.0, 1.0, 2.0, 2.0, 3.0, 3.0])
    m = nestfit.groups(y=y, factor=["a", "a", "b", "b", "c", "c"])
    comp = m.oneway()
    assert comp.steps[0].f == math.inf and comp.steps[0].p == 0.0
