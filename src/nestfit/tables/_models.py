"""The model set of a formula with factors and covariates: every sub-model a table compares.

:func:`factorial` reads a formula such as ``"y ~ C(a) * C(b)"`` once, keeps
its full design and term structure, and builds any sub-model as a subset of
the full design's columns (named by its terms, ``"1 + C(a) + C(b)"``). The
sums-of-squares tables, the cell analysis, the means and the test of equal
slopes are all methods of this one object, so every number they show comes
from models the user can fit and print.
"""

from __future__ import annotations

import dataclasses
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import patsy

from nestfit._compare import Comparison
from nestfit._data import MissingReport, clean_columns
from nestfit._fit import Fit, fit_design
from nestfit.design._design import ColumnInfo, Design
from nestfit.design._formula import _formula_names, design_from_formula
from nestfit.errors import DataError, ModelError, RankDeficiencyWarning
from nestfit.linalg import is_nested
from nestfit.tables._terms import ModelTerms, TermInfo, read_terms

if TYPE_CHECKING:
    from nestfit.tables._cells import CellReport
    from nestfit.tables._means import EstimatedMeans
    from nestfit.tables._table import SumsOfSquaresTable

__all__ = ["SUM_TO_ZERO_TAG", "FactorialModels", "factorial"]

#: Appended to the names of models built with sum-to-zero coding.
SUM_TO_ZERO_TAG = " [sum-to-zero]"

# Column-space tolerance when checking that recoding to sum-to-zero contrasts
# leaves the full model unchanged. Common practice, no source.
_SPAN_TOL = 1e-8


