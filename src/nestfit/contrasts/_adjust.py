"""Adjusted p-values for a family of m tests (vectorised; decisions at any alpha follow).

An adjusted p-value ``p~_i`` is the smallest level at which the procedure
rejects hypothesis ``i``; "reject when ``p~_i <= alpha``" reproduces the
procedure's decisions at every ``alpha`` at once. With ``p_(1) <= ... <=
p_(m)`` the sorted p-values (common practice; Wright 1992):

=============  ===================================================  ==========
method         adjusted p-value of the hypothesis with ``p_(i)``     controls
=============  ===================================================  ==========
bonferroni     ``min(1, m p_(i))``                                   FWER
sidak          ``1 - (1 - p_(i))^m``                                 FWER
holm           ``max_{l <= i} min(1, (m - l + 1) p_(l))``            FWER
holm-sidak     ``max_{l <= i} 1 - (1 - p_(l))^(m - l + 1)``          FWER
hochberg       ``min_{l >= i} min(1, (m - l + 1) p_(l))``            FWER
hommel         closed Simes tests, see :func:`_hommel`               FWER
bh             ``min_{l >= i} min(1, m p_(l) / l)``                  FDR
by             ``min_{l >= i} min(1, c_m m p_(l) / l)``,             FDR
               ``c_m = sum_{j=1}^m 1/j``
=============  ===================================================  ==========

FWER: family-wise error rate, the chance of at least one false rejection.
FDR: false discovery rate, the expected share of false rejections among
the rejections -- a weaker promise. Sidak's formula is exact for
independent tests and conservative for two-sided t tests sharing one
variance estimate (Sidak 1967); Hochberg and Hommel rest on the Simes
inequality (independent or positively dependent tests); Benjamini-Hochberg
controls the FDR for independent or positively regression dependent tests,
Benjamini-Yekutieli under any dependence.

References
----------
Holm, S. (1979). A simple sequentially rejective multiple test procedure.
Scand. J. Statist. 6, 65-70.
Hochberg, Y. (1988). A sharper Bonferroni procedure for multiple tests of
significance. Biometrika 75, 800-802.
Hommel, G. (1988). A stagewise rejective multiple test procedure based on a
modified Bonferroni test. Biometrika 75, 383-386.
Benjamini, Y. & Hochberg, Y. (1995). J. R. Statist. Soc. B 57, 289-300.
Benjamini, Y. & Yekutieli, D. (2001). Ann. Statist. 29, 1165-1188.
Sidak, Z. (1967). J. Amer. Statist. Assoc. 62, 626-633.
Wright, S. P. (1992). Adjusted p-values for simultaneous inference.
Biometrics 48, 1005-1013. (Page numbers from memory.)
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np

from nestfit.errors import ContrastError, DataError

__all__ = ["P_METHODS", "adjust_pvalues", "error_rate"]


def _sidak_power(p: np.ndarray, times: np.ndarray | float) -> np.ndarray:
    """``1 - (1 - p)^times`` without cancellation for small ``p``."""
    with np.errstate(divide="ignore"):
        return -np.expm1(np.log1p(-p) * times)


def _bonferroni(p: np.ndarray) -> np.ndarray:
    return np.minimum(p * p.size, 1.0)


def _sidak(p: np.ndarray) -> np.ndarray:
    return _sidak_power(p, float(p.size))


def _holm(p: np.ndarray) -> np.ndarray:
    m = p.size
    return np.maximum.accumulate(np.minimum(p * np.arange(m, 0, -1), 1.0))


def _holm_sidak(p: np.ndarray) -> np.ndarray:
    return np.maximum.accumulate(_sidak_power(p, np.arange(p.size, 0, -1, dtype=float)))


def _hochberg(p: np.ndarray) -> np.ndarray:
    raw = np.minimum(p * np.arange(p.size, 0, -1), 1.0)
    return np.minimum.accumulate(raw[::-1])[::-1]


def _bh(p: np.ndarray, factor: float = 1.0) -> np.ndarray:
    m = p.size
    raw = np.minimum(factor * m * p / np.arange(1, m + 1), 1.0)
    return np.minimum.accumulate(raw[::-1])[::-1]


def _by(p: np.ndarray) -> np.ndarray:
    return _bh(p, float(np.sum(1.0 / np.arange(1, p.size + 1))))


def _hommel(p: np.ndarray) -> np.ndarray:
    """Hommel's adjusted p-values by the closure of Simes tests (sorted input).

    ``p~_(i)`` is the largest Simes p-value ``min_l |S| p_(l:S) / l`` over the
    sets ``S`` that contain hypothesis ``i``. Among sets of size ``j`` the
    largest is ``{i}`` plus the ``j - 1`` largest other p-values (raising any
    member's p-value cannot lower a Simes p-value), so with
    ``T_j = min_{l=2..j} j p_(m-j+l) / l``:

    * ``i <= m - j + 1``: the Simes p-value is ``min(j p_(i), T_j)``;
    * ``i > m - j + 1``: ``S`` is the top ``j`` p-values, ``min(j p_(m-j+1), T_j)``;

    and ``p~_(i)`` is the maximum over ``j = 1..m``, capped at 1. O(m^2).
    """
    m = p.size
    best = p.copy()  # j = 1: the set {i} itself
    index = np.arange(1, m + 1)
    for j in range(2, m + 1):
        top = p[m - j + 1:]  # p_(m-j+2) .. p_(m), the l = 2..j members
        t_j = float(np.min(j * top / np.arange(2, j + 1)))
        simes = np.where(index <= m - j + 1, np.minimum(j * p, t_j),
                         min(j * p[m - j], t_j))
        np.maximum(best, simes, out=best)
    return np.minimum(best, 1.0)


_SORTED: dict[str, Callable[[np.ndarray], np.ndarray]] = {
    "holm": _holm, "holm-sidak": _holm_sidak, "hochberg": _hochberg, "hommel": _hommel,
    "bh": _bh, "by": _by,
}
_ELEMENTWISE: dict[str, Callable[[np.ndarray], np.ndarray]] = {
    "none": lambda p: p.copy(), "bonferroni": _bonferroni, "sidak": _sidak,
}

#: The p-value adjustments, by name.
P_METHODS: tuple[str, ...] = ("none", "bonferroni", "sidak", "holm", "holm-sidak", "hochberg",
                              "hommel", "bh", "by")

_RATES = {"none": "no error rate across the family", "bh": "false discovery rate",
          "by": "false discovery rate"}


def error_rate(method: str) -> str:
    """What a method controls: ``"family-wise error rate"``, ``"false discovery rate"``..."""
    return _RATES.get(method, "family-wise error rate")


def adjust_pvalues(p: Any, method: str = "holm") -> np.ndarray:
    """Adjusted p-values; reject hypothesis ``i`` at level ``alpha`` when ``result[i] <= alpha``.

    Parameters
    ----------
    p : array_like, shape (m,)
        Unadjusted p-values, each in [0, 1].
    method : str
        One of ``"none"``, ``"bonferroni"``, ``"sidak"``, ``"holm"``,
        ``"holm-sidak"``, ``"hochberg"``, ``"hommel"`` (family-wise error
        rate), ``"bh"`` (Benjamini-Hochberg) or ``"by"``
        (Benjamini-Yekutieli), the last two controlling the false discovery
        rate only.

    Returns
    -------
    ndarray, shape (m,)
        The adjusted p-values, in the order given (ties keep equal values).

    Raises
    ------
    ContrastError
        Unknown method (the message lists the valid ones).
    DataError
        ``p`` not one-dimensional, empty, or with values outside [0, 1] or NaN.

    Notes
    -----
    Formulas in the module documentation; see Wright (1992), Biometrics 48,
    for adjusted p-values of step-wise procedures.

    Examples
    --------
    >>> adjust_pvalues([0.01, 0.04, 0.03, 0.005], "holm").round(4).tolist()
    [0.03, 0.06, 0.06, 0.02]
    """
    key = method.strip().lower() if isinstance(method, str) else ""
    if key not in P_METHODS:
        raise ContrastError(f"unknown p-value adjustment {method!r}; valid methods are "
                            f"{', '.join(P_METHODS)}")
    try:
        arr = np.asarray(p, dtype=np.float64)
    except (TypeError, ValueError):
        raise DataError("p-values must be numbers") from None
    if arr.ndim != 1 or arr.size == 0:
        raise DataError(f"p-values must be a non-empty one-dimensional sequence, got shape "
                        f"{arr.shape}")
    bad = np.flatnonzero(~((arr >= 0.0) & (arr <= 1.0)))
    if bad.size:
        raise DataError(f"p-value {float(arr[bad[0]])!r} at position {bad[0] + 1} is not in [0, 1]")
    if key in _ELEMENTWISE:
        return _ELEMENTWISE[key](arr)
    order = np.argsort(arr, kind="stable")
    out = np.empty_like(arr)
    out[order] = _SORTED[key](arr[order])
    return out
