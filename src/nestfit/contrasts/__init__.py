"""Contrasts of level means, contrast families and multiplicity adjustments.

A contrast is a set of weights on the level means, written apart from how the
model was coded: ``contrast("H4 - mean(...)")``. It is estimated from a fit
through that fit's level means (:func:`cell_means`); a family of contrasts
gets a joint F test (a nested comparison), an orthogonality check, and
adjusted p-values with matching simultaneous intervals.

Examples
--------
>>> import nestfit
>>> from nestfit import contrasts as nc
>>> models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
>>> means = nc.cell_means(models.separate_means())
>>> serviced = means.estimate("H4 - mean(...)")
>>> round(serviced.t ** 2, 6) == round(serviced.nested_test().steps[0].f, 6)
True
>>> result = means.family(nc.all_pairs()).adjust("tukey")
>>> len(result.rows)
15
"""

from __future__ import annotations

from nestfit.contrasts._adjust import P_METHODS, adjust_pvalues
from nestfit.contrasts._builtin import (
    ContrastFamily,
    all_pairs,
    consecutive,
    family,
    trends,
    versus_control,
    versus_rest,
)
from nestfit.contrasts._cellmeans import CellMeans, cell_means
from nestfit.contrasts._contrast import Contrast, contrast
from nestfit.contrasts._estimate import ContrastEstimate
from nestfit.contrasts._family import EstimatedFamily
from nestfit.contrasts._grouping import Grouping
from nestfit.contrasts._result import ContrastRow, FamilyResult
from nestfit.contrasts._simultaneous import METHODS
from nestfit.contrasts._variance import VARIANCES

__all__ = [
    "METHODS",
    "P_METHODS",
    "VARIANCES",
    "CellMeans",
    "Contrast",
    "ContrastEstimate",
    "ContrastFamily",
    "ContrastRow",
    "EstimatedFamily",
    "FamilyResult",
    "Grouping",
    "adjust_pvalues",
    "all_pairs",
    "cell_means",
    "consecutive",
    "contrast",
    "family",
    "trends",
    "versus_control",
    "versus_rest",
]
