"""Level means as linear functions of a fit's coefficients: ``mu = M b``.

Every contrast ``w' mu`` becomes the coefficient vector ``c = w' M``, whose
estimate is ``c b`` and variance ``c' Cov(b) c``. ``M`` is

* for a grouped fit (:func:`nestfit.groups`), the coding matrix of the
  model: row ``l`` is the design row of every observation at level ``l``,
  so ``M b`` are the model's fitted level means -- the sample means for the
  separate-means model, block means for a partition model;
* for a dense (formula) fit with one factor and covariates, the *adjusted*
  level means: row ``l`` is the average design row over the observations
  used, with the factor's columns set to level ``l``'s pattern -- every
  covariate at its mean over the observations (unweighted), other factors'
  columns at their observed proportions. The factor must enter only through
  columns that are constant within each level (no interaction with a
  covariate or another factor).

A linear function ``c b`` is estimable when ``c`` lies in the row space of
the design (Searle, *Linear Models*, 1971, sec. 5.4, from memory): checked
as ``|N' (c / d)| <= 1e-8 |c / d|`` for ``N`` an orthonormal basis of the
null space of the column-scaled design (``d`` the column norms), of the
fit's rank (:func:`nestfit.linalg.null_space`).
"""

from __future__ import annotations

import io
import math
import tokenize
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import scipy.linalg

from nestfit._fit import Fit, fit_design
from nestfit.contrasts._variance import VarianceSource, retained_covariance, variance_source
from nestfit.design._design import ColumnInfo, Design
from nestfit.design._factor import Factor
from nestfit.errors import ColumnError, ContrastError, DataError, ModelError
from nestfit.linalg._nullspace import ESTIMABLE_TOL, null_space

if TYPE_CHECKING:
    from nestfit.contrasts._builtin import ContrastFamily
    from nestfit.contrasts._estimate import ContrastEstimate
    from nestfit.contrasts._family import EstimatedFamily

__all__ = ["CellMeans", "assemble_means", "cell_means"]

# A contrast whose coefficient vector is this small relative to |w| |M| is identically zero.
ZERO_TOL = 1e-10
# A factor column varies within a level when its range there exceeds this times its scale.
CONSTANT_TOL = 1e-12


