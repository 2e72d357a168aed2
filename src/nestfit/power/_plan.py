"""Power planning: a question about group means, asked at any group sizes.

A :class:`PowerPlan` fixes what is assumed (means and sigma, or Cohen's f) and
what is tested (a nested comparison of two partitions of the levels, or one
contrast) and answers three questions: the power at given group sizes
(:meth:`PowerPlan.power`), the smallest group sizes, equal or in fixed ratios,
reaching a target power (:meth:`PowerPlan.group_size`) and the power over a range of sizes
(:meth:`PowerPlan.curve`).

Noncentrality with ``n_i`` observations in level ``i`` and ``N = sum n_i``:

* nested comparison of partitions ``S`` (smaller) and ``L`` (larger): with
  ``m_S(mu)`` and ``m_L(mu)`` the ``n``-weighted block means of ``mu``,
  ``lambda = sum_i n_i (m_L(mu)_i - m_S(mu)_i)^2 / sigma^2`` on
  ``(blocks(L) - blocks(S), N - k)`` df, the error taken from the separate-means
  model. For equal means against separate means this is
  ``lambda = sum_i n_i (mu_i - mu_bar_w)^2 / sigma^2`` with the ``n``-weighted mean
  ``mu_bar_w`` (Scheffe 1959, sec. 2.8, from memory);
* Cohen's f: ``lambda = f^2 N`` on ``(k - 1, N - k)`` df (Cohen 1988, ch. 8; the
  convention of statsmodels' ``FTestAnovaPower``, whose ``nobs`` is ``N``);
* contrast ``psi = sum c_i mu_i``: ``delta = psi / (sigma sqrt(sum c_i^2 / n_i))``
  on ``N - k`` df.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import stats

from nestfit.checks._input import level_weights
from nestfit.checks._result import check_alpha, is_real
from nestfit.design._partition import Partition
from nestfit.effects._contrast import scaled_contrast_weights
from nestfit.errors import DataError, NotNestedError
from nestfit.power._core import Alternative, power_f, power_t
from nestfit.power._inputs import (
    as_count,
    block_means,
    is_count,
    model_name,
    read_means,
    read_partition,
    read_sigma,
)
from nestfit.power._results import GroupSize, PowerCurve, PowerResult
from nestfit.power._search import solve_group_size

__all__ = ["PowerPlan", "plan_comparison", "plan_contrast", "plan_effect_size"]

#: Largest group size :meth:`PowerPlan.group_size` searches by default.
MAX_GROUP_SIZE = 10_000_000


@dataclass(frozen=True, eq=False)
class PowerPlan:
    """A planned test of group means (build with ``plan_comparison``, ``plan_contrast`` or
    ``plan_effect_size``).

    Attributes
    ----------
    kind : str
        ``"comparison"``, ``"contrast"`` or ``"effect size"``.
    levels : tuple of str
    alpha : float
    means : ndarray or None
        Assumed level means.
    sigma : float or None
        Assumed error standard deviation.
    smaller, larger : Partition or None
        The compared models (comparisons).
    weights : ndarray or None
        Contrast weights as given.
    effect_f : float or None
        Cohen's f (effect-size plans).
    alternative : str
        Rejection region of a contrast's t test.
    """

    kind: str
    levels: tuple[str, ...]
    alpha: float
    means: np.ndarray | None = field(default=None, repr=False)
    sigma: float | None = None
    smaller: Partition | None = None
    larger: Partition | None = None
    weights: np.ndarray | None = field(default=None, repr=False)
    effect_f: float | None = None
    alternative: str = "two-sided"

    @property
    def n_levels(self) -> int:
        """``k``."""
        return len(self.levels)

    @property
    def test(self) -> str:
        """What is tested, in words."""
        if self.kind == "contrast":
            assert self.weights is not None
            terms = " ".join(f"{w:+g}*{lev}" for lev, w in zip(self.levels, self.weights) if w)
            return f"{self.alternative} t test of the contrast {terms}"
        if self.kind == "effect size":
            return f"F test of equal means across {self.n_levels} levels (Cohen's f = " \
                   f"{self.effect_f:g})"
        assert self.smaller is not None and self.larger is not None
        return f"F test of {model_name(self.smaller)} -> {model_name(self.larger)}"

    # ------------------------------------------------------------- sizes
    def sizes(self, n: int | Sequence[int]) -> tuple[int, ...]:
        """Group sizes as a tuple: ``n`` for every level, or one per level.

        Raises
        ------
        DataError
            Not whole numbers, a size below 1, the wrong number of sizes, or no
            error df (``N <= k``).
        """
        k = self.n_levels
        raw: list[Any] | None = (
            [n] * k if is_count(n)
            else list(n) if isinstance(n, (Sequence, np.ndarray)) and not isinstance(n, str)
            else None
        )
        if raw is None or len(raw) != k or not all(is_count(x) for x in raw):
            raise DataError(
                f"group sizes must be a whole number or one whole number per level ({k}). "
                f"Got {n!r}."
            )
        sizes = tuple(int(x) for x in raw)
        if min(sizes) < 1:
            raise DataError(f"every group needs at least 1 observation. Got {sizes}.")
        if sum(sizes) <= k:
            raise DataError(
                f"{sum(sizes)} observations in {k} levels leave no error degrees of freedom; "
                "use at least 2 per level"
            )
        return sizes

    # ------------------------------------------------------------- power
    def noncentrality(self, n: int | Sequence[int]) -> float:
        """``lambda`` (F tests) or ``delta`` (contrast t test) at these sizes."""
        sizes = np.array(self.sizes(n), dtype=float)
        total = float(sizes.sum())
        if self.kind == "effect size":
            assert self.effect_f is not None
            return self.effect_f ** 2 * total
        assert self.means is not None and self.sigma is not None
        centred = self.means - float(np.mean(self.means))
        if self.kind == "contrast":
            assert self.weights is not None
            psi = math.fsum((self.weights * centred).tolist())
            return psi / (self.sigma * math.sqrt(float(np.sum(self.weights ** 2 / sizes))))
        assert self.smaller is not None and self.larger is not None
        diff = (block_means(centred, sizes, self.larger)
                - block_means(centred, sizes, self.smaller))
        return math.fsum((sizes * diff * diff).tolist()) / self.sigma ** 2

    def df(self, n: int | Sequence[int]) -> tuple[float, ...]:
        """Degrees of freedom of the test at these sizes."""
        total = sum(self.sizes(n))
        error = float(total - self.n_levels)
        if self.kind == "contrast":
            return (error,)
        if self.kind == "effect size":
            return (float(self.n_levels - 1), error)
        assert self.smaller is not None and self.larger is not None
        return (float(self.larger.n_blocks - self.smaller.n_blocks), error)

    def power(self, n: int | Sequence[int]) -> PowerResult:
        """The power at ``n`` observations per level (or one size per level).

        Returns
        -------
        PowerResult
        """
        sizes = self.sizes(n)
        nc = self.noncentrality(sizes)
        dfs = self.df(sizes)
        total = sum(sizes)
        if self.kind == "contrast":
            df = dfs[0]
            tail = self.alpha / 2.0 if self.alternative == "two-sided" else self.alpha
            crit = float(stats.t.isf(tail, df))
            pw = power_t(nc, df, self.alpha, self.alternative)  # type: ignore[arg-type]
            assert self.weights is not None and self.means is not None
            scaled = scaled_contrast_weights(self.weights)
            assert self.sigma is not None
            effect = math.fsum((scaled * (self.means - np.mean(self.means))).tolist()) / self.sigma
            return PowerResult(self.test, sizes, dfs, nc, crit, self.alpha, pw,
                               "standardized difference", effect)
        crit = float(stats.f.isf(self.alpha, dfs[0], dfs[1]))
        return PowerResult(self.test, sizes, dfs, nc, crit, self.alpha,
                           power_f(nc, dfs[0], dfs[1], self.alpha), "Cohen's f",
                           math.sqrt(nc / total))

    def group_size(self, target: float, *,
                   allocation: Mapping[Any, float] | Sequence[float] | np.ndarray | None = None,
                   max_n: int = MAX_GROUP_SIZE) -> GroupSize:
        """The smallest group sizes, equal or in fixed ratios, whose power is at least ``target``.

        Sizes are indexed by a whole number ``m``: without ``allocation`` every level
        gets ``m``; with ratios ``r_i`` level ``i`` gets

            n_i = ceil(m * r_i / min(r)),

        so the smallest group gets exactly ``m`` and the others are rounded up (a
        product within a relative 1e-9 of a whole number counts as that number, so
        ``0.3 : 0.1`` gives exactly ``3 m``). The search starts at ``m = 1`` if those
        sizes leave error degrees of freedom, else at ``m = 2`` (always for equal sizes).

        Parameters
        ----------
        target : float
            Wanted power, ``alpha < target < 1``.
        allocation : mapping or sequence, optional
            One positive ratio per level: ``{level: ratio}`` or ratios in level order,
            e.g. ``{"control": 2, "A": 1, "B": 1}`` for a control group twice the size
            of each treatment group. Only the ratios matter (``(2, 1, 1)`` and
            ``(4, 2, 2)`` agree).
        max_n : int
            Largest ``m`` searched (group size, or size of the smallest group).

        Returns
        -------
        GroupSize
            With the sizes and power at ``m`` and at ``m - 1``.

        Raises
        ------
        DataError
            ``target`` outside ``(alpha, 1)``; an effect of zero (power stays at
            ``alpha``) or of the wrong sign for a one-sided test; target not reached
            by ``max_n``; a bad ``max_n``; an allocation with a level missing, a
            name that is not a level, the wrong length, or a ratio that is not a
            positive finite number; unequal ratios for a plan from Cohen's f.

        Notes
        -----
        The search doubles ``m`` until the target is met and then bisects, so the
        ``m`` returned always has power at least ``target`` at ``m`` and below it
        at ``m - 1``. It is the smallest such ``m`` whenever power is non-decreasing
        in ``m``: with equal sizes or whole-number ratios ``r_i / min(r)`` (the sizes
        are then exactly proportional to ``m``, and so is ``lambda``), and for
        contrasts and comparisons against separate means with any ratios
        (``|delta|``, ``lambda`` and the error df never fall when a group grows).
        For a comparison whose larger model pools levels, ``lambda`` depends on
        the shares within pooled blocks, and rounding can make power dip slightly
        from one ``m`` to the next; there every smaller ``m`` is scanned too (up
        to 20 000), so the answer is still the smallest reaching the target.

        Plans from Cohen's f (:func:`plan_effect_size`) refuse unequal ratios:
        ``f`` weights each mean by its share ``n_i / N``, so a given ``f`` is tied
        to the shares it was worked out for and says nothing about how power
        changes with them. Plan such a study from means and sigma instead.
        Equal ratios are accepted there and give the equal-size answer.
        """
        return solve_group_size(self, target, allocation, max_n)

    def curve(self, n_values: Iterable[int]) -> PowerCurve:
        """Power at each equal group size in ``n_values``.

        Returns
        -------
        PowerCurve
        """
        values = list(n_values)
        if not values:
            raise DataError("the power curve needs at least one group size")
        return PowerCurve(self.test, self.alpha, tuple(self.power(as_count(v)) for v in values))


def plan_comparison(
    means: Mapping[Any, float] | Sequence[float] | np.ndarray,
    sigma: float,
    *,
    smaller: str | Partition | None = None,
    larger: str | Partition | None = None,
    levels: Sequence[str] | None = None,
    alpha: float = 0.05,
) -> PowerPlan:
    """Plan the F test of a nested comparison of two group models.

    Parameters
    ----------
    means : mapping or sequence
        Assumed mean of each level (``{level: mean}``, or a sequence with
        ``levels`` naming them; default names ``"1"``, ``"2"``, ...).
    sigma : float
        Assumed error standard deviation (the same in every level).
    smaller, larger : str or Partition, optional
        Partition specs such as ``"H4 | ..."``; defaults: equal means (one block)
        and separate means. ``smaller`` must be nested in ``larger``.
    levels : sequence of str, optional
        Level names for a sequence of means.
    alpha : float
        Level of the test.

    Returns
    -------
    PowerPlan

    Raises
    ------
    DataError, FactorError, ParseError, NotNestedError
        Bad means, sigma or alpha; bad partition specs; partitions not nested.

    Examples
    --------
    >>> from nestfit.power import plan_comparison
    >>> plan = plan_comparison([500.0, 500.0, 500.8], sigma=1.2)
    >>> plan.group_size(0.8).n
    34
    """
    names, mu = read_means(means, levels)
    sigma = read_sigma(sigma)
    small = read_partition(smaller, names, Partition.equal(names))
    large = read_partition(larger, names, Partition.separate(names))
    if not small.is_nested_in(large):
        raise NotNestedError(
            f"the model {small.to_spec()!r} is not nested in {large.to_spec()!r}: every block of "
            "the larger model must lie inside a block of the smaller one"
        )
    if small.n_blocks == large.n_blocks:
        raise NotNestedError(
            f"the models {small.to_spec()!r} and {large.to_spec()!r} are the same: nothing to test"
        )
    return PowerPlan("comparison", names, check_alpha(alpha), mu, sigma, small, large)


def plan_contrast(
    means: Mapping[Any, float] | Sequence[float] | np.ndarray,
    weights: Mapping[Any, float] | Sequence[float] | np.ndarray,
    sigma: float,
    *,
    levels: Sequence[str] | None = None,
    alpha: float = 0.05,
    alternative: Alternative = "two-sided",
) -> PowerPlan:
    """Plan the t test of one contrast of level means.

    Parameters
    ----------
    means : mapping or sequence
        Assumed level means (as :func:`plan_comparison`).
    weights : mapping or sequence
        Contrast weights over the levels (summing to zero).
    sigma : float
        Assumed error standard deviation.
    levels : sequence of str, optional
        Level names for sequences.
    alpha : float
        Level of the test (not adjusted for multiplicity).
    alternative : {"two-sided", "greater", "less"}
        Rejection region.

    Returns
    -------
    PowerPlan
    """
    names, mu = read_means(means, levels)
    c = level_weights(weights, names, zero_sum=True)
    if alternative not in ("two-sided", "greater", "less"):
        raise DataError(
            f"alternative must be 'two-sided', 'greater' or 'less'. Got {alternative!r} instead."
        )
    return PowerPlan("contrast", names, check_alpha(alpha), mu, read_sigma(sigma), weights=c,
                     alternative=alternative)


def plan_effect_size(f: float, groups: int, *, alpha: float = 0.05) -> PowerPlan:
    """Plan the one-way F test from Cohen's effect size ``f``.

    Parameters
    ----------
    f : float
        ``f = sigma_means / sigma`` with ``sigma_means^2 = sum (n_i / N)(mu_i - mu_bar)^2``
        (Cohen 1988, sec. 8.2); ``f >= 0``.
    groups : int
        Number of levels ``k >= 2``.
    alpha : float
        Level of the test.

    Returns
    -------
    PowerPlan
        ``lambda = f^2 N`` on ``(k - 1, N - k)`` df. Its ``group_size`` refuses unequal
        ``allocation`` ratios (``f`` is tied to the shares it was worked out for).
    """
    if not (is_real(f) and math.isfinite(f) and f >= 0):
        raise DataError(f"Cohen's f must be a finite number >= 0. Got {f!r}.")
    if not (is_count(groups) and groups >= 2):
        raise DataError(f"groups must be a whole number of levels, at least 2. Got {groups!r}.")
    names = tuple(str(j + 1) for j in range(int(groups)))
    return PowerPlan("effect size", names, check_alpha(alpha), effect_f=float(f))
