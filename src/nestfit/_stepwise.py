"""A multiplicity adjustment worked step by step: sorted p-values next to their thresholds.

Adjusted p-values (:mod:`nestfit.contrasts._adjust`) give every decision at
once; teaching the methods needs the procedures themselves. With the ``m``
p-values sorted, ``p_(1) <= ... <= p_(m)``, and the family level ``alpha``
(common practice; Holm 1979, Scand. J. Statist. 6, 65-70; Hochberg 1988,
Biometrika 75, 800-802; Benjamini & Hochberg 1995, J. R. Statist. Soc. B 57,
289-300; Benjamini & Yekutieli 2001, Ann. Statist. 29, 1165-1188):

===========  ======================================  =========================================
method       threshold of ``p_(i)``                  procedure
===========  ======================================  =========================================
none         ``alpha``                               each p-value alone
bonferroni   ``alpha / m``                           each p-value alone
sidak        ``1 - (1 - alpha)^(1/m)``               each p-value alone
holm         ``alpha / (m - i + 1)``                 step down: reject while ``p_(i)`` passes
holm-sidak   ``1 - (1 - alpha)^(1/(m - i + 1))``     step down
hochberg     ``alpha / (m - i + 1)``                 step up: reject ``1..i*``, ``i*`` the
                                                     largest ``i`` that passes
bh           ``i alpha / m``                         step up
by           ``i alpha / (m c_m)``, ``c_m = sum 1/j`` step up
===========  ======================================  =========================================

Single-step simultaneous methods (Scheffe, Tukey-Kramer, Dunnett, max-t)
compare every ``|t|`` with one critical value instead, which the family
result carries (``critical_value``; each row's own, ``ContrastRow.critical_value``,
when the rows have their own df). Hommel's method and the step-down max-t
method have no threshold table of this form; their trace lists the adjusted
p-values only. The decisions shown are always the family result's own
(``p_adjusted <= alpha``); the trace shows how the procedure reaches them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from nestfit.contrasts import FamilyResult

__all__ = ["AdjustmentTrace", "TraceRow", "adjustment_trace"]

_STEP_DOWN = {"holm", "holm-sidak"}
_STEP_UP = {"hochberg", "bh", "by"}
_SINGLE = {"none", "bonferroni", "sidak"}
_CRITICAL = {"scheffe", "tukey", "dunnett", "max-t"}

_RULES = {
    "none": "each p-value is compared with alpha on its own; nothing is adjusted",
    "bonferroni": "each p-value is compared with alpha / m",
    "sidak": "each p-value is compared with 1 - (1 - alpha)^(1/m)",
    "holm": ("step down: compare the smallest p-value with alpha / m, the next with "
             "alpha / (m - 1), and so on; stop at the first p-value above its threshold and "
             "reject every hypothesis before it"),
    "holm-sidak": ("step down: compare p_(i) with 1 - (1 - alpha)^(1/(m - i + 1)), starting at "
                   "the smallest; stop at the first p-value above its threshold"),
    "hochberg": ("step up: find the largest i with p_(i) <= alpha / (m - i + 1) and reject the "
                 "hypotheses with the i smallest p-values"),
    "bh": ("step up: find the largest i with p_(i) <= i alpha / m and reject the hypotheses "
           "with the i smallest p-values"),
    "by": ("step up: find the largest i with p_(i) <= i alpha / (m c_m), c_m = 1 + 1/2 + ... + "
           "1/m, and reject the hypotheses with the i smallest p-values"),
    "scheffe": "reject when |t| exceeds the Scheffe critical value sqrt(q F_q,df(1 - alpha))",
    "tukey": ("reject when |t| exceeds the Tukey-Kramer critical value "
              "q_k,df(1 - alpha) / sqrt(2)"),
    "dunnett": "reject when |t| exceeds the many-to-one max-t critical value",
    "max-t": "reject when |t| exceeds the critical value of the maximum |t| of the family",
    "hommel": ("Hommel's method tests every intersection of hypotheses by Simes' test; it has no "
               "single threshold per step, so only the adjusted p-values are listed"),
    "step-down-max-t": ("step down: the hypothesis with the largest |t| is compared with the "
                        "maximum |t| over the whole family, the next over the remaining ones; "
                        "the thresholds change at each step, so only the adjusted p-values are "
                        "listed"),
}


@dataclass(frozen=True)
class TraceRow:
    """One hypothesis in the order the procedure visits it.

    Attributes
    ----------
    rank : int
        ``i`` (1 = smallest p-value, or largest ``|t|``).
    label : str
    p : float
        Unadjusted p-value.
    statistic : float
        The t statistic (for critical-value methods).
    threshold : float or None
        What ``p_(i)`` is compared with (or ``|t|``, for critical-value
        methods); None when the method has no threshold table.
    passes : bool or None
        Whether ``p_(i) <= threshold`` (``|t| > threshold`` for critical-value
        methods, ``t > threshold`` / ``-t > threshold`` one-sided).
    p_adjusted : float
    rejected : bool
        The family result's decision, ``p_adjusted <= alpha``.
    """

    rank: int
    label: str
    p: float
    statistic: float
    threshold: float | None
    passes: bool | None
    p_adjusted: float
    rejected: bool


@dataclass(frozen=True)
class AdjustmentTrace:
    """A multiplicity procedure worked step by step (see the module documentation).

    Attributes
    ----------
    method, method_name : str
    kind : str
        ``"single"``, ``"step-down"``, ``"step-up"``, ``"critical-value"`` or
        ``"adjusted-only"``.
    alpha : float
    m : int
        Number of hypotheses.
    rule : str
        The procedure in words.
    rows : tuple of TraceRow
        In the order visited.
    """

    method: str
    method_name: str
    kind: str
    alpha: float
    m: int
    rule: str
    rows: tuple[TraceRow, ...]


def _thresholds(method: str, alpha: float, m: int) -> np.ndarray:
    i = np.arange(1, m + 1, dtype=float)
    if method == "none":
        return np.full(m, alpha)
    if method == "bonferroni":
        return np.full(m, alpha / m)
    if method == "sidak":
        return np.full(m, -math.expm1(math.log1p(-alpha) / m))
    if method in ("holm", "hochberg"):
        return alpha / (m - i + 1)
    if method == "holm-sidak":
        return -np.expm1(np.log1p(-alpha) / (m - i + 1))
    if method == "bh":
        return i * alpha / m
    assert method == "by"
    return i * alpha / (m * float(np.sum(1.0 / i)))


def adjustment_trace(result: FamilyResult) -> AdjustmentTrace:
    """The step-by-step trace of ``result``'s multiplicity method.

    Parameters
    ----------
    result : FamilyResult
        A contrast family adjusted by any method of :mod:`nestfit.contrasts`.

    Returns
    -------
    AdjustmentTrace
        Thresholds for the p-value methods (module table); the critical value
        ``result.critical_value`` (or each row's own, with per-contrast df) for the
        single-step simultaneous methods.
    """
    method, alpha, rows = result.method, result.alpha, result.rows
    m = len(rows)
    decisions = result.rejected()
    p = np.array([r.p for r in rows], dtype=float)
    t = np.array([r.t for r in rows], dtype=float)
    if method in _CRITICAL:
        kind = "critical-value"
        signed = {"two-sided": np.abs(t), "greater": t, "less": -t}[result.alternative]
        order = np.argsort(-np.nan_to_num(signed, nan=-np.inf), kind="stable")
        c = np.array([r.critical_value if math.isfinite(r.critical_value)
                      else result.critical_value for r in rows], dtype=float)
        thresholds: list[float | None] = [float(c[j]) for j in order]
        passes: list[bool | None] = [bool(signed[j] > c[j]) for j in order]
    elif method in _SINGLE | _STEP_DOWN | _STEP_UP:
        kind = ("single" if method in _SINGLE else
                "step-down" if method in _STEP_DOWN else "step-up")
        order = np.argsort(p, kind="stable")
        values = _thresholds(method, alpha, m)
        thresholds = [float(v) for v in values]
        passes = [bool(p[j] <= values[i]) for i, j in enumerate(order)]
    else:
        kind = "adjusted-only"
        order = np.argsort(p, kind="stable")
        thresholds, passes = [None] * m, [None] * m
    trace = tuple(
        TraceRow(rank=i + 1, label=rows[j].label, p=float(rows[j].p), statistic=float(t[j]),
                 threshold=thresholds[i], passes=passes[i],
                 p_adjusted=float(rows[j].p_adjusted), rejected=bool(decisions[j]))
        for i, j in enumerate(order))
    return AdjustmentTrace(method, result.method_name, kind, float(alpha), m,
                           _RULES.get(method, "see the method's documentation"), trace)
