"""Input cleaning at the public boundary: columns, dtypes and the missing-value policy.

Everything that reaches the fitter has been through here: numeric columns
are finite float64, factor columns have no missing labels, and any rows
dropped for missing values are counted in a :class:`MissingReport`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd

from nestfit.errors import ColumnError, DataError

__all__ = ["MissingPolicy", "MissingReport", "check_missing_policy", "clean_columns"]

MissingPolicy = Literal["drop", "raise"]


@dataclass(frozen=True)
class MissingReport:
    """What the missing-value policy did.

    Attributes
    ----------
    n_input : int
        Rows in the input.
    n_dropped : int
        Rows removed because a used column was missing there.
    by_column : dict
        Missing cells per used column (a row can count in several columns).
    """

    n_input: int
    n_dropped: int = 0
    by_column: dict[str, int] = field(default_factory=dict)

    @property
    def n_used(self) -> int:
        """Rows kept for the fit."""
        return self.n_input - self.n_dropped

    def __str__(self) -> str:
        if not self.n_dropped:
            return f"all {self.n_input} rows used"
        cols = ", ".join(f"{c}: {k}" for c, k in self.by_column.items() if k)
        return f"{self.n_dropped} of {self.n_input} rows dropped for missing values ({cols})"

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict form for JSON."""
        return {"n_input": self.n_input, "n_dropped": self.n_dropped,
                "by_column": dict(self.by_column)}


def check_missing_policy(missing: str) -> MissingPolicy:
    """Validate the ``missing`` argument."""
    if missing not in ("drop", "raise"):
        raise DataError(f"missing must be 'drop' or 'raise'. Got {missing!r} instead.")
    return missing  # type: ignore[return-value]


def _is_missing(col: pd.Series) -> np.ndarray:
    miss = col.isna().to_numpy()
    if col.dtype == object or pd.api.types.is_string_dtype(col):
        text = col.astype(str).str.strip()
        miss = miss | (text == "").to_numpy()
    return np.asarray(miss, dtype=bool)


def clean_columns(
    data: Any,
    *,
    numeric: Sequence[str],
    categorical: Sequence[str] = (),
    missing: str = "drop",
) -> tuple[pd.DataFrame, MissingReport]:
    """Select, check and de-missing the columns a model uses.

    Parameters
    ----------
    data : pandas.DataFrame or mapping of column name to array
        The input table.
    numeric : sequence of str
        Columns that must be numeric and finite (response, covariates, weights).
    categorical : sequence of str
        Factor columns (any dtype; labels must not be missing after the policy).
    missing : {"drop", "raise"}
        ``"drop"`` removes rows with a missing value in any used column and
        reports them; ``"raise"`` raises :class:`DataError` naming the columns.

    Returns
    -------
    frame : pandas.DataFrame
        The used columns, rows kept, original index preserved.
    report : MissingReport
        Counts of what was dropped.

    Raises
    ------
    ColumnError
        A column is absent, or a numeric column holds non-numeric values.
    DataError
        Infinite values, or missing values under ``missing="raise"``, or no rows left.
    """
    policy = check_missing_policy(missing)
    if not isinstance(data, pd.DataFrame):
        try:
            data = pd.DataFrame(data)
        except (TypeError, ValueError) as exc:
            raise DataError(
                f"data must be a pandas DataFrame or a mapping of columns: {exc}"
            ) from None
    used = list(dict.fromkeys([*numeric, *categorical]))
    absent = [c for c in used if c not in data.columns]
    if absent:
        known = ", ".join(map(str, list(data.columns)[:20]))
        raise ColumnError(f"column(s) {absent} not found in the data; available columns: {known}")
    frame = data.loc[:, used].copy()
    for name in numeric:
        col = frame[name]
        textual = col.dtype == object or pd.api.types.is_string_dtype(col)
        if isinstance(col.dtype, pd.CategoricalDtype) or not (
            pd.api.types.is_numeric_dtype(col) or textual
        ) or pd.api.types.is_bool_dtype(col):
            raise ColumnError(
                f"column {name!r} must be numeric, but it has dtype {col.dtype}; "
                "convert it or choose another column"
            )
        converted = pd.to_numeric(col, errors="coerce")
        bad = converted.isna() & ~_is_missing_series(col)
        if bad.any():
            first = col[bad].iloc[0]
            raise ColumnError(
                f"column {name!r} must be numeric, but row {col.index[bad][0]!r} holds {first!r}"
            )
        frame[name] = converted.astype(float)
        values = frame[name].to_numpy()
        if np.isinf(values).any():
            where = frame.index[np.isinf(values)][0]
            raise DataError(
                f"column {name!r} has an infinite value (row {where!r}); "
                "remove or correct it: no least-squares result is meaningful with it"
            )
    miss_cols = {c: _is_missing(frame[c]) for c in used}
    any_miss = np.zeros(len(frame), dtype=bool)
    for m in miss_cols.values():
        any_miss |= m
    counts = {c: int(m.sum()) for c, m in miss_cols.items() if m.any()}
    if any_miss.any() and policy == "raise":
        cols = ", ".join(f"{c} ({k})" for c, k in counts.items())
        raise DataError(
            f"missing values in column(s) {cols}; drop those rows or pass missing='drop'"
        )
    report = MissingReport(len(frame), int(any_miss.sum()), counts)
    frame = frame.loc[~any_miss]
    if len(frame) == 0:
        raise DataError(f"no rows left after dropping missing values ({report})")
    return frame, report


def _is_missing_series(col: pd.Series) -> pd.Series:
    return pd.Series(_is_missing(col), index=col.index)
