"""Heteroscedasticity-consistent (sandwich) covariance of the coefficients of any fit.

    V_HC = B X' W Omega W X B,   B = (X' W X)^{-1},   Omega = diag(omega_i),

with ``e_i = sqrt(w_i) (y_i - yhat_i)``, leverage ``h_i``, rank ``p`` and

* HC0: ``omega_i w_i = e_i^2`` (White 1980, Econometrica 48, 817-838);
* HC1: ``e_i^2 n / (n - p)``;
* HC2: ``e_i^2 / (1 - h_i)``;
* HC3: ``e_i^2 / (1 - h_i)^2``

(MacKinnon & White 1985, J. Econometrics 29, 305-325; Long & Ervin 2000,
The American Statistician 54, 217-224, who recommend HC3 for small samples).
``B`` is ``Fit.covariance / s^2``, which the fit obtained from its triangular QR
factor; ``X' W X`` itself is never formed or inverted. For grouped fits every
observation of level ``g`` has design row ``c_g``, so the middle matrix is
``C' diag(sum_{i in g} w_i e_i^2 a_i) C`` with ``a_i`` the HC adjustment, and the
``n x p`` matrix is not built.
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from nestfit._fit import Fit
from nestfit.errors import DataError

__all__ = ["hc_covariance", "hc_group_mean_covariance"]

HCKind = Literal["HC0", "HC1", "HC2", "HC3"]

# Leverage this close to 1 makes the HC2/HC3 adjustment undefined. Common practice, no source.
_UNIT_LEVERAGE = 1e-10


def hc_covariance(fit: Fit, kind: HCKind = "HC3") -> np.ndarray:
    """Heteroscedasticity-consistent covariance matrix of a fit's coefficients.

    Parameters
    ----------
    fit : Fit
        Any fit, grouped or dense, weighted or not.
    kind : {"HC0", "HC1", "HC2", "HC3"}
        The residual adjustment (module docstring). HC3 is the default for its
        better small-sample behaviour (Long & Ervin 2000).

    Returns
    -------
    ndarray, shape (p, p)
        Read-only; NaN rows and columns for aliased coefficients, as in
        ``Fit.covariance``.

    Raises
    ------
    DataError
        Unknown ``kind``; no residual degrees of freedom; HC2/HC3 with an
        observation of leverage 1 (its adjustment divides by zero).

    Notes
    -----
    For a contrast ``L b`` of the coefficients, ``se = sqrt(L V_HC L')``, usually
    referred to ``t`` on ``fit.residual_df`` (common practice, no source).
    Agrees with statsmodels ``OLS/WLS(...).fit(cov_type=kind).cov_params()``.
    """
    if not isinstance(fit, Fit):
        raise DataError(f"hc_covariance takes a Fit. Got {type(fit).__name__}.")
    if kind not in ("HC0", "HC1", "HC2", "HC3"):
        raise DataError(f"kind must be one of HC0, HC1, HC2, HC3. Got {kind!r} instead.")
    if fit.residual_df <= 0:
        raise DataError(
            f"model {fit.name!r} has no residual degrees of freedom: its residuals are all "
            "zero and carry no information about the variance"
        )
    p = fit.design.n_columns
    est = np.array([name not in fit.aliased for name in fit.design.column_names])
    out = np.full((p, p), np.nan)
    if not fit.mean_square > 0:
        sub = np.zeros((int(est.sum()), int(est.sum())))
    else:
        scale = _adjusted_squares(fit, kind)
        bread = np.asarray(fit.covariance, dtype=float)[np.ix_(est, est)] / fit.mean_square
        groups = fit.design.groups
        if groups is not None and fit._group_fitted is not None:
            per_level = np.bincount(groups.factor.codes, weights=scale,
                                    minlength=groups.factor.n_levels)
            c = groups.coding[:, est]
            meat = c.T @ (per_level[:, None] * c)
        else:
            x = fit.design.to_dense()[:, est]
            meat = x.T @ (scale[:, None] * x)
        sub = bread @ meat @ bread
        sub = (sub + sub.T) / 2.0
    out[np.ix_(est, est)] = sub
    out.flags.writeable = False
    return out


def hc_group_mean_covariance(fit: Fit, kind: HCKind = "HC3") -> np.ndarray:
    """Heteroscedasticity-consistent covariance of a grouped fit's fitted level means.

    Parameters
    ----------
    fit : Fit
        A grouped fit (from :func:`nestfit.groups`) without aliased columns.
    kind : {"HC0", "HC1", "HC2", "HC3"}
        As :func:`hc_covariance`.

    Returns
    -------
    ndarray, shape (k, k)
        ``C V_HC C'`` with ``C`` the coding matrix (levels by columns). For a
        contrast with weights ``c`` over levels, ``se = sqrt(c' V c)``. For the
        separate-means model, HC2 gives ``diag(s_i^2 / n_i)``: the Welch-type
        standard error of :func:`welch_contrast_se`.

    Raises
    ------
    DataError
        A dense fit, or a fit with aliased columns; and as :func:`hc_covariance`.
    """
    if not isinstance(fit, Fit) or fit.design.groups is None:
        raise DataError("hc_group_mean_covariance needs a grouped fit (from nestfit.groups)")
    if fit.aliased:
        raise DataError(
            f"model {fit.name!r} has aliased columns ({', '.join(fit.aliased)}); refit with a "
            "full-rank coding"
        )
    v = hc_covariance(fit, kind)
    c = fit.design.groups.coding
    out = c @ v @ c.T
    out = (out + out.T) / 2.0
    out.flags.writeable = False
    return out


def _adjusted_squares(fit: Fit, kind: str) -> np.ndarray:
    """``w_i^2 r_i^2 a_i`` per observation (``w_i e_i^2`` with ``e`` weighted)."""
    r = np.asarray(fit.residuals, dtype=float)
    sq = r * r if fit.weights is None else fit.weights ** 2 * r * r
    if kind == "HC0":
        return sq
    if kind == "HC1":
        return sq * (fit.n_obs / fit.residual_df)
    h = np.asarray(fit.leverages, dtype=float)
    unit = h >= 1.0 - _UNIT_LEVERAGE
    if np.any(unit):
        i = int(np.flatnonzero(unit)[0])
        label = fit.row_labels[i] if fit.row_labels is not None else i
        label = label.item() if isinstance(label, np.generic) else label
        raise DataError(
            f"{kind} divides by 1 - leverage, and observation {label!r} of model {fit.name!r} "
            "has leverage 1 (it alone determines a parameter, e.g. a level with one "
            "observation); use HC0 or HC1, or collect more data for that level"
        )
    return sq / (1.0 - h) if kind == "HC2" else sq / (1.0 - h) ** 2
