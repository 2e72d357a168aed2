"""Solving for one response on a factored design: centring, refinement, polishing.

Least squares is linear in the response, so for any number ``m``

    b(y) = b(y - m 1) + m b(1),

and when the constant vector ``1`` lies in the column space of ``X`` the
residual of ``y - m 1`` *is* the residual of ``y``. Solving for the centred
response (``m`` the weighted mean) removes a common offset before any
rounding can touch it: a response ``1e12 + noise`` keeps all the digits of
its noise in the residuals and the residual sum of squares.

The price is cancellation in ``b(y - m 1) + m b(1)`` for coefficients much
smaller than ``m`` (an intercept of 1 under a mean of 1e6: Wampler1). Those
digits are recovered by *polishing*: refining the coefficients against the
uncentred response with the accurate centred residual held fixed
(:meth:`Refiner.polish`); the residual is then recomputed from the polished
coefficients if its rounding bound ``eps * |X| |b|`` is the smaller one.
Polishing is skipped when no component of the sum cancels by more than a
factor 2 (one bit). It evaluates ``y - r - X b`` in extended precision and is
applied only when that precision resolves the offset, i.e.
``|m| * u_ext <= eps * s`` with ``s`` the RMS of the centred response and
``u_ext`` the extended unit roundoff (a rule of this module, derived from the
error bound of the extended residual). Otherwise the centred solution stands:
then ``|m|`` dwarfs the spread, the intercept-like coefficients are of order
``m`` themselves and the sum loses little.

When a retained column of ``X`` is constant (``X[:, j] = kappa * 1``), ``b(1)``
is taken exactly as ``e_j / kappa`` instead of being solved for, so no rounding
noise of ``b(1)`` is multiplied by ``m``.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from nestfit.linalg._factor import QRFactor
from nestfit.linalg._precision import (
    EXTENDED_ROUNDOFF,
    Method,
    accurate_sum,
    accurate_sum_of_squares,
)
from nestfit.linalg._refine import Refiner

__all__ = ["ResponseSolution", "constant_tolerance", "solve_response"]

FloatArray = NDArray[np.float64]

_EPS = float(np.finfo(np.float64).eps)


def constant_tolerance(n: int, p: int) -> float:
    """Relative distance below which the constant counts as lying in the column space.

    ``32 * sqrt(max(n, p)) * eps``: a small multiple of the rounding error of two
    Gram-Schmidt passes against an orthonormal Q (Giraud, Langou & Rozložník
    2005, Comput. Math. Appl. 50, Theorem 2, from memory). A project rule.
    """
    return 32.0 * math.sqrt(max(n, p)) * _EPS


@dataclass(frozen=True)
class ResponseSolution:
    """Scaled solution for one response (internal).

    Attributes
    ----------
    c : ndarray, shape (rank,)
        Coefficients of the retained scaled columns, in pivot order.
    residual_w : ndarray, shape (n,)
        Weighted residual ``sqrt(w) * (y - X b)``.
    steps : int
        Refinement steps of the augmented system.
    centered : bool
        The constant lies in the column space and ``y - m`` was solved for.
    offset : float
        ``m`` (0.0 when not centred).
    polished : bool
        Whether the coefficients were polished against the uncentred response.
    """

    c: FloatArray
    residual_w: FloatArray
    steps: int
    centered: bool
    offset: float
    polished: bool


def constant_coefficients(factor: QRFactor, x: FloatArray) -> FloatArray | None:
    """Exact ``c_1`` with ``A c_1 = sqrt(w)`` when a retained column of ``x`` is constant.

    For ``X[:, j] = kappa * 1`` the scaled column is ``A[:, k] = sqrt(w) * kappa /
    scale_j``, so ``c_1 = e_k * scale_j / kappa`` (one rounding). Returns
    ``None`` when no retained column is constant and nonzero.
    """
    for k, j in enumerate(factor.retained):
        col = x[:, j]
        kappa = col[0]
        if kappa != 0 and np.all(col == kappa):
            c1 = np.zeros(factor.rank)
            c1[k] = factor.scale[j] / kappa
            return c1
    return None


def solve_response(
    factor: QRFactor,
    x: FloatArray,
    y: FloatArray,
    w: FloatArray | None,
    refine: int,
    method: Method,
) -> ResponseSolution:
    """Solve ``min ||sqrt(w) (y - X b)||`` on the factored design (module notes)."""
    n = x.shape[0]
    sw = factor.sqrt_weights
    refiner = Refiner(factor.x_scaled, sw if factor.weighted else None, factor.q, factor.r, method,
                      condition=factor.condition)
    y2 = y[:, None]
    centered = factor.rank > 0 and float(
        factor.relative_distance(np.ones(n))[0]
    ) <= constant_tolerance(n, factor.n_columns)
    if not centered:
        c_all, res_all, steps = refiner.solve(y2, refine)
        return ResponseSolution(c_all[:, 0], res_all[:, 0], steps, False, 0.0, False)

    # weighted mean from correctly rounded sums; any m is valid since b is linear in y
    total_w = accurate_sum(w) if w is not None else float(n)
    offset = accurate_sum(w * y if w is not None else y) / total_w
    uc = y - offset  # exact where y_i is within a factor 2 of m (Sterbenz)
    c1 = constant_coefficients(factor, x)
    if c1 is None:
        c_all, res_all, steps = refiner.solve(np.column_stack([uc, np.ones(n)]), refine)
        c1 = c_all[:, 1]
    else:
        c_all, res_all, steps = refiner.solve(uc[:, None], refine)
    res_w = res_all[:, :1]
    c = c_all[:, :1] + offset * c1[:, None]
    spread = math.sqrt(accurate_sum_of_squares(sw * uc if w is not None else uc) / total_w)
    c_centred = c_all[:, :1]
    # digits lost by cancellation in c = c_centred + m c_1: log2 |c_centred| / |c|
    cancels = bool(np.any(np.abs(c_centred) > 2.0 * np.abs(c)))
    resolves = abs(offset) * EXTENDED_ROUNDOFF[method] <= _EPS * spread
    polished = refine > 0 and cancels and resolves
    if polished:
        c, _ = refiner.polish(y2, res_w, c, refine)
        # Residual of the rounded coefficients: X (b* - fl(b*)) ~ eps |X| |b| for the
        # uncentred route against eps |A| |c_centred| for the centred one; keep the
        # residual with the smaller bound (an exact fit then gives exactly 0).
        absx = np.abs(factor.x_scaled)
        if float(sw @ (absx @ np.abs(c[:, 0]))) < float(sw @ (absx @ np.abs(c_centred[:, 0]))):
            res_w = refiner.op.residual(y2, np.zeros_like(y2), c)
    return ResponseSolution(c[:, 0], res_w[:, 0], steps, True, float(offset), polished)
