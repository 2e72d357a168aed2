"""The two fitting paths behind :func:`nestfit._fit.fit_design`.

* grouped: a design whose rows are coding rows of one factor's levels is fitted
  from group sums plus a ``k``-row weighted least-squares problem on the group
  means (closed form for block-indicator codings); the ``n x p`` matrix is never
  built (see :mod:`nestfit.linalg._groups`);
* dense: any other design through :func:`nestfit.linalg.least_squares`.

Each returns a :class:`PathResult`, from which ``fit_design`` builds the
``Fit``; the tests require the two paths to agree to 1e-12 relative.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from nestfit.design._design import Design
from nestfit.linalg import LeastSquares, least_squares
from nestfit.linalg._groups import GroupSums, group_sums

__all__ = ["PathResult", "fit_dense", "fit_grouped"]

# A column space contains the constant vector when the least-squares residual of
# 1 on X is below this fraction of ||1||^2 = n (relative squared residual).
# Common practice, no source.
_CONSTANT_TOL = 1e-16


@dataclass(frozen=True)
class PathResult:
    """What a fitting path hands to ``fit_design``.

    ``coefficients`` are for ``y`` less the path's ``shift``;
    ``constant_coefficients`` express the constant vector in the design's
    columns (to add a shift or offset back). The grouped path gives fitted
    values and leverages per level (``group_fitted``, ``group_leverage``), the
    dense path per observation (``residuals``, ``leverages``).
    """

    coefficients: np.ndarray
    constant_coefficients: np.ndarray
    aliased: np.ndarray
    rank: int
    residual_ss: float
    cov_unscaled: np.ndarray
    total_ss: float
    has_constant: bool
    method: str
    condition: float
    group_fitted: np.ndarray | None = None
    group_leverage: np.ndarray | None = None
    residuals: np.ndarray | None = None
    leverages: np.ndarray | None = None
    shift: float = 0.0


def _from_solution(ls: LeastSquares, **pieces: Any) -> PathResult:
    """A PathResult whose coefficients, aliasing, rank, covariance and condition are ``ls``'s."""
    return PathResult(coefficients=np.array(ls.coefficients, dtype=float), aliased=ls.aliased,
                      rank=ls.rank, cov_unscaled=np.array(ls.cov_unscaled, dtype=float),
                      condition=ls.condition, **pieces)


def _accurate_sum(values: np.ndarray) -> float:
    return math.fsum(np.asarray(values, dtype=np.float64).tolist())


def fit_grouped(
    design: Design, y: np.ndarray, weights: np.ndarray | None, names: Sequence[str],
    rank_tol: float | None, sums: GroupSums | None,
) -> PathResult:
    assert design.groups is not None
    factor, coding = design.groups.factor, design.groups.coding
    if sums is None:
        sums = group_sums(factor.codes, y, factor.n_levels, weights)
    block_of = _block_indicator(coding)
    if block_of is not None:
        return _fit_block_indicator(block_of, coding.shape[1], sums)
    const = least_squares(coding, np.ones(factor.n_levels), weights=sums.weight_totals,
                          rank_tol=rank_tol, warn=False)
    has_constant = const.residual_ss <= _CONSTANT_TOL * factor.n_levels
    if not has_constant and sums.shift != 0.0:
        # A shift of y is absorbed only by models containing the constant.
        sums = group_sums(factor.codes, y, factor.n_levels, weights, shift=0.0)
    small = least_squares(coding, sums.means, weights=sums.weight_totals, rank_tol=rank_tol,
                          column_names=names, warn=False)
    within = sums.total_within_ss
    if has_constant:
        total_w = _accurate_sum(sums.weight_totals)
        grand = _accurate_sum(sums.weight_totals * sums.means) / total_w
        between = _accurate_sum(sums.weight_totals * (sums.means - grand) ** 2)
        total = within + between
    else:
        total = _weighted_square_sum(y, weights)
    return _from_solution(
        small, residual_ss=within + small.residual_ss, total_ss=total,
        has_constant=has_constant, method="grouped",
        constant_coefficients=np.nan_to_num(np.asarray(const.coefficients, dtype=float)),
        group_fitted=np.array(small.fitted, dtype=float),
        group_leverage=np.array(small.leverages, dtype=float), shift=sums.shift)


