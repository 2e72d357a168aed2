"""Input checks shared by the least-squares routines.

Every check raises :class:`nestfit.errors.DataError` with a message that names
the argument at fault and, where there is one, the first offending entry.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike, NDArray

from nestfit.errors import DataError

__all__ = ["as_column_names", "as_matrix", "as_rank_tol", "as_vector", "as_weights"]

FloatArray = NDArray[np.float64]


def _to_float(value: ArrayLike, name: str) -> FloatArray:
    arr = np.asarray(value)
    if arr.dtype.kind == "c":
        raise DataError(f"{name} must be real; got a complex array")
    if arr.dtype.kind not in "biuf":
        try:
            arr = arr.astype(np.float64)
        except (TypeError, ValueError) as exc:
            raise DataError(
                f"{name} must be numeric; got values of type {arr.dtype} that cannot be "
                "converted to float"
            ) from exc
    return np.asarray(arr, dtype=np.float64)


def _first_bad(arr: FloatArray) -> tuple[int, ...]:
    bad = np.argwhere(~np.isfinite(arr))
    return tuple(int(i) for i in bad[0])


def as_matrix(x: ArrayLike, name: str = "X", *, allow_no_columns: bool = False) -> FloatArray:
    """Return ``x`` as a finite 2-D float64 array, or raise :class:`DataError`.

    Parameters
    ----------
    x : array_like, shape (n, p)
        The design matrix.
    name : str
        Argument name used in messages.
    allow_no_columns : bool
        Accept ``p == 0`` (an empty model); ``n == 0`` is always rejected.
    """
    arr = _to_float(x, name)
    if arr.ndim != 2:
        raise DataError(
            f"{name} must be a 2-D array (observations x columns); "
            f"got an array with {arr.ndim} dimension(s), shape {arr.shape}"
        )
    n, p = arr.shape
    if n == 0:
        raise DataError(f"{name} has no rows: at least one observation is needed")
    if p == 0 and not allow_no_columns:
        raise DataError(f"{name} has no columns: at least one model column is needed")
    if not np.all(np.isfinite(arr)):
        row, col = _first_bad(arr)
        raise DataError(
            f"{name} contains NaN or infinite values (first at row {row}, column {col}); "
            "remove or impute those observations before fitting"
        )
    return arr


def as_vector(v: ArrayLike, n: int, name: str = "y", *, matrix_name: str = "X") -> FloatArray:
    """Return ``v`` as a finite 1-D float64 array of length ``n``, or raise :class:`DataError`."""
    arr = _to_float(v, name)
    if arr.ndim != 1:
        raise DataError(
            f"{name} must be a 1-D array with one value per observation; got shape {arr.shape}"
        )
    if arr.shape[0] != n:
        raise DataError(f"{matrix_name} has {n} rows but {name} has {arr.shape[0]} values")
    if not np.all(np.isfinite(arr)):
        (row,) = _first_bad(arr)
        raise DataError(
            f"{name} contains NaN or infinite values (first at row {row}); "
            "remove or impute those observations before fitting"
        )
    return arr


def as_weights(weights: ArrayLike | None, n: int, *, matrix_name: str = "X") -> FloatArray | None:
    """Validate case weights: 1-D, length ``n``, finite and strictly positive.

    A zero weight is rejected rather than treated as an exclusion: a fit that
    silently keeps a row in ``residuals``/``leverages`` but not in the degrees of
    freedom is easy to misread, so the caller is asked to drop the row instead.
    Returns ``None`` when ``weights`` is ``None``.
    """
    if weights is None:
        return None
    w = as_vector(weights, n, "weights", matrix_name=matrix_name)
    nonpos = np.flatnonzero(w <= 0)
    if nonpos.size:
        i = int(nonpos[0])
        if w[i] == 0:
            raise DataError(
                f"weights must be strictly positive; weight 0 at row {i} "
                f"({nonpos.size} row(s) with weight <= 0): drop rows with zero weight "
                "before fitting instead of weighting them out"
            )
        raise DataError(
            f"weights must be strictly positive; got {float(w[i])!r} at row {i} "
            f"({nonpos.size} row(s) with weight <= 0)"
        )
    return w


def as_column_names(names: Sequence[str] | None, p: int) -> tuple[str, ...] | None:
    """Validate optional column names: ``p`` strings, all distinct."""
    if names is None:
        return None
    if isinstance(names, str):
        raise DataError("column_names must be a sequence of names, not a single string")
    out = tuple(names)
    if len(out) != p:
        raise DataError(f"column_names has {len(out)} names but X has {p} columns")
    for nm in out:
        if not isinstance(nm, str):
            raise DataError(f"column_names must be strings; got {nm!r}")
    if len(set(out)) != len(out):
        dup = next(nm for nm in out if out.count(nm) > 1)
        raise DataError(f"column_names must be distinct; {dup!r} appears more than once")
    return out


def as_rank_tol(rank_tol: float | None, n: int, p: int) -> float:
    """Return the relative rank tolerance; default ``max(n, p) * eps`` (float64 eps)."""
    if rank_tol is None:
        return float(max(n, p) * np.finfo(np.float64).eps)
    tol = float(rank_tol)
    if not (np.isfinite(tol) and 0.0 <= tol < 1.0):
        raise DataError(f"rank_tol must be a number in [0, 1); got {rank_tol!r}")
    return tol
