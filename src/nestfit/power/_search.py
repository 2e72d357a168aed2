"""Solving for group sizes: the smallest multiplier ``m`` whose sizes reach a target power.

Equal sizes are ``m`` per level; an allocation ``r`` gives ``n_i = ceil(m * r_i / min(r))``
(:func:`nestfit.power._inputs.allocated_sizes`). Either way every ``n_i`` is
non-decreasing in ``m``, and :func:`first_meeting` finds the crossing by doubling
``m`` and then bisecting. Power itself can still dip between neighbouring ``m`` for
a comparison whose larger model pools levels with different means, under ratios
that are not whole numbers (rounding changes the shares within a pooled block);
there the multipliers below the bisection's answer are scanned as well (up to
``SCAN_LIMIT`` of them), so the answer is the smallest ``m`` reaching the target.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from nestfit.checks._result import check_alpha
from nestfit.errors import DataError
from nestfit.power._inputs import allocated_sizes, is_count, read_allocation, whole
from nestfit.power._results import GroupSize, PowerResult

if TYPE_CHECKING:
    from nestfit.power._plan import PowerPlan

__all__ = ["first_meeting", "solve_group_size"]

EFFECT_SIZE_ALLOCATION = (
    "an unequal allocation cannot be planned from Cohen's f alone: f weights each level's "
    "mean by its share n_i / N of the observations, so the same means give a different f "
    "under different shares, and a given f holds only at the shares it was worked out for. "
    "Give the assumed means and sigma (plan_comparison) to plan unequal group sizes"
)


#: Largest number of smaller multipliers checked when power may dip between neighbours.
SCAN_LIMIT = 20_000


def _always_rising(plan: PowerPlan, ratios: tuple[float, ...] | None) -> bool:
    """Whether power cannot fall as ``m`` grows (so the bisection's answer is the smallest).

    True for equal sizes and whole-number ratios (sizes proportional to ``m``), for
    contrasts (``|delta|`` and the error df grow with every ``n_i``), and for comparisons
    whose larger model is separate means: there ``lambda = sum_i n_i (mu_i - m_b(i))^2``
    with ``m_b`` the ``n``-weighted block means of the smaller model, whose derivative in
    ``n_i`` is ``(mu_i - m_b(i))^2 >= 0`` (the weighted mean minimises the sum).
    """
    if ratios is None or plan.kind != "comparison":
        return True
    if all(whole(q) is not None for q in ratios):  # ratios are divided by the smallest
        return True
    return plan.larger is not None and plan.larger.n_blocks == plan.n_levels


def first_meeting(meets: Callable[[int], bool], start: int, stop: int) -> int | None:
    """The ``m`` in ``[start, stop]`` where ``meets`` turns true, or None if it never does.

    Doubles ``m`` from ``start`` (capped at ``stop``) until ``meets(m)``, then bisects
    between the last failing and the first passing value. The answer ``m`` always
    satisfies ``meets(m)`` and (when ``m > start``) not ``meets(m - 1)``; it is the
    smallest such ``m`` when ``meets`` is monotone (false, then true).
    """
    if meets(start):
        return start
    low, high = start, min(2 * start, stop)
    while not meets(high):
        if high >= stop:
            return None
        low, high = high, min(2 * high, stop)
    while high - low > 1:
        mid = (low + high) // 2
        low, high = (low, mid) if meets(mid) else (mid, high)
    return high


def _sizes_text(levels: tuple[str, ...], sizes: tuple[int, ...]) -> str:
    return ", ".join(f"{lev} {n}" for lev, n in zip(levels, sizes))


def solve_group_size(plan: PowerPlan, target: float, allocation: Any, max_n: Any) -> GroupSize:
    """The work of :meth:`PowerPlan.group_size` (see there)."""
    target = check_alpha(target, "target power")
    if target <= plan.alpha:
        raise DataError(
            f"target power {target:g} is not above alpha = {plan.alpha:g}: a test at level "
            "alpha has that power with no data at all; ask for more"
        )
    ratios = None if allocation is None else read_allocation(allocation, plan.levels)
    if plan.kind == "effect size" and ratios is not None and max(ratios) > 1.0:
        raise DataError(EFFECT_SIZE_ALLOCATION)
    k = plan.n_levels

    def sizes_at(m: int) -> tuple[int, ...]:
        return (m,) * k if ratios is None else allocated_sizes(m, ratios)

    start = 1 if sum(sizes_at(1)) > k else 2
    if not (is_count(max_n) and max_n >= start):
        raise DataError(f"max_n must be a whole number of at least {start}. Got {max_n!r}.")
    nc = plan.noncentrality(sizes_at(start))
    if nc == 0 or (plan.alternative == "greater" and nc < 0) or (
            plan.alternative == "less" and nc > 0):
        why = ("the assumed means do not differ in the way tested" if nc == 0
               else f"the assumed effect goes against the {plan.alternative!r} alternative")
        raise DataError(f"{why}: power never rises above alpha, whatever the group size")

    cache: dict[int, PowerResult] = {}

    def power_at(m: int) -> PowerResult:
        if m not in cache:
            cache[m] = plan.power(sizes_at(m))
        return cache[m]

    m = first_meeting(lambda m: power_at(m).power >= target, start, int(max_n))
    if m is None:
        top = power_at(int(max_n))
        where = (f"{max_n} observations per level" if ratios is None
                 else f"{max_n} observations in the smallest group "
                      f"({_sizes_text(plan.levels, top.sizes)})")
        raise DataError(
            f"power {target:g} is not reached with {where} (power there {top.power:.4g}); "
            "the assumed effect is too small"
        )
    if m > start and not _always_rising(plan, ratios):
        # Power may dip between neighbouring m here (module notes): the bisection's m meets
        # the target, but a smaller one may too. Scan up to it (each step is one power
        # evaluation; the scan is capped, and the docs say what is then guaranteed).
        first = next((j for j in range(max(start, m - SCAN_LIMIT), m)
                      if power_at(j).power >= target), m)
        m = first
    below = power_at(m - 1) if m > start else None
    return GroupSize(m, float(target), power_at(m), None if below is None else below.power,
                     allocation=ratios, levels=plan.levels,
                     sizes_below=None if below is None else below.sizes)
