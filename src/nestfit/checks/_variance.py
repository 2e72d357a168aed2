"""Tests of equal variances across the levels of one factor: Levene, Brown-Forsythe, Bartlett.

Levene's test (Levene 1960, in *Contributions to Probability and Statistics*,
Olkin ed., Stanford University Press, 278-292) and the Brown-Forsythe test
(Brown & Forsythe 1974, JASA 69, 364-367) are the one-way analysis of variance
of the absolute deviations ``z_ij = |y_ij - c_i|`` from a centre ``c_i`` of each
level: the group mean (Levene) or the group median (Brown-Forsythe). Here that
analysis *is* nestfit's own comparison "equal means -> separate means" fitted
to ``z``, so the statistic is

    W = [sum_i n_i (zbar_i - zbar)^2 / (k - 1)] / [sum_ij (z_ij - zbar_i)^2 / (N - k)],

referred to ``F(k - 1, N - k)``.

Bartlett's test (Bartlett 1937, Proc. R. Soc. Lond. A 160, 268-282; NIST/SEMATECH
e-Handbook 1.3.5.7) is the modified likelihood-ratio statistic

    T = -sum_i (n_i - 1) ln(s_i^2 / s_p^2) / C,
    C = 1 + [sum_i 1/(n_i - 1) - 1/(N - k)] / (3 (k - 1)),

with ``s_p^2`` the pooled variance, referred to chi-square on ``k - 1`` df. It
is exact in its level only for normal data and is badly affected by heavy tails.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
from scipy import stats

from nestfit._groups import GroupModels
from nestfit.checks._input import as_group_models, require_group_size, require_unweighted
from nestfit.checks._result import CheckResult, check_alpha, verdict
from nestfit.errors import DataError

__all__ = ["bartlett", "brown_forsythe", "levene"]

# Groups smaller than this get the low-power caveat. Common practice, no source.
SMALL_GROUP = 10


def levene(source: Any, response: str | None = None, factor: str | None = None, *,
           alpha: float = 0.05) -> CheckResult:
    """Levene's test of equal variances, from absolute deviations about the group means.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models (:func:`nestfit.groups`), or a table with ``response`` and ``factor``.
    response, factor : str, optional
        Column names, with a table.
    alpha : float
        Level for the plain-words verdict (the p-value does not depend on it).

    Returns
    -------
    CheckResult
        ``W`` with df ``(k - 1, N - k)`` and its F upper-tail p-value.

    Raises
    ------
    DataError
        Case weights; a level with fewer than 2 observations; no spread in any
        level; absolute deviations that are constant within every level
        (every level of size 2); ``alpha`` outside (0, 1).

    Notes
    -----
    ``z_ij = |y_ij - ybar_i|``; ``W`` is the one-way F statistic of ``z``
    (Levene 1960). Agrees with ``scipy.stats.levene(..., center="mean")``.
    """
    models = as_group_models(source, response, factor, who="Levene's test")
    return _deviation_test(models, "mean", check_alpha(alpha))


def brown_forsythe(source: Any, response: str | None = None, factor: str | None = None, *,
                   alpha: float = 0.05) -> CheckResult:
    """The Brown-Forsythe test of equal variances: absolute deviations about the group medians.

    Parameters and errors as :func:`levene`.

    Notes
    -----
    ``z_ij = |y_ij - median_i|``; ``W`` is the one-way F statistic of ``z``
    (Brown & Forsythe 1974, JASA 69, 364-367). Using the median keeps the
    level of the test close to nominal for skewed and heavy-tailed data.
    Agrees with ``scipy.stats.levene(..., center="median")`` and with the
    NIST/SEMATECH e-Handbook 1.3.5.10 example.
    """
    models = as_group_models(source, response, factor, who="the Brown-Forsythe test")
    return _deviation_test(models, "median", check_alpha(alpha))


def bartlett(source: Any, response: str | None = None, factor: str | None = None, *,
             alpha: float = 0.05) -> CheckResult:
    """Bartlett's test of equal variances (valid for normal data only).

    Parameters
    ----------
    source, response, factor, alpha
        As :func:`levene`.

    Returns
    -------
    CheckResult
        ``T`` with ``k - 1`` df and its chi-square upper-tail p-value.

    Raises
    ------
    DataError
        Case weights; a level with fewer than 2 observations or with no
        spread (its log variance is undefined); ``alpha`` outside (0, 1).

    Notes
    -----
    ``T = -sum (n_i - 1) ln(s_i^2 / s_p^2) / C`` with
    ``C = 1 + (sum 1/(n_i - 1) - 1/(N - k)) / (3 (k - 1))`` (Bartlett 1937),
    written with ratios to the pooled variance so that no digits cancel.
    Agrees with ``scipy.stats.bartlett``.
    """
    models = as_group_models(source, response, factor, who="Bartlett's test")
    alpha = check_alpha(alpha)
    who = "Bartlett's test"
    require_unweighted(models, who)
    require_group_size(models, 2, who, "each level needs its own variance")
    sums = models.sums
    n = sums.counts.astype(float)
    k, total = n.size, float(n.sum())
    variances = sums.within_ss / (n - 1.0)
    flat = np.flatnonzero(variances <= 0.0)
    if flat.size:
        lev = models.levels[int(flat[0])]
        raise DataError(
            f"{who} takes the logarithm of each level's variance, and level {lev!r} of "
            f"{models.factor.name!r} has all its values equal (variance 0); use the "
            "Brown-Forsythe test instead"
        )
    pooled = sums.total_within_ss / (total - k)
    numerator = -math.fsum(((n - 1.0) * np.log(variances / pooled)).tolist())
    c = 1.0 + (math.fsum((1.0 / (n - 1.0)).tolist()) - 1.0 / (total - k)) / (3.0 * (k - 1))
    t = numerator / c
    p = float(stats.chi2.sf(t, k - 1))
    caveat = ("Bartlett's test is sensitive to non-normality: with heavy-tailed or skewed "
              "errors it reports unequal variances far more often than alpha even when they "
              "are equal. Prefer the Brown-Forsythe test unless normality is credible.")
    return CheckResult(
        name="Bartlett", statistic=float(t), df=(float(k - 1),), p=p, distribution="chi-square",
        null_hypothesis=_null(models) + " (normal data)",
        verdict=_variance_verdict(models, p, alpha), caveat=_small(models, caveat), alpha=alpha,
    )


def absolute_deviations(models: GroupModels, center: str) -> np.ndarray:
    """``|y_ij - c_i|`` with ``c_i`` the group mean or median, in row order."""
    codes = models.factor.codes
    sums = models.sums
    shifted = models.y - sums.shift
    if center == "mean":
        centres = sums.means
    else:
        order = np.argsort(codes, kind="stable")
        bounds = np.cumsum(sums.counts)[:-1]
        centres = np.array([np.median(part) for part in np.split(shifted[order], bounds)])
    return np.abs(shifted - centres[codes])


def _deviation_test(models: GroupModels, center: str, alpha: float) -> CheckResult:
    name = "Levene" if center == "mean" else "Brown-Forsythe"
    who = "Levene's test" if center == "mean" else "the Brown-Forsythe test"
    require_unweighted(models, who)
    require_group_size(models, 2, who, "a single value has no spread")
    if not np.any(models.sums.within_ss > 0):
        raise DataError(
            f"every level of {models.factor.name!r} has all its {models.response_name!r} values "
            "equal: there is no spread to compare"
        )
    z = absolute_deviations(models, center)
    dev_models = GroupModels(f"|{models.response_name} - group {center}|", models.factor, z,
                             models.missing)
    if not np.any(dev_models.sums.within_ss > 0):
        raise DataError(
            f"{who}: the absolute deviations from the group {center}s are constant within every "
            f"level of {models.factor.name!r} (as with two observations per level), so their "
            "analysis of variance has no error term; collect more observations per level"
        )
    step = dev_models.oneway().steps[0]
    if center == "mean":
        caveat = ("Deviations from the means are affected by skewed or heavy-tailed data, "
                  "which can inflate the rate of false alarms; the Brown-Forsythe (median) "
                  "version is safer there.")
    else:
        caveat = ("Using medians keeps the false-alarm rate near alpha for skewed or "
                  "heavy-tailed data.")
    return CheckResult(
        name=name, statistic=float(step.f), df=(float(step.df), float(step.denominator_df)),
        p=float(step.p), distribution="F", null_hypothesis=_null(models),
        verdict=_variance_verdict(models, step.p, alpha), caveat=_small(models, caveat),
        alpha=alpha,
    )


def _null(models: GroupModels) -> str:
    return (f"{models.response_name!r} has the same variance in every level of "
            f"{models.factor.name!r}")


def _variance_verdict(models: GroupModels, p: float, alpha: float) -> str:
    resp, fac = models.response_name, models.factor.name
    return verdict(
        p, alpha,
        f"The spread of {resp!r} differs between the levels of {fac!r} by more than chance "
        "readily explains",
        f"No clear evidence that the spread of {resp!r} differs between the levels of "
        f"{fac!r}",
        "This does not show that the variances are equal.",
    )


def _small(models: GroupModels, caveat: str) -> str:
    smallest = int(models.sums.counts.min())
    if smallest < SMALL_GROUP:
        caveat += (f" With groups this small (smallest n = {smallest}) the test has little "
                   "power: a large p is weak evidence of equal variances.")
    return caveat
