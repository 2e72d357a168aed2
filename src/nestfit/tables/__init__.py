"""Several factors, covariates and the three kinds of sums of squares, as nested comparisons.

Start from :func:`factorial`, which reads a formula with factors (and
covariates) once and builds every sub-model a table compares as a subset of
the full design's columns:

>>> models = factorial("y ~ C(a) * C(b)", data)            # doctest: +SKIP
>>> print(models.table("marginal"))                         # doctest: +SKIP

Public names
------------
factorial, FactorialModels
    The model set: full fit, sub-models by term (``fit_terms``), and the
    methods ``table(kind)``, ``cells``, ``cell_means()``, ``marginal_means()``
    and ``equal_slopes()`` (the analysis-of-covariance test of a common slope).
SumsOfSquaresTable, TermTest, KINDS
    The ``sequential`` (type I), ``marginal`` (type II) and ``each-last``
    (type III, sum-to-zero coding) tables; each row names and can fit its two models.
CellReport
    Cell counts, empty cells, aliased columns, testable df per term.
EstimatedMeans, MeanContrast, WEIGHTINGS
    Cell and marginal (adjusted) means with their covariance and the map
    ``M`` from coefficients to means; contrasts and interaction contrasts.

For contrast families: ``means.level_means()`` gives the means as
:class:`nestfit.contrasts.CellMeans` (every family and multiplicity method of
:mod:`nestfit.contrasts`). Built elsewhere: a contrast ``w`` of
``EstimatedMeans`` is the coefficient function ``c = w @ means.coefficient_map``
with estimate ``w @ means.estimates`` and variance ``w @ means.covariance @ w``
on ``means.df`` residual degrees of freedom.
"""

from __future__ import annotations

from nestfit.tables._cells import CellReport
from nestfit.tables._mean_contrast import MeanContrast
from nestfit.tables._means import WEIGHTINGS, EstimatedMeans
from nestfit.tables._models import FactorialModels, factorial
from nestfit.tables._table import KINDS, SumsOfSquaresTable, TermTest

__all__ = [
    "KINDS",
    "WEIGHTINGS",
    "CellReport",
    "EstimatedMeans",
    "FactorialModels",
    "MeanContrast",
    "SumsOfSquaresTable",
    "TermTest",
    "factorial",
]
