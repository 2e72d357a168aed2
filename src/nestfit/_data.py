"""Input cleaning at the public boundary: columns, dtypes and the missing-value policy.

Everything that reaches the fitter has been through here: numeric columns
are finite float64, factor columns have no missing labels, and any rows
dropped for missing values are counted in a :class:`MissingReport`.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd

from nestfit.errors import ColumnError, DataError

__all__ = [
    "CleanArrays",
    "MissingPolicy",
    "MissingReport",
    "check_missing_policy",
    "clean_arrays",
    "clean_columns",
]

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
    if isinstance(col.dtype, pd.CategoricalDtype):
        return _missing_categorical(col.array)
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
            raise _infinite(name, frame.index[np.isinf(values)][0])
    any_miss, report = _apply_policy({c: _is_missing(frame[c]) for c in used}, len(frame),
                                     policy)
    if any_miss is not None:
        frame = frame.loc[~any_miss]
    return frame, report


def _infinite(name: str, where: Any) -> DataError:
    return DataError(
        f"column {name!r} has an infinite value (row {where!r}); "
        "remove or correct it: no least-squares result is meaningful with it"
    )


def _apply_policy(miss_cols: Mapping[str, np.ndarray | None], n: int,
                  policy: MissingPolicy) -> tuple[np.ndarray | None, MissingReport]:
    """The rows missing in any used column (None when there are none) and the report.

    Raises
    ------
    DataError
        Missing values under ``missing="raise"``, or no rows left after dropping.
    """
    any_miss: np.ndarray | None = None
    counts: dict[str, int] = {}
    for c, m in miss_cols.items():
        if m is None or not m.any():
            continue
        counts[c] = int(m.sum())
        any_miss = m.copy() if any_miss is None else any_miss | m
    if any_miss is not None and policy == "raise":
        cols = ", ".join(f"{c} ({k})" for c, k in counts.items())
        raise DataError(
            f"missing values in column(s) {cols}; drop those rows or pass missing='drop'"
        )
    report = MissingReport(n, 0 if any_miss is None else int(any_miss.sum()), counts)
    if report.n_dropped == n:
        raise DataError(f"no rows left after dropping missing values ({report})")
    return any_miss, report


def _missing_categorical(cat: Any) -> np.ndarray:
    """Missing cells of a pandas Categorical: code -1, or a category that is blank text.

    The same cells as ``isna() | (astype(str).str.strip() == "")`` without
    turning every cell into a string.
    """
    codes = np.asarray(cat.codes)
    miss = codes < 0
    blank = [i for i, c in enumerate(cat.categories) if str(c).strip() == ""]
    if blank:
        miss |= np.isin(codes, blank)
    return miss


@dataclass(frozen=True)
class CleanArrays:
    """What :func:`clean_arrays` kept: the columns, the report and the rows' positions."""

    columns: dict[str, Any]
    report: MissingReport
    row_labels: np.ndarray


def _fast_numeric(v: Any) -> bool:
    return isinstance(v, np.ndarray) and v.ndim == 1 and v.dtype.kind in "fiu"


def _fast_categorical(v: Any) -> bool:
    return isinstance(v, pd.Categorical) or (
        isinstance(v, np.ndarray) and v.ndim == 1 and v.dtype.kind in "fiu"
    )


def clean_arrays(
    columns: Mapping[str, Any],
    *,
    numeric: Sequence[str],
    categorical: Sequence[str] = (),
    missing: str = "drop",
) -> CleanArrays | None:
    """:func:`clean_columns` for one-dimensional numpy arrays, without building a DataFrame.

    Numeric columns must be integer or floating ndarrays; categorical columns
    pandas ``Categorical`` or integer or floating ndarrays, all of one length.
    Returns ``None`` for any other input, which then takes :func:`clean_columns`
    (so every other dtype gets that function's checks and messages). The checks
    and messages are those of :func:`clean_columns` for a mapping of arrays:
    infinite values are an error naming the first row (its position), NaN
    (and code -1 or blank-text categories of a Categorical) count as missing,
    and the policy drops or raises alike.

    Returns
    -------
    CleanArrays or None
        Numeric columns as new float64 arrays, categorical columns as new
        arrays or Categoricals restricted to the rows kept; ``row_labels`` are
        the positions of those rows.
    """
    policy = check_missing_policy(missing)
    used = list(dict.fromkeys([*numeric, *categorical]))
    if any(c not in columns for c in used):
        return None
    if not all(_fast_numeric(columns[c]) for c in numeric) or not all(
        _fast_categorical(columns[c]) for c in categorical
    ):
        return None
    n = len(columns[used[0]])
    if any(len(columns[c]) != n for c in used):
        return None
    values: dict[str, Any] = {}
    miss_cols: dict[str, np.ndarray | None] = {}
    for name in numeric:
        col = np.asarray(columns[name], dtype=np.float64)
        if col.dtype.kind == "f" and not np.isfinite(columns[name]).all():
            inf = np.isinf(col)
            if inf.any():
                raise _infinite(name, int(np.flatnonzero(inf)[0]))
            miss_cols[name] = np.isnan(col)
        else:
            miss_cols[name] = None
        values[name] = col
    for name in categorical:
        if name in values:
            continue
        lab = columns[name]
        values[name] = lab
        if isinstance(lab, pd.Categorical):
            miss_cols[name] = _missing_categorical(lab)
        elif lab.dtype.kind == "f":
            miss_cols[name] = np.isnan(lab)
        else:
            miss_cols[name] = None
    any_miss, report = _apply_policy({c: miss_cols[c] for c in used}, n, policy)
    if any_miss is None:
        # own copies of the caller's arrays (a Categorical's codes are recoded anyway)
        kept = {c: (v.copy() if v is columns[c] and isinstance(v, np.ndarray) else v)
                for c, v in values.items()}
        return CleanArrays(kept, report, np.arange(n))
    keep = ~any_miss
    return CleanArrays({c: v[keep] for c, v in values.items()}, report, np.flatnonzero(keep))


def _is_missing_series(col: pd.Series) -> pd.Series:
    return pd.Series(_is_missing(col), index=col.index)