@dataclass(frozen=True, eq=False)
class CellMeans:
    """The level means of one factor in a fitted model, and the map from coefficients to them.

    Build with :func:`cell_means`.

    Attributes
    ----------
    fit : Fit
        The model the means come from (its residual mean square and df are
        the error term of every contrast).
    factor : str
        The factor's name.
    levels : tuple of str
        The levels, in order.
    counts : ndarray of int
        Observations per level.
    mapping : ndarray, shape (k, p)
        ``M``: level means ``mu = M b`` (over all design columns; entries on
        aliased columns are used only through estimable combinations).
    estimates : ndarray, shape (k,)
        The estimated level means ``M b``.
    covariance : ndarray, shape (k, k)
        Their covariance ``M V M'``, ``V`` the coefficient covariance chosen
        by ``variance``.
    adjusted : bool
        ``True`` for adjusted means of a dense fit (covariates at their means).
    variance : str
        Where the standard errors come from: ``"pooled"``, ``"welch"`` or
        ``"HC0"``-``"HC3"`` (:mod:`nestfit.contrasts._variance`); ``covariance``
        is computed that way.
    """

    fit: Fit
    factor: str
    levels: tuple[str, ...]
    counts: np.ndarray = field(repr=False)
    mapping: np.ndarray = field(repr=False)
    estimates: np.ndarray = field(repr=False)
    covariance: np.ndarray = field(repr=False)
    adjusted: bool = False
    variance: str = "pooled"
    _source: VarianceSource | None = field(default=None, repr=False)
    _null: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)), repr=False)
    _scales: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False)
    _what: str = field(default="", repr=False)

    # ------------------------------------------------------------ queries
    @property
    def df(self) -> int:
        """Residual degrees of freedom of the fit."""
        return self.fit.residual_df

    @property
    def source(self) -> VarianceSource:
        """The covariance behind the standard errors, with its name and assumptions."""
        assert self._source is not None
        return self._source

    def df_for(self, weights: np.ndarray) -> float:
        """Degrees of freedom of the contrast with these level weights (Satterthwaite's for
        Welch-type errors, the residual df otherwise)."""
        return self.source.df_for(np.asarray(weights, dtype=float))

    @property
    def std_errors(self) -> np.ndarray:
        """Standard errors of the level means."""
        return np.sqrt(np.diag(self.covariance))

    @property
    def description(self) -> str:
        """What the means are, in words."""
        errors = "" if self.variance == "pooled" else f"; standard errors: {self.source.name}"
        if self._what:
            return f"{self._what} in model {self.fit.name!r}{errors}"
        if self.adjusted:
            return (f"adjusted means of {self.factor!r} in model {self.fit.name!r} (covariates at "
                    f"their means over the observations used){errors}")
        return f"fitted means of {self.factor!r} in model {self.fit.name!r}{errors}"

    def coefficients_for(self, weights: np.ndarray, label: str) -> np.ndarray:
        """``c = w' M`` for level weights ``w``, checked to be estimable and not identically zero.

        Raises
        ------
        ContrastError
            Not estimable in the model (naming the aliased columns involved),
            or identically zero (the model gives the levels involved one mean).
        """
        w = np.asarray(weights, dtype=float)
        c = w @ self.mapping
        scale = float(np.linalg.norm(w) * np.abs(self.mapping).max())
        if float(np.linalg.norm(c)) <= ZERO_TOL * scale:
            raise ContrastError(
                f"contrast {label!r} is identically zero in model {self.fit.name!r}: the model "
                "gives the levels it compares the same mean, so there is nothing to estimate; "
                "use a model in which they have their own means (e.g. separate means)")
        if self._null.shape[1]:
            v = c / self._scales
            along = self._null.T @ v
            resid = float(np.linalg.norm(along)) / float(np.linalg.norm(v))
            if resid > ESTIMABLE_TOL:
                culprits = self._null[:, np.abs(along) > ESTIMABLE_TOL * np.linalg.norm(v)]
                involved = np.flatnonzero(np.abs(culprits).max(axis=1) > 1e-8)
                names = [self.fit.design.column_names[j] for j in involved]
                raise ContrastError(
                    f"contrast {label!r} is not estimable in model {self.fit.name!r}: it depends "
                    f"on the aliased columns {', '.join(names)}, whose coefficients the data "
                    f"cannot separate (relative residual {resid:.2g}); rephrase it, or fit a "
                    "model of full rank")
        c = c + 0.0
        c.flags.writeable = False
        return c

    def value_and_variance(self, c: np.ndarray, *, pooled: bool = False) -> tuple[float, float]:
        """``(c b, c' V c)`` over the estimable columns.

        ``V`` is the covariance chosen by :attr:`variance`, or with
        ``pooled=True`` the model's own ``s^2 (X'WX)^-`` (which sums of
        squares and orthogonality are defined by, whatever the variance choice).
        """
        keep = self._retained()
        b = np.asarray(self.fit.coefficients)[keep]
        cov = self.coefficient_covariance(pooled=pooled)[np.ix_(keep, keep)]
        ck = c[keep]
        return float(ck @ b), float(ck @ cov @ ck)

    def coefficient_covariance(self, *, pooled: bool = False) -> np.ndarray:
        """``(p, p)`` covariance of the coefficients used for contrasts (zeros on aliased
        columns): the chosen one, or the model's own with ``pooled=True``."""
        if pooled and self.variance != "pooled":
            return retained_covariance(self.fit.covariance, self._retained())
        return self.source.coefficient_covariance

    def restricted_fit(self, constraints: np.ndarray, name: str, description: str = "") -> Fit:
        """The model refitted under ``constraints @ b = 0`` (rows estimable).

        The restricted design is ``X_r N`` with ``X_r`` the estimable columns
        and ``N`` an orthonormal basis of the null space of the constraint
        rows on those columns (``scipy.linalg.null_space``, by SVD), so its
        column space is exactly the part of the model where the constraints
        hold and :func:`nestfit.compare` of it against the full fit is the
        F test of the constraints.
        """
        keep = self._retained()
        rows = np.atleast_2d(np.asarray(constraints, dtype=float))[:, keep]
        null = scipy.linalg.null_space(rows)
        if null.shape[1] == 0:
            raise ContrastError(
                f"the constraints leave no free coefficient in model {self.fit.name!r}: they "
                "restrict every estimable function, so there is no restricted model to compare")
        design = self.fit.design
        cols = [ColumnInfo(f"restricted[{j + 1}]", "restricted") for j in range(null.shape[1])]
        if design.groups is not None:
            new = Design.grouped(name, design.groups.factor, design.groups.coding[:, keep] @ null,
                                 cols, description=description)
        else:
            new = Design(name, tuple(cols), design.n_rows, description,
                         matrix=design.to_dense()[:, keep] @ null)
        f = self.fit
        return fit_design(new, f.y, response_name=f.response_name, weights=f.weights,
                          offset=f.offset, missing=f.missing, row_labels=f.row_labels)

    def _retained(self) -> np.ndarray:
        aliased = set(self.fit.aliased)
        return np.array([n not in aliased for n in self.fit.design.column_names], dtype=bool)

    # -------------------------------------------------------- estimation
    def estimate(self, spec: Any, *, label: str | None = None, general: bool = False,
                 alternative: str = "two-sided") -> ContrastEstimate:
        """Estimate one contrast (see :class:`~nestfit.contrasts.ContrastEstimate`)."""
        from nestfit.contrasts._estimate import estimate_contrast

        return estimate_contrast(self, spec, label=label, general=general,
                                 alternative=alternative)

    def family(self, spec: ContrastFamily | Sequence[Any], *,
               name: str | None = None) -> EstimatedFamily:
        """Estimate a family of contrasts (a built-in family or a sequence of contrasts)."""
        from nestfit.contrasts._family import estimate_family

        return estimate_family(self, spec, name=name)

    # -------------------------------------------------------- conversion
    def to_frame(self) -> pd.DataFrame:
        """One row per level: n, mean, std_error."""
        return pd.DataFrame({"n": self.counts, "mean": self.estimates,
                             "std_error": self.std_errors},
                            index=pd.Index(self.levels, name=self.factor))

    def __str__(self) -> str:
        from nestfit.contrasts._text import format_cell_means

        return format_cell_means(self)


