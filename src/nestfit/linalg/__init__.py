"""Numerical core: pivoted-QR least squares, nesting checks, sequential sums of squares.

Pure numpy/scipy. The design is factored by Householder QR with column
pivoting after row weighting and power-of-two column equilibration; the
normal equations are never formed.

Public names
------------
least_squares, LeastSquares
    Weighted least squares with rank detection (aliased columns get NaN),
    centring of the response and iterative refinement (:mod:`._qr`).
qr_factor, QRFactor
    The pivoted QR alone, with W-orthogonal projections (:mod:`._factor`).
is_nested, column_space_residual
    Whether one column space lies inside another (:mod:`._nested`).
sequential_ss, SequentialSS
    Extra sums of squares of a chain of prefix models from one factorisation.
group_sums, GroupSums
    Per-group totals for one-factor designs (:mod:`._groups`).
null_space, NullSpace
    Null space of a design of known rank, and which ``c' b`` are estimable
    (:mod:`._nullspace`).
LONGDOUBLE_IS_EXTENDED
    Whether ``least_squares(..., extended="longdouble")`` is available here.
"""

from __future__ import annotations

from nestfit.linalg._factor import QRFactor, qr_factor
from nestfit.linalg._groups import GroupSums, group_sums
from nestfit.linalg._nested import SequentialSS, column_space_residual, is_nested, sequential_ss
from nestfit.linalg._nullspace import NullSpace, null_space
from nestfit.linalg._precision import LONGDOUBLE_IS_EXTENDED
from nestfit.linalg._qr import LeastSquares, least_squares

__all__ = [
    "LONGDOUBLE_IS_EXTENDED",
    "GroupSums",
    "LeastSquares",
    "NullSpace",
    "QRFactor",
    "SequentialSS",
    "column_space_residual",
    "group_sums",
    "is_nested",
    "least_squares",
    "null_space",
    "qr_factor",
    "sequential_ss",
]
