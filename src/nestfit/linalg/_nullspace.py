"""Which linear functions of the coefficients a rank-deficient design can estimate.

A linear function ``c' b`` is estimable when ``c`` lies in the row space of
``X``, i.e. when ``c`` is orthogonal to the null space of ``X`` (Searle,
*Linear Models*, 1971, sec. 5.4, from memory). Then every least-squares
solution gives the same value, so the basic solution of the pivoted QR (aliased
coefficients set to zero) can be used, and ``c' Cov c`` with the aliased rows
and columns of the covariance set to zero is its variance.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

__all__ = ["ESTIMABLE_TOL", "NullSpace", "null_space"]

# Relative size of the component of a (scaled) coefficient-weight vector in the
# null space of the design above which the function is not estimable.
# Common practice, no source.
ESTIMABLE_TOL = 1e-8


@dataclass(frozen=True, eq=False)
class NullSpace:
    """An orthonormal basis of the null space of a column-scaled design.

    Attributes
    ----------
    basis : ndarray, shape (p, p - rank)
        Orthonormal basis of the null space of ``X D^{-1}``.
    scale : ndarray, shape (p,)
        The column norms ``D`` (1 for an all-zero column).
    """

    basis: np.ndarray = field(repr=False)
    scale: np.ndarray = field(repr=False)

    def is_estimable(self, c: np.ndarray) -> bool:
        """Whether ``c' b`` is estimable: ``||N' D^{-1} c|| <= tol * ||D^{-1} c||``."""
        v = np.asarray(c, dtype=np.float64) / self.scale
        size = float(np.linalg.norm(v))
        if self.basis.shape[1] == 0 or size == 0.0:
            return True
        return float(np.linalg.norm(self.basis.T @ v)) <= ESTIMABLE_TOL * size


def null_space(X: np.ndarray, rank: int) -> NullSpace:
    """Null space of ``X`` (``n x p``) given its numerical rank (from the fitter).

    The columns are scaled to unit norm, the triangular factor ``R`` of a QR
    decomposition is formed (never ``X'X``), and the right singular vectors
    of its leading ``min(n, p) x p`` block belonging to the ``p - rank``
    smallest singular values span the null space (Golub & Van Loan, *Matrix
    Computations*, 4th ed., 2013, sec. 5.4, from memory). Work and memory are
    ``O(n p)`` beyond the input: no ``n x n`` factor is formed (the SVD of
    ``X`` itself with full matrices would need one).
    """
    x = np.asarray(X, dtype=np.float64)
    n, p = x.shape
    scale = np.linalg.norm(x, axis=0)
    scale[scale == 0] = 1.0
    if rank >= p:
        return NullSpace(np.zeros((p, 0)), scale)
    r = scipy.linalg.qr(x / scale, mode="r", check_finite=False)[0][: min(n, p)]
    _, _, vt = np.linalg.svd(r, full_matrices=True)  # vt is p x p
    return NullSpace(np.ascontiguousarray(vt[rank:].T), scale)