def cell_means(fit: Fit, factor: str | None = None, data: Any = None, *,
               variance: str = "pooled") -> CellMeans:
    """The level means of a fit, as linear functions of its coefficients.

    Parameters
    ----------
    fit : Fit
        A grouped fit (from :func:`nestfit.groups`) or a dense formula fit
        (from :func:`nestfit.fit`) with one factor and, optionally, covariates.
    factor : str, optional
        The factor's column name. Required for a formula fit; for a grouped
        fit it must match the fit's factor if given.
    data : pandas.DataFrame, optional
        For a formula fit: the table the fit was made from (the factor's
        labels are looked up by the row labels the fit kept).
    variance : {"pooled", "welch", "HC0", "HC1", "HC2", "HC3"}
        Where every contrast's standard error and df come from
        (:mod:`nestfit.contrasts._variance`): the pooled residual mean square
        on the residual df (default); each level's own variance with
        Satterthwaite df per contrast (separate-means grouped fits); or a
        heteroscedasticity-consistent sandwich covariance on the residual df
        (any fit). Every family and multiplicity method then uses it.

    Returns
    -------
    CellMeans

    Raises
    ------
    ContrastError
        The factor is not in the model, or enters an interaction; a
        ``variance`` the fit does not allow (the message says which to use).
    ColumnError, DataError
        A missing factor column, or data that do not match the fit's rows.

    Notes
    -----
    Grouped fit: ``mu_l = C_l b`` with ``C`` the coding matrix. Formula
    fit: ``mu_l = xbar_l b``, ``xbar_l`` the column means of ``X`` with the
    factor's columns replaced by level ``l``'s (constant) pattern, i.e. the
    mean at the covariate means. In both cases ``Cov(mu) = M Cov(b) M'``.
    """
    if not isinstance(fit, Fit):
        raise ModelError(f"cell_means takes a Fit, got {type(fit).__name__}")
    if fit.residual_df <= 0 or not fit.mean_square > 0:
        raise ContrastError(
            f"model {fit.name!r} has residual df {fit.residual_df} and residual mean square "
            f"{fit.mean_square:.3g}: there is no error estimate for contrasts; fit a model with "
            "replication within levels")
    groups = fit.design.groups
    if groups is not None:
        if factor is not None and factor != groups.factor.name:
            raise ContrastError(f"model {fit.name!r} is grouped by {groups.factor.name!r}, not "
                                f"{factor!r}")
        mapping = np.asarray(groups.coding, dtype=float)
        fac, adjusted, rows = groups.factor, False, mapping
    else:
        if factor is None:
            raise ContrastError(
                f"model {fit.name!r} is a formula fit: name its factor, cell_means(fit, "
                "factor='g', data=frame)")
        fac, mapping = _adjusted_mapping(fit, factor, data)
        adjusted, rows = True, fit.design.to_dense()
    return assemble_means(fit, fac.name, fac.levels, fac.counts, mapping, rows=rows,
                          adjusted=adjusted, variance=variance)


