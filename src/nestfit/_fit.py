"""Least-squares fits of designs: the Fit result and the functions that make it."""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._data import MissingReport
from nestfit._display import html_for
from nestfit._fit_paths import fit_dense, fit_grouped
from nestfit.design._design import Design
from nestfit.errors import (
    DataError,
    RankDeficiencyWarning,
    RankDeficientError,
    ZeroResidualDfWarning,
)
from nestfit.linalg._groups import GroupSums

__all__ = ["Fit", "fit_design"]

@dataclass(frozen=True, eq=False)
class Fit:
    """Least squares on a design: ``b = argmin sum_i w_i (y_i - x_i b)^2``.

    Attributes
    ----------
    design : Design
        The model that was fitted (its columns name the coefficients).
    response_name : str
        The response column.
    coefficients : ndarray, shape (p,)
        Estimates; ``NaN`` for aliased (not estimable) columns.
    std_errors : ndarray, shape (p,)
        ``sqrt(diag(covariance))``; ``NaN`` where aliased.
    covariance : ndarray, shape (p, p)
        ``sigma^2 (X' W X)^{-1}`` over the estimable columns, from the triangular QR factor.
    aliased : tuple of str
        Names of columns that are linear combinations of earlier ones in pivot order.
    rank : int
        Numerical rank of the design (see :func:`nestfit.linalg.least_squares` for the tolerance).
    residual_ss : float
        ``RSS = sum_i w_i (y_i - yhat_i)^2``.
    residual_df : int
        ``n - rank``.
    total_ss : float
        ``sum w_i (y_i - ybar)^2`` when the model contains the constant, else ``sum w_i y_i^2``.
    has_constant : bool
        Whether the constant vector lies in the design's column space.
    method : str
        ``"grouped"`` (fitted from group sums) or ``"dense QR"``.
    condition : float
        Condition estimate of the retained triangular factor (scaled columns).
    offset : float
        A constant that was removed from the response before fitting (exactly,
        in decimal, when read from text); fitted values and coefficients include it.
    missing : MissingReport
        Rows dropped for missing values.
    """

    design: Design
    response_name: str
    coefficients: np.ndarray = field(repr=False)
    std_errors: np.ndarray = field(repr=False)
    covariance: np.ndarray = field(repr=False)
    aliased: tuple[str, ...]
    rank: int
    residual_ss: float
    residual_df: int
    total_ss: float
    has_constant: bool
    method: str
    condition: float
    offset: float = 0.0
    missing: MissingReport | None = field(default=None, repr=False)
    y: np.ndarray = field(default_factory=lambda: np.empty(0), repr=False)
    weights: np.ndarray | None = field(default=None, repr=False)
    row_labels: Any = field(default=None, repr=False)
    _group_fitted: np.ndarray | None = field(default=None, repr=False)
    _group_leverage: np.ndarray | None = field(default=None, repr=False)
    _residuals: np.ndarray | None = field(default=None, repr=False)
    _leverages: np.ndarray | None = field(default=None, repr=False)
    _shift: float = field(default=0.0, repr=False)

    # ------------------------------------------------------------ scalars
    @property
    def name(self) -> str:
        """The model's name."""
        return self.design.name

    @property
    def n_obs(self) -> int:
        """Number of observations used."""
        return int(self.design.n_rows)

    @property
    def sigma(self) -> float:
        """Residual standard deviation ``sqrt(RSS / residual_df)`` (NaN when df = 0)."""
        return math.sqrt(self.residual_ss / self.residual_df) if self.residual_df > 0 else math.nan

    @property
    def mean_square(self) -> float:
        """Residual mean square ``RSS / residual_df``."""
        return self.residual_ss / self.residual_df if self.residual_df > 0 else math.nan

    @property
    def r_squared(self) -> float:
        """``1 - RSS / TSS`` (uncentred TSS when the model has no constant)."""
        return 1.0 - self.residual_ss / self.total_ss if self.total_ss > 0 else math.nan

    @property
    def adj_r_squared(self) -> float:
        """``1 - (RSS / df_res) / (TSS / df_tot)``, ``df_tot = n - 1`` (``n`` without constant)."""
        df_tot = self.n_obs - (1 if self.has_constant else 0)
        if self.residual_df <= 0 or self.total_ss <= 0 or df_tot <= 0:
            return math.nan
        return 1.0 - (self.residual_ss / self.residual_df) / (self.total_ss / df_tot)

    # ------------------------------------------------------------- arrays
    @cached_property
    def fitted(self) -> np.ndarray:
        """Fitted values ``yhat = X b`` (offset included)."""
        if self._residuals is not None:
            out = (self.y - self._residuals) + self.offset
        else:
            assert self._group_fitted is not None and self.design.groups is not None
            out = (self._group_fitted + (self._shift + self.offset))[
                self.design.groups.factor.codes]
        out.flags.writeable = False
        return out

    @cached_property
    def residuals(self) -> np.ndarray:
        """Raw residuals ``y - yhat``."""
        if self._residuals is not None:
            out = self._residuals.copy()
        else:
            assert self._group_fitted is not None and self.design.groups is not None
            out = (self.y - self._shift) - self._group_fitted[self.design.groups.factor.codes]
        out.flags.writeable = False
        return out

    @cached_property
    def leverages(self) -> np.ndarray:
        """Diagonal of the hat matrix ``h_ii = w_i x_i (X'WX)^{-1} x_i'``."""
        if self._leverages is not None:
            return self._leverages
        assert self._group_leverage is not None and self.design.groups is not None
        codes = self.design.groups.factor.codes
        out = self._group_leverage[codes]
        if self.weights is not None:
            totals = np.bincount(codes, weights=self.weights)
            out = out * self.weights / totals[codes]
        else:
            out = out / np.bincount(codes)[codes]
        out.flags.writeable = False
        return out

    def group_fitted_means(self) -> pd.Series:
        """Fitted mean of each level (grouped designs only), offset included."""
        if self._group_fitted is None or self.design.groups is None:
            raise DataError(f"model {self.name!r} is not a grouped design; use .fitted")
        return pd.Series(self._group_fitted + (self._shift + self.offset),
                         index=list(self.design.groups.factor.levels), name="fitted mean")

    # ---------------------------------------------------------- inference
    def t_values(self) -> np.ndarray:
        """``t_j = b_j / se_j``."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return self.coefficients / self.std_errors

    def p_values(self) -> np.ndarray:
        """Two-sided p-values ``2 * P(T_df > |t_j|)`` of ``H0: b_j = 0``."""
        if self.residual_df <= 0:
            return np.full(self.coefficients.shape, np.nan)
        return 2.0 * stats.t.sf(np.abs(self.t_values()), self.residual_df)

    def conf_int(self, level: float = 0.95) -> pd.DataFrame:
        """Confidence intervals ``b_j -/+ t_{1-a/2, df} se_j`` for each coefficient."""
        if not 0.0 < level < 1.0:
            raise DataError(f"level must be between 0 and 1 (exclusive). Got {level!r} instead.")
        q = stats.t.ppf(0.5 + level / 2.0, self.residual_df) if self.residual_df > 0 else np.nan
        half = q * self.std_errors
        return pd.DataFrame(
            {"lower": self.coefficients - half, "upper": self.coefficients + half},
            index=list(self.design.column_names),
        )

    # ---------------------------------------------------------- conversion
    def to_frame(self) -> pd.DataFrame:
        """One row per coefficient: term, estimate, std_error, t, p, aliased."""
        return pd.DataFrame(
            {
                "term": [c.term for c in self.design.columns],
                "estimate": self.coefficients,
                "std_error": self.std_errors,
                "t": self.t_values(),
                "p": self.p_values(),
                "aliased": [c.name in self.aliased for c in self.design.columns],
            },
            index=pd.Index(self.design.column_names, name="column"),
        )

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) summary: model, fit statistics and coefficients."""
        rows = self.to_frame()
        return {
            "model": self.name,
            "response": self.response_name,
            "n_obs": self.n_obs,
            "method": self.method,
            "rank": self.rank,
            "parameters": self.design.n_columns,
            "residual_df": self.residual_df,
            "residual_ss": self.residual_ss,
            "sigma": _none_if_nan(self.sigma),
            "r_squared": _none_if_nan(self.r_squared),
            "adj_r_squared": _none_if_nan(self.adj_r_squared),
            "offset": self.offset,
            "aliased": list(self.aliased),
            "missing": self.missing.to_dict() if self.missing else None,
            "coefficients": [
                {
                    "name": name,
                    "term": row.term,
                    "estimate": _none_if_nan(row.estimate),
                    "std_error": _none_if_nan(row.std_error),
                    "t": _none_if_nan(row.t),
                    "p": _none_if_nan(row.p),
                }
                for name, row in rows.iterrows()
            ],
        }

    def __str__(self) -> str:
        from nestfit._text import format_fit

        return format_fit(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))

    def _repr_html_(self) -> str | None:  # Jupyter (renderer registered by nestfit.report)
        return html_for("fit", self)


