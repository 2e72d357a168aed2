"""Effect sizes for every step of a nested comparison, with confidence intervals.

For a step ``smaller -> larger`` with extra sum of squares ``SS``, ``df``
degrees of freedom, error sum of squares ``SSE`` and mean square ``MSE`` (the
step's denominator, on ``df_e`` df), corrected total ``SST`` of the response
and ``N`` observations:

* eta squared ``SS / SST`` (Pearson 1905; Cohen 1988, *Statistical Power Analysis
  for the Behavioral Sciences*, 2nd ed., sec. 8.2, from memory);
* partial eta squared ``SS / (SS + SSE)``;
* omega squared ``(SS - df MSE) / (SST + MSE)`` (Hays 1963; Olejnik & Algina
  2003, Psychological Methods 8, 434-447, table 1, from memory);
* epsilon squared ``(SS - df MSE) / SST`` (Kelley 1935, PNAS 21, 554-559);
* Cohen's f ``sqrt(SS / SSE)``, i.e. ``sqrt(eta_p^2 / (1 - eta_p^2))`` (Cohen 1988, sec. 8.2).

Omega and epsilon squared subtract the part of ``SS`` expected from noise alone
and can be negative; they are reported as computed, not truncated at zero.

Intervals. Under the larger model with normal errors, ``F`` of the step is
noncentral F with ``lambda = ||(P_large - P_small) mu||^2 / sigma^2``. The population
share of variation a step explains, relative to itself plus error, is

    theta = (lambda / N) / (lambda / N + 1) = lambda / (lambda + N),

and Cohen's population ``f = sqrt(lambda / N)`` (Steiger 2004, Psychological
Methods 9, 164-182, eqs. 10-13, from memory; his ``N`` is the total sample size).
The interval for ``lambda`` from :func:`noncentrality_interval_f` maps to
intervals for ``theta`` (reported with partial eta squared) and ``f``. When the
comparison is a single step from the constant-only model (a one-way analysis),
eta, omega and epsilon squared estimate the same ``theta`` and share its
interval; in longer chains their population values depend on the other steps
too, no exact interval exists, and their limits are reported as NaN. (For a
one-way layout ``N = df1 + df2 + 1``, so ``theta`` is also Smithson's 2003
``lambda / (lambda + df1 + df2 + 1)``.)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from nestfit._compare import Comparison
from nestfit._text import format_number, text_table
from nestfit.checks._result import check_alpha
from nestfit.effects._interval import noncentrality_interval_f
from nestfit.errors import DataError

__all__ = ["ComparisonEffects", "EffectEstimate", "StepEffects", "effect_sizes"]

# The smallest model's residual SS equals the corrected total to this relative
# tolerance when it is the constant-only model. Common practice, no source.
_SAME_TOTAL = 1e-10

MEASURES = ("eta_squared", "partial_eta_squared", "omega_squared", "epsilon_squared",
            "cohens_f")


@dataclass(frozen=True)
class EffectEstimate:
    """One effect size with its confidence limits (NaN when no interval applies)."""

    measure: str
    estimate: float
    lower: float
    upper: float


@dataclass(frozen=True)
class StepEffects:
    """Effect sizes of one comparison step.

    Attributes
    ----------
    smaller, larger : str
        The models of the step.
    df, denominator_df : int
        ``df`` and ``df_e``.
    f : float
        The step's F statistic.
    noncentrality_lower, noncentrality_upper : float
        Confidence limits for ``lambda``.
    measures : tuple of EffectEstimate
        In the order of ``MEASURES``.
    """

    smaller: str
    larger: str
    df: int
    denominator_df: int
    f: float
    noncentrality_lower: float
    noncentrality_upper: float
    measures: tuple[EffectEstimate, ...] = field(repr=False)

    def __getitem__(self, measure: str) -> EffectEstimate:
        for m in self.measures:
            if m.measure == measure:
                return m
        raise KeyError(f"no measure {measure!r}; the measures are {', '.join(MEASURES)}")


@dataclass(frozen=True)
class ComparisonEffects:
    """Effect sizes for every step of a :class:`~nestfit.Comparison`.

    Attributes
    ----------
    response_name : str
    n_obs : int
        ``N``.
    level : float
        Confidence level of the intervals.
    steps : tuple of StepEffects
    """

    response_name: str
    n_obs: int
    level: float
    steps: tuple[StepEffects, ...] = field(repr=False)

    def to_frame(self) -> pd.DataFrame:
        """One row per step and measure: smaller, larger, measure, estimate, lower, upper."""
        return pd.DataFrame([
            {"smaller": s.smaller, "larger": s.larger, "measure": m.measure,
             "estimate": m.estimate, "lower": m.lower, "upper": m.upper}
            for s in self.steps for m in s.measures
        ])

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form; NaN becomes None."""
        return {
            "response": self.response_name, "n_obs": self.n_obs, "level": self.level,
            "steps": [
                {"from": s.smaller, "to": s.larger, "df": s.df,
                 "denominator_df": s.denominator_df, "f": _none(s.f),
                 "noncentrality": [_none(s.noncentrality_lower), _none(s.noncentrality_upper)],
                 "measures": {m.measure: {"estimate": _none(m.estimate), "lower": _none(m.lower),
                                          "upper": _none(m.upper)} for m in s.measures}}
                for s in self.steps
            ],
        }

    def __str__(self) -> str:
        rows = []
        for s in self.steps:
            for m in s.measures:
                rows.append([f"{s.smaller} -> {s.larger}", m.measure.replace("_", " "),
                             format_number(m.estimate, 4), format_number(m.lower, 4),
                             format_number(m.upper, 4)])
        return "\n".join([
            f"Effect sizes for {self.response_name!r} (N = {self.n_obs}), "
            f"{self.level:.0%} intervals by inverting the noncentral F",
            text_table(["step", "measure", "estimate", "lower", "upper"], rows, left=2),
            "  Intervals assume independent normal errors with equal variance and the larger",
            "  model of each step true; '-' means no exact interval for that measure here.",
            "  Omega and epsilon squared can be negative. Each interval is for its step alone.",
        ])


