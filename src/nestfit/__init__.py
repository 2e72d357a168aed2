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

from nestfit import datasets, errors
from nestfit._compare import Comparison, ModelSummary, Step, compare
from nestfit._data import MissingReport
from nestfit._fit import Fit
from nestfit._formula_fit import fit
from nestfit._groups import GroupModels, groups
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

__version__ = "0.1.0"

__all__ = [
    "Blocks",
    "Coding",
    "CodingMatrix",
    "ColumnInfo",
    "Comparison",
    "Design",
    "Deviation",
    "Factor",
    "Fit",
    "FromHypotheses",
    "GroupModels",
    "Helmert",
    "Indicator",
    "MissingReport",
    "ModelSummary",
    "Partition",
    "Polynomial",
    "Reference",
    "Step",
    "SuccessiveDifferences",
    "__version__",
    "compare",
    "datasets",
    "errors",
    "fit",
    "groups",
]
