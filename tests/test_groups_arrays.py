"""groups(y=, factor=) with numpy arrays: the numpy-only cleaning agrees with the pandas one.

``clean_arrays`` must keep the same rows, values, missing-value report and
error messages as ``clean_columns`` on the same mapping of arrays (the
pandas route is the reference here; both are nestfit's own code, so the
one-way F is also checked against scipy.stats.f_oneway).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import nestfit
from nestfit._data import clean_arrays, clean_columns
from nestfit.errors import DataError, FactorError
from nestfit.linalg import _groups as group_module
from nestfit.linalg._groups import group_sums


def _columns(seed: int, kind: str) -> dict[str, object]:
    rng = np.random.default_rng(seed)
    n = 40
    y = rng.normal(10.0, 1.0, size=n)
    y[[3, 17]] = np.nan
    w = rng.uniform(0.5, 2.0, size=n)
    w[5] = np.nan
    codes = rng.integers(0, 4, size=n)
    labels: object
    if kind == "categorical":
        codes[[8, 30]] = -1  # missing labels
        labels = pd.Categorical.from_codes(codes, categories=["d", "b", "c", "a"])
    elif kind == "blank category":
        labels = pd.Categorical.from_codes(codes, categories=["d", " ", "c", "a"])
    elif kind == "float":
        fl = codes.astype(float)
        fl[9] = np.nan
        labels = fl
    else:
        labels = codes
    return {"y": y, "weights": w, "group": labels}


KINDS = ["categorical", "blank category", "float", "integer"]


def _as_lists(values: object) -> list[object]:
    return list(pd.Series(values).astype(object).where(pd.Series(values).notna(), None))


@pytest.mark.parametrize("kind", KINDS)
def test_clean_arrays_keeps_what_clean_columns_keeps(kind: str) -> None:
    cols = _columns(1, kind)
    fast = clean_arrays(cols, numeric=["y", "weights"], categorical=["group"])
    assert fast is not None
    frame, report = clean_columns(cols, numeric=["y", "weights"], categorical=["group"])
    assert fast.report == report
    np.testing.assert_array_equal(fast.row_labels, frame.index.to_numpy())
    for name in ("y", "weights"):
        np.testing.assert_array_equal(fast.columns[name], frame[name].to_numpy(dtype=float))
        assert fast.columns[name].dtype == np.float64
    assert _as_lists(fast.columns["group"]) == _as_lists(frame["group"].array)


@pytest.mark.parametrize("kind", KINDS)
def test_array_route_gives_the_pandas_route_fit(kind: str) -> None:
    cols = _columns(2, kind)
    a = nestfit.groups(y=cols["y"], factor=cols["group"], weights=cols["weights"])
    frame = pd.DataFrame(cols)
    b = nestfit.groups(frame, "y", "group", weights="weights")
    assert a.levels == b.levels
    assert a.missing == b.missing
    np.testing.assert_array_equal(a.row_labels, b.row_labels)
    np.testing.assert_array_equal(a.factor.codes, b.factor.codes)
    fa, fb = a.oneway().steps[0], b.oneway().steps[0]
    assert fa.f == pytest.approx(fb.f, rel=1e-14)


@pytest.mark.parametrize(
    ("change", "error", "match"),
    [
        ({"y": 2, "value": np.inf}, DataError, r"column 'y' has an infinite value \(row 2\)"),
        ({"weights": 6, "value": -np.inf}, DataError,
         r"column 'weights' has an infinite value \(row 6\)"),
    ],
)
def test_same_errors_on_both_routes(change: dict, error: type, match: str) -> None:
    cols = _columns(3, "integer")
    name = "y" if "y" in change else "weights"
    arr = np.array(cols[name], dtype=float)
    arr[change[name]] = change["value"]
    cols[name] = arr
    with pytest.raises(error, match=match) as fast:
        clean_arrays(cols, numeric=["y", "weights"], categorical=["group"])
    with pytest.raises(error, match=match) as slow:
        clean_columns(cols, numeric=["y", "weights"], categorical=["group"])
    assert str(fast.value) == str(slow.value)


@pytest.mark.parametrize("kind", KINDS)
def test_missing_raise_and_no_rows_left_messages_agree(kind: str) -> None:
    cols = _columns(4, kind)
    with pytest.raises(DataError, match="missing values in column") as fast:
        clean_arrays(cols, numeric=["y", "weights"], categorical=["group"], missing="raise")
    with pytest.raises(DataError) as slow:
        clean_columns(cols, numeric=["y", "weights"], categorical=["group"], missing="raise")
    assert str(fast.value) == str(slow.value)
    empty = {"y": np.array([np.nan, np.nan]), "group": np.array([1, 2])}
    with pytest.raises(DataError, match="no rows left") as fast:
        clean_arrays(empty, numeric=["y"], categorical=["group"])
    with pytest.raises(DataError) as slow:
        clean_columns(empty, numeric=["y"], categorical=["group"])
    assert str(fast.value) == str(slow.value)


@pytest.mark.parametrize(
    "columns",
    [
        {"y": np.array(["1", "2"], dtype=object), "group": np.array([0, 1])},  # text numbers
        {"y": np.array([True, False]), "group": np.array([0, 1])},  # booleans
        {"y": np.array([1.0, 2.0]), "group": np.array(["a", "b"], dtype=object)},  # text labels
        {"y": np.array([1.0, 2.0]), "group": np.array([0, 1, 2])},  # unequal lengths
    ],
)
def test_other_inputs_are_left_to_the_pandas_route(columns: dict) -> None:
    assert clean_arrays(columns, numeric=["y"], categorical=["group"]) is None


def test_pandas_route_errors_still_reached_through_groups() -> None:
    with pytest.raises(nestfit.errors.ColumnError, match="'y' must be numeric, but row 1 holds"):
        nestfit.groups(y=np.array(["1.5", "x", "2"], dtype=object), factor=[0, 1, 1])
    with pytest.raises(nestfit.errors.ColumnError, match="must be numeric, but it has dtype bool"):
        nestfit.groups(y=np.array([True, False, True]), factor=[0, 1, 1])
    with pytest.raises(FactorError, match="NaN or infinite labels"):
        nestfit.groups(y=[1.0, 2.0, 3.0, 4.0], factor=np.array([0.0, 1.0, np.inf, 1.0]))


def test_categorical_level_order_is_kept_on_the_array_route() -> None:
    # Documented rule: level order is a Categorical's order (Factor docstring).
    cat = pd.Categorical(["b", "a", "b", "a", "b", "a"], categories=["b", "a"])
    y = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0]
    assert nestfit.groups(y=y, factor=cat).levels == ("b", "a")
    assert nestfit.groups(y=y, factor=pd.Series(cat)).levels == ("b", "a")
    frame = pd.DataFrame({"y": y, "g": cat})
    assert nestfit.groups(frame, "y", "g").levels == ("b", "a")


def test_series_with_its_own_index_is_aligned_as_before() -> None:
    # A labelled Series goes through the DataFrame route; its index becomes the row labels.
    lab = pd.Series(["a", "b", "a", "b"], index=[10, 11, 12, 13])
    m = nestfit.groups(y=np.array([1.0, 2.0, 3.0, 5.0]), factor=lab)
    assert m.row_labels.tolist() == [10, 11, 12, 13]


def test_inputs_are_copied_not_frozen() -> None:
    y = np.array([1.0, 2.0, 3.0, 4.0, 6.0, 7.0])
    codes = np.array([0, 0, 1, 1, 2, 2])
    m = nestfit.groups(y=y, factor=codes)
    f_before = m.oneway().steps[0].f
    assert y.flags.writeable and codes.flags.writeable
    y[0] = 100.0
    codes[0] = 2
    assert m.oneway().steps[0].f == f_before
    assert not m.y.flags.writeable and not m.factor.codes.flags.writeable


def test_oneway_matches_scipy_on_the_array_route() -> None:
    rng = np.random.default_rng(5)
    codes = rng.integers(0, 5, size=300)
    y = 3.0 + 0.2 * codes + rng.normal(size=300)
    ours = nestfit.groups(y=y, factor=codes).oneway().steps[0]
    ref = stats.f_oneway(*[y[codes == g] for g in range(5)])  # scipy.stats.f_oneway
    assert ours.f == pytest.approx(ref.statistic, rel=1e-12)
    assert ours.p == pytest.approx(ref.pvalue, rel=1e-9)


@pytest.mark.parametrize("weighted", [False, True])
def test_group_sums_in_blocks_agree_with_one_block(monkeypatch: pytest.MonkeyPatch,
                                                   weighted: bool) -> None:
    rng = np.random.default_rng(6)
    codes = rng.integers(0, 7, size=1000)
    y = 1e6 + rng.normal(size=1000)
    w = rng.uniform(0.5, 2.0, size=1000) if weighted else None
    whole = group_sums(codes, y, 7, w)
    monkeypatch.setattr(group_module, "_BLOCK_ROWS", 13)
    monkeypatch.setattr(group_module, "_ROWS_PER_GROUP", 1)
    blocks = group_sums(codes, y, 7, w)
    # the shifted means are small differences; compare the means themselves
    np.testing.assert_allclose(blocks.means + blocks.shift, whole.means + whole.shift,
                               rtol=1e-15)
    np.testing.assert_allclose(blocks.within_ss, whole.within_ss, rtol=1e-12)
    np.testing.assert_array_equal(blocks.weight_totals > 0, True)
    # reference: two-pass sums from correctly rounded fsum per group (common practice, no source)
    for g in range(7):
        sel = codes == g
        wg = np.ones(sel.sum()) if w is None else w[sel]
        mean = np.average(y[sel], weights=wg)
        ss = float(np.sum(wg * (y[sel] - mean) ** 2))
        assert blocks.means[g] + blocks.shift == pytest.approx(mean, rel=1e-15)
        assert blocks.within_ss[g] == pytest.approx(ss, rel=1e-10)


def test_factor_counts_are_counted_once_and_read_only() -> None:
    f = nestfit.Factor.from_values(np.array([3, 1, 1, 2, 3, 3]), name="g")
    assert f.counts.tolist() == [2, 1, 3]
    assert f.counts is f.counts
    with pytest.raises(ValueError):
        f.counts[0] = 5
    sparse = nestfit.Factor.from_values(np.array([30, 1, 1, 2, 30]), name="g")
    assert sparse.counts.tolist() == np.bincount(sparse.codes).tolist() == [2, 1, 2]
