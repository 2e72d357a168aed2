"""Reference computations of the one-way F statistic that nestfit is timed against.

Each returns the F statistic ``(B / (k - 1)) / (W / (n - k))`` with the
between-groups sum of squares ``B = sum_g n_g (m_g - m)^2`` and the within
sum of squares ``W = sum_i (y_i - m_{g(i)})^2`` (common practice, no source).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["bare_numpy_f", "pandas_groupby_f", "statsmodels_anova_f", "statsmodels_fit"]


def bare_numpy_f(y: np.ndarray, codes: np.ndarray, k: int) -> float:
    """Two passes of ``numpy.bincount``: counts and sums, then squared deviations.

    ``codes`` must be integers in ``[0, k)`` with every group present. The
    squared deviations are taken from each group's own mean (second pass),
    not from ``sum y^2 - n m^2``, which loses digits when the means are large
    compared with the spread.
    """
    n = y.size
    counts = np.bincount(codes, minlength=k)
    sums = np.bincount(codes, weights=y, minlength=k)
    means = sums / counts
    dev = y - means[codes]
    dev *= dev
    within = float(np.bincount(codes, weights=dev, minlength=k).sum())
    grand = float(sums.sum()) / n
    between = float(np.dot(counts, (means - grand) ** 2))
    return (between / (k - 1)) / (within / (n - k))


def pandas_groupby_f(frame: pd.DataFrame, response: str, factor: str) -> float:
    """Group count, mean and variance by ``DataFrame.groupby``, then F.

    ``W = sum_g (n_g - 1) s_g^2`` from the group variances.
    """
    stats = frame.groupby(factor, observed=True)[response].agg(["count", "mean", "var"])
    counts = stats["count"].to_numpy(dtype=float)
    means = stats["mean"].to_numpy()
    n, k = counts.sum(), counts.size
    within = float(np.dot(counts - 1.0, stats["var"].to_numpy()))
    grand = float(np.dot(counts, means)) / n
    between = float(np.dot(counts, (means - grand) ** 2))
    return (between / (k - 1)) / (within / (n - k))


def statsmodels_fit(formula: str, frame: pd.DataFrame):  # type: ignore[no-untyped-def]
    """``statsmodels.formula.api.ols(formula, frame).fit()`` (default pinv solver)."""
    from statsmodels.formula.api import ols

    return ols(formula, frame).fit()


def statsmodels_anova_f(formula: str, frame: pd.DataFrame) -> float:
    """``anova_lm`` of the statsmodels fit; the F of the first term."""
    from statsmodels.stats.anova import anova_lm

    table = anova_lm(statsmodels_fit(formula, frame))
    return float(table["F"].iloc[0])
