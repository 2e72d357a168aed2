"""Nesting of column spaces and sequential (extra) sums of squares.

Two models are nested when the column space of the smaller design lies in
that of the larger; the extra-sum-of-squares F test compares only such pairs
(Seber & Lee, *Linear Regression Analysis*, 2nd ed., 2003, sec. 4.5). Nesting is
checked numerically in the inner product of the fit, ``<u, v>_W = u' W v``:
column ``x`` of the smaller design is inside when

    ||W^(1/2) (x - P_W x)|| / ||W^(1/2) x||  <=  tol,

with ``P_W`` the W-orthogonal projector on the larger column space, taken from
the retained thin Q of the larger model (:meth:`QRFactor.project`).

:func:`sequential_ss` computes a whole chain of prefix models from one
block-wise factorisation; see its docstring.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np
import scipy.linalg
from numpy.typing import ArrayLike, NDArray

from nestfit.errors import DataError
from nestfit.linalg._factor import QRFactor, column_scales, factorize
from nestfit.linalg._precision import accurate_sum, accurate_sum_of_squares
from nestfit.linalg._qr import LeastSquares, extended_method
from nestfit.linalg._refine import Refiner
from nestfit.linalg._solve import constant_tolerance
from nestfit.linalg._validate import as_matrix, as_rank_tol, as_vector, as_weights

__all__ = ["SequentialSS", "column_space_residual", "is_nested", "sequential_ss"]

FloatArray = NDArray[np.float64]
IntArray = NDArray[np.intp]
BoolArray = NDArray[np.bool_]


def _readonly(arr: NDArray[Any]) -> NDArray[Any]:
    arr.setflags(write=False)
    return arr


def column_space_residual(large: QRFactor | LeastSquares, X_small: ArrayLike) -> FloatArray:
    """Relative W-norm residual of each column of ``X_small`` after projection on ``large``.

    ``rho_j = ||W^(1/2)(x_j - P_W x_j)|| / ||W^(1/2) x_j||`` (0 for an all-zero
    column), the sine of the angle between ``x_j`` and the column space of the
    larger design in the weighted inner product of its fit. The projection uses
    two Gram-Schmidt passes against the retained thin Q.

    Parameters
    ----------
    large : QRFactor or LeastSquares
        Factorisation (or fit) of the larger design; its weights define ``W``.
    X_small : array_like, shape (n, q)
        Columns of the smaller design; ``q`` may be 0.

    Returns
    -------
    ndarray, shape (q,)
    """
    factor = large.factor if isinstance(large, LeastSquares) else large
    xs = as_matrix(X_small, "X_small", allow_no_columns=True)
    if xs.shape[0] != factor.n_obs:
        raise DataError(f"X_small has {xs.shape[0]} rows but the larger model has {factor.n_obs}")
    if xs.shape[1] == 0:
        return np.zeros(0)
    return factor.relative_distance(xs)


def is_nested(
    X_small: ArrayLike,
    X_large: ArrayLike,
    *,
    tol: float = 1e-8,
    weights: ArrayLike | None = None,
    rank_tol: float | None = None,
) -> tuple[bool, int | None, float]:
    """Whether the column space of ``X_small`` lies inside that of ``X_large``.

    Parameters
    ----------
    X_small, X_large : array_like, shapes (n, q) and (n, p)
        The two designs, same rows. ``X_small`` may have no columns.
    tol : float, default 1e-8
        Largest relative residual (see :func:`column_space_residual`) accepted
        as "inside". It must sit well above rounding (about ``cond * eps``) and
        well below any real departure.
    weights : array_like, shape (n,), optional
        Case weights of the fits; the check uses the inner product ``u' W v``.
    rank_tol : float, optional
        Rank tolerance for factoring ``X_large`` (see :func:`least_squares`).

    Returns
    -------
    nested : bool
        ``max_j rho_j <= tol``.
    worst : int or None
        Index of the column of ``X_small`` with the largest relative residual;
        ``None`` when ``X_small`` has no columns.
    residual : float
        That largest relative residual ``rho_worst`` (0.0 without columns).
    """
    tol_f = float(tol)
    if not (np.isfinite(tol_f) and tol_f >= 0):
        raise DataError(f"tol must be a non-negative number; got {tol!r}")
    xl = as_matrix(X_large, "X_large")
    n, p = xl.shape
    w = as_weights(weights, n, matrix_name="X_large")
    factor = factorize(xl, w, as_rank_tol(rank_tol, n, p))
    rho = column_space_residual(factor, X_small)
    if rho.size == 0:
        return True, None, 0.0
    worst = int(np.argmax(rho))
    return bool(rho[worst] <= tol_f), worst, float(rho[worst])


@dataclass(frozen=True, eq=False)
class SequentialSS:
    """Sequential sums of squares for a chain of prefix models (see :func:`sequential_ss`).

    Model ``j`` (0-based) uses the columns of blocks ``0..j``. All arrays are read-only.

    Attributes
    ----------
    block_sizes : tuple of int
        Columns per block, as given.
    df : ndarray of int, shape (k,)
        Rank added by each block (its degrees of freedom); 0 for a block
        entirely aliased with earlier ones.
    extra_ss : ndarray, shape (k,)
        Extra sum of squares of block ``j``: ``RSS_(j-1) - RSS_j``, computed as
        ``||Q_j' r_(j-1)||^2`` from the refined residual of model ``j-1``
        (``r_(-1) = W^(1/2) y``, so ``extra_ss[0] = total_ss - rss[0]``).
    rss : ndarray, shape (k,)
        Residual sum of squares ``sum_i w_i r_i^2`` of each model.
    df_residual : ndarray of int, shape (k,)
        ``n - rank`` of each model.
    rank : int
        Rank of the full design (``df.sum()``).
    aliased : ndarray of bool, shape (p,)
        Columns aliased with earlier columns (earlier blocks, or earlier pivots
        within their block).
    centered : ndarray of bool, shape (k,)
        Whether model ``j`` contains the constant and was solved for the
        centred response.
    offset : float
        Weighted mean of ``y`` used for centring (0.0 if no model contains the constant).
    total_ss : float
        ``sum_i w_i y_i^2``, the RSS of the empty model (df ``n``).
    n_obs : int
        Number of observations.
    """

    block_sizes: tuple[int, ...]
    df: IntArray
    extra_ss: FloatArray
    rss: FloatArray
    df_residual: IntArray
    rank: int
    aliased: BoolArray
    centered: BoolArray
    offset: float
    total_ss: float
    n_obs: int


def _as_blocks(block_sizes: Sequence[int], p: int) -> tuple[int, ...]:
    try:
        sizes = tuple(int(b) for b in block_sizes)
    except (TypeError, ValueError) as exc:
        raise DataError(f"block_sizes must be a sequence of integers; got {block_sizes!r}") from exc
    if not sizes:
        raise DataError("block_sizes is empty: give at least one block")
    if any(b < 0 for b in sizes) or any(int(b) != b for b in block_sizes):
        raise DataError(f"block_sizes must be non-negative integers; got {list(block_sizes)!r}")
    if sum(sizes) != p:
        raise DataError(f"block_sizes sum to {sum(sizes)} but X has {p} columns")
    return sizes


def _block_qr(
    a_full: FloatArray, sizes: tuple[int, ...], tolerance: float
) -> tuple[FloatArray, FloatArray, list[IntArray]]:
    """Block-wise pivoted QR: Q (n x rank), R (rank x rank), retained columns per block.

    Block ``j`` is orthogonalised against the Q of blocks ``0..j-1`` by block
    classical Gram-Schmidt applied twice (Giraud, Langou & Rozložník 2005;
    Barlow & Smoktunowicz 2013, "Reorthogonalized block classical Gram-Schmidt",
    Numer. Math. 123), then factored by Householder QR with column pivoting
    (LAPACK xGEQP3). Within the block, pivots with ``|R[k, k]| <= tolerance``
    are aliased. The result satisfies ``a_full[:, concat(kept)] = Q R``.
    """
    n = a_full.shape[0]
    q = np.zeros((n, 0))
    r_blocks: list[tuple[FloatArray, FloatArray]] = []  # (coupling, diagonal block)
    kept: list[IntArray] = []
    start = 0
    for size in sizes:
        cols = np.arange(start, start + size)
        start += size
        if size == 0:
            kept.append(cols)
            continue
        b = a_full[:, cols]
        coupling = np.zeros((q.shape[1], size))
        for _ in range(2):  # twice is enough
            step = q.T @ b
            b = b - q @ step
            coupling = coupling + step
        qb, rb, pb = scipy.linalg.qr(b, mode="economic", pivoting=True, check_finite=False)
        diag = np.abs(np.diag(rb))
        above = diag > tolerance
        k = int(diag.size if np.all(above) else np.argmin(above))
        kept.append(cols[pb[:k]])
        r_blocks.append((coupling[:, pb[:k]], np.triu(rb[:k, :k])))
        q = np.column_stack([q, qb[:, :k]])
    rank = q.shape[1]
    r = np.zeros((rank, rank))
    col = 0
    for coupling, diag_block in r_blocks:
        k = diag_block.shape[0]
        r[: coupling.shape[0], col : col + k] = coupling
        r[col : col + k, col : col + k] = diag_block
        col += k
    return q, r, kept


def sequential_ss(
    X: ArrayLike,
    y: ArrayLike,
    block_sizes: Sequence[int],
    *,
    weights: ArrayLike | None = None,
    rank_tol: float | None = None,
    refine: int = 2,
    extended: Literal["compensated", "longdouble"] = "compensated",
) -> SequentialSS:
    """Residual and extra sums of squares of the chain of models built from column blocks.

    The columns of ``X`` come in consecutive blocks of ``block_sizes``; model
    ``j`` uses blocks ``0..j``. One factorisation pass serves the whole chain:
    blocks are orthogonalised in turn against the accumulated Q (twice), and
    pivoted within the block for rank, so that for every prefix
    ``A_j = Q_j R_j`` with ``R_j`` the leading block of one triangular ``R``.
    Each model's residual is then refined as in :func:`least_squares`
    (Björck 1967) and the extra sum of squares of block ``j`` is
    ``||Q_block_j' r_(j-1)||^2``, equal to ``RSS_(j-1) - RSS_j`` (Seber & Lee
    2003, sec. 4.5) without the cancellation of the difference.

    Parameters
    ----------
    X : array_like, shape (n, p)
        Design; finite.
    y : array_like, shape (n,)
        Response; finite.
    block_sizes : sequence of int
        Non-negative block widths summing to ``p``.
    weights : array_like, shape (n,), optional
        Case weights, finite and strictly positive.
    rank_tol : float, optional
        Relative rank tolerance (see :func:`least_squares`); the absolute
        threshold is ``rank_tol`` times the largest column norm of the scaled
        design, which is ``|R[0, 0]|`` of a single pivoted QR.
    refine : int, default 2
        Refinement steps per model.
    extended : {"compensated", "longdouble"}, default "compensated"
        Extended-precision scheme for the refinement (see :func:`least_squares`).

    Returns
    -------
    SequentialSS

    Notes
    -----
    A model whose column space contains the constant vector is solved for
    ``y - m`` (``m`` the weighted mean), which leaves its RSS unchanged in exact
    arithmetic and keeps all digits when ``y`` has a large common offset. No
    warning is issued for aliased columns: they show as ``df == 0`` blocks or
    in ``aliased``.
    """
    x = as_matrix(X)
    n, p = x.shape
    yv = as_vector(y, n)
    w = as_weights(weights, n)
    sizes = _as_blocks(block_sizes, p)
    rel_tol = as_rank_tol(rank_tol, n, p)
    if isinstance(refine, bool) or not isinstance(refine, (int, np.integer)) or refine < 0:
        raise DataError(f"refine must be a non-negative integer; got {refine!r}")
    method = extended_method(extended)

    sw = np.sqrt(w) if w is not None else np.ones(n)
    xw = x * sw[:, None] if w is not None else x
    scale = column_scales(xw)
    a_full = xw / scale  # exact: powers of two
    norms = np.linalg.norm(a_full, axis=0)
    tolerance = rel_tol * float(norms.max()) if p else 0.0
    q, r, kept = _block_qr(a_full, sizes, tolerance)
    order = np.concatenate(kept) if kept else np.zeros(0, dtype=np.intp)
    x_ret = np.ascontiguousarray(x[:, order] / scale[order])
    df = np.array([k.size for k in kept], dtype=np.intp)
    ends = np.cumsum(df)

    yw = sw * yv
    wv = w if w is not None else np.ones(n)
    offset = accurate_sum(wv * yv) / accurate_sum(wv)
    ctol = constant_tolerance(n, p)
    rss = np.zeros(len(sizes))
    extra = np.zeros(len(sizes))
    centered = np.zeros(len(sizes), dtype=bool)
    prev_res = yw
    for j, end in enumerate(ends):
        start = int(end - df[j])
        qj = q[:, :end]
        if end > 0:
            u = sw.copy()
            for _ in range(2):
                u = u - qj @ (qj.T @ u)
            centered[j] = float(np.linalg.norm(u) / np.linalg.norm(sw)) <= ctol
        rhs = (yv - offset if centered[j] else yv)[:, None]
        refiner = Refiner(x_ret[:, :end], sw if w is not None else None, qj, r[:end, :end], method)
        _, res, _ = refiner.solve(rhs, int(refine))
        res_j = res[:, 0]
        proj = q[:, start:end].T @ prev_res
        extra[j] = accurate_sum_of_squares(proj)
        rss[j] = accurate_sum_of_squares(res_j)
        prev_res = res_j
    aliased = np.ones(p, dtype=bool)
    aliased[order] = False
    return SequentialSS(
        block_sizes=sizes,
        df=_readonly(df),
        extra_ss=_readonly(extra),
        rss=_readonly(rss),
        df_residual=_readonly(n - ends),
        rank=int(ends[-1]) if ends.size else 0,
        aliased=_readonly(aliased),
        centered=_readonly(centered),
        offset=float(offset) if centered.any() else 0.0,
        total_ss=accurate_sum_of_squares(yw),
        n_obs=n,
    )
