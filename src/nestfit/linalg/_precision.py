"""Extended-precision residuals and accurate sums for iterative refinement.

Iterative refinement only gains digits if the residual of the current solution
is computed in a precision higher than the one used to solve for the
correction (Björck 1967; Higham, *Accuracy and Stability of Numerical
Algorithms*, 2nd ed., 2002, ch. 12 and sec. 20.5). Two schemes are provided:

``"compensated"`` (the default, on every platform)
    error-free transformations in plain float64: Dekker's product split and
    Knuth's TwoSum, the "Dot2" scheme of Ogita, Rump & Oishi (2005),
    "Accurate sum and dot product", SIAM J. Sci. Comput. 26(6), 1955-1988,
    Algorithms 3.1, 3.2, 3.3 and 5.3. The result is as accurate as if computed
    in twice the working precision (about 106 bits) and then rounded, on
    every IEEE-754 platform.
``"longdouble"``
    ``numpy.longdouble``, available only where the platform's long double has
    more significand bits than float64 (:data:`LONGDOUBLE_IS_EXTENDED`; on
    x86-64 Linux it is the x87 80-bit format, 64-bit significand, unit
    roundoff 2**-64; on MSVC builds and Apple silicon it is float64 itself).

Why compensated is the default: its accuracy is the same on every platform,
and it resolves 42 more bits, at a cost comparable to long double (numpy has no
BLAS for long double either; in our timings a whole fit took between 0.4 and
1.3 times as long with the compensated scheme, for n x p from 2000 x 1000 to
1e6 x 10). The extra bits matter when the design is ill-conditioned through
offsets (a column ``x = 1e6 + u``): long double then leaves relative errors
of order 1e-11 in the residual sum of squares, where the compensated scheme
is exact to float64. The accuracy documentation lists both on the NIST StRD
sets.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

import math
from typing import Literal

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "DEFAULT_METHOD",
    "EXTENDED_ROUNDOFF",
    "LONGDOUBLE_IS_EXTENDED",
    "ExtendedOperator",
    "accurate_sum",
    "accurate_sum_of_squares",
    "two_product",
    "two_sum",
]

FloatArray = NDArray[np.float64]
Method = Literal["longdouble", "compensated"]

#: Whether numpy.longdouble carries more significand bits than float64 on this platform.
LONGDOUBLE_IS_EXTENDED: bool = bool(np.finfo(np.longdouble).nmant > np.finfo(np.float64).nmant)

#: The scheme used unless another is asked for.
DEFAULT_METHOD: Method = "compensated"

#: Unit roundoff of the extended-precision residuals: 2**-64 for x87 long double
#: (its eps / 2), eps**2 / 2 ~ 2**-106 for the compensated scheme (Ogita, Rump &
#: Oishi 2005, sec. 5: "as if computed in twice the working precision").
EXTENDED_ROUNDOFF: dict[str, float] = {
    "longdouble": float(np.finfo(np.longdouble).eps) / 2,
    "compensated": float(np.finfo(np.float64).eps) ** 2 / 2,
}

# Veltkamp/Dekker splitting constant 2**27 + 1 for binary64 (53-bit significand);
# Ogita, Rump & Oishi (2005), Algorithm 3.2 (from Dekker 1971).
_SPLITTER = 134217729.0


def two_sum(a: FloatArray, b: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Error-free sum: ``a + b = s + e`` exactly, with ``s = fl(a + b)``.

    Knuth's TwoSum (no ordering of ``|a|``, ``|b|`` required); Ogita, Rump &
    Oishi (2005), Algorithm 3.1. Valid without overflow under round-to-nearest.
    """
    s = a + b
    bb = s - a
    e = (a - (s - bb)) + (b - bb)
    return s, e


