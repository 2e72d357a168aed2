"""Confidence intervals for noncentrality parameters, by inverting the noncentral F and t.

For an observed ``F`` on ``(df1, df2)`` degrees of freedom, the confidence
interval for the noncentrality ``lambda`` at level ``1 - a`` is ``[lambda_L, lambda_U]``
with (Steiger 2004, "Beyond the F test", Psychological Methods 9, 164-182;
Smithson 2003, *Confidence Intervals*, Sage, ch. 4)

    P(F' <= F_obs; lambda_L) = 1 - a/2,    P(F' <= F_obs; lambda_U) = a/2,

and ``lambda_L = 0`` (``lambda_U = 0``) when the equation has no positive root
because ``P(F <= F_obs; 0)`` is already below ``1 - a/2`` (``a/2``). The
distribution function decreases in ``lambda``, so each root is unique; it is
found by ``scipy.optimize.brentq`` on ``scipy.stats.ncf.cdf``. The same inversion
of ``scipy.stats.nct.cdf`` gives the interval for the noncentrality ``delta`` of
an observed ``t``, which can be negative. The coverage of the interval for
``lambda`` (or ``delta``) is exact under the model; intervals for effect sizes
are monotone transformations of it.
"""

from __future__ import annotations

import math

from scipy import optimize, stats

from nestfit.checks._result import check_alpha
from nestfit.errors import DataError

__all__ = ["noncentrality_interval_f", "noncentrality_interval_t"]

_XTOL = 1e-12
_RTOL = 1e-12
# Largest noncentrality searched before an upper limit is declared infinite.
# A project rule: power is 1 to double precision long before this.
_MAX_NC = 1e8


def noncentrality_interval_f(f_value: float, df1: float, df2: float,
                             level: float = 0.95) -> tuple[float, float]:
    """Confidence interval for the noncentrality of an observed F statistic.

    Parameters
    ----------
    f_value : float
        Observed ``F >= 0``.
    df1, df2 : float
        Numerator and denominator degrees of freedom (positive).
    level : float
        Confidence level ``1 - a``.

    Returns
    -------
    (lower, upper) : tuple of float
        ``NaN`` for a non-finite ``F``.

    Raises
    ------
    DataError
        Non-positive degrees of freedom, ``F < 0`` or ``level`` outside (0, 1).
    """
    _check_level(level)
    if not (df1 > 0 and df2 > 0):
        raise DataError(f"degrees of freedom must be positive. Got ({df1!r}, {df2!r}).")
    if not math.isfinite(f_value):
        return math.nan, math.nan
    if f_value < 0:
        raise DataError(f"an F statistic cannot be negative. Got {f_value!r}.")
    tail = (1.0 - level) / 2.0

    def cdf(lam: float) -> float:
        if lam == 0.0:
            return float(stats.f.cdf(f_value, df1, df2))
        return float(stats.ncf.cdf(f_value, df1, df2, lam))

    def root(target: float) -> float:
        if cdf(0.0) <= target:
            return 0.0
        hi = max(1.0, 2.0 * f_value * df1)
        while cdf(hi) > target:
            if hi > _MAX_NC:
                return math.inf
            hi *= 2.0
        return float(optimize.brentq(lambda lam: cdf(lam) - target, 0.0, hi,
                                     xtol=_XTOL, rtol=_RTOL))

    return root(1.0 - tail), root(tail)


def noncentrality_interval_t(t_value: float, df: float,
                             level: float = 0.95) -> tuple[float, float]:
    """Confidence interval for the noncentrality ``delta`` of an observed t statistic.

    Parameters
    ----------
    t_value : float
        Observed ``t``.
    df : float
        Degrees of freedom (positive).
    level : float
        Confidence level ``1 - a``.

    Returns
    -------
    (lower, upper) : tuple of float
        Solutions of ``P(T' <= t; delta) = 1 - a/2`` and ``= a/2``; ``NaN`` for a
        non-finite ``t``.

    Raises
    ------
    DataError
        ``df <= 0`` or ``level`` outside (0, 1).
    """
    _check_level(level)
    if not df > 0:
        raise DataError(f"degrees of freedom must be positive. Got {df!r}.")
    if not math.isfinite(t_value):
        return math.nan, math.nan
    tail = (1.0 - level) / 2.0

    def cdf(delta: float) -> float:
        return float(stats.nct.cdf(t_value, df, delta))

    def root(target: float) -> float:
        step = 2.0 + abs(t_value)
        lo, hi = t_value - step, t_value + step
        while cdf(lo) < target:
            lo -= step
            step *= 2.0
        step = 2.0 + abs(t_value)
        while cdf(hi) > target:
            hi += step
            step *= 2.0
        return float(optimize.brentq(lambda d: cdf(d) - target, lo, hi, xtol=_XTOL, rtol=_RTOL))

    return root(1.0 - tail), root(tail)


def _check_level(level: float) -> None:
    check_alpha(level, "level")
