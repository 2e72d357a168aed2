"""Power of F and t tests from their noncentrality (``scipy.stats.ncf`` and ``nct``).

For an F test at level ``alpha`` on ``(df1, df2)`` degrees of freedom whose
statistic is noncentral F with noncentrality ``lambda`` under the alternative,

    power = P(F'(df1, df2, lambda) > F_{1 - alpha}(df1, df2));

for a t test on ``df`` degrees of freedom with noncentrality ``delta``,

    two-sided: P(T' > t_{1 - alpha/2}) + P(T' < -t_{1 - alpha/2}),
    "greater": P(T' > t_{1 - alpha}),   "less": P(T' < -t_{1 - alpha}).

(Scheffe 1959, *The Analysis of Variance*, sec. 2.8, and Cohen 1988, ch. 8,
from memory.)
"""

from __future__ import annotations

import math
from typing import Literal

from scipy import stats

from nestfit.checks._result import check_alpha
from nestfit.errors import DataError

__all__ = ["Alternative", "power_f", "power_t"]

Alternative = Literal["two-sided", "greater", "less"]


def power_f(noncentrality: float, df1: float, df2: float, alpha: float = 0.05) -> float:
    """Power of the level-``alpha`` F test when the statistic is noncentral F.

    Parameters
    ----------
    noncentrality : float
        ``lambda >= 0``.
    df1, df2 : float
        Degrees of freedom (positive).
    alpha : float
        Level of the test.

    Returns
    -------
    float
        ``P(F'(df1, df2, lambda) > F_{1 - alpha}(df1, df2))``.

    Raises
    ------
    DataError
        ``lambda < 0`` or not finite, non-positive df, ``alpha`` outside (0, 1).
    """
    alpha = check_alpha(alpha)
    if not (math.isfinite(noncentrality) and noncentrality >= 0):
        raise DataError(f"the noncentrality must be a finite number >= 0. Got {noncentrality!r}.")
    if not (df1 > 0 and df2 > 0):
        raise DataError(f"degrees of freedom must be positive. Got ({df1!r}, {df2!r}).")
    crit = float(stats.f.isf(alpha, df1, df2))
    if noncentrality == 0:
        return float(stats.f.sf(crit, df1, df2))
    return float(stats.ncf.sf(crit, df1, df2, noncentrality))


def power_t(noncentrality: float, df: float, alpha: float = 0.05,
            alternative: Alternative = "two-sided") -> float:
    """Power of the level-``alpha`` t test when the statistic is noncentral t.

    Parameters
    ----------
    noncentrality : float
        ``delta`` (any sign).
    df : float
        Degrees of freedom (positive).
    alpha : float
        Level of the test.
    alternative : {"two-sided", "greater", "less"}
        The rejection region.

    Returns
    -------
    float

    Raises
    ------
    DataError
        Non-finite ``delta``, ``df <= 0``, ``alpha`` outside (0, 1), unknown ``alternative``.
    """
    alpha = check_alpha(alpha)
    if not math.isfinite(noncentrality):
        raise DataError(f"the noncentrality must be finite. Got {noncentrality!r}.")
    if not df > 0:
        raise DataError(f"degrees of freedom must be positive. Got {df!r}.")
    # The lower tail P(T'(delta) < -c) is taken as P(T'(-delta) > c) (the noncentral t
    # is symmetric under delta -> -delta, t -> -t): scipy's nct.cdf can return NaN far
    # in the lower tail (df = 1, delta around 10 or more) where nct.sf stays finite.
    if alternative == "two-sided":
        crit = float(stats.t.isf(alpha / 2.0, df))
        return float(stats.nct.sf(crit, df, noncentrality)
                     + stats.nct.sf(crit, df, -noncentrality))
    if alternative == "greater":
        return float(stats.nct.sf(stats.t.isf(alpha, df), df, noncentrality))
    if alternative == "less":
        return float(stats.nct.sf(stats.t.isf(alpha, df), df, -noncentrality))
    raise DataError(
        f"alternative must be 'two-sided', 'greater' or 'less'. Got {alternative!r} instead."
    )
