"""Inputs shared by the checks: group models from any accepted source, group summaries, weights.

Every check of a one-factor layout accepts either a :class:`~nestfit.GroupModels`
(from :func:`nestfit.groups`) or a table with the names of its response and
factor columns; :func:`as_group_models` turns the second form into the first, so
the checks see data cleaned once by the same rules as every fit.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from nestfit._groups import GroupModels, groups
from nestfit.errors import ContrastError, DataError

__all__ = ["GroupSummary", "as_group_models", "level_weights", "summarize_groups"]

# Relative size below which the sum of contrast weights counts as zero
# (rounding of typed weights such as 1/3). Common practice, no source.
_ZERO_SUM_TOL = 1e-10


def as_group_models(
    source: Any, response: str | None = None, factor: str | None = None, *, who: str = "this check"
) -> GroupModels:
    """A :class:`GroupModels` from group models or from ``data, response, factor``.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or the table holding the two columns.
    response, factor : str, optional
        Column names; required with a table, not allowed with group models.
    who : str
        Name of the calling check, used in messages.

    Raises
    ------
    DataError
        A table without column names, or group models with column names.
    """
    if isinstance(source, GroupModels):
        if response is not None or factor is not None:
            raise DataError(
                f"{who}: give group models alone, or a table with response= and factor=, "
                "not both"
            )
        return source
    if response is None or factor is None:
        raise DataError(
            f"{who} needs group models (nestfit.groups(...)) or a table with the names of "
            f"its response and factor columns. Got {type(source).__name__} without them."
        )
    return groups(source, response, factor)


def require_unweighted(models: GroupModels, who: str) -> None:
    """Refuse case weights, which the classical variance tests do not define."""
    if models.weights is not None:
        raise DataError(
            f"{who} is defined for unweighted observations; the group models of "
            f"{models.response_name!r} carry case weights. Build them without weights= "
            "to run this check"
        )


def require_group_size(models: GroupModels, minimum: int, who: str, why: str) -> None:
    """Every level needs at least ``minimum`` observations; name the first that has fewer."""
    counts = models.sums.counts
    small = np.flatnonzero(counts < minimum)
    if small.size:
        j = int(small[0])
        raise DataError(
            f"{who} needs at least {minimum} observations in every level ({why}); level "
            f"{models.levels[j]!r} of {models.factor.name!r} has {int(counts[j])}. Collect more "
            "data for it or leave the level out"
        )


@dataclass(frozen=True, eq=False)
class GroupSummary:
    """Count, mean and variance of the response in each level.

    Attributes
    ----------
    response_name, factor_name : str
        The response and factor.
    levels : tuple of str
        Levels in model order.
    counts : ndarray of int, shape (k,)
        ``n_i``.
    means : ndarray, shape (k,)
        ``ybar_i`` on the scale of the data (any exact offset added back).
    variances : ndarray, shape (k,)
        ``s_i^2 = sum_j (y_ij - ybar_i)^2 / (n_i - 1)``; NaN where ``n_i = 1``.
    """

    response_name: str
    factor_name: str
    levels: tuple[str, ...]
    counts: np.ndarray = field(repr=False)
    means: np.ndarray = field(repr=False)
    variances: np.ndarray = field(repr=False)

    @property
    def std_devs(self) -> np.ndarray:
        """``s_i = sqrt(s_i^2)``."""
        return np.sqrt(self.variances)

    @property
    def n_obs(self) -> int:
        """``N = sum n_i``."""
        return int(self.counts.sum())

    def to_frame(self) -> pd.DataFrame:
        """One row per level: n, mean, variance, std_dev."""
        return pd.DataFrame(
            {"n": self.counts, "mean": self.means, "variance": self.variances,
             "std_dev": self.std_devs},
            index=pd.Index(list(self.levels), name=self.factor_name),
        )

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form: one entry per level; NaN becomes None."""
        return {
            "response": self.response_name,
            "factor": self.factor_name,
            "groups": [
                {"level": lev, "n": int(n), "mean": _finite(m), "variance": _finite(v),
                 "std_dev": _finite(math.sqrt(v)) if math.isfinite(v) else None}
                for lev, n, m, v in zip(self.levels, self.counts.tolist(), self.means.tolist(),
                                        self.variances.tolist())
            ],
        }

    def __str__(self) -> str:
        from nestfit._text import format_number, text_table

        rows = [[lev, str(int(n)), format_number(m), format_number(math.sqrt(v))
                 if math.isfinite(v) else "-"]
                for lev, n, m, v in zip(self.levels, self.counts, self.means, self.variances)]
        return (f"Groups of {self.response_name!r} by {self.factor_name!r}\n"
                + text_table(["level", "n", "mean", "std dev"], rows))


