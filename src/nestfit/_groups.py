"""Group models of one factor: equal means, separate means, partitions and codings.

``groups(data, "weight", "head")`` returns a :class:`GroupModels` builder;
each of its methods returns a :class:`~nestfit.fit.Fit` on the same rows, so
any of them can be passed to :func:`nestfit.compare`. All of them are fitted
from group sums (the dense ``n x k`` matrix is never built).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from functools import cached_property
from typing import Any

import numpy as np
import pandas as pd

from nestfit._compare import Comparison, compare
from nestfit._data import MissingReport, check_missing_policy, clean_arrays, clean_columns
from nestfit._fit import Fit, fit_design
from nestfit.design._coding import Coding, Indicator, coding_from_name
from nestfit.design._design import ColumnInfo, Design
from nestfit.design._factor import Factor
from nestfit.design._partition import Partition
from nestfit.errors import DataError, FactorError
from nestfit.linalg._groups import GroupSums, group_sums

__all__ = ["GroupModels", "groups"]

INTERCEPT = "Intercept"


def groups(
    data: Any = None,
    response: str | None = None,
    factor: str | None = None,
    *,
    y: Any = None,
    levels: Sequence[Any] | None = None,
    weights: str | Any = None,
    missing: str = "drop",
    offset: float = 0.0,
) -> GroupModels:
    """Start building group models of one response and one factor.

    Parameters
    ----------
    data : pandas.DataFrame, optional
        The table holding ``response`` and ``factor`` (and ``weights``, if named).
    response : str
        Numeric response column (or its name when ``y`` is given as an array).
    factor : str or array_like
        Factor column name, or (with ``y``) the array of labels.
    y : array_like, optional
        The response as an array, instead of ``data``.
    levels : sequence, optional
        Level order (default: categorical order, numeric order, or sorted text).
    weights : str or array_like, optional
        Case weights (weighted least squares): a column name or an array.
    missing : {"drop", "raise"}
        Missing-value policy; dropped rows are reported in each fit's ``missing``.
    offset : float
        A constant already subtracted from the response (exactly, e.g. by the
        text reader); fitted means and coefficients add it back.

    Returns
    -------
    GroupModels

    Raises
    ------
    ColumnError, DataError, FactorError
        Missing or non-numeric columns, NaN/inf, fewer than two levels, too
        few observations.

    Examples
    --------
    >>> import nestfit
    >>> data = nestfit.datasets.load_fill_weights()
    >>> models = nestfit.groups(data, "weight", "head")
    >>> print(nestfit.compare(models.equal_means(), models.blocks("H4 | ..."),
    ...                       models.separate_means()).steps[0].df)
    1
    """
    check_missing_policy(missing)
    if y is not None:
        if data is not None:
            raise DataError(
                "give either data with column names, or arrays y= and factor=, not both"
            )
        return _groups_from_arrays(y, factor, response, weights, levels, missing, offset)
    if data is None or response is None or factor is None:
        raise DataError("groups() needs data, response and factor (or y= and factor=)")
    if not isinstance(factor, str):
        raise DataError("with data, factor must be a column name")
    numeric = [response]
    if weights is not None:
        if not isinstance(weights, str):
            raise DataError("with data, weights must be a column name")
        numeric.append(weights)
    frame, report = clean_columns(data, numeric=numeric, categorical=[factor], missing=missing)
    w = frame[weights].to_numpy(dtype=float) if weights is not None else None
    return _finish(response, factor, frame[response].to_numpy(dtype=float), frame[factor], w,
                   weights, report, frame.index.to_numpy(), levels, offset)


def _groups_from_arrays(
    y: Any, factor: Any, response: str | None, weights: Any, levels: Sequence[Any] | None,
    missing: str, offset: float,
) -> GroupModels:
    """``groups(y=..., factor=...)``: numpy-only cleaning when the arrays allow it."""
    if factor is None:
        raise DataError("factor= is required with y=: one label per response value")
    y_arr = np.asarray(y)
    if isinstance(factor, pd.Series):
        # A Series brings its index; rows are matched by position only when it is 0..n-1.
        positional = isinstance(factor.index, pd.RangeIndex) and factor.index.equals(
            pd.RangeIndex(len(factor)))
        labels: Any = factor.array if positional else factor
        shape: tuple[int, ...] = factor.shape
    elif isinstance(factor, pd.Categorical):
        labels, shape = factor, factor.shape
    else:
        labels = np.asarray(factor)
        shape = labels.shape
    if y_arr.ndim != 1 or len(shape) != 1 or y_arr.size != shape[0]:
        raise DataError(
            f"y has shape {y_arr.shape} and factor has shape {shape}; "
            "both must be one-dimensional and of equal length"
        )
    columns: dict[str, Any] = {"y": y_arr, "group": labels}
    numeric = ["y"]
    if weights is not None:
        columns["weights"] = np.asarray(weights)
        numeric.append("weights")
    w_name = "weights" if weights is not None else None
    fast = clean_arrays(columns, numeric=numeric, categorical=["group"], missing=missing)
    if fast is not None:
        kept = fast.columns
        return _finish(response or "y", "group", kept["y"], kept["group"],
                       kept.get("weights"), w_name, fast.report, fast.row_labels, levels, offset)
    frame, report = clean_columns(columns, numeric=numeric, categorical=["group"],
                                  missing=missing)
    w = frame["weights"].to_numpy(dtype=float) if weights is not None else None
    return _finish(response or "y", "group", frame["y"].to_numpy(dtype=float), frame["group"],
                   w, w_name, report, frame.index.to_numpy(), levels, offset)


def _finish(
    response_name: str, factor_name: str, y: np.ndarray, labels: Any, w: np.ndarray | None,
    w_name: str | None, report: MissingReport, row_labels: np.ndarray,
    levels: Sequence[Any] | None, offset: float,
) -> GroupModels:
    fac = Factor.from_values(labels, name=factor_name, levels=levels)
    if w is not None and np.any(w <= 0):
        raise DataError(f"weights must be positive; column {w_name!r} has zero or negative values")
    return GroupModels(response_name, fac, y, report, weights=w, offset=float(offset),
                       row_labels=row_labels)


class GroupModels:
    """Builder of group models for one response and one factor (see :func:`groups`).

    Attributes
    ----------
    response_name : str
    factor : Factor
    y : ndarray
        The response (offset removed).
    missing : MissingReport
    """

    def __init__(
        self,
        response_name: str,
        factor: Factor,
        y: np.ndarray,
        missing: MissingReport,
        *,
        weights: np.ndarray | None = None,
        offset: float = 0.0,
        row_labels: Any = None,
    ) -> None:
        if factor.n_levels < 2:
            raise FactorError(
                f"factor {factor.name!r} has a single level {factor.levels[0]!r}: there are "
                "no group means to compare; check the column or the rows kept"
            )
        if y.size <= factor.n_levels:
            raise DataError(
                f"{y.size} observations for {factor.n_levels} levels of {factor.name!r}: the "
                "separate-means model needs more observations than levels to estimate the error"
            )
        self.response_name = response_name
        self.factor = factor
        self.y = y.view()  # read-only view: the array passed in keeps its own flags
        self.y.flags.writeable = False
        self.missing = missing
        self.weights = weights
        self.offset = offset
        self.row_labels = row_labels

    @cached_property
    def sums(self) -> GroupSums:
        """Group counts, means and within sums of squares (computed once, shared by all models)."""
        return group_sums(self.factor.codes, self.y, self.factor.n_levels, self.weights,
                          counts=self.factor.counts)

    @property
    def levels(self) -> tuple[str, ...]:
        """The factor's levels."""
        return self.factor.levels

    # --------------------------------------------------------------- models
    def equal_means(self) -> Fit:
        """One mean for every level: the single column ``Intercept``."""
        design = Design.grouped(
            "equal means", self.factor, np.ones((self.factor.n_levels, 1)),
            [ColumnInfo(INTERCEPT, INTERCEPT)],
            description="all levels share one mean", partition=Partition.equal(self.levels),
        )
        return self._fit(design)

    def separate_means(self, coding: Coding | str | None = None) -> Fit:
        """One mean per level.

        Parameters
        ----------
        coding : Coding or str, optional
            How the levels become columns. The default, indicator coding, gives
            one column per level whose coefficient is that level's mean. Any
            other coding gives ``Intercept`` plus ``k - 1`` contrast columns;
            the fitted means, residuals and sums of squares are the same.
        """
        coding = _as_coding(coding)
        levels = self.levels
        if isinstance(coding, Indicator):
            cm = coding.matrix(levels, full_rank=True)
            matrix, columns = np.asarray(cm.matrix), self._columns(cm.column_labels)
        else:
            cm = coding.matrix(levels, full_rank=False)
            matrix = np.column_stack([np.ones(len(levels)), np.asarray(cm.matrix)])
            columns = [ColumnInfo(INTERCEPT, INTERCEPT), *self._columns(cm.column_labels)]
        design = Design.grouped(
            "separate means", self.factor, matrix, columns,
            description="every level has its own mean", partition=Partition.separate(levels),
        )
        return self._fit(design)

    def blocks(self, spec: str | Mapping[str, Any] | Partition, *, name: str | None = None) -> Fit:
        """Levels share a mean within each block of a partition.

        Parameters
        ----------
        spec : str, mapping or Partition
            ``"H4 | ..."`` (blocks separated by ``|``; ``...`` is every other
            level), ``{"serviced": ["H4"], "rest": [...]}``, or a Partition.
        name : str, optional
            Model name (default: the partition written out in full).
        """
        if isinstance(spec, Partition):
            part = spec
            if part.levels != self.levels:
                raise FactorError(
                    f"the partition is over levels {list(part.levels)}, but factor "
                    f"{self.factor.name!r} has levels {list(self.levels)}"
                )
        elif isinstance(spec, str):
            part = Partition.parse(spec, self.levels)
        elif isinstance(spec, Mapping):
            part = Partition.from_mapping(spec, self.levels)
        else:
            raise DataError(
                f"spec must be a text spec, a mapping or a Partition. Got {type(spec).__name__}."
            )
        matrix = np.eye(part.n_blocks)[part.block_of]
        design = Design.grouped(
            name or part.to_spec(), self.factor, matrix, self._columns(part.block_labels),
            description=part.describe(), partition=part,
        )
        return self._fit(design)

    def coded(self, coding: Coding | str, *, name: str | None = None) -> Fit:
        """``Intercept`` plus the columns of a (possibly reduced) coding, e.g. a linear trend.

        ``coded(Polynomial(spacing=[0, 1, 2, 4], degree=1))`` is the model
        "means lie on a straight line in dose", nested between equal and
        separate means.
        """
        coding = _as_coding(coding)
        cm = coding.matrix(self.levels, full_rank=False)
        matrix = np.column_stack([np.ones(len(self.levels)), np.asarray(cm.matrix)])
        columns = [ColumnInfo(INTERCEPT, INTERCEPT), *self._columns(cm.column_labels)]
        label = name or f"{cm.coding}: " + ", ".join(cm.column_labels)
        design = Design.grouped(label, self.factor, matrix, columns,
                                description=f"means follow the {cm.coding} columns "
                                + ", ".join(cm.column_labels))
        return self._fit(design)

    # -------------------------------------------------------- comparisons
    def oneway(self) -> Comparison:
        """The one-way analysis of variance: equal means -> separate means."""
        return compare(self.equal_means(), self.separate_means())

    def chain(self, *specs: str | Mapping[str, Any] | Partition,
              denominator: str = "largest") -> Comparison:
        """Equal means -> each partition in ``specs`` -> separate means.

        The partitions must refine one another in the order given (each
        nested in the next); otherwise :class:`~nestfit.errors.NotNestedError`.
        """
        fits = [self.equal_means(), *(self.blocks(s) for s in specs), self.separate_means()]
        return compare(*fits, denominator=denominator)

    # ------------------------------------------------------------ helpers
    def _columns(self, labels: Sequence[str]) -> list[ColumnInfo]:
        name = self.factor.name
        return [ColumnInfo(f"{name}[{lab}]", name, str(lab)) for lab in labels]

    def _fit(self, design: Design) -> Fit:
        return fit_design(design, self.y, response_name=self.response_name,
                          weights=self.weights, offset=self.offset, missing=self.missing,
                          row_labels=self.row_labels, sums=self.sums)

    def __repr__(self) -> str:
        return (f"GroupModels(response={self.response_name!r}, factor={self.factor!r}, "
                f"{self.missing})")


def _as_coding(coding: Coding | str | None) -> Coding:
    if coding is None:
        return Indicator()
    if isinstance(coding, str):
        return coding_from_name(coding)
    if not isinstance(coding, Coding):
        raise DataError(f"coding must be a Coding or a coding name. Got {type(coding).__name__}.")
    return coding