def assemble_means(fit: Fit, name: str, levels: tuple[str, ...], counts: np.ndarray,
                   mapping: np.ndarray, *, rows: np.ndarray, adjusted: bool, variance: str,
                   what: str = "") -> CellMeans:
    """A :class:`CellMeans` from the map ``mu = M b`` (``mapping``) of a fit.

    ``rows`` span the design's row space (the coding matrix of a grouped fit,
    the dense design otherwise); contrasts are estimable when their
    coefficient vector lies in it. ``what`` replaces the default description
    of the means (e.g. marginal means of a factorial model).
    """
    mapping = np.array(mapping, dtype=float)
    space = null_space(rows, fit.rank)
    null, scales = np.array(space.basis), np.array(space.scale)
    keep = np.array([n not in set(fit.aliased) for n in fit.design.column_names])
    source = variance_source(fit, variance, keep)
    b = np.where(keep, np.nan_to_num(np.asarray(fit.coefficients)), 0.0)
    estimates = mapping @ b
    covariance = mapping @ source.coefficient_covariance @ mapping.T
    covariance = (covariance + covariance.T) / 2.0
    counts = np.array(counts)
    for arr in (mapping, estimates, covariance, null, scales, counts):
        arr.flags.writeable = False
    return CellMeans(fit, name, tuple(levels), counts, mapping, estimates, covariance,
                     adjusted, source.key, source, null, scales, what)


def _term_names(term: str) -> set[str]:
    names = set()
    try:
        for tok in tokenize.generate_tokens(io.StringIO(term).readline):
            if tok.type == tokenize.NAME:
                names.add(tok.string)
            elif tok.type == tokenize.STRING:
                names.add(tok.string[1:-1])
    except (tokenize.TokenError, IndentationError, SyntaxError):  # pragma: no cover
        pass
    return names


def _adjusted_mapping(fit: Fit, factor: str, data: Any) -> tuple[Factor, np.ndarray]:
    if not isinstance(data, pd.DataFrame):
        raise DataError("for a formula fit, pass the data frame it was fitted on as data=")
    if factor not in data.columns:
        raise ColumnError(f"no column named {factor!r} in data; its columns are "
                          f"{', '.join(map(str, data.columns[:20]))}")
    if fit.row_labels is None:
        raise DataError(f"model {fit.name!r} does not record its rows; refit it with nestfit.fit")
    if not data.index.is_unique:
        raise DataError("the data frame's index has repeated labels, so the fit's rows cannot "
                        "be matched; reset the index before fitting")
    try:
        labels = data[factor].loc[np.asarray(fit.row_labels)]
    except KeyError:
        raise DataError(f"the data do not contain all rows of model {fit.name!r}; pass the "
                        "frame the model was fitted on") from None
    fac = Factor.from_values(labels.to_numpy() if not isinstance(labels.dtype, pd.CategoricalDtype)
                             else labels, name=factor)
    X = fit.design.to_dense()
    columns = np.array([j for j, col in enumerate(fit.design.columns)
                        if col.term != "Intercept" and factor in _term_names(col.term)],
                       dtype=np.intp)
    if not columns.size:
        raise ContrastError(f"factor {factor!r} is not a term of model {fit.name!r} "
                            f"(terms: {', '.join(fit.design.terms)})")
    first = np.array([int(np.flatnonzero(fac.codes == j)[0]) for j in range(fac.n_levels)])
    patterns = X[np.ix_(first, columns)]
    spread = np.abs(X[:, columns] - patterns[fac.codes]).max(axis=0)
    scale = np.maximum(np.abs(X[:, columns]).max(axis=0), 1.0)
    bad = np.flatnonzero(spread > CONSTANT_TOL * scale)
    if bad.size:
        col = fit.design.columns[columns[int(bad[0])]]
        raise ContrastError(
            f"column {col.name!r} of term {col.term!r} varies within levels of {factor!r} (an "
            "interaction with a covariate or another factor), so a level's adjusted mean is not "
            "one number; fit the model without the interaction to compare adjusted means")
    mapping = np.tile(X.mean(axis=0), (fac.n_levels, 1))
    mapping[:, columns] = patterns
    if not math.isfinite(float(np.abs(mapping).max())):  # pragma: no cover - X is finite
        raise DataError("the design has non-finite entries")
    return fac, mapping
