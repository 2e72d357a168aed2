"""``nestfit.fit``: fit a model given as a formula."""

from __future__ import annotations

from typing import Any

import numpy as np
import patsy

from nestfit._fit import Fit, fit_design
from nestfit.design._formula import design_from_formula
from nestfit.errors import DataError

__all__ = ["fit"]


def fit(
    formula: str,
    data: Any,
    weights: str | Any = None,
    missing: str = "drop",
    *,
    name: str | None = None,
    rank_tol: float | None = None,
    aliased: str = "warn",
) -> Fit:
    """Fit a linear model given as a patsy formula, by pivoted Householder QR.

    Parameters
    ----------
    formula : str
        Two-sided formula, e.g. ``"weight ~ C(head)"``, ``"y ~ C(g) + x"`` or
        ``"y ~ C(a) * C(b)"``. nestfit's codings can be used inside it:
        ``C(head, Deviation())``, ``C(dose, Polynomial(spacing=[0, 1, 2, 4]))``,
        ``C(head, Blocks("H4 | ..."))``.
    data : pandas.DataFrame
        The table.
    weights : str or array_like, optional
        Case weights for weighted least squares: a column name, or an array
        with one positive weight per row of ``data``.
    missing : {"drop", "raise"}
        Drop rows with missing values in the used columns (reported in
        ``Fit.missing``), or raise.
    name : str, optional
        Model name used in comparisons (default: the right-hand side).
    rank_tol : float, optional
        Rank tolerance for the QR solver (see :func:`nestfit.linalg.least_squares`).
    aliased : {"warn", "raise"}
        Rank-deficient design: name the aliased columns in a warning and give
        them NaN coefficients (default), or raise ``RankDeficientError``.

    Returns
    -------
    Fit

    Notes
    -----
    Minimises ``sum_i w_i (y_i - x_i b)^2`` by Householder QR with column
    pivoting of the column-scaled ``W^{1/2} X`` (Golub & Van Loan, *Matrix
    Computations*, 4th ed., 2013, sec. 5.4), never through ``X'X``. Aliased
    columns get ``NaN`` coefficients and are named in ``Fit.aliased``.

    Examples
    --------
    >>> import nestfit
    >>> data = nestfit.datasets.load_fill_weights()
    >>> f = nestfit.fit("weight ~ C(head)", data)
    >>> f.rank
    6
    """
    env = patsy.EvalEnvironment.capture(1)
    weight_col: str | None = None
    if weights is not None and not isinstance(weights, str):
        arr = np.asarray(weights, dtype=float)
        try:
            n = len(data)
        except TypeError:
            n = -1
        if arr.ndim != 1 or arr.size != n:
            raise DataError(f"weights must have one value per row of data ({n}), got {arr.shape}")
        data = data.assign(__weights__=arr)
        weight_col = "__weights__"
    elif isinstance(weights, str):
        weight_col = weights
    built = design_from_formula(formula, data, missing=missing, name=name, eval_env=env,
                                weights=weight_col)
    return fit_design(built.design, built.y, response_name=built.response_name,
                      weights=built.weights, missing=built.missing,
                      row_labels=built.row_labels, rank_tol=rank_tol, aliased=aliased)
