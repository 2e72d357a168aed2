"""Building cell and marginal means: the grid of cells, its design rows, the weights.

The grid holds one row per cell (every combination of the model's factor
levels) with each covariate at its value in ``at``; patsy's memorised coding
of the fitted model turns it into design rows, so row ``i`` of the
coefficient map is exactly the model's design row for cell ``i``. See
:mod:`nestfit.tables._means` for what the means are.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping, Sequence
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from nestfit.design._formula import _formula_names
from nestfit.errors import ColumnError, DataError, FactorError, ModelError
from nestfit.linalg._nullspace import null_space
from nestfit.tables._cells import cell_label, level_codes
from nestfit.tables._means import WEIGHTINGS, EstimatedMeans
from nestfit.tables._terms import FactorInfo

if TYPE_CHECKING:
    from nestfit.tables._models import FactorialModels

__all__ = ["cell_means", "marginal_means"]


def _grid_variables(models: FactorialModels) -> tuple[tuple[FactorInfo, ...], list[str]]:
    """The categorical factors and the numeric columns of the grid of cells."""
    cat = models.terms.categorical
    if not cat:
        raise ModelError(f"model {models.name!r} has no categorical factor: there are no cells "
                         "to take means of")
    seen: dict[str, str] = {}
    for f in cat:
        if f.variable is None:
            raise ModelError(
                f"factor {f.code!r} is built from an expression, not one column, so its cells "
                "cannot be formed; put the factor in a column of its own"
            )
        if f.variable in seen:
            raise ModelError(f"column {f.variable!r} is used by two factors ({seen[f.variable]} "
                             f"and {f.code}); use it once")
        seen[f.variable] = f.code
    columns = list(models.frame.columns)
    for f in models.terms.numeric:
        clash = [v for v in _formula_names(f.code, columns) if v in seen]
        if clash:
            raise ModelError(f"column {clash[0]!r} is used both as a factor ({seen[clash[0]]}) "
                             f"and as a number ({f.code}); cell means need one role per column")
    numeric = [v for v in models.terms.rhs_variables if v not in seen]
    return cat, numeric


def _covariate_values(models: FactorialModels, numeric: list[str],
                      at: Mapping[str, float] | None) -> dict[str, float]:
    at = dict(at or {})
    unknown = [k for k in at if k not in numeric]
    if unknown:
        known = ", ".join(numeric) if numeric else "none"
        raise ColumnError(f"at names {unknown[0]!r}, which is not a covariate of model "
                          f"{models.name!r}; its covariates are: {known}")
    values: dict[str, float] = {}
    for v in numeric:
        if v in at:
            try:
                val = float(at[v])
            except (TypeError, ValueError):
                raise DataError(f"at[{v!r}] must be a number, got {at[v]!r}") from None
        else:
            col = pd.to_numeric(models.frame[v], errors="coerce")
            if col.isna().any():
                raise ModelError(f"column {v!r} is used as a number but is not numeric")
            val = math.fsum(col.tolist()) / len(col)
        if not math.isfinite(val):
            raise DataError(f"the covariate value for {v!r} is not finite ({val!r})")
        values[v] = val
    return values


def _cells(models: FactorialModels, at: Mapping[str, float] | None) -> tuple[
        tuple[FactorInfo, ...], list[tuple[int, ...]], np.ndarray, np.ndarray, dict[str, float]]:
    """Factors, cell level indices, design rows of the cells, cell counts, covariate values."""
    cat, numeric = _grid_variables(models)
    values = _covariate_values(models, numeric, at)
    dims = tuple(len(f.levels) for f in cat)
    cells = list(itertools.product(*map(range, dims)))
    grid: dict[str, Any] = {}
    for j, f in enumerate(cat):
        assert f.variable is not None
        grid[f.variable] = pd.Series([f.levels[c[j]] for c in cells], dtype=object)
    for v, val in values.items():
        grid[v] = np.full(len(cells), val)
    rows = models.terms.design_rows(pd.DataFrame(grid))
    codes = [level_codes(models, f) for f in cat]
    counts = np.bincount(np.ravel_multi_index(codes, dims), minlength=len(cells))
    return cat, cells, rows, counts, values


def _finish(models: FactorialModels, kind: str, factors: tuple[FactorInfo, ...],
            mean_levels: list[tuple[int, ...]], weights: np.ndarray, cells_info: tuple[Any, ...],
            weighting: str, forced_out: np.ndarray) -> EstimatedMeans:
    cat, cells, rows, counts, values = cells_info
    fit = models.full
    b = np.nan_to_num(np.asarray(fit.coefficients, dtype=float))
    cov = np.nan_to_num(np.asarray(fit.covariance, dtype=float))
    null = null_space(models.design.to_dense(), fit.rank)
    coef_map = weights @ rows
    ok = np.array([not out and null.is_estimable(c) for c, out in zip(coef_map, forced_out)],
                  dtype=bool)
    est = np.where(ok, coef_map @ b, np.nan)
    mcov = coef_map @ cov @ coef_map.T
    mcov[~ok, :] = np.nan
    mcov[:, ~ok] = np.nan
    with np.errstate(invalid="ignore"):
        se = np.sqrt(np.diag(mcov))
    used = np.array([int(counts[w != 0].sum()) for w in weights], dtype=np.intp)
    for arr in (est, se, mcov, coef_map, weights, ok, used, b, cov):
        arr.flags.writeable = False
    counts = counts.copy()
    counts.flags.writeable = False
    return EstimatedMeans(
        kind=kind, model=models.name, response_name=models.response_name,
        factors=tuple(f.name for f in factors),
        levels=tuple(tuple(f.level_labels[i] for f, i in zip(factors, lv)) for lv in mean_levels),
        labels=tuple(cell_label(factors, lv) for lv in mean_levels),
        estimates=est, std_errors=se, covariance=mcov, coefficient_map=coef_map,
        cell_weights=weights, cell_labels=tuple(cell_label(cat, c) for c in cells),
        cell_counts=counts, counts=used, estimable=ok, df=fit.residual_df, weighting=weighting,
        at=MappingProxyType(dict(values)), cell_factors=tuple(f.name for f in cat),
        _coefficients=b, _coef_cov=cov, _null=null,
        _undefined=np.asarray(forced_out, dtype=bool), _fit=fit,
    )


def cell_means(models: FactorialModels, *, at: Mapping[str, float] | None = None) -> EstimatedMeans:
    """The model-estimated mean of every cell (every combination of the model's factors).

    Parameters
    ----------
    models : FactorialModels
        The model (from :func:`nestfit.tables.factorial`).
    at : mapping, optional
        Covariate values, by column name; default each covariate's mean over
        the rows used.

    Returns
    -------
    EstimatedMeans
        In the full interaction model without covariates these are the
        sample cell means; in a smaller model, the model's predictions.
        Empty cells are marked not estimable when the model cannot predict them.

    Raises
    ------
    ModelError
        No categorical factor, or a factor that is an expression of several columns.
    ColumnError, DataError
        ``at`` names an unknown covariate or holds a non-finite value.
    """
    info = _cells(models, at)
    cat, cells = info[0], info[1]
    weights = np.eye(len(cells))
    return _finish(models, "cell", cat, cells, weights, info, "cell",
                   np.zeros(len(cells), dtype=bool))


def _resolve_factors(models: FactorialModels, factors: str | Sequence[str]) -> list[int]:
    cat = models.terms.categorical
    names = [factors] if isinstance(factors, str) else list(factors)
    if not names:
        raise FactorError("give at least one factor for marginal means")
    out: list[int] = []
    for name in names:
        hits = [i for i, f in enumerate(cat) if name in (f.name, f.code)]
        if not hits:
            if any(name in (f.name, f.code) for f in models.terms.numeric):
                raise FactorError(f"{name!r} is a covariate, not a factor: means are taken over "
                                  "factors, with covariates held at the values in at=")
            known = ", ".join(f.name for f in cat)
            raise FactorError(f"model {models.name!r} has no factor {name!r}; its factors are: "
                              f"{known}")
        if hits[0] in out:
            raise FactorError(f"factor {name!r} is named twice")
        out.append(hits[0])
    return sorted(out)


def marginal_means(models: FactorialModels, factors: str | Sequence[str], *,
                   weights: str = "equal",
                   at: Mapping[str, float] | None = None) -> EstimatedMeans:
    """Means of one factor (or a few), averaged over the cells of the other factors.

    For ``a`` in a model with factors ``a, b``:
    ``mu_i. = sum_j v_ij mu_ij`` with ``v_ij = 1 / J`` (``weights="equal"``)
    or ``v_ij = n_ij / n_i.`` (``weights="proportional"``); see the module
    notes for when each answers the question asked. With covariates, the cell
    means are at the covariate values ``at`` (default their means): these are
    the adjusted means of an analysis of covariance.

    Parameters
    ----------
    models : FactorialModels
        The model.
    factors : str or sequence of str
        The factor(s) to keep, by column name (``"a"``) or code (``"C(a)"``).
    weights : {"equal", "proportional"}
        How the cells of the other factors are averaged.
    at : mapping, optional
        Covariate values by column name.

    Returns
    -------
    EstimatedMeans

    Raises
    ------
    FactorError
        An unknown factor, a covariate given as a factor, a factor given twice.
    DataError
        An unknown weighting.
    """
    if weights not in WEIGHTINGS:
        raise DataError(f"weights must be 'equal' or 'proportional'. Got {weights!r} instead.")
    keep = _resolve_factors(models, factors)
    info = _cells(models, at)
    cat, cells, counts = info[0], info[1], info[3]
    kept = tuple(cat[i] for i in keep)
    combos = list(itertools.product(*(range(len(f.levels)) for f in kept)))
    member = np.zeros((len(combos), len(cells)))
    index = {combo: r for r, combo in enumerate(combos)}
    for c, lv in enumerate(cells):
        member[index[tuple(lv[i] for i in keep)], c] = 1.0
    equal = member / member.sum(axis=1, keepdims=True)
    forced = np.zeros(len(combos), dtype=bool)
    if weights == "equal":
        a = equal
    else:
        counted = member * counts
        totals = counted.sum(axis=1)
        forced = totals == 0  # no observation at all at this level: no weights to use
        a = np.where(forced[:, None], equal, counted / np.where(forced, 1.0, totals)[:, None])
    return _finish(models, "marginal", kept, combos, a, info, weights, forced)