@dataclass(frozen=True, eq=False)
class FactorialModels:
    """A full model given by a formula, with the structure needed to build its sub-models.

    Build it with :func:`factorial`.

    Attributes
    ----------
    formula : str
        The formula as given.
    terms : ModelTerms
        Term structure: which factors each term holds and which columns it owns.
    design : Design
        The full design, with the coding the formula asks for.
    y : ndarray
        The response on the rows used.
    response_name : str
        The response.
    missing : MissingReport
        Rows dropped for missing values.
    row_labels : ndarray
        Index labels of the rows used.
    frame : pandas.DataFrame
        The columns the formula uses, on the rows used (before any coding).
    """

    formula: str
    terms: ModelTerms
    design: Design
    y: np.ndarray = field(repr=False)
    response_name: str
    missing: MissingReport = field(repr=False)
    row_labels: np.ndarray = field(repr=False)
    frame: pd.DataFrame = field(repr=False)
    _data: Any = field(repr=False, default=None)
    _env: Any = field(repr=False, default=None)
    _missing_policy: str = "drop"

    # ------------------------------------------------------------ naming
    @property
    def n_obs(self) -> int:
        """Observations used."""
        return int(self.y.size)

    @property
    def model_terms(self) -> tuple[str, ...]:
        """Names of the terms other than the intercept, in formula order."""
        return tuple(n for n in self.terms.formula_order if n != "Intercept")

    def model_name(self, term_names: Sequence[str], *, sum_to_zero: bool = False) -> str:
        """The name of the model with these terms: ``"1 + C(a) + C(b)"`` (formula order)."""
        wanted = set(term_names)
        parts = ["1"] + [n for n in self.model_terms if n in wanted]
        return " + ".join(parts) + (SUM_TO_ZERO_TAG if sum_to_zero else "")

    @property
    def name(self) -> str:
        """The full model's name."""
        return self.model_name(self.model_terms)

    def _resolve(self, term_names: Sequence[str]) -> list[TermInfo]:
        if isinstance(term_names, str):
            term_names = [term_names]
        out = [self.terms.term(n) for n in term_names if n not in ("1", "Intercept")]
        return out

    # ------------------------------------------------------------ designs and fits
    @cached_property
    def full(self) -> Fit:
        """The full model's fit.

        Aliased columns (empty cells) do not warn here: they are named in
        ``full.aliased`` and in :attr:`cells`.
        """
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RankDeficiencyWarning)
            return self.fit(self.design)

    def fit(self, design: Design) -> Fit:
        """Fit one of this set's designs to the response (same rows, same response)."""
        return fit_design(design, self.y, response_name=self.response_name,
                          missing=self.missing, row_labels=self.row_labels)

    @cached_property
    def sum_to_zero_design(self) -> Design:
        """The full design with every factor coded by sum-to-zero (Deviation) contrasts.

        Raises
        ------
        ModelError
            When recoding changes the model (a coding that restricts the
            means, such as ``Blocks(...)`` or a reduced ``Polynomial``).
        """
        formula = self.terms.sum_to_zero_formula()
        built = design_from_formula(formula, self._data, missing=self._missing_policy,
                                    eval_env=self._env)
        if not np.array_equal(built.row_labels, self.row_labels):  # pragma: no cover
            raise ModelError(f"recoding {self.formula!r} to sum-to-zero contrasts changed the rows")
        x_user, x_dev = self.design.to_dense(), built.design.to_dense()
        inside, _, _ = is_nested(x_dev, x_user, tol=_SPAN_TOL)
        back, _, _ = is_nested(x_user, x_dev, tol=_SPAN_TOL)
        if not (inside and back):
            coded = [f.code for f in self.terms.categorical if f.coding_given]
            which = (f"the coding in {', '.join(coded)} restricts the means" if coded
                     else "a factor's coding restricts the means")
            raise ModelError(
                f"kind 'each-last' recodes every factor of {self.formula!r} to sum-to-zero "
                f"contrasts, but that would change the model: {which}. Use kind 'sequential' or "
                "'marginal', or code the factor with full contrasts"
            )
        new_terms = built.design.terms
        old_terms = self.design.terms
        if len(new_terms) != len(old_terms):  # pragma: no cover - same structure by construction
            raise ModelError(f"recoding {self.formula!r} changed its terms")
        rename = dict(zip(new_terms, old_terms))
        columns = tuple(ColumnInfo(c.name, rename[c.term], c.label) for c in built.design.columns)
        if [c.term for c in columns] != [c.term for c in self.design.columns]:  # pragma: no cover
            raise ModelError(f"recoding {self.formula!r} changed the columns of its terms")
        return Design(self.name + SUM_TO_ZERO_TAG, columns, built.design.n_rows,
                      description=formula, matrix=x_dev)

    def columns_of(self, term_names: Sequence[str]) -> list[int]:
        """Full-design column indices of the intercept and the named terms, in formula order."""
        wanted = {t.name for t in self._resolve(term_names)} | {"Intercept"}
        cols: list[int] = []
        for name in self.terms.formula_order:
            if name in wanted:
                cols.extend(self.terms.term(name).columns)
        return cols

    def design_of(self, term_names: Sequence[str], *, sum_to_zero: bool = False) -> Design:
        """The sub-model with the intercept and the named terms: columns of the full design.

        Parameters
        ----------
        term_names : sequence of str
            Terms to keep, by name (``"C(a)"``, ``"C(a):C(b)"``); the intercept is always kept.
        sum_to_zero : bool
            Take the columns from the sum-to-zero recoding of the full design
            (as the each-last table does) instead of the formula's coding.

        Notes
        -----
        A sub-model that keeps every term that a kept term contains (a
        hierarchical model) spans the same column space as the formula with
        those terms, whatever the coding. Any other sub-model depends on the
        coding, which is why the each-last table fixes it.
        """
        full = self.sum_to_zero_design if sum_to_zero else self.design
        cols = self.columns_of(term_names)
        matrix = full.to_dense()[:, cols]
        name = self.model_name([t.name for t in self._resolve(term_names)], sum_to_zero=sum_to_zero)
        return Design(name, tuple(full.columns[j] for j in cols), full.n_rows,
                      description=f"{self.terms.response} ~ {name}", matrix=matrix)

    def fit_terms(self, term_names: Sequence[str], *, sum_to_zero: bool = False) -> Fit:
        """Fit the sub-model with the intercept and the named terms (see :meth:`design_of`)."""
        return self.fit(self.design_of(term_names, sum_to_zero=sum_to_zero))

    # ------------------------------------------------------------ results
    def table(self, kind: str = "marginal") -> SumsOfSquaresTable:
        """The sums-of-squares table of one kind, every row a comparison of two named models.

        Parameters
        ----------
        kind : {"sequential", "marginal", "each-last"}
            ``"sequential"``: each term against the terms before it (type I).
            ``"marginal"`` (default): each term against every term that does
            not contain it (type II; respects marginality, does not depend on
            the order or the coding). ``"each-last"``: each term against the
            full model without it, with sum-to-zero coding of every factor
            (type III).

        Returns
        -------
        SumsOfSquaresTable

        Raises
        ------
        ModelError
            An unknown kind; for ``"each-last"``, a coding that sum-to-zero
            recoding would change.

        Notes
        -----
        Row: ``SS = RSS(smaller) - RSS(larger)``, ``df = rank(larger) -
        rank(smaller)``, ``F = (SS / df) / s^2`` with ``s^2`` the full model's
        residual mean square (Seber & Lee 2003, sec. 4.3, from memory). See
        :mod:`nestfit.tables._table` and ``docs/choosing-a-table.md``.
        """
        from nestfit.tables._table import sums_of_squares

        return sums_of_squares(self, kind)

    @cached_property
    def cells(self) -> CellReport:
        """Cell counts, empty cells (``"a=2, b=3"``), aliased columns and testable df per term."""
        from nestfit.tables._cells import cell_report

        return cell_report(self)

    def cell_means(self, *, at: Mapping[str, float] | None = None) -> EstimatedMeans:
        """The model-estimated mean of every cell (every combination of the factors' levels).

        Parameters
        ----------
        at : mapping, optional
            Covariate values by column name; default each covariate's mean over
            the rows used.

        Returns
        -------
        EstimatedMeans
            ``mu = M b`` with ``M`` the design rows of the cells; in the full
            interaction model without covariates, the sample cell means.
            Cells the model cannot predict (empty cells of a crossed term) are
            marked not estimable.

        Raises
        ------
        ModelError
            No categorical factor, or a factor built from several columns.
        ColumnError, DataError
            ``at`` names an unknown covariate or holds a non-finite value.
        """
        from nestfit.tables._grid import cell_means

        return cell_means(self, at=at)

    def marginal_means(self, factors: str | Sequence[str], *, weights: str = "equal",
                       at: Mapping[str, float] | None = None) -> EstimatedMeans:
        """Means of one factor (or a few) averaged over the others; with covariates, adjusted means.

        ``mu_i. = sum_j v_ij mu_ij`` with ``v_ij = 1 / J`` (``weights="equal"``)
        or ``v_ij = n_ij / n_i.`` (``weights="proportional"``); the cell means
        ``mu_ij`` are at the covariate values ``at`` (default their means),
        which makes these the adjusted means of an analysis of covariance.

        Parameters
        ----------
        factors : str or sequence of str
            The factor(s) to keep, by column name (``"a"``) or code (``"C(a)"``).
        weights : {"equal", "proportional"}
            Equal weight for every cell of the other factors (the design as
            planned; what the each-last table tests), or weights proportional
            to the cell counts (the data's make-up; in the full model, the raw
            level means). See :mod:`nestfit.tables._means`.
        at : mapping, optional
            Covariate values by column name.

        Returns
        -------
        EstimatedMeans

        Raises
        ------
        FactorError
            An unknown factor, a covariate given as a factor, a factor named twice.
        DataError
            An unknown weighting, a non-finite covariate value.
        """
        from nestfit.tables._grid import marginal_means

        return marginal_means(self, factors, weights=weights, at=at)

    def equal_slopes(self, factor: str | None = None, covariate: str | None = None) -> Comparison:
        """Test one common covariate slope against a slope per group (analysis of covariance).

        Compares this model with the model that adds ``factor:covariate``;
        ``F = ((RSS_s - RSS_l) / (k - 1)) / (RSS_l / df_l)``.

        Parameters
        ----------
        factor, covariate : str, optional
            Column name or code; needed only when the model has several.

        Returns
        -------
        Comparison
            The chain ``model -> model + factor:covariate``.

        Raises
        ------
        ModelError
            No covariate or no factor, several without a choice, or slopes
            that already differ by the factor.
        FactorError
            An unknown name.
        """
        from nestfit.tables._ancova import equal_slopes

        return equal_slopes(self, factor=factor, covariate=covariate)

    def __str__(self) -> str:
        from nestfit.tables._format import format_models

        return format_models(self)


