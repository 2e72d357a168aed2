"""The result of a multiplicity method applied to a family: rows, decisions, conversion."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from nestfit._display import html_for
from nestfit.errors import DataError

if TYPE_CHECKING:
    from nestfit.contrasts._grouping import Grouping

__all__ = ["ContrastRow", "FamilyResult", "check_alpha"]


@dataclass(frozen=True)
class ContrastRow:
    """One contrast of a family result.

    Attributes
    ----------
    label : str
    weights : tuple of (level, weight)
        The non-zero weights.
    estimate, std_error : float
    df : float
        Degrees of freedom of ``t`` (Satterthwaite's for Welch-type errors).
    t : float
    p : float
        Unadjusted p-value for the result's alternative.
    p_adjusted : float
        Adjusted p-value: reject at ``alpha`` when ``p_adjusted <= alpha``.
    lower, upper : float
        Interval limits (``-inf``/``inf`` for one-sided bounds).
    critical_value : float
        The multiplier of the standard error in this row's interval (the
        same for every row unless the rows have their own df).
    """

    label: str
    weights: tuple[tuple[str, float], ...]
    estimate: float
    std_error: float
    df: float
    t: float
    p: float
    p_adjusted: float
    lower: float
    upper: float
    critical_value: float = math.nan

    @property
    def weight_map(self) -> dict[str, float]:
        """The weights as ``{level: weight}``."""
        return dict(self.weights)


@dataclass(frozen=True, eq=False)
class FamilyResult:
    """Adjusted p-values and intervals for a family of contrasts.

    Attributes
    ----------
    family, kind : str
        The family's name and kind.
    method : str
        The method key (``"holm"``, ``"tukey"``...); ``method_name`` in words.
    error_rate : str
        What the method controls ("family-wise error rate", "false
        discovery rate", or none).
    level : float
        Confidence level of the intervals; decisions shown at ``1 - level``.
    alternative : str
        ``"two-sided"``, ``"greater"`` or ``"less"``.
    rows : tuple of ContrastRow
    interval : str
        What the intervals are (simultaneous by which method, or per contrast).
    critical_value : float
        The multiplier of the standard error in the intervals; NaN when the
        rows have their own df and so their own multipliers
        (``ContrastRow.critical_value``).
    integration_error : float or None
        For the multivariate-t methods: the largest estimated integration
        error (three standard errors) of any adjusted p-value or of the
        coverage probability at the critical value.
    notes : tuple of str
        Caveats specific to the method.
    variance, variance_name : str
        Where the standard errors come from (``"pooled"``, ``"welch"``,
        ``"HC0"``-``"HC3"``), and in words.
    assumptions : str
        The assumptions behind the tests and intervals.
    """

    family: str
    kind: str
    method: str
    method_name: str
    error_rate: str
    level: float
    alternative: str
    response: str
    factor: str
    model: str
    n_obs: int
    df: int
    rank: int
    rows: tuple[ContrastRow, ...]
    interval: str
    critical_value: float
    integration_error: float | None = None
    notes: tuple[str, ...] = ()
    levels: tuple[str, ...] = field(default=(), repr=False)
    level_means: tuple[float, ...] = field(default=(), repr=False)
    adjusted_means: bool = field(default=False, repr=False)
    variance: str = "pooled"
    variance_name: str = "pooled residual mean square"
    assumptions: str = ""

    @property
    def multipliers(self) -> np.ndarray:
        """Each row's multiplier of the standard error."""
        return np.array([r.critical_value for r in self.rows])

    @property
    def labels(self) -> tuple[str, ...]:
        """Contrast labels, in family order."""
        return tuple(r.label for r in self.rows)

    @property
    def alpha(self) -> float:
        """``1 - level``, the level of the decisions shown."""
        return 1.0 - self.level

    @property
    def p_adjusted(self) -> np.ndarray:
        """Adjusted p-values, in family order."""
        return np.array([r.p_adjusted for r in self.rows])

    def rejected(self, alpha: float | None = None) -> tuple[bool, ...]:
        """Decisions at ``alpha`` (default ``1 - level``): ``p_adjusted <= alpha``."""
        a = self.alpha if alpha is None else check_alpha(alpha)
        return tuple(bool(r.p_adjusted <= a) for r in self.rows)

    def grouping(self, alpha: float | None = None) -> Grouping:
        """Sets of levels not declared different (all-pairs families only)."""
        from nestfit.contrasts._grouping import group_levels

        return group_levels(self, alpha)

    def to_frame(self) -> pd.DataFrame:
        """One row per contrast: label, weights, estimate, std_error, df, t, p, p_adjusted,
        lower, upper, method."""
        return pd.DataFrame(
            [{"label": r.label, "weights": r.weight_map, "estimate": r.estimate,
              "std_error": r.std_error, "df": r.df, "t": r.t, "p": r.p,
              "p_adjusted": r.p_adjusted, "lower": r.lower, "upper": r.upper,
              "method": self.method} for r in self.rows])

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready; NaN and infinite limits become None) form."""
        return {
            "method": self.method,
            "method_name": self.method_name,
            "error_rate": self.error_rate,
            "level": self.level,
            "alternative": self.alternative,
            "family": self.family,
            "model": self.model,
            "response": self.response,
            "factor": self.factor,
            "df": self.df,
            "variance": self.variance,
            "variance_name": self.variance_name,
            "rank": self.rank,
            "interval": self.interval,
            "critical_value": _finite(self.critical_value),
            "critical_values": [_finite(r.critical_value) for r in self.rows],
            "integration_error": (None if self.integration_error is None
                                  else float(self.integration_error)),
            "notes": list(self.notes),
            "contrasts": [
                {"label": r.label, "weights": r.weight_map, "estimate": _finite(r.estimate),
                 "std_error": _finite(r.std_error), "df": r.df, "t": _finite(r.t),
                 "p": _finite(r.p), "p_adjusted": _finite(r.p_adjusted),
                 "lower": _finite(r.lower), "upper": _finite(r.upper)}
                for r in self.rows],
        }

    def __str__(self) -> str:
        from nestfit.contrasts._text import format_result

        return format_result(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))

    def _repr_html_(self) -> str | None:  # Jupyter (renderer registered by nestfit.report)
        return html_for("family", self)


def check_alpha(alpha: Any) -> float:
    """A significance level strictly between 0 and 1."""
    try:
        a = float(alpha)
    except (TypeError, ValueError):
        raise DataError(f"alpha must be a number between 0 and 1, got {alpha!r}") from None
    if not 0.0 < a < 1.0:
        raise DataError(f"alpha must be between 0 and 1 (exclusive). Got {alpha!r} instead.")
    return a


def _finite(x: float) -> float | None:
    return float(x) if x is not None and math.isfinite(float(x)) else None
