"""Factor: labels, order, codes and counts; bad input."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from nestfit import Factor
from nestfit.errors import FactorError


def test_text_levels_sorted_and_counted() -> None:
    f = Factor.from_values(["b", "a", "b", "c"], name="g")
    assert f.levels == ("a", "b", "c")
    assert f.codes.tolist() == [1, 0, 1, 2]
    assert f.counts.tolist() == [1, 2, 1]


def test_categorical_order_kept_and_unused_dropped() -> None:
    cat = pd.Categorical(["lo", "hi", "lo"], categories=["lo", "mid", "hi"], ordered=True)
    f = Factor.from_values(pd.Series(cat), name="dose")
    assert f.levels == ("lo", "hi")
    assert f.codes.tolist() == [0, 1, 0]


def test_integers_numeric_order_fast_path_and_sparse_values() -> None:
    f = Factor.from_values(np.array([10, 2, 2, 7]), name="site")
    assert f.levels == ("2", "7", "10")
    assert f.codes.tolist() == [2, 0, 0, 1]
    big = Factor.from_values(np.array([10**12, 5, 5]), name="lot")
    assert big.levels == ("5", "1000000000000")


def test_given_levels_order_and_numeric_labels() -> None:
    f = Factor.from_values([1.0, 2.0, 1.0], name="t", levels=[2, 1])
    assert f.levels == ("2", "1")
    assert f.codes.tolist() == [1, 0, 1]


def test_codes_are_read_only() -> None:
    f = Factor.from_values(["a", "b"])
    with pytest.raises(ValueError):
        f.codes[0] = 1


@pytest.mark.parametrize(
    ("values", "kwargs", "match"),
    [
        ([], {}, "is empty"),
        (["a", None], {}, "missing labels"),
        ([1.0, np.nan], {}, "NaN or infinite"),
        (["a", "b"], {"levels": ["a"]}, r"not among the given levels"),
        (["a", "a"], {"levels": ["a", "b"]}, r"have no observations"),
        (["a"], {"levels": ["a", "a"]}, "more than once"),
        (np.zeros((2, 2)), {}, "one-dimensional"),
    ],
)
def test_bad_factor_input(values: object, kwargs: dict, match: str) -> None:
    with pytest.raises(FactorError, match=match):
        Factor.from_values(values, name="g", **kwargs)


def test_index_of_unknown_level_names_levels() -> None:
    f = Factor.from_values(["a", "b"], name="g")
    with pytest.raises(FactorError, match=r"no level 'z'; its levels are \['a', 'b'\]"):
        f.index_of("z")
