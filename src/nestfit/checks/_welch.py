"""Means under unequal variances: Welch's one-way test and Welch-type contrasts.

Welch's heteroscedastic one-way test (Welch 1951, "On the comparison of several
mean values: an alternative approach", Biometrika 38, 330-336). With
``w_i = n_i / s_i^2``, ``W = sum w_i`` and ``m = sum w_i ybar_i / W``,

    A      = sum_i w_i (ybar_i - m)^2 / (k - 1),
    Lambda = sum_i (1 - w_i / W)^2 / (n_i - 1),
    F      = A / (1 + 2 (k - 2) Lambda / (k^2 - 1)),

referred to ``F(k - 1, (k^2 - 1) / (3 Lambda))``.

A contrast ``psi = sum c_i mu_i`` estimated by ``sum c_i ybar_i`` has, without
assuming equal variances, the standard error and Satterthwaite degrees of
freedom (Satterthwaite 1946, Biometrics Bulletin 2, 110-114; Welch 1947,
Biometrika 34, 28-35)

    v_i = c_i^2 s_i^2 / n_i,   se = sqrt(sum v_i),   df = (sum v_i)^2 / sum v_i^2 / (n_i - 1).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._groups import GroupModels
from nestfit._text import format_number, format_p
from nestfit.checks._input import (
    as_group_models,
    level_weights,
    require_group_size,
    require_unweighted,
    summarize_groups,
)
from nestfit.checks._result import CheckResult, check_alpha, verdict
from nestfit.errors import DataError

__all__ = ["WelchContrast", "welch_anova", "welch_contrast", "welch_contrast_se"]


def welch_anova(source: Any, response: str | None = None, factor: str | None = None, *,
                alpha: float = 0.05) -> CheckResult:
    """Welch's test that all level means are equal, without assuming equal variances.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or a table with ``response`` and ``factor`` named.
    response, factor : str, optional
        Column names, with a table.
    alpha : float
        Level for the plain-words verdict.

    Returns
    -------
    CheckResult
        ``F`` with df ``(k - 1, (k^2 - 1) / (3 Lambda))`` (the second fractional).

    Raises
    ------
    DataError
        Case weights; a level with fewer than 2 observations or with no spread
        (its weight ``n_i / s_i^2`` is infinite); ``alpha`` outside (0, 1).

    Notes
    -----
    Formulas in the module docstring (Welch 1951). Agrees with
    ``statsmodels.stats.oneway.anova_oneway(..., use_var="unequal")``; with two
    levels ``F`` is the square of Welch's two-sample t.
    """
    models = as_group_models(source, response, factor, who="Welch's test")
    alpha = check_alpha(alpha)
    n, s2 = _group_variances(models, "Welch's test")
    means = models.sums.means
    k = n.size
    w = n / s2
    total_w = math.fsum(w.tolist())
    centre = math.fsum((w * means).tolist()) / total_w
    a = math.fsum((w * (means - centre) ** 2).tolist()) / (k - 1)
    lam = math.fsum(((1.0 - w / total_w) ** 2 / (n - 1.0)).tolist())
    f_value = a / (1.0 + 2.0 * (k - 2) * lam / (k * k - 1.0))
    df2 = (k * k - 1.0) / (3.0 * lam)
    p = float(stats.f.sf(f_value, k - 1, df2))
    resp, fac = models.response_name, models.factor.name
    return CheckResult(
        name="Welch", statistic=float(f_value), df=(float(k - 1), float(df2)), p=p,
        distribution="F",
        null_hypothesis=f"every level of {fac!r} has the same mean {resp!r} (variances may differ)",
        verdict=verdict(p, alpha,
                        f"The mean of {resp!r} differs between the levels of {fac!r}",
                        f"No clear evidence that the mean of {resp!r} differs between the levels "
                        f"of {fac!r}"),
        caveat=("Welch's test does not assume equal variances; it assumes independent, roughly "
                "normal observations, and its F reference distribution is an approximation that "
                "is less accurate when groups are very small."),
        alpha=alpha,
    )


def welch_contrast_se(
    weights: Sequence[float] | np.ndarray,
    group_variances: Sequence[float] | np.ndarray,
    counts: Sequence[int] | np.ndarray,
) -> tuple[float, float]:
    """Standard error and Satterthwaite df of ``sum c_i ybar_i`` with unequal variances.

    This is the hook for contrast families: any family that needs a
    per-contrast standard error and degrees of freedom can call it with the
    contrast's weights over the levels and the levels' variances and counts
    (:func:`summarize_groups` gives both).

    Parameters
    ----------
    weights : array_like, shape (k,)
        ``c_i``, one per level (they need not sum to zero).
    group_variances : array_like, shape (k,)
        ``s_i^2``, the sample variance of each level.
    counts : array_like, shape (k,)
        ``n_i``.

    Returns
    -------
    se : float
        ``sqrt(sum_i c_i^2 s_i^2 / n_i)``.
    df : float
        ``(sum v_i)^2 / sum_i v_i^2 / (n_i - 1)`` with ``v_i = c_i^2 s_i^2 / n_i``
        (Satterthwaite 1946), over the levels with ``c_i != 0``.

    Raises
    ------
    DataError
        Mismatched lengths, a weighted level with fewer than 2 observations,
        a negative or non-finite variance, or ``se = 0`` (no spread in any
        weighted level).
    """
    c = np.asarray(weights, dtype=float)
    s2 = np.asarray(group_variances, dtype=float)
    n = np.asarray(counts, dtype=float)
    if not (c.ndim == s2.ndim == n.ndim == 1 and c.size == s2.size == n.size):
        raise DataError(
            f"weights, group_variances and counts need one value per level each; got "
            f"{c.size}, {s2.size} and {n.size}"
        )
    used = c != 0
    if np.any(n[used] < 2):
        raise DataError("a Welch-type standard error needs at least 2 observations in every "
                        "level with a nonzero weight (to estimate its variance)")
    if not np.all(np.isfinite(s2[used])) or np.any(s2[used] < 0):
        raise DataError("group variances must be finite and non-negative")
    v = c[used] ** 2 * s2[used] / n[used]
    total = math.fsum(v.tolist())
    if total <= 0:
        raise DataError("the levels in the contrast have no spread: the Welch-type standard "
                        "error is zero and no test or interval can be formed")
    df = total * total / math.fsum((v * v / (n[used] - 1.0)).tolist())
    return math.sqrt(total), float(df)


@dataclass(frozen=True)
class WelchContrast:
    """A contrast of level means with a Welch-type (unequal-variance) standard error.

    Attributes
    ----------
    weights : Mapping[str, float]
        ``c_i`` by level.
    estimate : float
        ``sum c_i ybar_i``.
    std_error : float
        ``sqrt(sum c_i^2 s_i^2 / n_i)``.
    df : float
        Satterthwaite degrees of freedom.
    t : float
        ``estimate / std_error``.
    p : float
        Two-sided ``2 P(T_df > |t|)`` for ``psi = 0``; no multiplicity adjustment.
    lower, upper : float
        ``estimate -/+ t_{1 - (1 - level)/2, df} std_error``.
    level : float
        Confidence level.
    """

    weights: Mapping[str, float] = field(repr=False)
    estimate: float
    std_error: float
    df: float
    t: float
    p: float
    lower: float
    upper: float
    level: float

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"weights": dict(self.weights), "estimate": self.estimate,
                "std_error": self.std_error, "df": self.df, "t": self.t, "p": self.p,
                "lower": self.lower, "upper": self.upper, "level": self.level}

    def to_frame(self) -> pd.DataFrame:
        """One row: estimate, std_error, df, t, p, lower, upper."""
        row = self.to_dict()
        row.pop("weights")
        return pd.DataFrame([row])

    def __str__(self) -> str:
        terms = " ".join(f"{w:+g}*{lev}" for lev, w in self.weights.items() if w != 0)
        return (f"Contrast {terms} (Welch-type standard error)\n"
                f"  estimate {format_number(self.estimate)}, std error "
                f"{format_number(self.std_error)}, df {format_number(self.df, 4)}, "
                f"t {format_number(self.t, 4)}, p {format_p(self.p)}\n"
                f"  {self.level:.0%} interval [{format_number(self.lower)}, "
                f"{format_number(self.upper)}]\n"
                "  Variances may differ between levels; observations are assumed independent "
                "and roughly normal. One contrast: adjust for multiplicity when testing several.")


def welch_contrast(
    source: Any,
    weights: Mapping[Any, float] | Sequence[float] | np.ndarray,
    *,
    response: str | None = None,
    factor: str | None = None,
    level: float = 0.95,
) -> WelchContrast:
    """One contrast of level means, with a Welch-type standard error and interval.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or a table with ``response`` and ``factor`` named.
    weights : mapping or sequence
        ``{level: c_i}`` (unnamed levels get 0) or one weight per level.
    response, factor : str, optional
        Column names, with a table.
    level : float
        Confidence level of the interval.

    Returns
    -------
    WelchContrast

    Notes
    -----
    ``t = sum c_i ybar_i / se`` on the Satterthwaite df of
    :func:`welch_contrast_se`. Reference: Welch (1947), Biometrika 34, 28-35.
    """
    models = as_group_models(source, response, factor, who="a Welch-type contrast")
    level = check_alpha(level, "level")
    require_unweighted(models, "a Welch-type contrast")
    c = level_weights(weights, models.levels, zero_sum=False)
    summary = summarize_groups(models)
    se, df = welch_contrast_se(c, summary.variances, summary.counts)
    # Group means relative to the shift keep their digits; the shift counts only
    # when the weights do not sum to zero.
    sums = models.sums
    estimate = (math.fsum((c * sums.means).tolist())
                + math.fsum(c.tolist()) * (sums.shift + models.offset))
    t = estimate / se
    half = float(stats.t.ppf(0.5 + level / 2.0, df)) * se
    return WelchContrast(
        weights={lev: float(w) for lev, w in zip(models.levels, c)}, estimate=estimate,
        std_error=se, df=df, t=t, p=float(2.0 * stats.t.sf(abs(t), df)),
        lower=estimate - half, upper=estimate + half, level=level,
    )


def _group_variances(models: GroupModels, who: str) -> tuple[np.ndarray, np.ndarray]:
    require_unweighted(models, who)
    require_group_size(models, 2, who, "each level needs its own variance")
    n = models.sums.counts.astype(float)
    s2 = models.sums.within_ss / (n - 1.0)
    flat = np.flatnonzero(s2 <= 0)
    if flat.size:
        lev = models.levels[int(flat[0])]
        raise DataError(
            f"{who} weights each level by n / variance, and level {lev!r} of "
            f"{models.factor.name!r} has all its values equal (variance 0)"
        )
    return n, s2
