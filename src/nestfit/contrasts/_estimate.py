"""One contrast: estimate, standard error, t test, interval, sum of squares, restricted model.

For level weights ``w`` and the map ``mu = M b`` (see
:mod:`nestfit.contrasts._cellmeans`), the contrast is ``psi = w' mu = c b``
with ``c = w' M``, and

    psi_hat = c b_hat,   se = sqrt(c' Cov(b_hat) c),   t = psi_hat / se  on the residual df.

For the separate-means model ``se = sigma sqrt(sum_i w_i^2 / n_i)``. The
contrast's single-df sum of squares is ``psi_hat^2 / (c' (X'WX)^- c)``
(``psi_hat^2 / sum_i w_i^2 / n_i`` for separate means), and ``t^2`` equals
the extra-sum-of-squares F of the full model against the model restricted
by ``psi = 0`` (Seber & Lee, *Linear Regression Analysis*, 2nd ed., 2003,
sec. 4.3, from memory). Under independent normal errors with equal variance,
``t`` has the t distribution with the residual df when ``psi = 0``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
from scipy import stats

from nestfit.contrasts._contrast import contrast, format_weights
from nestfit.errors import ContrastError, DataError

if TYPE_CHECKING:
    from nestfit._compare import Comparison
    from nestfit._fit import Fit
    from nestfit.contrasts._cellmeans import CellMeans

__all__ = ["ALTERNATIVES", "ContrastEstimate", "check_alternative", "check_level",
           "estimate_contrast", "p_value"]

ALTERNATIVES = ("two-sided", "greater", "less")


def check_alternative(alternative: str) -> str:
    """The alternative, checked."""
    if alternative not in ALTERNATIVES:
        raise ContrastError(f"alternative must be one of {', '.join(ALTERNATIVES)}. Got "
                            f"{alternative!r} instead.")
    return alternative


def check_level(level: float) -> float:
    """A confidence level strictly between 0 and 1."""
    try:
        value = float(level)
    except (TypeError, ValueError):
        raise DataError(f"level must be a number between 0 and 1, got {level!r}") from None
    if not 0.0 < value < 1.0:
        raise DataError(f"level must be between 0 and 1 (exclusive). Got {level!r} instead.")
    return value


def p_value(t: Any, df: Any, alternative: str) -> Any:
    """t-test p-values: two-sided ``2 P(T > |t|)``, greater ``P(T > t)``, less ``P(T < t)``."""
    if alternative == "two-sided":
        return 2.0 * stats.t.sf(np.abs(t), df)
    if alternative == "greater":
        return stats.t.sf(t, df)
    return stats.t.cdf(t, df)


@dataclass(frozen=True, eq=False)
class ContrastEstimate:
    """The estimate and t test of one contrast of level means.

    Attributes
    ----------
    label : str
        The contrast's name.
    levels : tuple of str
        The factor's levels.
    weights : ndarray, shape (k,)
        Weights on the level means.
    coefficients : ndarray, shape (p,)
        ``c = w' M``, the same function written on the model's coefficients.
    estimate : float
        ``c b``.
    std_error : float
        ``sqrt(c' V c)``, ``V`` the coefficient covariance chosen by the level
        means' ``variance`` (the model's own ``Cov(b)`` by default).
    df : float
        Degrees of freedom of ``t``: the model's residual df, or
        Satterthwaite's df for Welch-type standard errors.
    alternative : {"two-sided", "greater", "less"}
        The alternative of :attr:`p` and :meth:`conf_int`.
    general : bool
        Whether the weights were allowed not to sum to zero.
    model : str
        The model's name.
    variance : str
        ``"pooled"``, ``"welch"`` or ``"HC0"``-``"HC3"``.
    """

    label: str
    levels: tuple[str, ...]
    weights: np.ndarray = field(repr=False)
    coefficients: np.ndarray = field(repr=False)
    estimate: float
    std_error: float
    df: float
    alternative: str = "two-sided"
    general: bool = False
    model: str = ""
    variance: str = "pooled"
    _means: CellMeans | None = field(default=None, repr=False)

    @property
    def t(self) -> float:
        """``estimate / std_error``."""
        return self.estimate / self.std_error

    @property
    def p(self) -> float:
        """p-value of ``psi = 0`` against :attr:`alternative`."""
        return float(p_value(self.t, self.df, self.alternative))

    @property
    def unscaled_variance(self) -> float:
        """``c' (X'WX)^- c`` (``sum w_i^2 / n_i`` for separate means): the pooled ``se^2 /
        sigma^2``, whatever the variance choice."""
        assert self._means is not None
        pooled = self._means.value_and_variance(self.coefficients, pooled=True)[1]
        return pooled / self._means.fit.mean_square

    @property
    def ss(self) -> float:
        """Single-df sum of squares ``estimate^2 / unscaled_variance`` (``= t^2 * MSE``)."""
        return self.estimate ** 2 / self.unscaled_variance

    @property
    def weight_map(self) -> dict[str, float]:
        """The non-zero weights as ``{level: weight}``."""
        return {lv: float(w) for lv, w in zip(self.levels, self.weights) if w != 0}

    def conf_int(self, level: float = 0.95) -> tuple[float, float]:
        """``estimate -/+ t_{df} se``: two-sided, or a one-sided bound for the alternative.

        ``"greater"`` gives ``(estimate - t_{1-a, df} se, inf)``, ``"less"``
        gives ``(-inf, estimate + t_{1-a, df} se)``.
        """
        level = check_level(level)
        if self.alternative == "two-sided":
            q = float(stats.t.ppf(0.5 + level / 2.0, self.df))
            return self.estimate - q * self.std_error, self.estimate + q * self.std_error
        q = float(stats.t.ppf(level, self.df))
        if self.alternative == "greater":
            return self.estimate - q * self.std_error, math.inf
        return -math.inf, self.estimate + q * self.std_error

    def restricted_fit(self) -> Fit:
        """The model refitted under ``psi = 0``; ``compare(restricted, full)`` has ``F = t^2``
        (for the pooled standard error)."""
        assert self._means is not None
        return self._means.restricted_fit(
            self.coefficients, f"{self.model} with {self.label} = 0",
            f"{self._means.fit.design.description or self.model}, restricted by "
            f"{format_weights(self.levels, self.weights)} = 0")

    def nested_test(self) -> Comparison:
        """``nestfit.compare(self.restricted_fit(), full model)``: the F test of ``psi = 0``."""
        from nestfit._compare import compare

        assert self._means is not None
        return compare(self.restricted_fit(), self._means.fit)

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        lower, upper = self.conf_int()
        return {"label": self.label, "weights": self.weight_map, "estimate": self.estimate,
                "std_error": self.std_error, "df": self.df, "t": self.t, "p": self.p,
                "alternative": self.alternative, "lower": _finite(lower),
                "upper": _finite(upper), "ss": self.ss, "model": self.model,
                "variance": self.variance}

    def __str__(self) -> str:
        from nestfit.contrasts._text import format_estimate

        return format_estimate(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))


def _finite(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def estimate_contrast(means: CellMeans, spec: Any, *, label: str | None = None,
                      general: bool = False, alternative: str = "two-sided") -> ContrastEstimate:
    """Estimate ``spec`` (anything :func:`~nestfit.contrasts.contrast` accepts) on ``means``."""
    check_alternative(alternative)
    c = contrast(spec, label=label, general=general)
    w = c.weights_for(means.levels)
    coef = means.coefficients_for(w, c.label)
    value, variance = means.value_and_variance(coef)
    if not variance > 0:
        raise ContrastError(f"contrast {c.label!r} has zero variance in model "
                            f"{means.fit.name!r}; it cannot be tested")
    return ContrastEstimate(c.label, means.levels, w, coef, value, math.sqrt(variance),
                            means.df_for(w), alternative, c.general, means.fit.name,
                            means.variance, means)
