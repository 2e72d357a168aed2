"""Power and group sizes for tests of group means (noncentral F and t).

plan_comparison(means, sigma, smaller=..., larger=...) -> PowerPlan
    F test of two nested partitions of the levels (default: equal -> separate means).
plan_contrast(means, weights, sigma) -> PowerPlan
    t test of one contrast.
plan_effect_size(f, groups) -> PowerPlan
    One-way F test from Cohen's f.
PowerPlan.power(n), .group_size(target, allocation=None), .curve(n_values)
    Power at given sizes; smallest sizes (equal, or in fixed ratios) reaching a target;
    a power curve.
power_f(noncentrality, df1, df2, alpha), power_t(noncentrality, df, alpha, alternative)
    The power formulas themselves (hooks for contrast objects).
"""

from __future__ import annotations

from nestfit.power._core import power_f, power_t
from nestfit.power._plan import PowerPlan, plan_comparison, plan_contrast, plan_effect_size
from nestfit.power._results import GroupSize, PowerCurve, PowerResult

__all__ = [
    "GroupSize",
    "PowerCurve",
    "PowerPlan",
    "PowerResult",
    "plan_comparison",
    "plan_contrast",
    "plan_effect_size",
    "power_f",
    "power_t",
]
