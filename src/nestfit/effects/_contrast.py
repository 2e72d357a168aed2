"""Standardized difference for a contrast of level means, with a noncentral-t interval.

A contrast ``psi = sum c_i mu_i`` (``sum c_i = 0``) is first rescaled so that its
positive weights sum to 1 (and its negative weights to -1):

    c*_i = c_i / sum_{c_j > 0} c_j,

so that ``psi* = sum c*_i mu_i`` is a difference between two weighted averages of
means, on the scale of the response ("H4 minus the average of the others"),
whatever multiple of the weights was typed. The standardized difference is

    d = psi*_hat / s,

with ``s`` the residual standard deviation of the fit (for the separate-means
model, the pooled within-level standard deviation). With ``t = psi*_hat / se``,
``se = s sqrt(c*' V c*)`` and ``V`` the unscaled covariance of the fitted level
means (``diag(1 / n_i)`` for separate means), ``t`` is noncentral t on the residual
df with ``delta = psi* / (sigma sqrt(c*' V c*))``. The interval for ``delta`` from
:func:`noncentrality_interval_t` times ``se / s = sqrt(c*' V c*)`` is an exact
interval for ``psi* / sigma`` (Steiger & Fouladi 1997, in *What If There Were No
Significance Tests?*, Harlow et al. eds., ch. 9; Steiger 2004, Psychological
Methods 9, sec. 3, from memory). ``d`` is not corrected for its small-sample bias.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from nestfit._fit import Fit
from nestfit._groups import GroupModels
from nestfit._text import format_number
from nestfit.checks._input import as_group_models, level_weights
from nestfit.checks._result import is_real
from nestfit.effects._interval import noncentrality_interval_t
from nestfit.errors import ContrastError, DataError

__all__ = ["StandardizedDifference", "contrast_effect", "scaled_contrast_weights",
           "standardized_difference"]


@dataclass(frozen=True)
class StandardizedDifference:
    """A contrast on the scale of the error standard deviation, with its interval.

    Attributes
    ----------
    estimate : float
        ``d = psi_hat / s``.
    lower, upper : float
        Confidence limits for ``psi / sigma``.
    level : float
    contrast_estimate, std_error, sigma : float
        ``psi_hat``, its standard error and ``s``.
    df : float
        Degrees of freedom of ``s``.
    t : float
        ``psi_hat / se``.
    weights : Mapping[str, float] or None
        The rescaled weights ``c*`` by level, when known.
    """

    estimate: float
    lower: float
    upper: float
    level: float
    contrast_estimate: float
    std_error: float
    sigma: float
    df: float
    t: float
    weights: Mapping[str, float] | None = field(default=None, repr=False)

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"measure": "standardized difference", "estimate": self.estimate,
                "lower": self.lower, "upper": self.upper, "level": self.level,
                "contrast_estimate": self.contrast_estimate, "std_error": self.std_error,
                "sigma": self.sigma, "df": self.df, "t": self.t,
                "weights": dict(self.weights) if self.weights is not None else None}

    def to_frame(self) -> pd.DataFrame:
        """One row: estimate, lower, upper, contrast_estimate, std_error, sigma, df, t."""
        row = self.to_dict()
        row.pop("weights")
        return pd.DataFrame([row])

    def __str__(self) -> str:
        terms = ""
        if self.weights is not None:
            terms = " " + " ".join(f"{w:+.4g}*{lev}" for lev, w in self.weights.items() if w)
        return (f"Standardized difference of the contrast{terms}\n"
                f"  d = {format_number(self.contrast_estimate)} / {format_number(self.sigma)} = "
                f"{format_number(self.estimate, 4)}, {self.level:.0%} interval "
                f"[{format_number(self.lower, 4)}, {format_number(self.upper, 4)}] "
                f"(noncentral t on {format_number(self.df, 4)} df)\n"
                "  Assumes independent normal errors with equal variance in every level.")


def scaled_contrast_weights(weights: Sequence[float] | np.ndarray) -> np.ndarray:
    """Contrast weights rescaled so that the positive ones sum to 1: ``c / sum(c[c > 0])``.

    Raises
    ------
    ContrastError
        No positive weight (a contrast whose weights sum to zero always has one
        unless every weight is zero).
    """
    c = np.asarray(weights, dtype=float)
    positive = math.fsum(c[c > 0].tolist())
    if not positive > 0:
        raise ContrastError("the contrast has no positive weight, so it cannot be rescaled")
    out = c / positive
    out.flags.writeable = False
    return out


def standardized_difference(estimate: float, std_error: float, df: float, sigma: float, *,
                            level: float = 0.95) -> StandardizedDifference:
    """``estimate / sigma`` with an exact interval from the noncentral t.

    The hook for contrast objects: pass the estimate of a contrast whose
    weights are already scaled as wanted (see :func:`scaled_contrast_weights`),
    its standard error ``se = sigma_hat * sqrt(c' V c)``, the df of ``sigma_hat``
    and ``sigma_hat`` itself, all from the same fit.

    Parameters
    ----------
    estimate, std_error, df, sigma : float
        ``psi_hat``, ``se``, ``nu`` and ``s`` (``se`` and ``s`` positive, ``nu > 0``).
    level : float
        Confidence level.

    Returns
    -------
    StandardizedDifference

    Raises
    ------
    DataError
        Non-positive ``std_error``, ``sigma`` or ``df``; non-finite input;
        ``level`` outside (0, 1).
    """
    for name, value in (("estimate", estimate), ("std_error", std_error), ("df", df),
                        ("sigma", sigma)):
        if not is_real(value) or not math.isfinite(value):
            raise DataError(f"{name} must be a finite number. Got {value!r}.")
    if not (std_error > 0 and sigma > 0 and df > 0):
        raise DataError(
            "std_error, sigma and df must be positive (a perfect fit or no residual df has no "
            f"error scale). Got std_error={std_error!r}, sigma={sigma!r}, df={df!r}."
        )
    t = float(estimate / std_error)
    lo, hi = noncentrality_interval_t(t, df, level)
    ratio = std_error / sigma
    return StandardizedDifference(float(estimate / sigma), lo * ratio, hi * ratio, float(level),
                                  float(estimate), float(std_error), float(sigma), float(df), t)


def contrast_effect(
    source: Any,
    weights: Mapping[Any, float] | Sequence[float] | np.ndarray,
    *,
    response: str | None = None,
    factor: str | None = None,
    level: float = 0.95,
) -> StandardizedDifference:
    """Standardized difference of a contrast of level means, with its interval.

    Parameters
    ----------
    source : Fit, GroupModels or pandas.DataFrame
        A grouped fit (its fitted level means and residual standard deviation
        are used), or group models / a table (the separate-means model is fitted).
    weights : mapping or sequence
        ``{level: c_i}`` or one weight per level; they must sum to zero and are
        rescaled so that the positive ones sum to 1.
    response, factor : str, optional
        Column names, with a table.
    level : float
        Confidence level.

    Returns
    -------
    StandardizedDifference

    Raises
    ------
    ContrastError
        Malformed weights (unknown level, wrong length, not summing to zero).
    DataError
        A dense fit, no residual df, a perfect fit.

    Notes
    -----
    Formulas in the module docstring. With case weights, ``s`` is the error
    standard deviation of an observation of unit weight.
    """
    if isinstance(source, Fit):
        if response is not None or factor is not None:
            raise DataError("contrast_effect: give a fit alone, without response= or factor=")
        fit = source
    else:
        models: GroupModels = as_group_models(source, response, factor, who="contrast_effect")
        fit = models.separate_means()
    groups = fit.design.groups
    if groups is None or fit._group_fitted is None:
        raise DataError(
            f"model {fit.name!r} is not a grouped fit: contrasts of level means need a model "
            "from nestfit.groups(...)"
        )
    if fit.residual_df <= 0 or not fit.residual_ss > 0:
        raise DataError(
            f"model {fit.name!r} has no error variance (residual df {fit.residual_df}, residual "
            f"SS {fit.residual_ss:.3g}): a standardized difference needs one"
        )
    c = scaled_contrast_weights(level_weights(weights, groups.factor.levels, zero_sum=True))
    est = np.array([name not in fit.aliased for name in fit.design.column_names])
    coding = groups.coding[:, est]
    unscaled = np.asarray(fit.covariance, dtype=float)[np.ix_(est, est)] / fit.mean_square
    g = coding.T @ c
    variance_factor = float(g @ unscaled @ g)
    if not variance_factor > 0:
        raise ContrastError(
            f"the contrast is identically zero in model {fit.name!r} (the model gives the "
            "levels it compares the same mean); use a model that separates them"
        )
    # Fitted means relative to the fit's shift: the shift cancels in a contrast.
    estimate = math.fsum((c * fit._group_fitted).tolist())
    se = fit.sigma * math.sqrt(variance_factor)
    out = standardized_difference(estimate, se, float(fit.residual_df), fit.sigma, level=level)
    return StandardizedDifference(
        out.estimate, out.lower, out.upper, out.level, out.contrast_estimate, out.std_error,
        out.sigma, out.df, out.t,
        weights={lev: float(w) for lev, w in zip(groups.factor.levels, c)},
    )