def summarize_groups(
    source: Any, response: str | None = None, factor: str | None = None
) -> GroupSummary:
    """Counts, means and variances of each level, from the shared group sums.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or a table with ``response`` and ``factor`` named.
    response, factor : str, optional
        Column names (with a table).

    Returns
    -------
    GroupSummary

    Notes
    -----
    Means and within sums of squares come from the corrected two-pass
    algorithm of :func:`nestfit.linalg.group_sums`; ``s_i^2 = W_i / (n_i - 1)``.
    With case weights the means and sums of squares are weighted and
    ``n_i`` is still the count of observations.
    """
    models = as_group_models(source, response, factor, who="summarize_groups")
    sums = models.sums
    counts = np.asarray(sums.counts, dtype=np.int64)
    with np.errstate(divide="ignore", invalid="ignore"):
        variances = np.where(counts > 1, sums.within_ss / np.maximum(counts - 1, 1), np.nan)
    means = sums.means + (sums.shift + models.offset)
    for arr in (counts, means, variances):
        arr.flags.writeable = False
    return GroupSummary(models.response_name, models.factor.name, tuple(models.levels),
                        counts, means, variances)


def level_weights(
    weights: Mapping[Any, float] | Sequence[float] | np.ndarray,
    levels: Sequence[str],
    *,
    zero_sum: bool = True,
) -> np.ndarray:
    """Contrast weights over levels as a vector in level order.

    Parameters
    ----------
    weights : mapping or sequence
        ``{level: weight}`` (levels not named get 0) or one weight per level.
    levels : sequence of str
        The factor's levels, in order.
    zero_sum : bool
        Require the weights to sum to zero (a contrast, not just a linear
        combination of means).

    Returns
    -------
    ndarray, shape (k,)

    Raises
    ------
    ContrastError
        Unknown level, wrong length, non-numeric or non-finite weight, all
        weights zero, or (``zero_sum``) weights that do not sum to zero.
    """
    levels = [str(lev) for lev in levels]
    k = len(levels)
    if isinstance(weights, Mapping):
        index = {lev: j for j, lev in enumerate(levels)}
        vec = np.zeros(k)
        for key, value in weights.items():
            j = index.get(str(key))
            if j is None:
                raise ContrastError(
                    f"contrast weight given for {key!r}, which is not a level; the levels are: "
                    + ", ".join(levels)
                )
            vec[j] = _as_weight(value, str(key))
    else:
        try:
            vec = np.asarray(weights, dtype=np.float64)
        except (TypeError, ValueError) as exc:
            raise ContrastError(
                f"contrast weights must be numbers, one per level. Got {weights!r}."
            ) from exc
        if vec.ndim != 1 or vec.size != k:
            raise ContrastError(
                f"{vec.size} contrast weights for {k} levels ({', '.join(levels)}); give one "
                "weight per level, or a mapping {level: weight}"
            )
        if not np.all(np.isfinite(vec)):
            raise ContrastError("contrast weights must be finite numbers (no NaN or inf)")
    if not np.any(vec != 0):
        raise ContrastError("every contrast weight is zero: the contrast compares nothing")
    if zero_sum and abs(math.fsum(vec.tolist())) > _ZERO_SUM_TOL * float(np.abs(vec).sum()):
        raise ContrastError(
            f"the contrast weights sum to {math.fsum(vec.tolist()):.6g}, not 0; a contrast "
            "compares means, so its weights must sum to zero (e.g. 1, -0.5, -0.5)"
        )
    vec.flags.writeable = False
    return vec


def _as_weight(value: Any, level: str) -> float:
    try:
        w = float(value)
    except (TypeError, ValueError) as exc:
        raise ContrastError(f"the weight of level {level!r} is not a number: {value!r}") from exc
    if not math.isfinite(w):
        raise ContrastError(f"the weight of level {level!r} is not finite: {value!r}")
    return w


def _finite(x: float) -> float | None:
    return float(x) if x is not None and math.isfinite(float(x)) else None
