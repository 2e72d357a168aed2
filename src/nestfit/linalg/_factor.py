"""Pivoted Householder QR of a weighted, column-equilibrated design matrix.

The factorisation behind every fit in nestfit. For a design ``X`` (n x p) and
positive case weights ``w`` it forms

    A = W^(1/2) X D^(-1),      W = diag(w),   D = diag(scale),

where ``scale[j]`` is the smallest power of two above the 2-norm of column j
of ``W^(1/2) X`` (so the columns of ``A`` have norms in [1/2, 1) and the
scaling itself is exact in binary floating point), and factors ``A P = Q R`` by
Householder QR with column pivoting (LAPACK xGEQP3 through
``scipy.linalg.qr(..., pivoting=True, mode="economic")``). The normal
equations are never formed.

Rank rule (numerical rank, Golub & Van Loan, *Matrix Computations*, 4th ed.,
2013, sec. 5.4.1; the same rule as LAPACK xGELSY's ``RCOND``, from memory): with
``d_k = |R[k, k]|`` non-increasing under column pivoting, the rank is the
number of leading ``d_k`` with

    d_k > tolerance = rank_tol * d_0,      rank_tol = max(n, p) * eps  by default,

``eps = 2**-52``. Column equilibration first makes the rule independent of the
units of the columns (van der Sluis 1969, "Condition numbers and equilibration
of matrices", Numer. Math. 14, from memory). Columns ``pivots[rank:]`` are *aliased*: they
lie, to that tolerance, in the span of the retained columns ``pivots[:rank]``.
An all-zero column is always aliased. A column is judged only by its
direction, whatever its size: a column of pure rounding noise (1e-17 where 0
was meant) counts as a genuine column.

Entries up to about 1e300 in magnitude are supported (column norms must not
overflow).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.linalg
from numpy.typing import ArrayLike, NDArray

from nestfit.linalg._validate import as_matrix, as_rank_tol, as_weights

__all__ = ["QRFactor", "qr_factor"]

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]
BoolArray = NDArray[np.bool_]


def _readonly(arr: NDArray[Any]) -> NDArray[Any]:
    arr.setflags(write=False)
    return arr


def column_scales(a: FloatArray) -> FloatArray:
    """Powers of two ``2**e_j`` with ``||a[:, j]||_2 = f_j * 2**e_j``, ``f_j`` in [1/2, 1).

    Where ``sqrt(sum a_ij^2)`` would overflow or underflow, the norm is
    recomputed as ``m_j * ||a[:, j] / m_j||`` with ``m_j = max_i |a_ij|`` (the
    scaling idea of xNRM2, from memory). Zero columns get scale 1.
    """
    with np.errstate(over="ignore", under="ignore"):
        norms = np.sqrt(np.einsum("ij,ij->j", a, a))
    redo = ~np.isfinite(norms) | (norms < 1e-150)
    if np.any(redo):
        sub = a[:, redo]
        colmax = np.max(np.abs(sub), axis=0) if sub.shape[0] else np.zeros(sub.shape[1])
        safe = np.where(colmax > 0, colmax, 1.0)
        ratio = sub / safe
        norms[redo] = colmax * np.sqrt(np.einsum("ij,ij->j", ratio, ratio))
    scales = np.ones(a.shape[1])
    nz = norms > 0
    _, expo = np.frexp(norms[nz])
    scales[nz] = np.ldexp(1.0, expo)
    return scales


@dataclass(frozen=True, eq=False)
class QRFactor:
    """Pivoted QR factorisation of ``A = W^(1/2) X D^(-1)`` restricted to its numerical rank.

    All arrays are read-only.

    Attributes
    ----------
    q : ndarray, shape (n, rank)
        Orthonormal basis (``q.T @ q = I`` to working precision) of the column
        space of the retained columns of ``A``: the thin Q of the *weighted,
        scaled* design, first ``rank`` columns.
    r : ndarray, shape (rank, rank)
        Upper-triangular ``R11`` with ``a = q @ r``.
    x_scaled : ndarray, shape (n, rank)
        The retained columns of ``X D^(-1)`` (unweighted) in pivot order, so that
        ``A[:, pivots[:rank]] = diag(sqrt_weights) @ x_scaled = q @ r`` to
        working precision. Refinement evaluates residuals with these exact
        columns and applies the weights in extended precision.
    pivots : ndarray of int, shape (p,)
        Column permutation from the pivoted QR; ``pivots[:rank]`` are retained,
        ``pivots[rank:]`` aliased.
    rank : int
        Numerical rank (see the module notes for the rule).
    scale : ndarray, shape (p,)
        Column scales ``D`` (powers of two).
    sqrt_weights : ndarray, shape (n,)
        ``sqrt(w)``; all ones when the fit is unweighted.
    rank_tol : float
        Relative rank tolerance used (default ``max(n, p) * eps``).
    tolerance : float
        Absolute threshold ``rank_tol * |R[0, 0]|`` applied to ``|R[k, k]|``.
    r_diagonal : ndarray, shape (min(n, p),)
        ``|R[k, k]|`` of the full factorisation, retained and aliased, in pivot order.
    condition : float
        2-norm condition number of ``r`` (equal to that of ``a``), from its
        singular values; ``nan`` when ``rank == 0``.
    weighted : bool
        Whether case weights were given.
    """

    q: FloatArray
    r: FloatArray
    x_scaled: FloatArray
    pivots: IntArray
    rank: int
    scale: FloatArray
    sqrt_weights: FloatArray
    rank_tol: float
    tolerance: float
    r_diagonal: FloatArray
    condition: float
    weighted: bool

    @property
    def n_obs(self) -> int:
        """Number of observations ``n``."""
        return int(self.q.shape[0])

    @property
    def n_columns(self) -> int:
        """Number of design columns ``p``."""
        return int(self.pivots.shape[0])

    @property
    def retained(self) -> IntArray:
        """Indices of the retained columns, in pivot order (``pivots[:rank]``)."""
        return self.pivots[: self.rank]

    @property
    def aliased(self) -> BoolArray:
        """Boolean mask (p,): ``True`` for aliased (non-estimable) columns."""
        mask = np.ones(self.n_columns, dtype=bool)
        mask[self.retained] = False
        return mask

    def _perp(self, u: FloatArray) -> FloatArray:
        """``u - q q' u`` by classical Gram-Schmidt applied twice.

        "Twice is enough": Giraud, Langou & Rozložník 2005, Comput. Math. Appl.
        50; Parlett, *The Symmetric Eigenvalue Problem*, 1980, sec. 6.9 (both
        from memory).
        """
        for _ in range(2):
            u = u - self.q @ (self.q.T @ u)
        return u

    def project(self, v: ArrayLike) -> FloatArray:
        """W-orthogonal projection onto the column space of the retained columns of ``X``.

        ``P_W v = X_r (X_r' W X_r)^(-1) X_r' W v = W^(-1/2) Q Q' W^(1/2) v``
        (Seber & Lee, *Linear Regression Analysis*, 2nd ed., 2003, sec. 3.10,
        from memory).

        Parameters
        ----------
        v : array_like, shape (n,) or (n, k)
            Vector(s) in the original (unweighted) coordinates.

        Returns
        -------
        ndarray, same shape as ``v``
        """
        u = self._weighted(v)
        return self._unweight(u - self._perp(u), np.ndim(v))

    def project_out(self, v: ArrayLike) -> FloatArray:
        """``v - P_W v``, the part of ``v`` W-orthogonal to the column space.

        Computed as ``W^(-1/2) (u - Q Q' u)``, ``u = W^(1/2) v``, with two
        Gram-Schmidt passes (see :meth:`project`).
        """
        u = self._weighted(v)
        return self._unweight(self._perp(u), np.ndim(v))

    def relative_distance(self, v: ArrayLike) -> FloatArray:
        """Relative distance ``||W^(1/2)(v - P_W v)|| / ||W^(1/2) v||`` of each column of ``v``.

        The sine of the angle between ``v`` and the column space in the W inner
        product; 0 for an all-zero column.
        """
        u = self._weighted(v)
        res = self._perp(u)
        num = np.linalg.norm(res, axis=0)
        den = np.linalg.norm(u, axis=0)
        out = np.zeros_like(den)
        nz = den > 0
        out[nz] = num[nz] / den[nz]
        return out

    def _weighted(self, v: ArrayLike) -> FloatArray:
        arr = np.asarray(v, dtype=np.float64)
        if arr.ndim not in (1, 2) or arr.shape[0] != self.n_obs:
            raise ValueError(f"expected an array with {self.n_obs} rows; got shape {arr.shape}")
        arr2 = arr.reshape(self.n_obs, -1)
        return arr2 * self.sqrt_weights[:, None] if self.weighted else arr2.copy()

    def _unweight(self, u: FloatArray, ndim: int) -> FloatArray:
        if self.weighted:
            u = u / self.sqrt_weights[:, None]
        return u[:, 0] if ndim == 1 else u


def factorize(x: FloatArray, w: FloatArray | None, rank_tol: float) -> QRFactor:
    """Factor validated inputs (see :func:`qr_factor`)."""
    n, p = x.shape
    sw = np.sqrt(w) if w is not None else np.ones(n)
    xw = x * sw[:, None] if w is not None else x
    scale = column_scales(xw)
    # exact: division by powers of two; Fortran order, LAPACK's own
    a_full = np.divide(xw, scale, out=np.empty((n, p), order="F"))
    k = min(n, p)
    if p == 0:
        q_all = np.zeros((n, 0))
        r_all = np.zeros((0, 0))
        piv = np.zeros(0, dtype=np.intp)
    else:
        q_all, r_all, piv = scipy.linalg.qr(
            a_full, mode="economic", pivoting=True, check_finite=False
        )
    diag = np.abs(np.diag(r_all))[:k]
    tolerance = rank_tol * float(diag[0]) if k else 0.0
    above = diag > tolerance
    rank = int(k if np.all(above) else np.argmin(above))
    piv = np.asarray(piv, dtype=np.intp)
    q = q_all[:, :rank]
    r = np.triu(r_all[:rank, :rank])
    # X D^-1 in Fortran order (the refinement kernels read its columns as
    # contiguous rows of the transpose); unweighted, that is a_full itself.
    unweighted = a_full if w is None else np.divide(x, scale, out=np.empty((n, p), order="F"))
    x_scaled = unweighted.T[piv[:rank]].T
    condition = float(np.linalg.cond(r)) if rank else float("nan")
    return QRFactor(
        q=_readonly(q),
        r=_readonly(r),
        x_scaled=_readonly(x_scaled),
        pivots=_readonly(piv),
        rank=rank,
        scale=_readonly(scale),
        sqrt_weights=_readonly(sw),
        rank_tol=rank_tol,
        tolerance=tolerance,
        r_diagonal=_readonly(diag),
        condition=condition,
        weighted=w is not None,
    )


def qr_factor(
    X: ArrayLike, *, weights: ArrayLike | None = None, rank_tol: float | None = None
) -> QRFactor:
    """Pivoted QR of the weighted, column-scaled design, truncated at its numerical rank.

    Parameters
    ----------
    X : array_like, shape (n, p)
        Design matrix; finite, n >= 1, p >= 1.
    weights : array_like, shape (n,), optional
        Case weights, finite and strictly positive (see :func:`least_squares`).
    rank_tol : float, optional
        Relative rank tolerance in [0, 1); default ``max(n, p) * eps``. A column
        is retained while ``|R[k, k]| > rank_tol * |R[0, 0]|`` (Golub & Van Loan
        2013, sec. 5.4.1).

    Returns
    -------
    QRFactor

    Raises
    ------
    nestfit.errors.DataError
        On non-finite, empty or mis-shaped input.
    """
    x = as_matrix(X)
    n, p = x.shape
    w = as_weights(weights, n)
    return factorize(x, w, as_rank_tol(rank_tol, n, p))
