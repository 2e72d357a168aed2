"""Games-Howell pairwise comparisons of level means under unequal variances.

For levels ``i`` and ``j`` (Games & Howell 1976, "Pairwise multiple comparison
procedures with unequal n's and/or variances: a Monte Carlo study", Journal of
Educational Statistics 1, 113-125):

    d_ij  = ybar_i - ybar_j,
    se_ij = sqrt(s_i^2 / n_i + s_j^2 / n_j),
    nu_ij = se_ij^4 / [ (s_i^2/n_i)^2 / (n_i - 1) + (s_j^2/n_j)^2 / (n_j - 1) ],
    q_ij  = |d_ij| / (se_ij / sqrt(2)),

with p-value ``P(Q_{k, nu_ij} > q_ij)`` from the studentized range distribution
of ``k`` means (``scipy.stats.studentized_range``) and simultaneous interval
``d_ij -/+ q_{level; k, nu_ij} se_ij / sqrt(2)``. The family-wise level is
approximate (each pair has its own degrees of freedom).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._text import format_number, format_p, text_table
from nestfit.checks._input import as_group_models
from nestfit.checks._result import check_alpha
from nestfit.checks._welch import _group_variances, welch_contrast_se

__all__ = ["GamesHowell", "PairDifference", "games_howell"]


@dataclass(frozen=True)
class PairDifference:
    """One pair of levels in a Games-Howell family.

    Attributes
    ----------
    first, second : str
        The levels; ``difference = mean(first) - mean(second)``.
    difference, std_error, df : float
        ``d_ij``, ``se_ij`` and ``nu_ij``.
    q : float
        Studentized range statistic ``|d_ij| sqrt(2) / se_ij``.
    p : float
        Adjusted p-value ``P(Q_{k, nu_ij} > q)``.
    lower, upper : float
        Simultaneous interval limits.
    """

    first: str
    second: str
    difference: float
    std_error: float
    df: float
    q: float
    p: float
    lower: float
    upper: float


@dataclass(frozen=True)
class GamesHowell:
    """Every pairwise difference of level means, Games-Howell method.

    Attributes
    ----------
    response_name, factor_name : str
    pairs : tuple of PairDifference
        In level order: (1, 2), (1, 3), ..., (k - 1, k).
    level : float
        Simultaneous confidence level.
    n_levels : int
        ``k``, the number of means in the studentized range.
    """

    response_name: str
    factor_name: str
    pairs: tuple[PairDifference, ...] = field(repr=False)
    level: float
    n_levels: int

    def to_frame(self) -> pd.DataFrame:
        """One row per pair: first, second, difference, std_error, df, q, p, lower, upper."""
        return pd.DataFrame([vars(p) for p in self.pairs])

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"method": "Games-Howell", "response": self.response_name,
                "factor": self.factor_name, "level": self.level,
                "pairs": [dict(vars(p)) for p in self.pairs]}

    def __str__(self) -> str:
        rows = [[f"{p.first} - {p.second}", format_number(p.difference),
                 format_number(p.std_error), format_number(p.df, 4), format_number(p.q, 4),
                 format_p(p.p), format_number(p.lower), format_number(p.upper)]
                for p in self.pairs]
        return "\n".join([
            f"Pairwise differences of mean {self.response_name!r} by {self.factor_name!r} "
            f"(Games-Howell, {self.level:.0%} simultaneous)",
            text_table(["pair", "difference", "std error", "df", "q", "p", "lower", "upper"],
                       rows),
            "  Variances may differ between levels; each pair has its own df, so the family-",
            "  wise level is approximate. Observations are assumed independent and roughly",
            "  normal within each level.",
        ])


def games_howell(source: Any, response: str | None = None, factor: str | None = None, *,
                 level: float = 0.95) -> GamesHowell:
    """All pairwise differences of level means without assuming equal variances.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or a table with ``response`` and ``factor`` named.
    response, factor : str, optional
        Column names, with a table.
    level : float
        Simultaneous confidence level.

    Returns
    -------
    GamesHowell

    Raises
    ------
    DataError
        Case weights; a level with fewer than 2 observations or no spread;
        ``level`` outside (0, 1).

    Notes
    -----
    Formulas in the module docstring (Games & Howell 1976). Each pair's
    standard error and df are those of the Welch-type contrast
    ``e_i - e_j`` (:func:`welch_contrast_se`). Agrees with
    ``scipy.stats.tukey_hsd(..., equal_var=False)``. Each studentized-range
    quantile is a numerical integration (about 0.1 s per pair).
    """
    models = as_group_models(source, response, factor, who="Games-Howell comparisons")
    level = check_alpha(level, "level")
    n, s2 = _group_variances(models, "Games-Howell comparisons")
    means = models.sums.means
    k = n.size
    pairs = []
    for i in range(k):
        for j in range(i + 1, k):
            c = np.zeros(k)
            c[i], c[j] = 1.0, -1.0
            se, df = welch_contrast_se(c, s2, n)
            d = float(means[i] - means[j])
            scale = se / math.sqrt(2.0)
            q = abs(d) / scale
            p = float(stats.studentized_range.sf(q, k, df))
            half = float(stats.studentized_range.ppf(level, k, df)) * scale
            pairs.append(PairDifference(models.levels[i], models.levels[j], d, se, df, q,
                                        min(p, 1.0), d - half, d + half))
    return GamesHowell(models.response_name, models.factor.name, tuple(pairs), level, k)
