"""Weighted linear least squares by pivoted QR, with centring and refinement.

:func:`least_squares` solves

    min_b  sum_i w_i (y_i - x_i' b)^2

for a design ``X`` that may be rank deficient. Steps (each one referenced
where it is implemented):

1. Weight the rows by ``sqrt(w)``, scale the columns to unit norm by powers of
   two and factor by Householder QR with column pivoting
   (:mod:`nestfit.linalg._factor`); the numerical rank decides which columns
   are *aliased* (coefficient NaN, never a silent minimum-norm answer).
2. If the constant vector lies in the column space, solve for ``y - m`` with
   ``m`` the weighted mean and add ``m * b(1)`` back (exact, by linearity);
   a response like ``1e12 + noise`` keeps all the digits of its noise. The
   coefficients are then polished against ``y`` itself to undo the
   cancellation of that sum (:mod:`nestfit.linalg._solve`).
3. Solve by QR and refine residual and solution together through the
   augmented system with extended-precision residuals (Björck 1967;
   :mod:`nestfit.linalg._refine`, :mod:`nestfit.linalg._precision`).
4. Report ``(X_r' W X_r)^(-1)`` from ``R^(-1)``, the leverages from the thin
   ``Q`` and the condition number of ``R``.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
import scipy.linalg
from numpy.typing import ArrayLike, NDArray

from nestfit.errors import DataError, RankDeficiencyWarning
from nestfit.linalg._factor import QRFactor, factorize
from nestfit.linalg._precision import (
    LONGDOUBLE_IS_EXTENDED,
    Method,
    accurate_sum_of_squares,
)
from nestfit.linalg._solve import solve_response
from nestfit.linalg._validate import (
    as_column_names,
    as_matrix,
    as_rank_tol,
    as_vector,
    as_weights,
)

__all__ = ["LeastSquares", "least_squares"]

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]
BoolArray = NDArray[np.bool_]


def _readonly(arr: FloatArray) -> FloatArray:
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class LeastSquares:
    """Result of :func:`least_squares`. Immutable; all arrays are read-only.

    Attributes
    ----------
    factor : QRFactor
        The pivoted QR of ``A = W^(1/2) X D^(-1)`` (retained thin Q, R11,
        pivots, scales, rank tolerance, condition).
    coefficients : ndarray, shape (p,)
        Least-squares coefficients ``b``; ``nan`` for aliased columns (the
        basic solution with the aliased columns dropped, Golub & Van Loan 2013,
        sec. 5.5.5).
    residuals : ndarray, shape (n,)
        ``y - X b`` (unweighted), from the refined residual of the augmented system.
    fitted : ndarray, shape (n,)
        ``y - residuals``.
    residual_ss : float
        ``sum_i w_i r_i^2``, correctly rounded from the float64 residuals
        (exact squares and ``math.fsum``).
    cov_unscaled : ndarray, shape (p, p)
        ``(X_r' W X_r)^(-1)`` over the retained columns ``X_r``, computed as
        ``D^(-1) R^(-1) R^(-T) D^(-1)`` (never by inverting ``X'WX``;
        Björck 1996, sec. 2.8.3); ``nan`` rows and columns for aliased columns.
        Multiply by ``sigma**2`` for the covariance of ``b``.
    leverages : ndarray, shape (n,)
        Diagonal of the (weighted) hat matrix
        ``H = W^(1/2) X_r (X_r' W X_r)^(-1) X_r' W^(1/2) = Q Q'``, i.e. the row sums
        of squares of the retained thin Q (Seber & Lee 2003, sec. 10.2); they sum to ``rank``.
    refinement_steps : int
        Refinement steps performed (at most ``refine``).
    centered : bool
        Whether the response was centred by its weighted mean before solving.
    offset : float
        The weighted mean ``m`` subtracted when ``centered`` (else 0.0).
    column_names : tuple of str or None
        Names given for the columns of ``X``.
    """

    factor: QRFactor
    coefficients: FloatArray
    residuals: FloatArray
    fitted: FloatArray
    residual_ss: float
    cov_unscaled: FloatArray
    leverages: FloatArray
    refinement_steps: int
    centered: bool
    offset: float
    column_names: tuple[str, ...] | None

    # -- views of the factorisation -------------------------------------------------
    @property
    def rank(self) -> int:
        """Numerical rank of the design (number of estimable coefficients)."""
        return self.factor.rank

    @property
    def pivots(self) -> IntArray:
        """Column permutation of the pivoted QR; ``pivots[:rank]`` are the retained columns."""
        return self.factor.pivots

    @property
    def aliased(self) -> BoolArray:
        """Boolean mask (p,): ``True`` where the column is aliased and its coefficient is NaN."""
        return self.factor.aliased

    @property
    def tolerance(self) -> float:
        """Absolute rank threshold on ``|R[k, k]|`` of the scaled design (see :class:`QRFactor`)."""
        return self.factor.tolerance

    @property
    def rank_tol(self) -> float:
        """Relative rank tolerance used, ``tolerance / |R[0, 0]|``."""
        return self.factor.rank_tol

    @property
    def condition(self) -> float:
        """2-norm condition number of the retained, weighted, column-scaled design.

        Roughly ``log10(condition)`` digits of the coefficients are sensitive to
        perturbations of the data at the level of their rounding (Higham 2002,
        sec. 20.1); ``nan`` when ``rank == 0``.
        """
        return self.factor.condition

    @property
    def q(self) -> FloatArray:
        """Retained thin Q (n x rank) of the weighted, scaled design."""
        return self.factor.q

    @property
    def n_obs(self) -> int:
        """Number of observations ``n``."""
        return self.factor.n_obs

    @property
    def df_residual(self) -> int:
        """Residual degrees of freedom ``n - rank``."""
        return self.factor.n_obs - self.factor.rank

    @property
    def sigma(self) -> float:
        """Residual standard deviation ``sqrt(residual_ss / (n - rank))``; nan if ``n == rank``."""
        df = self.df_residual
        return math.sqrt(self.residual_ss / df) if df > 0 else float("nan")

    @property
    def std_errors(self) -> FloatArray:
        """Standard errors ``sigma * sqrt(diag(cov_unscaled))``; nan where aliased."""
        return np.asarray(self.sigma * np.sqrt(np.diag(self.cov_unscaled)), dtype=np.float64)

    # -- methods --------------------------------------------------------------------
    def aliased_names(self) -> tuple[str, ...]:
        """Names of the aliased columns, in column order.

        Uses ``column_names`` when given, otherwise labels ``"column <j>"`` (0-based).
        """
        idx = np.flatnonzero(self.aliased)
        if self.column_names is not None:
            return tuple(self.column_names[i] for i in idx)
        return tuple(f"column {i}" for i in idx)

    def project(self, v: ArrayLike) -> FloatArray:
        """W-orthogonal projection on the column space of the design.

        See :meth:`QRFactor.project`.
        """
        return self.factor.project(v)


def _rank_message(fit: LeastSquares) -> str:
    names = fit.aliased_names()
    labels = [repr(nm) for nm in names] if fit.column_names is not None else list(names)
    shown = ", ".join(labels[:10]) + (f" and {len(labels) - 10} more" if len(labels) > 10 else "")
    verb = "is" if len(names) == 1 else "are"
    return (
        f"X is rank deficient (rank {fit.rank} < {fit.factor.n_columns} columns): "
        f"{shown} {verb} aliased with columns retained before them in pivot order; "
        "not estimable, reported as NaN"
    )


def extended_method(extended: str) -> Method:
    """Validate the ``extended`` argument of the public functions."""
    if extended == "compensated":
        return "compensated"
    if extended == "longdouble":
        if not LONGDOUBLE_IS_EXTENDED:
            raise DataError(
                "extended='longdouble' needs a long double wider than float64, which this "
                "platform lacks; use extended='compensated'"
            )
        return "longdouble"
    raise DataError(f"extended must be 'compensated' or 'longdouble'; got {extended!r}")


def least_squares(
    X: ArrayLike,
    y: ArrayLike,
    *,
    weights: ArrayLike | None = None,
    rank_tol: float | None = None,
    refine: int = 2,
    column_names: Sequence[str] | None = None,
    warn: bool = True,
    extended: Literal["compensated", "longdouble"] = "compensated",
) -> LeastSquares:
    """Weighted least squares ``min_b sum_i w_i (y_i - x_i' b)^2`` by pivoted QR.

    Parameters
    ----------
    X : array_like, shape (n, p)
        Design matrix: finite, real, ``n >= 1`` rows and ``p >= 1`` columns.
    y : array_like, shape (n,)
        Response, finite.
    weights : array_like, shape (n,), optional
        Case weights (inverse variances), finite and strictly positive. Rows are
        multiplied by ``sqrt(w)`` (Seber & Lee 2003, sec. 3.10). A zero weight
        raises :class:`~nestfit.errors.DataError`: drop such rows instead.
    rank_tol : float, optional
        Relative rank tolerance in [0, 1). Column ``pivots[k]`` is retained while
        ``|R[k, k]| > rank_tol * |R[0, 0]|`` on the weighted, column-equilibrated
        design. Default ``max(n, p) * eps`` (Golub & Van Loan, *Matrix
        Computations*, 4th ed., sec. 5.4.1; the LAPACK xGELSY ``RCOND`` convention).
    refine : int, default 2
        Maximum number of refinement steps of the augmented system (Björck
        1967) with extended-precision residuals; 0 gives plain pivoted QR.
    column_names : sequence of str, optional
        Column names, used in :meth:`LeastSquares.aliased_names` and warnings.
    warn : bool, default True
        Issue :class:`~nestfit.errors.RankDeficiencyWarning` when columns are aliased.
    extended : {"compensated", "longdouble"}, default "compensated"
        How refinement residuals are computed in extended precision:
        error-free compensated arithmetic in float64 (about twice the working
        precision on every platform), or ``numpy.longdouble``
        (only where it is wider than float64, see ``LONGDOUBLE_IS_EXTENDED``;
        11 more bits on x86-64). See :mod:`nestfit.linalg._precision`.

    Returns
    -------
    LeastSquares

    Raises
    ------
    nestfit.errors.DataError
        Non-finite or non-numeric values, mismatched lengths, no rows or no
        columns, non-positive weights, bad ``rank_tol`` or ``refine``.

    Warns
    -----
    nestfit.errors.RankDeficiencyWarning
        When ``rank < p`` and ``warn`` is true; names the aliased columns.

    Notes
    -----
    The coefficients solve ``R c = Q' v`` for the retained columns, with
    ``b_j = c_j / scale_j``; see the module notes for centring and refinement.
    The accuracy achieved on the NIST StRD linear-regression sets is listed in
    the accuracy documentation.
    """
    x = as_matrix(X)
    n, p = x.shape
    yv = as_vector(y, n)
    w = as_weights(weights, n)
    names = as_column_names(column_names, p)
    if isinstance(refine, bool) or not isinstance(refine, (int, np.integer)) or refine < 0:
        raise DataError(f"refine must be a non-negative integer; got {refine!r}")
    method = extended_method(extended)
    factor = factorize(x, w, as_rank_tol(rank_tol, n, p))
    sw = factor.sqrt_weights
    rank = factor.rank
    sol = solve_response(factor, x, yv, w, int(refine), method)
    c, res_w = sol.c, sol.residual_w

    retained = factor.retained
    coef = np.full(p, np.nan)
    coef[retained] = c / factor.scale[retained]
    residuals = res_w / sw if w is not None else res_w.copy()
    fitted = yv - residuals
    cov = np.full((p, p), np.nan)
    if rank:
        rinv = scipy.linalg.solve_triangular(factor.r, np.eye(rank), check_finite=False)
        m = rinv / factor.scale[retained][:, None]  # D^-1 R^-1
        with np.errstate(over="ignore", under="ignore"):  # inf/0 only where unrepresentable
            cov[np.ix_(retained, retained)] = m @ m.T
    leverages = np.einsum("ij,ij->i", factor.q, factor.q)

    result = LeastSquares(
        factor=factor,
        coefficients=_readonly(coef),
        residuals=_readonly(residuals),
        fitted=_readonly(fitted),
        residual_ss=accurate_sum_of_squares(res_w),
        cov_unscaled=_readonly(cov),
        leverages=_readonly(leverages),
        refinement_steps=sol.steps,
        centered=sol.centered,
        offset=sol.offset,
        column_names=names,
    )
    if warn and rank < p:
        warnings.warn(_rank_message(result), RankDeficiencyWarning, stacklevel=2)
    return result
