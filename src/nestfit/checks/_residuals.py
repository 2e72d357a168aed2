"""Residual diagnostics of any fit: studentized residuals, leverages, Cook's distance, DFFITS.

For observation ``i`` of a (weighted) least-squares fit with rank ``p``,
``n`` observations, residual df ``nu = n - p``, weighted residual
``e_i = sqrt(w_i) (y_i - yhat_i)``, leverage ``h_i`` and ``s^2 = RSS / nu``
(Cook & Weisberg 1982, *Residuals and Influence in Regression*, ch. 2-3;
Belsley, Kuh & Welsch 1980, *Regression Diagnostics*, ch. 2; from memory):

* standardized (internally studentized) residual ``r_i = e_i / (s sqrt(1 - h_i))``;
* deletion variance ``s_(i)^2 = (RSS - e_i^2 / (1 - h_i)) / (nu - 1)`` and externally
  studentized residual ``t_i = e_i / (s_(i) sqrt(1 - h_i))``, distributed as
  ``t(nu - 1)`` for one prechosen observation under the model;
* Cook's distance ``D_i = r_i^2 h_i / (p (1 - h_i))``;
* DFFITS ``t_i sqrt(h_i / (1 - h_i))``.

Flag rules (each a screening rule, not a test that an observation is wrong):

* outlier: ``|t_i| > t_{1 - alpha / (2 n), nu - 1}``, the Bonferroni bound over all
  ``n`` observations (Cook & Weisberg 1982, sec. 2.2.1, from memory);
* high leverage: ``h_i > 2 p / n`` (Belsley, Kuh & Welsch 1980, p. 17, from memory);
* influential: ``D_i`` above the median of ``F(p, nu)`` (Cook & Weisberg 1982,
  sec. 3.5, from memory), or above ``4 / n`` (common practice, no source);
* DFFITS is reported with the cut-off ``2 sqrt(p / n)`` (Belsley, Kuh & Welsch
  1980, p. 28, from memory) but not used for a flag of its own.

An observation with leverage 1 (for example the only observation of a level
in a separate-means model) is fitted exactly whatever its value: its
residuals, Cook's distance and DFFITS are undefined (NaN), and it is flagged for
leverage.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._fit import Fit
from nestfit._text import format_number, text_table
from nestfit.checks._result import check_alpha
from nestfit.errors import DataError

__all__ = ["ResidualDiagnostics", "residual_diagnostics"]

CookRule = Literal["f-median", "4/n"]

# A leverage this close to 1 counts as exactly 1 (the observation is fitted
# exactly by its own parameter). Common practice, no source.
_UNIT_LEVERAGE = 1e-10

_COLUMNS = ("fitted", "residual", "standardized", "studentized", "leverage",
            "cooks_distance", "dffits", "outlier", "high_leverage", "influential")


@dataclass(frozen=True, eq=False)
class ResidualDiagnostics:
    """Per-observation residual diagnostics of one fit, with the flag rules applied.

    Attributes
    ----------
    model : str
        The fit's name.
    n_obs, rank, residual_df : int
        ``n``, ``p`` and ``nu = n - p``.
    sigma : float
        ``s``.
    fitted, residuals, standardized, studentized, leverages, cooks_distance, dffits : ndarray
        One value per observation (see the module docstring); ``residuals`` are raw
        ``y_i - yhat_i``.
    outlier, high_leverage, influential : ndarray of bool
        The flags.
    outlier_cutoff, leverage_cutoff, cook_cutoff, dffits_cutoff : float
        The cut-offs used.
    cook_rule : str
        ``"f-median"`` or ``"4/n"``.
    alpha : float
        Family-wise level of the Bonferroni outlier rule.
    row_labels : ndarray
        Labels of the observations (the input rows kept by the fit).
    """

    model: str
    n_obs: int
    rank: int
    residual_df: int
    sigma: float
    fitted: np.ndarray = field(repr=False)
    residuals: np.ndarray = field(repr=False)
    standardized: np.ndarray = field(repr=False)
    studentized: np.ndarray = field(repr=False)
    leverages: np.ndarray = field(repr=False)
    cooks_distance: np.ndarray = field(repr=False)
    dffits: np.ndarray = field(repr=False)
    outlier: np.ndarray = field(repr=False)
    high_leverage: np.ndarray = field(repr=False)
    influential: np.ndarray = field(repr=False)
    outlier_cutoff: float
    leverage_cutoff: float
    cook_cutoff: float
    dffits_cutoff: float
    cook_rule: str
    alpha: float
    row_labels: np.ndarray = field(repr=False)

    @property
    def flagged(self) -> np.ndarray:
        """Positions of observations with at least one flag."""
        return np.flatnonzero(self.outlier | self.high_leverage | self.influential)

    def rules(self) -> dict[str, str]:
        """Each flag rule in words, with its cut-off."""
        cook = ("median of F(p, n - p), Cook & Weisberg 1982" if self.cook_rule == "f-median"
                else "4 / n, common practice")
        return {
            "outlier": (f"|externally studentized residual| > {self.outlier_cutoff:.4g} = "
                        f"t quantile 1 - {self.alpha:g}/(2n) on {self.residual_df - 1} df "
                        "(Bonferroni over all n observations)"),
            "high_leverage": (f"leverage > 2p/n = {self.leverage_cutoff:.4g} "
                              "(Belsley, Kuh & Welsch 1980)"),
            "influential": f"Cook's distance > {self.cook_cutoff:.4g} ({cook})",
            "dffits": (f"|DFFITS| > 2 sqrt(p/n) = {self.dffits_cutoff:.4g} "
                       "(Belsley, Kuh & Welsch 1980; reported, not flagged)"),
        }

    def to_frame(self) -> pd.DataFrame:
        """One row per observation, indexed by row label."""
        data = {name: getattr(self, _ATTR.get(name, name)) for name in _COLUMNS}
        return pd.DataFrame(data, index=pd.Index(self.row_labels, name="row"))

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form: summary, rules, and one list per column; NaN -> None."""
        frame = self.to_frame()
        return {
            "model": self.model,
            "n_obs": self.n_obs,
            "rank": self.rank,
            "residual_df": self.residual_df,
            "sigma": self.sigma,
            "rules": self.rules(),
            "cutoffs": {"outlier": self.outlier_cutoff, "leverage": self.leverage_cutoff,
                        "cooks_distance": self.cook_cutoff, "dffits": self.dffits_cutoff},
            "flagged_rows": [_plain(x) for x in self.row_labels[self.flagged].tolist()],
            "observations": {
                "row": [_plain(x) for x in self.row_labels.tolist()],
                **{c: [_plain(x) for x in frame[c].tolist()] for c in _COLUMNS},
            },
        }

    def __str__(self) -> str:
        lines = [
            f"Residual diagnostics of model {self.model!r}: n = {self.n_obs}, rank p = "
            f"{self.rank}, residual df {self.residual_df}, sigma {format_number(self.sigma)}",
            *(f"  {name}: {rule}" for name, rule in self.rules().items()),
            f"  flagged: {int(self.outlier.sum())} outlier, {int(self.high_leverage.sum())} "
            f"high leverage, {int(self.influential.sum())} influential",
        ]
        flagged = self.flagged
        if flagged.size:
            order = flagged[np.argsort(-np.nan_to_num(np.abs(self.studentized[flagged]),
                                                      nan=np.inf), kind="stable")][:10]
            rows = [[str(_plain(self.row_labels[i])), format_number(self.residuals[i]),
                     format_number(self.studentized[i], 4), format_number(self.leverages[i], 4),
                     format_number(self.cooks_distance[i], 4),
                     ",".join(n for n, f in (("outlier", self.outlier[i]),
                                             ("leverage", self.high_leverage[i]),
                                             ("influence", self.influential[i])) if f)]
                    for i in order]
            lines += ["", text_table(["row", "residual", "studentized", "leverage", "Cook's D",
                                      "flags"], rows)]
            if flagged.size > len(order):
                lines.append(f"  ... and {flagged.size - len(order)} more (see to_frame())")
        lines += ["", "  Flags point to observations worth checking, not to observations to "
                  "delete; the leverage and Cook's rules flag some points in most data sets."]
        return "\n".join(lines)