def _none_if_nan(x: float) -> float | None:
    return None if x is None or not math.isfinite(float(x)) else float(x)


def fit_design(
    design: Design,
    y: np.ndarray,
    *,
    response_name: str = "y",
    weights: np.ndarray | None = None,
    offset: float = 0.0,
    missing: MissingReport | None = None,
    row_labels: Any = None,
    rank_tol: float | None = None,
    sums: GroupSums | None = None,
    aliased: str = "warn",
) -> Fit:
    """Fit a design by least squares (grouped path when the design allows it).

    Parameters
    ----------
    design : Design
        The model.
    y : ndarray, shape (n,)
        Response, finite, with ``offset`` already removed.
    response_name : str
        Name used in output.
    weights : ndarray, optional
        Positive case weights (weighted least squares).
    offset : float
        The constant removed from ``y``. When the model contains the constant,
        fitting ``y`` and adding ``offset`` back is exact (sums of squares do not
        change); otherwise the offset is added back to ``y`` before fitting.
    missing, row_labels
        Carried into the result for reporting and for :func:`compare`'s checks.
    rank_tol : float, optional
        Rank tolerance passed to the QR solver.
    sums : GroupSums, optional
        Precomputed group sums of ``y`` over the design's factor (grouped
        designs), so that several models of one factor share one pass over the data.
    aliased : {"warn", "raise"}
        What to do when the design is rank deficient: report the aliased
        columns (by name) with a :class:`RankDeficiencyWarning` and give them
        ``NaN`` coefficients, or raise :class:`RankDeficientError`.

    Returns
    -------
    Fit
    """
    if aliased not in ("warn", "raise"):
        raise DataError(f"aliased must be 'warn' or 'raise'. Got {aliased!r} instead.")
    y = np.asarray(y, dtype=np.float64)
    if y.ndim != 1 or y.size != design.n_rows:
        raise DataError(
            f"the response has {y.size} values but design {design.name!r} has {design.n_rows} rows"
        )
    if not np.all(np.isfinite(y)):
        raise DataError(f"the response {response_name!r} has NaN or infinite values")
    if weights is not None:
        weights = np.asarray(weights, dtype=np.float64)
        if weights.shape != y.shape or not np.all(np.isfinite(weights)) or np.any(weights <= 0):
            raise DataError("weights must be one positive finite number per observation")
    names = list(design.column_names)
    if design.groups is not None:
        result = fit_grouped(design, y, weights, names, rank_tol, sums)
    else:
        result = fit_dense(design, y, weights, names, rank_tol, need_constant=bool(offset))
    if offset and not result.has_constant:
        # The shift is not absorbed by the model: fit the shifted response itself.
        return fit_design(design, y + offset, response_name=response_name, weights=weights,
                          missing=missing, row_labels=row_labels, rank_tol=rank_tol)
    aliased_names = tuple(n for n, a in zip(names, result.aliased) if a)
    if aliased_names:
        message = (
            f"model {design.name!r} is rank deficient (rank {result.rank} of "
            f"{len(names)} columns): column(s) {', '.join(map(repr, aliased_names))} are linear "
            "combinations of the columns before them; their coefficients are not estimable"
        )
        if aliased == "raise":
            raise RankDeficientError(message + "; remove them or merge the levels involved")
        warnings.warn(message + " and are reported as NaN", RankDeficiencyWarning, stacklevel=3)
    coefficients = result.coefficients
    shift = float(result.shift)
    if offset or shift:
        coefficients = coefficients + (offset + shift) * result.constant_coefficients
    residual_df = design.n_rows - result.rank
    if residual_df <= 0:
        warnings.warn(
            f"model {design.name!r} has {design.n_rows} observations and rank {result.rank}: "
            "no residual degrees of freedom, so no error variance, standard errors or tests",
            ZeroResidualDfWarning,
            stacklevel=3,
        )
    sigma2 = result.residual_ss / residual_df if residual_df > 0 else math.nan
    covariance = sigma2 * result.cov_unscaled
    with np.errstate(invalid="ignore"):
        std_errors = np.sqrt(np.diag(covariance))
    for arr in (coefficients, covariance, std_errors, y):
        arr.flags.writeable = False
    return Fit(
        design=design,
        response_name=response_name,
        coefficients=coefficients,
        std_errors=std_errors,
        covariance=covariance,
        aliased=aliased_names,
        rank=int(result.rank),
        residual_ss=float(result.residual_ss),
        residual_df=int(residual_df),
        total_ss=float(result.total_ss),
        has_constant=bool(result.has_constant),
        method=result.method,
        condition=float(result.condition),
        offset=float(offset),
        missing=missing,
        y=y,
        weights=weights,
        row_labels=row_labels,
        _group_fitted=result.group_fitted,
        _group_leverage=result.group_leverage,
        _residuals=result.residuals,
        _leverages=result.leverages,
        _shift=shift,
    )