def effect_sizes(comparison: Comparison, *, level: float = 0.95) -> ComparisonEffects:
    """Eta, partial eta, omega and epsilon squared and Cohen's f for every comparison step.

    Parameters
    ----------
    comparison : Comparison
        From :func:`nestfit.compare` (or ``GroupModels.oneway()`` / ``.chain()``).
    level : float
        Confidence level of the intervals.

    Returns
    -------
    ComparisonEffects

    Raises
    ------
    DataError
        Not a Comparison; fits not kept in the comparison; models without the
        constant (no corrected total); ``level`` outside (0, 1).

    Notes
    -----
    Formulas, the interval method and references in the module docstring.

    Examples
    --------
    >>> import nestfit
    >>> from nestfit.effects import effect_sizes
    >>> models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    >>> fx = effect_sizes(models.oneway())
    >>> 0 < fx.steps[0]["eta_squared"].estimate < 1
    True
    """
    if not isinstance(comparison, Comparison):
        raise DataError(f"effect_sizes takes a Comparison. Got {type(comparison).__name__}.")
    level = check_alpha(level, "level")
    if not comparison.fits:
        raise DataError("this comparison does not hold its fits; build it with nestfit.compare")
    first = comparison.fits[0]
    if not first.has_constant:
        raise DataError(
            f"model {first.name!r} does not contain the constant, so there is no corrected total "
            "sum of squares to express effects against"
        )
    total = first.total_ss
    n = comparison.n_obs
    whole = (len(comparison.steps) == 1
             and abs(first.residual_ss - total) <= _SAME_TOTAL * max(total, 1e-300))
    steps = tuple(_step_effects(s, total, n, level, whole) for s in comparison.steps)
    return ComparisonEffects(comparison.response_name, n, float(level), steps)


def _step_effects(step: Any, total: float, n: int, level: float, whole: bool) -> StepEffects:
    ss, df = step.ss, step.df
    mse, df_e = step.denominator_ms, step.denominator_df
    sse = mse * df_e
    eta = ss / total if total > 0 else math.nan
    partial = ss / (ss + sse) if ss + sse > 0 else math.nan
    omega = (ss - df * mse) / (total + mse) if total + mse > 0 else math.nan
    epsilon = (ss - df * mse) / total if total > 0 else math.nan
    cohen = math.sqrt(ss / sse) if sse > 0 else (math.inf if ss > 0 else math.nan)
    if df_e > 0 and math.isfinite(step.f):
        lam_lo, lam_hi = noncentrality_interval_f(step.f, df, df_e, level)
    else:
        lam_lo, lam_hi = math.nan, math.nan
    share = (_share(lam_lo, n), _share(lam_hi, n))
    f_lim = (_root_f(lam_lo, n), _root_f(lam_hi, n))
    shared = share if whole else (math.nan, math.nan)
    measures = (
        EffectEstimate("eta_squared", eta, *shared),
        EffectEstimate("partial_eta_squared", partial, *share),
        EffectEstimate("omega_squared", omega, *shared),
        EffectEstimate("epsilon_squared", epsilon, *shared),
        EffectEstimate("cohens_f", cohen, *f_lim),
    )
    return StepEffects(step.smaller, step.larger, df, df_e, step.f, lam_lo, lam_hi, measures)


def _share(lam: float, n: int) -> float:
    if math.isnan(lam):
        return math.nan
    return 1.0 if math.isinf(lam) else lam / (lam + n)


def _root_f(lam: float, n: int) -> float:
    return lam if math.isnan(lam) or math.isinf(lam) else math.sqrt(lam / n)


def _none(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None
