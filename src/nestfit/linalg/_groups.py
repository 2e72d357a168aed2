"""Group sums for designs whose rows are determined by one factor.

When every design row is the coding-matrix row of its observation's level,
``X = C[codes]``, least squares splits into two exact pieces (common
practice, no source; see e.g. Searle, *Linear Models*, 1971, sec. 6.2, from
memory):

* the within-group sum of squares ``W = sum_g sum_{i in g} w_i (y_i - m_g)^2``
  around the (weighted) group means ``m_g``, which no such model can reduce;
* a small weighted least-squares problem on the ``k`` group means,
  ``min_b sum_g W_g (m_g - c_g b)^2`` with ``W_g = sum_{i in g} w_i``, whose
  normal matrix ``C' diag(W_g) C`` equals ``X' W X``.

The residual sum of squares is ``W`` plus the residual of the small problem.
The dense ``n x p`` matrix is never built: the cost is a few passes of
``numpy.bincount`` over the data.

The group means are computed in two passes with a correction (Chan, Golub &
LeVeque 1983, "Algorithms for computing the sample variance", The American
Statistician 37(3), eq. 1.7, the "corrected two-pass algorithm"): the first
pass gives ``m_g``; the second gives the deviations ``d_i = y_i - m_g``,
their sum (the correction to the mean) and their squares.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from nestfit.errors import DataError

__all__ = ["GroupSums", "group_sums"]


@dataclass(frozen=True)
class GroupSums:
    """Per-group totals from one factor.

    Attributes
    ----------
    counts : ndarray of int, shape (k,)
        Observations per group.
    weight_totals : ndarray, shape (k,)
        ``W_g``, the sum of weights per group (equal to ``counts`` without weights).
    means : ndarray, shape (k,)
        Weighted group means ``m_g``.
    within_ss : ndarray, shape (k,)
        ``sum_{i in g} w_i (y_i - m_g)^2`` for each group.
    shift : float
        The constant ``c`` subtracted from ``y`` first: ``means`` are the means
        of ``y - c``. Group means far from zero cannot be stored to more than
        about 16 significant digits, which would cost digits of the
        between-groups sum of squares; the differences ``y_i - c`` are exact
        when ``c/2 <= y_i <= 2c`` (Sterbenz's lemma; Higham, *Accuracy and
        Stability of Numerical Algorithms*, 2nd ed., 2002, theorem 2.5).
    """

    counts: np.ndarray
    weight_totals: np.ndarray
    means: np.ndarray
    within_ss: np.ndarray
    shift: float = 0.0

    @property
    def total_within_ss(self) -> float:
        """Pooled within-group sum of squares (accurately summed)."""
        return float(np.sum(np.sort(self.within_ss)))


# Rows per block of the passes below: the temporaries of a block (a few float64
# vectors of this length) stay in cache and the peak memory does not grow with n.
# A block has at least _ROWS_PER_GROUP rows per group, so that adding up the
# per-block totals stays cheap beside the pass itself. Common practice, no source.
_BLOCK_ROWS = 1 << 17
_ROWS_PER_GROUP = 16


def group_sums(
    codes: np.ndarray,
    y: np.ndarray,
    n_groups: int,
    weights: np.ndarray | None = None,
    *,
    shift: float | None = None,
    counts: np.ndarray | None = None,
) -> GroupSums:
    """Corrected two-pass group means and within-group sums of squares.

    Parameters
    ----------
    codes : ndarray of intp, shape (n,)
        Group index ``0 <= codes[i] < n_groups`` of each observation.
    y : ndarray of float, shape (n,)
        Response.
    n_groups : int
        Number of groups ``k``; every group must have an observation.
    weights : ndarray, optional
        Positive finite case weights.
    shift : float, optional
        Constant subtracted from ``y`` before summing; default the mean of ``y``.
    counts : ndarray of int, shape (k,), optional
        ``numpy.bincount(codes, minlength=n_groups)`` when already known (e.g.
        :attr:`Factor.counts`); it is not recounted.

    Returns
    -------
    GroupSums

    Notes
    -----
    With ``d_i = y_i - m_g`` from the first-pass mean, the corrected mean is
    ``m_g + S_g / W_g`` with ``S_g = sum w_i d_i`` and the within sum of squares
    is ``sum w_i d_i^2 - S_g^2 / W_g`` (Chan, Golub & LeVeque 1983, eq. 1.7).
    Both passes run over blocks of rows, so the memory they need beyond the
    inputs does not grow with ``n``; the per-group totals of the blocks are added up.
    """
    codes = np.asarray(codes, dtype=np.intp)
    y = np.asarray(y, dtype=np.float64)
    if codes.shape != y.shape or y.ndim != 1:
        raise DataError(f"codes has shape {codes.shape} but y has shape {y.shape}")
    if counts is None:
        counts = np.bincount(codes, minlength=n_groups)
    if counts.shape != (n_groups,) or np.any(counts == 0):
        raise DataError("every group needs at least one observation")
    c = float(np.mean(y)) if shift is None else float(shift)
    if not np.isfinite(c):
        raise DataError("the response has NaN or infinite values")
    w = None if weights is None else np.asarray(weights, dtype=np.float64)
    n = y.size
    step = max(_BLOCK_ROWS, _ROWS_PER_GROUP * n_groups)
    totals = (counts.astype(np.float64) if w is None
              else _block_bincount(codes, w, n_groups, step))
    first = np.zeros(n_groups)
    buf = np.empty(min(n, step))
    for lo in range(0, n, step):
        hi = min(lo + step, n)
        d = np.subtract(y[lo:hi], c, out=buf[: hi - lo])
        if w is not None:
            d *= w[lo:hi]
        first += np.bincount(codes[lo:hi], weights=d, minlength=n_groups)
    means = first / totals
    correction = np.zeros(n_groups)
    sq = np.zeros(n_groups)
    gathered = np.empty_like(buf)
    for lo in range(0, n, step):
        hi = min(lo + step, n)
        cb = codes[lo:hi]
        d = np.subtract(y[lo:hi], c, out=buf[: hi - lo])
        d -= np.take(means, cb, out=gathered[: hi - lo])
        wd = d if w is None else np.multiply(w[lo:hi], d, out=gathered[: hi - lo])
        correction += np.bincount(cb, weights=wd, minlength=n_groups)
        if w is None:
            d *= d
        else:
            d *= wd
        sq += np.bincount(cb, weights=d, minlength=n_groups)
    means = means + correction / totals
    within = np.maximum(sq - correction * correction / totals, 0.0)
    return GroupSums(counts=counts, weight_totals=totals, means=means, within_ss=within,
                     shift=c)


def _block_bincount(codes: np.ndarray, w: np.ndarray, n_groups: int, step: int) -> np.ndarray:
    total = np.zeros(n_groups)
    for lo in range(0, w.size, step):
        total += np.bincount(codes[lo : lo + step], weights=w[lo : lo + step],
                             minlength=n_groups)
    return total
