"""The numbers a worked analysis shows that no other result object carries.

A worked-analysis report (:mod:`nestfit.report`) walks through one factor's
nested group models step by step. Its renderers compute nothing; everything
they print comes from result objects: the :class:`~nestfit.Comparison` and its
fits, the group summary, contrast and check results, and the pieces gathered
here:

* each model's residual sum of squares split by level,
  ``RSS = sum_g sum_{i in g} w_i (y_i - yhat_g)^2`` (the inner sums, one per
  level, add up to the model's residual SS);
* what each coefficient estimates, as weights on the level means: the
  hypothesis matrix ``pinv(C)`` of the model's coding matrix ``C``
  (``(C' W C)^{-1} C' W`` with the level weight totals ``W`` when ``C`` has
  fewer columns than levels; :meth:`nestfit.CodingMatrix.hypothesis_matrix`);
* the separate-means model refitted under a contrast coding (the regression
  view) and its overall F test against the equal-means model, which is the
  one-way analysis of variance;
* intervals for the level means, one at a time and simultaneous, as contrast
  family results of the general functions ``mu_l`` (:mod:`nestfit.contrasts`);
* normal quantiles of the standardized residuals for a quantile plot
  (Filliben's order-statistic medians, as :func:`scipy.stats.probplot`
  computes them; Filliben 1975, Technometrics 17, 111-117, from memory);
* the step-by-step trace of a p-value adjustment (:mod:`nestfit._stepwise`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
from scipy import stats

from nestfit._compare import Comparison, compare
from nestfit._data import MissingReport
from nestfit._fit import Fit
from nestfit._groups import GroupModels
from nestfit._stepwise import AdjustmentTrace, adjustment_trace
from nestfit.design._coding_custom import CodingMatrix
from nestfit.errors import ContrastError, DataError, ModelError, RankDeficientError

if TYPE_CHECKING:
    from nestfit.checks import AssumptionChecks, GroupSummary, ResidualDiagnostics
    from nestfit.contrasts import FamilyResult
    from nestfit.power import PowerCurve

__all__ = ["ModelWork", "NormalQuantiles", "WorkedAnalysis", "model_work", "normal_quantiles",
           "worked_analysis"]


@dataclass(frozen=True, eq=False)
class ModelWork:
    """One model of a worked analysis.

    Attributes
    ----------
    label : str
        Its short label in the comparison (``"M0"``, ``"M1"``...; ``"R"`` for
        the regression view).
    fit : Fit
        The fitted model.
    fitted_means : ndarray, shape (k,)
        The model's fitted mean of each level (:meth:`Fit.group_fitted_means`).
    level_rss : ndarray, shape (k,)
        ``sum_{i in level} w_i (y_i - yhat_i)^2`` for each level; they add up
        to ``fit.residual_ss``.
    hypothesis : ndarray, shape (p, k), or None
        Row ``j``: the weights on the level means that coefficient ``j``
        estimates (None when the coding's columns are linearly dependent).
    """

    label: str
    fit: Fit
    fitted_means: np.ndarray = field(repr=False)
    level_rss: np.ndarray = field(repr=False)
    hypothesis: np.ndarray | None = field(repr=False)


@dataclass(frozen=True, eq=False)
class NormalQuantiles:
    """Ordered standardized residuals against normal quantiles (for a quantile plot).

    Attributes
    ----------
    theoretical : ndarray
        Filliben's normal order-statistic medians.
    ordered : ndarray
        The standardized residuals, sorted (observations of leverage 1 left out).
    """

    theoretical: np.ndarray = field(repr=False)
    ordered: np.ndarray = field(repr=False)


@dataclass(frozen=True, eq=False)
class WorkedAnalysis:
    """Everything a worked-analysis report shows, gathered from result objects.

    Build with :func:`worked_analysis`. Attributes not given to it are None.

    Attributes
    ----------
    comparison : Comparison
        The chain of nested models.
    groups : GroupSummary
        Count, mean and standard deviation of each level.
    models : tuple of ModelWork
        One per model of the comparison, smallest first.
    regression : ModelWork
        The separate-means model under :attr:`coding`.
    regression_test : Comparison
        Equal means against :attr:`regression`: the overall F test of the
        regression, which is the one-way analysis of variance.
    coding : str
        The coding's name.
    observations : ndarray
        The response on the scale of the data, one value per observation used.
    codes : ndarray of int
        Level index of each observation.
    mean_intervals : FamilyResult
        Each level mean with its own (unadjusted) interval.
    simultaneous_means : FamilyResult or None
        The same intervals made simultaneous over the ``k`` means.
    contrasts : FamilyResult or None
    adjustment : AdjustmentTrace or None
        The contrasts' adjustment worked step by step.
    checks : AssumptionChecks or None
    diagnostics : ResidualDiagnostics or None
    quantiles : NormalQuantiles or None
        From :attr:`diagnostics`.
    power : PowerCurve or None
    alpha : float
        The level of the plain-words readings.
    missing : MissingReport
    """

    comparison: Comparison
    groups: GroupSummary
    models: tuple[ModelWork, ...]
    regression: ModelWork
    regression_test: Comparison
    coding: str
    observations: np.ndarray = field(repr=False)
    codes: np.ndarray = field(repr=False)
    mean_intervals: FamilyResult = field(repr=False)
    simultaneous_means: FamilyResult | None = field(default=None, repr=False)
    contrasts: FamilyResult | None = field(default=None, repr=False)
    adjustment: AdjustmentTrace | None = field(default=None, repr=False)
    checks: AssumptionChecks | None = field(default=None, repr=False)
    diagnostics: ResidualDiagnostics | None = field(default=None, repr=False)
    quantiles: NormalQuantiles | None = field(default=None, repr=False)
    power: PowerCurve | None = field(default=None, repr=False)
    alpha: float = 0.05
    missing: MissingReport | None = field(default=None, repr=False)

    @property
    def response(self) -> str:
        """The response's name."""
        return self.comparison.response_name

    @property
    def factor(self) -> str:
        """The factor's name."""
        return self.groups.factor_name

    @property
    def levels(self) -> tuple[str, ...]:
        """The factor's levels, in model order."""
        return self.groups.levels


def _grouped(fit: Fit) -> Any:
    groups = fit.design.groups
    if groups is None:
        raise ModelError(
            f"model {fit.name!r} is a formula fit; a worked analysis covers group models of "
            "one factor (build them with nestfit.groups)")
    return groups


def model_work(fit: Fit, label: str) -> ModelWork:
    """Fitted means, residual SS by level and the hypothesis matrix of one grouped fit.

    Raises
    ------
    ModelError
        ``fit`` is not a grouped (one-factor) fit.
    """
    groups = _grouped(fit)
    factor = groups.factor
    r = np.asarray(fit.residuals, dtype=float)
    sq = r * r if fit.weights is None else fit.weights * r * r
    level_rss = np.bincount(factor.codes, weights=sq, minlength=factor.n_levels)
    fitted = fit.group_fitted_means().to_numpy(dtype=float)
    coding = np.asarray(groups.coding, dtype=float)
    hypothesis: np.ndarray | None
    try:
        cm = CodingMatrix(factor.levels, coding, fit.design.column_names, "model",
                          full_rank=True)
        totals = (np.bincount(factor.codes, weights=fit.weights, minlength=factor.n_levels)
                  if fit.weights is not None else factor.counts.astype(float))
        reduced = coding.shape[1] < factor.n_levels
        hypothesis = cm.hypothesis_matrix(with_intercept=False,
                                          weights=totals.tolist() if reduced else None)
    except (RankDeficientError, ContrastError):
        hypothesis = None
    for arr in (level_rss, fitted) + ((hypothesis,) if hypothesis is not None else ()):
        arr.flags.writeable = False
    return ModelWork(label, fit, fitted, level_rss, hypothesis)


def normal_quantiles(standardized: Any) -> NormalQuantiles:
    """Sorted standardized residuals and Filliben's normal order-statistic medians."""
    x = np.asarray(standardized, dtype=float)
    x = x[np.isfinite(x)]
    if x.size < 2:
        raise DataError("a normal quantile plot needs at least 2 finite standardized residuals")
    theoretical, ordered = stats.probplot(x, dist="norm", fit=False)
    theoretical, ordered = np.asarray(theoretical), np.asarray(ordered)
    theoretical.flags.writeable = False
    ordered.flags.writeable = False
    return NormalQuantiles(theoretical, ordered)


def models_of(fit: Fit) -> GroupModels:
    """The group-model builder a grouped fit came from (same rows, response, weights)."""
    groups = _grouped(fit)
    missing = fit.missing if fit.missing is not None else MissingReport(fit.n_obs)
    return GroupModels(fit.response_name, groups.factor, np.array(fit.y), missing,
                       weights=fit.weights, offset=fit.offset, row_labels=fit.row_labels)


def _level_means(fit: Fit, method: str, level: float) -> FamilyResult:
    from nestfit import contrasts as nc

    levels = _grouped(fit).factor.levels
    functions = [nc.contrast({lv: 1.0}, label=lv, general=True) for lv in levels]
    family = nc.cell_means(fit).family(functions, name="level means")
    return family.adjust(method, level=level, rng=0)


def worked_analysis(
    comparison: Comparison,
    *,
    models: GroupModels | None = None,
    coding: Any = "deviation",
    contrasts: FamilyResult | None = None,
    checks: AssumptionChecks | None = None,
    diagnostics: ResidualDiagnostics | None = None,
    power: PowerCurve | None = None,
    alpha: float = 0.05,
    level: float = 0.95,
    mean_method: str | None = "bonferroni",
) -> WorkedAnalysis:
    """Gather what a worked-analysis report shows about one factor's nested group models.

    Parameters
    ----------
    comparison : Comparison
        Nested group models of one factor (from :func:`nestfit.groups`), with
        their fits (as :func:`nestfit.compare` keeps them).
    models : GroupModels, optional
        The builder the fits came from; default rebuilt from the first fit.
    coding : str or Coding
        Coding of the regression view of the separate-means model (default
        ``"deviation"``).
    contrasts : FamilyResult, optional
        A contrast family with its multiplicity adjustment.
    checks, diagnostics : optional
        :class:`~nestfit.checks.AssumptionChecks` and
        :class:`~nestfit.checks.ResidualDiagnostics` to report.
    power : PowerCurve, optional
        A power curve for a planned study.
    alpha : float
        Level of the plain-words readings of the comparison steps.
    level : float
        Confidence level of the level-mean intervals.
    mean_method : str or None
        Multiplicity method making the level-mean intervals simultaneous over
        the ``k`` means (default Bonferroni); None for none.

    Returns
    -------
    WorkedAnalysis

    Raises
    ------
    ModelError
        The comparison has no fits, or a formula (non-grouped) fit, or fits of
        different factors.
    DataError
        ``alpha`` or ``level`` outside (0, 1).
    """
    from nestfit.checks import summarize_groups

    if not isinstance(comparison, Comparison):
        raise ModelError(f"a worked analysis starts from a Comparison, got "
                         f"{type(comparison).__name__}")
    for value, name in ((alpha, "alpha"), (level, "level")):
        if not 0.0 < float(value) < 1.0:
            raise DataError(f"{name} must be between 0 and 1 (exclusive). Got {value!r} instead.")
    if not comparison.fits:
        raise ModelError("the comparison carries no fits; build it with nestfit.compare(...)")
    factor = _grouped(comparison.fits[0]).factor
    for fit in comparison.fits[1:]:
        if not np.array_equal(_grouped(fit).factor.codes, factor.codes):
            raise ModelError(f"model {fit.name!r} groups the rows by another factor than "
                             f"{factor.name!r}; a worked analysis covers one factor")
    if models is None:
        models = models_of(comparison.fits[0])
    elif not np.array_equal(models.factor.codes, factor.codes):
        raise ModelError(f"the group models are of factor {models.factor.name!r}, not the factor "
                         f"{factor.name!r} of the comparison (or not on its rows); pass the "
                         "builder the fits came from")
    work = tuple(model_work(f, f"M{i}") for i, f in enumerate(comparison.fits))
    regression_fit = models.separate_means(coding)
    regression = model_work(regression_fit, "R")
    regression_test = compare(models.equal_means(), regression_fit)
    separate = models.separate_means()
    observations = np.asarray(separate.fitted + separate.residuals, dtype=float)
    observations.flags.writeable = False
    mean_intervals = _level_means(separate, "none", level)
    simultaneous = _level_means(separate, mean_method, level) if mean_method else None
    quantiles = normal_quantiles(diagnostics.standardized) if diagnostics is not None else None
    return WorkedAnalysis(
        comparison=comparison,
        groups=summarize_groups(models),
        models=work,
        regression=regression,
        regression_test=regression_test,
        coding=getattr(coding, "label", str(coding)),
        observations=observations,
        codes=factor.codes,
        mean_intervals=mean_intervals,
        simultaneous_means=simultaneous,
        contrasts=contrasts,
        adjustment=adjustment_trace(contrasts) if contrasts is not None else None,
        checks=checks,
        diagnostics=diagnostics,
        quantiles=quantiles,
        power=power,
        alpha=float(alpha),
        missing=models.missing,
    )
