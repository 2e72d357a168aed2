"""groups(): every bad-input path has one clear error."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import nestfit
from nestfit.errors import ColumnError, DataError, FactorError, ParseError


@pytest.fixture
def data() -> pd.DataFrame:
    return pd.DataFrame({"y": [1.0, 2.0, 3.0, 4.0, 5.0, 6.0],
                         "g": ["a", "a", "b", "b", "c", "c"],
                         "txt": ["1", "2", "x", "4", "5", "6"]})


@pytest.mark.parametrize(
    ("kwargs", "error", "match"),
    [
        ({"response": "nope", "factor": "g"}, ColumnError, r"\['nope'\] not found"),
        ({"response": "y", "factor": "nope"}, ColumnError, r"\['nope'\] not found"),
        ({"response": "txt", "factor": "g"}, ColumnError, "'txt' must be numeric, but row 2 "
         "holds 'x'"),
        ({"response": "g", "factor": "y"}, ColumnError, "'g' must be numeric"),
        ({"response": "y", "factor": "g", "missing": "ignore"}, DataError,
         "missing must be 'drop' or 'raise'"),
        ({"response": "y", "factor": "g", "weights": "nope"}, ColumnError, "not found"),
    ],
)
def test_bad_columns(data: pd.DataFrame, kwargs: dict, error: type, match: str) -> None:
    with pytest.raises(error, match=match):
        nestfit.groups(data, **kwargs)


def test_infinite_response(data: pd.DataFrame) -> None:
    data.loc[1, "y"] = np.inf
    with pytest.raises(DataError, match="column 'y' has an infinite value"):
        nestfit.groups(data, "y", "g")


def test_nan_dropped_or_raised(data: pd.DataFrame) -> None:
    data.loc[1, "y"] = np.nan
    data.loc[2, "g"] = None
    m = nestfit.groups(data, "y", "g")
    assert m.missing.n_dropped == 2 and m.factor.counts.tolist() == [1, 1, 2]
    with pytest.raises(DataError, match="missing values"):
        nestfit.groups(data, "y", "g", missing="raise")


def test_single_level_and_too_few_observations() -> None:
    with pytest.raises(FactorError, match="single level 'a'"):
        nestfit.groups(y=[1.0, 2.0, 3.0], factor=["a", "a", "a"])
    with pytest.raises(DataError, match="3 observations for 3 levels"):
        nestfit.groups(y=[1.0, 2.0, 3.0], factor=["a", "b", "c"])
    with pytest.raises(DataError, match="no rows left"):
        nestfit.groups(y=[np.nan, np.nan], factor=["a", "b"])


def test_array_input_errors() -> None:
    with pytest.raises(DataError, match="equal length"):
        nestfit.groups(y=[1.0, 2.0], factor=["a"])
    with pytest.raises(DataError, match="factor= is required"):
        nestfit.groups(y=[1.0, 2.0])
    with pytest.raises(DataError, match="not both"):
        nestfit.groups(pd.DataFrame({"y": [1.0]}), y=[1.0], factor=["a"])
    with pytest.raises(DataError, match="needs data, response and factor"):
        nestfit.groups()


def test_bad_weights(data: pd.DataFrame) -> None:
    with pytest.raises(DataError, match="weights must be positive"):
        nestfit.groups(data.assign(w=[1, 1, 0, 1, 1, 1.0]), "y", "g", weights="w")


def test_bad_blocks_and_coding(data: pd.DataFrame) -> None:
    m = nestfit.groups(data, "y", "g")
    with pytest.raises(ParseError, match="unclosed quote"):
        m.blocks('"a | b c')
    with pytest.raises(FactorError, match="not a level"):
        m.blocks("a | z")
    with pytest.raises(DataError, match="spec must be"):
        m.blocks(3)  # type: ignore[arg-type]
    with pytest.raises(nestfit.errors.ContrastError, match="unknown coding"):
        m.separate_means("nonsense")
    with pytest.raises(FactorError, match="partition is over levels"):
        m.blocks(nestfit.Partition.parse("x | y", ["x", "y"]))


def test_group_fitted_means_only_for_grouped(data: pd.DataFrame) -> None:
    with pytest.raises(DataError, match="not a grouped design"):
        nestfit.fit("y ~ C(g)", data).group_fitted_means()
    means = nestfit.groups(data, "y", "g").blocks("a | ...").group_fitted_means()
    assert means.to_dict() == {"a": 1.5, "b": 4.5, "c": 4.5}


def test_zero_residual_df_warns() -> None:
    m = nestfit.groups(y=[1.0, 2.0, 3.0, 5.0], factor=["a", "a", "b", "c"])
    with pytest.warns(nestfit.errors.ZeroResidualDfWarning, match="no residual degrees"):
        nestfit.fit("y ~ C(g)", pd.DataFrame({"y": [1.0, 2.0], "g": ["a", "b"]}))
    assert m.separate_means().residual_df == 1
