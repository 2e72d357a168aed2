"""Checks of the assumptions behind F tests on group means, and what to use when they fail.

Residual diagnostics
    residual_diagnostics(fit) -> ResidualDiagnostics: standardized and
    externally studentized residuals, leverages, Cook's distance, DFFITS and
    flags with the rule stated.
Equal variances and normality
    levene, brown_forsythe, bartlett, shapiro_wilk -> CheckResult;
    check_assumptions(models) -> AssumptionChecks runs them all with Welch's test.
Unequal variances
    welch_anova -> CheckResult; games_howell -> GamesHowell; welch_contrast ->
    WelchContrast and its hook welch_contrast_se(weights, group_variances,
    counts) -> (se, df); hc_covariance(fit, kind) and
    hc_group_mean_covariance(fit, kind) for sandwich standard errors.
Group summaries and contrast weights
    summarize_groups -> GroupSummary; level_weights(weights, levels).
"""

from __future__ import annotations

from nestfit.checks._games_howell import GamesHowell, PairDifference, games_howell
from nestfit.checks._hc import hc_covariance, hc_group_mean_covariance
from nestfit.checks._input import GroupSummary, level_weights, summarize_groups
from nestfit.checks._normality import shapiro_wilk
from nestfit.checks._report import AssumptionChecks, check_assumptions
from nestfit.checks._residuals import ResidualDiagnostics, residual_diagnostics
from nestfit.checks._result import CheckResult
from nestfit.checks._variance import bartlett, brown_forsythe, levene
from nestfit.checks._welch import WelchContrast, welch_anova, welch_contrast, welch_contrast_se

__all__ = [
    "AssumptionChecks",
    "CheckResult",
    "GamesHowell",
    "GroupSummary",
    "PairDifference",
    "ResidualDiagnostics",
    "WelchContrast",
    "bartlett",
    "brown_forsythe",
    "check_assumptions",
    "games_howell",
    "hc_covariance",
    "hc_group_mean_covariance",
    "level_weights",
    "levene",
    "residual_diagnostics",
    "shapiro_wilk",
    "summarize_groups",
    "welch_anova",
    "welch_contrast",
    "welch_contrast_se",
]