def _clean_frame(formula: str, data: pd.DataFrame, missing: str) -> pd.DataFrame:
    """The rows and columns the formula bridge used (same selection, same missing policy)."""
    lhs, rhs = formula.split("~", 1)
    lhs_names = _formula_names(lhs, data.columns)
    rhs_names = [n for n in _formula_names(rhs, data.columns) if n not in lhs_names]
    frame, _ = clean_columns(data, numeric=lhs_names, categorical=rhs_names, missing=missing)
    return frame


def factorial(formula: str, data: Any, *, missing: str = "drop") -> FactorialModels:
    """Read a model with factors (and covariates) from a formula, for tables and means.

    Parameters
    ----------
    formula : str
        Two-sided patsy formula with an intercept, e.g. ``"y ~ C(a) * C(b)"``,
        ``"y ~ C(a) + C(b) + C(a):C(b)"``, ``"y ~ C(g) + x"``. nestfit's
        codings work inside it (``C(a, Helmert())``).
    data : pandas.DataFrame
        The table.
    missing : {"drop", "raise"}
        Drop rows with a missing value in a used column (reported), or raise.

    Returns
    -------
    FactorialModels

    Raises
    ------
    ModelError
        A malformed formula, a formula without intercept (``0 +`` or ``- 1``:
        every table here compares models that contain the constant), or one
        with no term besides the intercept.
    ColumnError, DataError
        Unknown or non-numeric columns, NaN/inf, missing values under ``"raise"``.

    Examples
    --------
    >>> import numpy as np, pandas as pd
    >>> import nestfit.tables as tables
    >>> rng = np.random.default_rng(1)
    >>> d = pd.DataFrame({"a": np.repeat(["p", "q"], 6), "b": np.tile(["u", "v", "w"], 4)})
    >>> d["y"] = rng.normal(size=12)
    >>> models = tables.factorial("y ~ C(a) * C(b)", d)
    >>> [row.term for row in models.table("sequential").rows]
    ['C(a)', 'C(b)', 'C(a):C(b)']
    """
    env = patsy.EvalEnvironment.capture(1)
    built = design_from_formula(formula, data, missing=missing, eval_env=env)
    if not isinstance(data, pd.DataFrame):
        try:
            data = pd.DataFrame(data)
        except (TypeError, ValueError) as exc:  # pragma: no cover - the bridge checked it
            raise DataError(f"data must be a pandas DataFrame: {exc}") from None
    frame = _clean_frame(formula, data, missing)
    if not np.array_equal(frame.index.to_numpy(), built.row_labels):  # pragma: no cover
        raise ModelError(f"formula {formula!r}: rows used differ between builds")
    terms = read_terms(formula, frame, env, built.design.column_names)
    if not terms.has_intercept:
        raise ModelError(
            f"formula {formula!r} has no intercept; the tables and means here compare models "
            "that contain the constant: remove '0 +' or '- 1'"
        )
    if len(terms.terms) < 2:
        raise ModelError(f"formula {formula!r} has no term besides the intercept: nothing to test")
    models = FactorialModels(formula, terms, built.design, built.y, built.response_name,
                             built.missing, built.row_labels, frame, data, env, missing)
    design = Design(models.name, built.design.columns, built.design.n_rows,
                    description=built.design.description, matrix=built.design.to_dense())
    return dataclasses.replace(models, design=design)
