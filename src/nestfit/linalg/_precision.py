"""Extended-precision residuals and accurate sums for iterative refinement.

Iterative refinement only gains digits if the residual of the current solution
is computed in a precision higher than the one used to solve for the
correction (Wilkinson; Björck 1967; Higham, *Accuracy and Stability of
Numerical Algorithms*, 2nd ed., 2002, ch. 12). Two implementations are kept:

``"longdouble"``
    ``numpy.longdouble`` when the platform's long double carries more mantissa
    bits than float64 (x86-64 Linux and macOS-Intel: the 80-bit x87 format with
    a 64-bit significand, unit roundoff 2**-64; some platforms: IEEE quad).
``"compensated"``
    error-free transformations in plain float64 where long double *is* float64
    (MSVC builds, Apple silicon): Dekker's product split and Knuth's TwoSum,
    the "Dot2" scheme of Ogita, Rump & Oishi (2005), "Accurate sum and dot
    product", SIAM J. Sci. Comput. 26(6), 1955-1988, Algorithms 3.1, 3.2, 5.3.
    The result is as accurate as if computed in twice the working precision
    and then rounded.

:data:`EXTENDED_METHOD` names the one chosen at import time; both are tested.
"""

from __future__ import annotations

import math
from typing import Literal

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "EXTENDED_METHOD",
    "EXTENDED_ROUNDOFF",
    "ExtendedOperator",
    "accurate_sum",
    "accurate_sum_of_squares",
    "two_product",
    "two_sum",
]

FloatArray = NDArray[np.float64]
Method = Literal["longdouble", "compensated"]

#: "longdouble" when long double has a wider significand than float64, else "compensated".
EXTENDED_METHOD: Method = (
    "longdouble"
    if np.finfo(np.longdouble).nmant > np.finfo(np.float64).nmant
    else "compensated"
)

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
    """Rows per chunk so that a chunk of a k-column array holds about 2**20 values."""
    return max(1, (1 << 20) // max(k, 1))


class ExtendedOperator:
    """Products with a fixed float64 matrix ``A`` evaluated in extended precision.

    Parameters
    ----------
    a : ndarray, shape (n, k)
        The matrix (float64). It is not copied; do not modify it afterwards.
    method : {"longdouble", "compensated"}, optional
        Defaults to :data:`EXTENDED_METHOD`.

    Notes
    -----
    Both products return float64 results, each rounded once from a value
    accurate to about ``u_ext * sum|terms|`` where ``u_ext`` is ``2**-64``
    (x87 long double) or about ``2**-106`` (compensated).
    """

    def __init__(self, a: FloatArray, method: Method | None = None) -> None:
        self.a = a
        self.method: Method = EXTENDED_METHOD if method is None else method
        if self.method not in ("longdouble", "compensated"):
            raise ValueError(f"unknown extended-precision method {self.method!r}")
        self._a_long = a.astype(np.longdouble) if self.method == "longdouble" else None

    def residual(self, v: FloatArray, r: FloatArray, c: FloatArray) -> FloatArray:
        """Return ``v - r - A @ c`` (shapes (n, m), (n, m), (k, m)).

        This is the first block row of the residual of the augmented system
        ``[I A; A' 0][r; c] = [v; 0]`` (Björck 1967).
        """
        if self._a_long is not None:
            ld = np.longdouble
            out = v.astype(ld) - r.astype(ld) - self._a_long @ c.astype(ld)
            return np.asarray(out, dtype=np.float64)
        # Dot2 (Ogita, Rump & Oishi 2005, Algorithm 5.3) vectorised over rows:
        # products split exactly by TwoProduct, the terms v, -r, -a_ij c_j summed
        # by an error-free TwoSum tree, all rounding errors gathered and added last.
        n, m = v.shape
        out = np.empty((n, m))
        step = _chunk_rows(self.a.shape[1] + 2)
        for lo in range(0, n, step):
            blk = self.a[lo : lo + step]
            for col in range(m):
                prod, perr = two_product(blk, -c[None, :, col])
                terms = np.concatenate(
                    [v[lo : lo + step, col, None], -r[lo : lo + step, col, None], prod], axis=1
                )
                s, err = _tree_sum(terms.T)
                out[lo : lo + step, col] = s + (err + perr.sum(axis=1))
        return out

    def rmatmul(self, r: FloatArray) -> FloatArray:
        """Return ``A.T @ r`` (shape (k, m)) for ``r`` of shape (n, m)."""
        if self._a_long is not None:
            out = self._a_long.T @ r.astype(np.longdouble)
            return np.asarray(out, dtype=np.float64)
        n, k = self.a.shape
        m = r.shape[1]
        total = np.zeros((k, m))
        errors = np.zeros((k, m))
        step = _chunk_rows(k)
        for lo in range(0, n, step):
            blk = self.a[lo : lo + step]
            for col in range(m):
                prod, perr = two_product(blk, r[lo : lo + step, col, None])
                s, err = _tree_sum(prod)
                total[:, col], e2 = two_sum(total[:, col], s)
                errors[:, col] += err + perr.sum(axis=0) + e2
        return total + errors
