"""Least-squares solution with iterative refinement of the augmented system.

The least-squares problem ``min ||v - A c||`` (A of full column rank, here the
retained columns of the weighted, scaled design ``A = W^(1/2) X D^(-1)``,
``v = W^(1/2) y``) is equivalent to the augmented
system (Björck 1967)

    [ I   A ] [ r ]   [ v ]
    [ A'  0 ] [ c ] = [ 0 ].

Refinement (Björck, Å. (1967), "Iterative refinement of linear least squares
solutions I", BIT 7, doi:10.1007/BF01939321; Björck, *Numerical Methods for Least Squares
Problems*, SIAM 1996, sec. 2.9.3) computes the residuals of both block rows in
extended precision,

    f = v - r - A c,        g = -A' r,

and solves the correction system with the QR factors ``A = Q R``
(``Q' Q = I``):

    h  = R^(-T) g,
    f1 = Q' f,   f2 = f - Q f1,
    dr = Q h + f2,
    dc = R^(-1) (f1 - h).

Refining ``r`` together with ``c`` removes the ``cond(A)**2 * ||r||`` term that
limits plain QR and plain (solution-only) refinement when the residual is not
small; each step contracts the error by about ``cond(A) * eps`` (Björck 1996,
sec. 2.9.3; Higham 2002, sec. 20.5).

Cost. The first step's ``f`` is the remainder of the extended-precision
residual of the plain QR solution, split off from that same evaluation
(:meth:`ExtendedOperator.residual_split`), so a step costs one extended
product with ``A'`` and, from the second step on, one with ``A``. When the
condition number is known, the loop also stops after a step whose correction,
shrunk by a generous bound on the contraction factor,

    rho = n * k * cond(A) * eps    (a project rule: the ``cond(A) * eps`` above
                                   with a factor for the sizes, k columns),

could no longer move any coefficient by half a unit in its last place nor the
residual by half an ulp in norm: ``rho * max|dc| <= eps/2 * min_i |c_i|`` and
``rho * ||dr|| <= eps/2 * ||r||``. The next step would then change nothing
that float64 can hold. With ``rho >= 1/2`` this test is never applied, nor
with the long double scheme, whose residuals (unit roundoff 2**-64) leave an
error floor of their own that the contraction bound does not cover.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg
from numpy.typing import NDArray

from nestfit.linalg._precision import ExtendedOperator, Method

__all__ = ["Refiner"]

FloatArray = NDArray[np.float64]

_EPS = float(np.finfo(np.float64).eps)


def _solve_r(r: FloatArray, b: FloatArray, *, transpose: bool = False) -> FloatArray:
    out = scipy.linalg.solve_triangular(
        r, b, lower=False, trans=1 if transpose else 0, check_finite=False
    )
    return np.asarray(out, dtype=np.float64)


class Refiner:
    """Least-squares solves on ``A = diag(s) x = q @ r`` with extended-precision refinement.

    Parameters
    ----------
    x : ndarray, shape (n, k)
        Unweighted, column-scaled retained columns (k may be 0).
    row_scale : ndarray, shape (n,) or None
        ``s = sqrt(w)``; ``None`` for an unweighted fit.
    q : ndarray, shape (n, k)
        Orthonormal columns with ``A = q @ r`` (to working precision).
    r : ndarray, shape (k, k)
        Nonsingular upper-triangular factor.
    method : {"longdouble", "compensated"}, optional
        Extended-precision scheme (default: the platform's, see
        :mod:`nestfit.linalg._precision`).
    condition : float, optional
        2-norm condition number of ``A``; when given, refinement may stop
        as soon as a further step cannot change the result (module notes).

    Notes
    -----
    Right-hand sides are given *unweighted* (``u``, with ``v = diag(s) u``) so that
    the weighting is applied in extended precision too.
    """

    def __init__(
        self,
        x: FloatArray,
        row_scale: FloatArray | None,
        q: FloatArray,
        r: FloatArray,
        method: Method | None = None,
        condition: float | None = None,
    ) -> None:
        self.x, self.row_scale, self.q, self.r = x, row_scale, q, r
        self.op = ExtendedOperator(x, row_scale, method)
        self.contraction: float | None = None
        if condition is not None and np.isfinite(condition) and self.op.method == "compensated":
            rho = x.shape[0] * max(x.shape[1], 1) * float(condition) * _EPS
            self.contraction = rho if rho < 0.5 else None

    @property
    def k(self) -> int:
        """Number of columns."""
        return int(self.x.shape[1])

    def weighted(self, u: FloatArray) -> FloatArray:
        """``diag(s) u`` in float64."""
        return u if self.row_scale is None else self.row_scale[:, None] * u

    def solve(self, u: FloatArray, refine: int) -> tuple[FloatArray, FloatArray, int]:
        """Solve ``min ||v - A c||``, ``v = diag(s) u``, for each column of ``u`` (n, m).

        Plain QR ``c = R^(-1) Q' v`` with ``residual = v - A c`` in extended
        precision, then up to ``refine`` steps of augmented-system refinement
        (module notes); the loop stops early when a step leaves both ``c`` and
        the residual unchanged in float64, or (condition known) when the next
        step could not change them (module notes).

        Returns
        -------
        c : ndarray, shape (k, m)
        residual : ndarray, shape (n, m)
            Weighted residual ``v - A c``, refined together with ``c``.
        steps : int
            Refinement steps performed.
        """
        m = u.shape[1]
        if self.k == 0:
            return np.zeros((0, m)), self.weighted(u).copy(), 0
        q, r = self.q, self.r
        c = _solve_r(r, q.T @ self.weighted(u))
        res, f = self.op.residual_split(u, c)
        steps = 0
        for _ in range(refine):
            if steps:
                f = self.op.residual(u, res, c)
            g = -self.op.rmatmul(res)
            h = _solve_r(r, g, transpose=True)
            f1 = q.T @ f
            f2 = f - q @ f1
            f1b = q.T @ f2  # second orthogonalisation pass (twice is enough)
            f2 = f2 - q @ f1b
            f1 = f1 + f1b
            dr = q @ h + f2
            dc = _solve_r(r, f1 - h)
            new_res = res + dr
            new_c = c + dc
            steps += 1
            unchanged = np.array_equal(new_c, c) and np.array_equal(new_res, res)
            c, res = new_c, new_res
            if unchanged or self._settled(dc, dr, c, res):
                break
        return c, res, steps

    def _settled(self, dc: FloatArray, dr: FloatArray, c: FloatArray, res: FloatArray) -> bool:
        """Whether a next step, ``contraction`` times this one, is below half an ulp."""
        rho = self.contraction
        if rho is None:
            return False
        half_ulp = 0.5 * _EPS
        coef_ok = rho * np.max(np.abs(dc), axis=0) <= half_ulp * np.min(np.abs(c), axis=0)
        res_ok = rho * np.linalg.norm(dr, axis=0) <= half_ulp * np.linalg.norm(res, axis=0)
        return bool(np.all(coef_ok) and np.all(res_ok))

    def polish(
        self, u: FloatArray, residual: FloatArray, c: FloatArray, refine: int
    ) -> tuple[FloatArray, int]:
        """Refine ``c`` for ``v ~ A c + residual`` with a known accurate ``residual`` held fixed.

        The solution half of an augmented-system step (module notes) with
        ``r = residual`` frozen: ``g = -A' r`` and ``h = R^(-T) g`` once, then
        per step ``f = v - r - A c`` (extended precision) and
        ``dc = R^(-1) (Q' f - h)``. Since ``v = A c* + r*`` with ``A' r* = 0``,
        ``Q' f - h = R (c* - c) - Q' (r - r*) + R^(-T) A' (r - r*)`` and the last
        two terms cancel when ``A = Q R`` exactly, so the fixed point is ``c*``
        whatever the rounding of ``r``. Used to recover the digits that
        ``c_centred + m * c_constant`` loses to cancellation.

        Returns
        -------
        c : ndarray, shape (k, m)
        steps : int
        """
        if self.k == 0:
            return c, 0
        h = _solve_r(self.r, -self.op.rmatmul(residual), transpose=True)
        steps = 0
        for _ in range(refine):
            f = self.op.residual(u, residual, c)
            new_c = c + _solve_r(self.r, self.q.T @ f - h)
            steps += 1
            unchanged = np.array_equal(new_c, c)
            c = new_c
            if unchanged:
                break
        return c, steps
