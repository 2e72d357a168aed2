"""nestfit: group-mean models as design matrices, fitted by QR and compared as nested fits.

Every question about group means is a model (a design matrix); every answer
is a comparison of two nested models by the extra-sum-of-squares F test.

Main entry points
-----------------
groups(data, response, factor)
    Builder of one-factor group models: ``equal_means()``, ``separate_means()``,
    ``blocks("A | B C")``, ``coded(coding)``; all fitted from group sums.
fit(formula, data)
    Any linear model from a patsy formula, fitted by pivoted Householder QR.
compare(*fits)
    The chain of nested models and the F test of each step.
"""

from __future__ import annotations

from nestfit import checks, contrasts, datasets, effects, errors, power, report, tables
from nestfit._compare import Comparison, ModelSummary, Step, compare
from nestfit._data import MissingReport
from nestfit._fit import Fit
from nestfit._formula_fit import fit
from nestfit._groups import GroupModels, groups
from nestfit.checks import (
    bartlett,
    brown_forsythe,
    check_assumptions,
    games_howell,
    hc_covariance,
    levene,
    residual_diagnostics,
    shapiro_wilk,
    welch_anova,
    welch_contrast,
)
from nestfit.contrasts import (
    CellMeans,
    Contrast,
    ContrastEstimate,
    ContrastFamily,
    EstimatedFamily,
    FamilyResult,
    Grouping,
    adjust_pvalues,
    all_pairs,
    cell_means,
    consecutive,
    contrast,
    family,
    trends,
    versus_control,
    versus_rest,
)
from nestfit.design import (
    Blocks,
    Coding,
    CodingMatrix,
    ColumnInfo,
    Design,
    Deviation,
    Factor,
    FromHypotheses,
    Helmert,
    Indicator,
    Partition,
    Polynomial,
    Reference,
    SuccessiveDifferences,
)
from nestfit.effects import contrast_effect, effect_sizes
from nestfit.power import plan_comparison, plan_contrast, plan_effect_size
from nestfit.report import Report, worked_report
from nestfit.tables import FactorialModels, SumsOfSquaresTable, factorial

__version__ = "0.1.0"

__all__ = [
    "Blocks",
    "CellMeans",
    "Coding",
    "CodingMatrix",
    "ColumnInfo",
    "Comparison",
    "Contrast",
    "ContrastEstimate",
    "ContrastFamily",
    "Design",
    "Deviation",
    "EstimatedFamily",
    "Factor",
    "FactorialModels",
    "FamilyResult",
    "Fit",
    "FromHypotheses",
    "GroupModels",
    "Grouping",
    "Helmert",
    "Indicator",
    "MissingReport",
    "ModelSummary",
    "Partition",
    "Polynomial",
    "Reference",
    "Report",
    "Step",
    "SuccessiveDifferences",
    "SumsOfSquaresTable",
    "__version__",
    "adjust_pvalues",
    "all_pairs",
    "bartlett",
    "brown_forsythe",
    "cell_means",
    "check_assumptions",
    "checks",
    "compare",
    "consecutive",
    "contrast",
    "contrast_effect",
    "contrasts",
    "datasets",
    "effect_sizes",
    "effects",
    "errors",
    "factorial",
    "family",
    "fit",
    "games_howell",
    "groups",
    "hc_covariance",
    "levene",
    "plan_comparison",
    "plan_contrast",
    "plan_effect_size",
    "power",
    "report",
    "residual_diagnostics",
    "shapiro_wilk",
    "tables",
    "trends",
    "versus_control",
    "versus_rest",
    "welch_anova",
    "welch_contrast",
    "worked_report",
]