_ATTR = {"residual": "residuals", "leverage": "leverages"}


def residual_diagnostics(fit: Fit, *, alpha: float = 0.05,
                         cook_rule: CookRule = "f-median") -> ResidualDiagnostics:
    """Residuals, leverages and influence measures of a fit, with outlying points flagged.

    Parameters
    ----------
    fit : Fit
        Any fit (grouped or dense, weighted or not).
    alpha : float
        Family-wise level of the Bonferroni outlier rule.
    cook_rule : {"f-median", "4/n"}
        Cut-off for Cook's distance: the median of ``F(p, n - p)`` (Cook &
        Weisberg 1982) or ``4 / n``.

    Returns
    -------
    ResidualDiagnostics

    Raises
    ------
    DataError
        Not a Fit; fewer than 2 residual degrees of freedom (the deletion
        variance needs at least 1); a perfect fit (``s = 0``); ``alpha`` outside
        (0, 1); an unknown ``cook_rule``.

    Notes
    -----
    Formulas and rules in the module docstring. The leverages are the
    diagonal of the hat matrix from the fit's QR factor (grouped fits: the
    level's leverage shared among its observations). Agrees with
    ``statsmodels.stats.outliers_influence.OLSInfluence``.
    """
    if not isinstance(fit, Fit):
        raise DataError(f"residual_diagnostics takes a Fit. Got {type(fit).__name__}.")
    alpha = check_alpha(alpha)
    if cook_rule not in ("f-median", "4/n"):
        raise DataError(f"cook_rule must be 'f-median' or '4/n'. Got {cook_rule!r} instead.")
    n, p, nu = fit.n_obs, fit.rank, fit.residual_df
    if nu < 2:
        raise DataError(
            f"model {fit.name!r} has {nu} residual degrees of freedom; studentized residuals "
            "need at least 2 (n - p - 1 >= 1)"
        )
    if not fit.residual_ss > 0:
        raise DataError(
            f"model {fit.name!r} fits the data exactly (residual SS 0): residuals cannot be "
            "studentized"
        )
    r = np.asarray(fit.residuals, dtype=float)
    e = r if fit.weights is None else r * np.sqrt(fit.weights)
    h = np.asarray(fit.leverages, dtype=float)
    unit = h >= 1.0 - _UNIT_LEVERAGE
    with np.errstate(divide="ignore", invalid="ignore"):
        one_minus = np.where(unit, np.nan, 1.0 - h)
        s = fit.sigma
        standardized = e / (s * np.sqrt(one_minus))
        deleted = np.maximum(fit.residual_ss - e * e / one_minus, 0.0) / (nu - 1)
        studentized = e / np.sqrt(deleted * one_minus)
        cooks = standardized ** 2 * h / (p * one_minus)
        dffits = studentized * np.sqrt(h / one_minus)
    outlier_cutoff = float(stats.t.isf(alpha / (2.0 * n), nu - 1))
    leverage_cutoff = 2.0 * p / n
    cook_cutoff = float(stats.f.ppf(0.5, p, nu)) if cook_rule == "f-median" else 4.0 / n
    arrays = {
        "fitted": np.asarray(fit.fitted, dtype=float).copy(), "residuals": r.copy(),
        "standardized": standardized, "studentized": studentized, "leverages": h.copy(),
        "cooks_distance": cooks, "dffits": dffits,
        "outlier": np.nan_to_num(np.abs(studentized)) > outlier_cutoff,
        "high_leverage": h > leverage_cutoff,
        "influential": np.nan_to_num(cooks) > cook_cutoff,
    }
    for arr in arrays.values():
        arr.flags.writeable = False
    labels = (np.asarray(fit.row_labels) if fit.row_labels is not None
              and len(fit.row_labels) == n else np.arange(n))
    return ResidualDiagnostics(
        model=fit.name, n_obs=n, rank=p, residual_df=nu, sigma=float(fit.sigma), **arrays,
        outlier_cutoff=outlier_cutoff, leverage_cutoff=leverage_cutoff, cook_cutoff=cook_cutoff,
        dffits_cutoff=2.0 * math.sqrt(p / n), cook_rule=cook_rule, alpha=alpha,
        row_labels=labels,
    )


def _plain(x: Any) -> Any:
    if isinstance(x, (bool, np.bool_)):
        return bool(x)
    if isinstance(x, (int, np.integer)):
        return int(x)
    if isinstance(x, (float, np.floating)):
        return float(x) if math.isfinite(float(x)) else None
    return x if isinstance(x, str) else str(x)