def _block_indicator(coding: np.ndarray) -> np.ndarray | None:
    """Block of each level when every coding row is a 0/1 row with a single 1, else None."""
    if not np.all((coding == 0.0) | (coding == 1.0)) or not np.all(coding.sum(axis=1) == 1.0):
        return None
    block_of = np.argmax(coding, axis=1)
    if np.unique(block_of).size != coding.shape[1]:  # an empty column: leave it to the QR path
        return None
    return block_of


def _fit_block_indicator(block_of: np.ndarray, p: int, sums: GroupSums) -> PathResult:
    """Closed form for block-indicator codings (equal means, partitions, cell means).

    The columns are orthogonal indicators, so ``X'WX = diag(W_b)``: the coefficient
    of block ``b`` is its weighted mean ``sum_{g in b} W_g m_g / W_b``, the unscaled
    covariance is ``diag(1 / W_b)`` and the leverage of group ``g`` in the small
    problem is ``W_g / W_b`` (common practice, no source). The tests check this
    path against the general QR path.
    """
    w = sums.weight_totals
    block_w = np.bincount(block_of, weights=w, minlength=p)
    block_mean = np.bincount(block_of, weights=w * sums.means, minlength=p) / block_w
    dev = sums.means - block_mean[block_of]
    block_mean = block_mean + np.bincount(block_of, weights=w * dev, minlength=p) / block_w
    fitted = block_mean[block_of]
    lack = _accurate_sum(w * (sums.means - fitted) ** 2)
    grand = _accurate_sum(w * sums.means) / _accurate_sum(w)
    between = _accurate_sum(w * (sums.means - grand) ** 2)
    within = sums.total_within_ss
    return PathResult(
        coefficients=block_mean, constant_coefficients=np.ones(p),
        aliased=np.zeros(p, dtype=bool), rank=p, residual_ss=within + lack,
        cov_unscaled=np.diag(1.0 / block_w), total_ss=within + between, has_constant=True,
        method="grouped",
        condition=1.0,  # orthogonal columns: the column-scaled design is perfectly conditioned
        group_fitted=fitted, group_leverage=w / block_w[block_of], shift=sums.shift)


def fit_dense(
    design: Design, y: np.ndarray, weights: np.ndarray | None, names: Sequence[str],
    rank_tol: float | None, *, need_constant: bool,
) -> PathResult:
    X = design.to_dense()
    ls = least_squares(X, y, weights=weights, rank_tol=rank_tol, column_names=names, warn=False)
    # The solver centres y exactly when the constant lies in the column space.
    has_constant = bool(ls.centered)
    constant_coefficients = _constant_column(X)
    if constant_coefficients is None:
        constant_coefficients = np.zeros(X.shape[1])
        if need_constant and has_constant:  # coefficients expressing 1 = X g, to add an offset
            const = least_squares(X, np.ones(design.n_rows), weights=weights,
                                  rank_tol=rank_tol, warn=False)
            constant_coefficients = np.nan_to_num(np.asarray(const.coefficients, dtype=float))
    if has_constant:
        total_w = float(y.size) if weights is None else _accurate_sum(weights)
        mean = _accurate_sum(y if weights is None else weights * y) / total_w
        dev = y - mean
        mean += _accurate_sum(dev if weights is None else weights * dev) / total_w
        total = _weighted_square_sum(np.subtract(y, mean, out=dev), weights)
    else:
        total = _weighted_square_sum(y, weights)
    return _from_solution(
        ls, residual_ss=ls.residual_ss, total_ss=total, has_constant=has_constant,
        method="dense QR", constant_coefficients=constant_coefficients,
        residuals=np.array(ls.residuals, dtype=float),
        leverages=np.array(ls.leverages, dtype=float))


def _constant_column(X: np.ndarray) -> np.ndarray | None:
    """Coefficients expressing the constant vector by a constant column of X, if X has one."""
    if X.shape[0] == 0:
        return None
    first = X[0]
    candidates = np.flatnonzero((first != 0) & np.all(X == first, axis=0))
    if candidates.size == 0:
        return None
    gamma = np.zeros(X.shape[1])
    gamma[candidates[0]] = 1.0 / first[candidates[0]]
    return gamma


def _weighted_square_sum(v: np.ndarray, weights: np.ndarray | None) -> float:
    sq = v * v if weights is None else weights * v * v
    return _accurate_sum(sq)