def _split(a: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Dekker's split of ``a`` into two 26-bit halves, ``a = hi + lo`` exactly."""
    c = _SPLITTER * a
    hi = c - (c - a)
    return hi, a - hi


def two_product(a: FloatArray, b: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Error-free product: ``a * b = p + e`` exactly, with ``p = fl(a * b)``.

    Dekker's TwoProduct, Ogita, Rump & Oishi (2005), Algorithm 3.3. Exact
    unless ``|a|`` or ``|b|`` exceeds about 1e300 (splitting overflow) or the
    product underflows; inputs here are column-scaled, far from both limits.
    """
    p = a * b
    ah, al = _split(a)
    bh, bl = _split(b)
    e = al * bl - (((p - ah * bh) - al * bh) - ah * bl)
    return p, e


def accurate_sum(values: FloatArray) -> float:
    """Correctly rounded sum of a float64 array (``math.fsum``, Shewchuk 1997)."""
    return math.fsum(np.ravel(values).tolist())


def accurate_sum_of_squares(values: FloatArray) -> float:
    """``sum(v_i**2)`` correctly rounded: exact squares by TwoProduct, then ``math.fsum``.

    Each square is split as ``v_i**2 = p_i + e_i`` exactly (Ogita, Rump & Oishi
    2005, Algorithm 3.3) and all ``p_i, e_i`` are summed exactly (Shewchuk
    1997, "Adaptive precision floating-point arithmetic", as used by
    ``math.fsum``).
    """
    v = np.ravel(np.asarray(values, dtype=np.float64))
    p, e = two_product(v, v)
    return math.fsum(np.concatenate([p, e]).tolist())


def _tree_sum(p: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Sum along axis 0 by a pairwise tree of TwoSum: ``sum(p) = s + (exact errors)``.

    Returns ``s`` and the float64 sum of the rounding errors of the tree. Every
    addition in the tree is error-free transformed, so ``s + err`` has error at
    most about ``eps*|sum| + log2(N)*eps**2*sum|p|`` (the Sum2 bound of Ogita,
    Rump & Oishi 2005, Proposition 4.5, with a pairwise instead of a recursive order).
    """
    err = np.zeros(p.shape[1:])
    while p.shape[0] > 1:
        if p.shape[0] % 2:
            p = np.concatenate([p, np.zeros((1, *p.shape[1:]))])
        s, e = two_sum(p[0::2], p[1::2])
        err = err + e.sum(axis=0)
        p = s
    return p[0], err


def _chunk_rows(k: int) -> int:
    """Rows per chunk so that a chunk of a k-column array holds about 2**16 values.

    Small enough for a chunk and its few temporaries to stay in cache.
    """
    return max(1, (1 << 16) // max(k, 1))


class ExtendedOperator:
    """Products with ``A = diag(row_scale) @ x`` evaluated in extended precision.

    ``A`` is never formed in float64: the row scaling (``sqrt(w)`` in a
    weighted fit) is applied inside the extended-precision evaluation, so the
    refined solution is that of the exactly scaled problem, not of its
    rounded copy.

    Parameters
    ----------
    x : ndarray, shape (n, k)
        The unscaled matrix (float64). Not copied; do not modify it afterwards.
    row_scale : ndarray, shape (n,), optional
        Row multipliers; ``None`` means all ones.
    method : {"longdouble", "compensated"}, optional
        Defaults to :data:`DEFAULT_METHOD`.

    Notes
    -----
    Results are float64, each rounded once from a value accurate to about
    ``u_ext * sum|terms|``, ``u_ext`` from :data:`EXTENDED_ROUNDOFF`.
    """

    def __init__(
        self, x: FloatArray, row_scale: FloatArray | None = None, method: Method | None = None
    ) -> None:
        self.x = x
        self.row_scale = row_scale
        self.method: Method = DEFAULT_METHOD if method is None else method
        if self.method not in ("longdouble", "compensated"):
            raise ValueError(f"unknown extended-precision method {self.method!r}")
        # The compensated kernels work on contiguous rows of x' (no copy when x
        # is in Fortran order, as the factorisation stores it).
        self._xt = np.ascontiguousarray(x.T) if self.method == "compensated" else x.T
        if self.method == "longdouble" and not LONGDOUBLE_IS_EXTENDED:
            raise ValueError("numpy.longdouble is float64 on this platform")
        self._x_long = None
        self._s_long = None
        if self.method == "longdouble":
            self._x_long = x.astype(np.longdouble)
            if row_scale is not None:
                self._s_long = row_scale.astype(np.longdouble)[:, None]

    def residual(self, u: FloatArray, r: FloatArray, c: FloatArray) -> FloatArray:
        """Return ``diag(s) (u - x @ c) - r`` (shapes (n, m), (n, m), (k, m)).

        With ``v = diag(s) u`` this is ``v - r - A c``, the first block row of
        the residual of the augmented system ``[I A; A' 0][r; c] = [v; 0]``
        (Björck 1967).
        """
        return self._residual(u, r, c)[0]

    def residual_split(self, u: FloatArray, c: FloatArray) -> tuple[FloatArray, FloatArray]:
        """``diag(s) (u - x @ c)`` as a float64 pair ``hi + lo`` from one extended evaluation.

        ``hi`` is the rounded residual (what :meth:`residual` returns with
        ``r = 0``) and ``lo`` is what :meth:`residual` would return for
        ``r = hi``, to the same accuracy: the remainder of the extended value,
        split off by TwoSum instead of recomputed.
        """
        return self._residual(u, np.zeros_like(u), c, split=True)

    def _residual(
        self, u: FloatArray, r: FloatArray, c: FloatArray, *, split: bool = False
    ) -> tuple[FloatArray, FloatArray]:
        if self._x_long is not None:
            ld = np.longdouble
            t = u.astype(ld) - self._x_long @ c.astype(ld)
            if self._s_long is not None:
                t = self._s_long * t
            t = t - r.astype(ld)
            hi = np.asarray(t, dtype=np.float64)
            lo = np.asarray(t - hi.astype(ld), dtype=np.float64) if split else np.zeros_like(hi)
            return hi, lo
        # Dot2 (Ogita, Rump & Oishi 2005, Algorithm 5.3) vectorised over rows:
        # products split exactly by TwoProduct, the terms u_i, -x_ij c_j summed by
        # an error-free TwoSum tree, all rounding errors gathered and added last.
        # The work runs on the transposed matrix, chunk by chunk of rows, so that
        # every tree level combines contiguous vectors that stay in cache.
        xt = self._xt
        k, n = xt.shape
        m = u.shape[1]
        out = np.empty((n, m))
        rest = np.zeros((n, m) if split else (0, m))
        step = _chunk_rows(k + 1)
        terms = np.empty((k + 1, min(step, n)))
        for col in range(m):
            negc = -c[:, col, None]
            c_hi, c_lo = _split(negc)
            for start in range(0, n, step):
                sl = slice(start, start + step)
                blk = xt[:, sl]
                width = blk.shape[1]
                rows = terms[:, :width]
                rows[0] = u[sl, col]
                prod = np.multiply(blk, negc, out=rows[1:])
                x_hi, x_lo = _split(blk)
                # TwoProduct's error term with the split of -c made once per column
                perr = x_lo * c_lo - (((prod - x_hi * c_hi) - x_lo * c_hi) - x_hi * c_lo)
                hi, err = _tree_sum(rows)
                low = err + perr.sum(axis=0)  # hi + low = u - x c to ~2-fold precision
                if self.row_scale is not None:
                    srow = self.row_scale[sl]
                    hi, e_hi = two_product(srow, hi)
                    low = e_hi + srow * low
                z, ez = two_sum(hi, -r[sl, col])
                if split:
                    out[sl, col], rest[sl, col] = two_sum(z, ez + low)
                else:
                    out[sl, col] = z + (ez + low)
        return out, rest

    def rmatmul(self, r: FloatArray) -> FloatArray:
        """Return ``A.T @ r = x.T @ (diag(s) r)`` (shape (k, m)) for ``r`` of shape (n, m)."""
        if self._x_long is not None:
            rl = r.astype(np.longdouble)
            if self._s_long is not None:
                rl = self._s_long * rl
            return np.asarray(self._x_long.T @ rl, dtype=np.float64)
        if self.row_scale is None:
            return self._rmatmul_compensated(r)
        p, e = two_product(self.row_scale[:, None], r)  # s r = p + e exactly
        return self._rmatmul_compensated(p) + self.x.T @ e

    def _rmatmul_compensated(self, r: FloatArray) -> FloatArray:
        # Dot2 again, over the rows: per chunk the products x_ij r_i are split by
        # TwoProduct and added by TwoSum into running sums (one per column and
        # position in the chunk, the recursive order of Ogita, Rump & Oishi 2005,
        # Algorithm 4.4); the running sums are then added by an error-free tree.
        xt = self._xt
        k, n = xt.shape
        m = r.shape[1]
        out = np.empty((k, m))
        step = max(1, min(_chunk_rows(k), n))
        for col in range(m):
            acc = np.zeros((k, step))
            errors = np.zeros((k, step))
            for lo in range(0, n, step):
                sl = slice(lo, lo + step)
                blk = xt[:, sl]
                width = blk.shape[1]
                prod, perr = two_product(blk, r[sl, col])
                a = acc[:, :width]
                s, e = two_sum(a, prod)
                errors[:, :width] += e + perr
                acc[:, :width] = s
            total, err = _tree_sum(acc.T)
            out[:, col] = total + (err + errors.sum(axis=1))
        return out
