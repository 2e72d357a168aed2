"""Normality of the residuals: the Shapiro-Wilk test (via ``scipy.stats.shapiro``)."""

from __future__ import annotations

import warnings
from typing import Any

import numpy as np
from scipy import stats

from nestfit._fit import Fit
from nestfit.checks._input import as_group_models
from nestfit.checks._result import CheckResult, check_alpha, verdict
from nestfit.errors import DataError

__all__ = ["shapiro_wilk"]

# Above this many residuals, normality tests flag departures too small to matter
# for F tests on means; below the lower bound they have little power.
# Common practice, no source.
LARGE_SAMPLE = 200
SMALL_SAMPLE = 20


def shapiro_wilk(source: Any, response: str | None = None, factor: str | None = None, *,
                 alpha: float = 0.05) -> CheckResult:
    """The Shapiro-Wilk test of normality applied to the residuals of a fit.

    Parameters
    ----------
    source : Fit, GroupModels or pandas.DataFrame
        A fit (its residuals are tested), or group models / a table with
        ``response`` and ``factor`` (the residuals of the separate-means model,
        ``y_ij - ybar_i``, are tested).
    response, factor : str, optional
        Column names, with a table.
    alpha : float
        Level for the plain-words verdict.

    Returns
    -------
    CheckResult
        ``W`` (no degrees of freedom) and its p-value from ``scipy.stats.shapiro``.

    Raises
    ------
    DataError
        Fewer than 3 residuals, all residuals zero, ``alpha`` outside (0, 1).

    Notes
    -----
    Shapiro & Wilk (1965), Biometrika 52, 591-611, with Royston's (1995)
    algorithm AS R94 as implemented by scipy. With case weights the residuals
    tested are ``sqrt(w_i) (y_i - yhat_i)``, which have equal variance under the
    model. Residuals are not independent (they satisfy ``X' W r = 0``); testing
    them as a sample is common practice, accurate when ``n`` is large compared
    with the number of parameters.
    """
    alpha = check_alpha(alpha)
    fit = source if isinstance(source, Fit) else as_group_models(
        source, response, factor, who="the Shapiro-Wilk test").separate_means()
    if isinstance(source, Fit) and (response is not None or factor is not None):
        raise DataError("the Shapiro-Wilk test: give a fit alone, without response= or factor=")
    r = np.asarray(fit.residuals, dtype=float)
    if fit.weights is not None:
        r = r * np.sqrt(fit.weights)
    n = r.size
    if n < 3:
        raise DataError(
            f"the Shapiro-Wilk test needs at least 3 residuals; model {fit.name!r} has {n}"
        )
    if not np.any(r != 0):
        raise DataError(
            f"the residuals of model {fit.name!r} are all zero (a perfect fit): there is no "
            "error distribution to test"
        )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        w, p = stats.shapiro(r)
    inaccurate = any("p-value may not be accurate" in str(c.message) for c in caught)
    caveat = _caveat(n, inaccurate)
    return CheckResult(
        name="Shapiro-Wilk", statistic=float(w), df=(), p=float(p), distribution="W",
        null_hypothesis=f"the errors of model {fit.name!r} are normally distributed",
        verdict=verdict(
            p, alpha,
            "The residuals depart from a normal distribution by more than chance readily "
            "explains",
            "No clear evidence against normal errors",
            "This does not show that they are normal.",
        ),
        caveat=caveat, alpha=alpha,
    )


def _caveat(n: int, inaccurate: bool) -> str:
    text = ("Residuals are tested as if independent. F tests on means tolerate moderate "
            "non-normality when groups are not tiny.")
    if n >= LARGE_SAMPLE:
        text += (f" With n = {n} residuals the test flags departures too small to matter; "
                 "judge by a normal quantile plot and the size of the departure.")
    elif n < SMALL_SAMPLE:
        text += (f" With only n = {n} residuals the test has little power: a large p does not "
                 "show normality.")
    if inaccurate:
        text += " Above 5000 residuals scipy's p-value may be inaccurate."
    return text
