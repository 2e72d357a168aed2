"""Checked inputs of power plans: means, sigma, partitions, group sizes."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from nestfit.checks._result import is_real
from nestfit.design._partition import Partition
from nestfit.errors import DataError

__all__ = ["allocated_sizes", "as_count", "block_means", "is_count", "model_name",
           "read_allocation", "read_means", "read_partition", "read_sigma", "whole"]

#: Relative tolerance within which ``m * r_i / min(r)`` counts as a whole number.
ROUNDING_TOLERANCE = 1e-9


def read_means(means: Any, levels: Sequence[str] | None) -> tuple[tuple[str, ...], np.ndarray]:
    """Level names and means from ``{level: mean}`` or a sequence (names ``"1"``, ``"2"``...)."""
    names: tuple[str, ...] | None
    if isinstance(means, Mapping):
        if levels is not None:
            raise DataError("give level names either as the keys of means or as levels=, not both")
        names = tuple(str(k) for k in means)
        values: Any = list(means.values())
    else:
        values = means
        names = None
    try:
        mu = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise DataError(f"means must be numbers, one per level. Got {means!r}.") from exc
    if mu.ndim != 1 or mu.size < 2:
        raise DataError(f"means must give at least two levels. Got {means!r}.")
    if not np.all(np.isfinite(mu)):
        raise DataError("means must be finite numbers (no NaN or inf)")
    if names is None:
        names = (tuple(str(x) for x in levels) if levels is not None
                 else tuple(str(j + 1) for j in range(mu.size)))
    if len(names) != mu.size:
        raise DataError(f"{len(names)} level names for {mu.size} means")
    if len(set(names)) != len(names):
        raise DataError(f"level names must be distinct. Got {list(names)}.")
    mu.flags.writeable = False
    return names, mu


def read_sigma(sigma: Any) -> float:
    """A positive finite error standard deviation."""
    if not (is_real(sigma) and math.isfinite(sigma) and sigma > 0):
        raise DataError(f"sigma must be a positive finite number. Got {sigma!r}.")
    return float(sigma)


def read_partition(spec: str | Partition | None, names: tuple[str, ...],
               default: Partition) -> Partition:
    """A partition of ``names`` from a spec or a Partition (``default`` for None)."""
    if spec is None:
        return default
    if isinstance(spec, Partition):
        if spec.levels != names:
            raise DataError(f"the partition is over levels {list(spec.levels)}, not {list(names)}")
        return spec
    if isinstance(spec, str):
        return Partition.parse(spec, names)
    raise DataError(f"a model must be a partition spec or a Partition. Got {type(spec).__name__}.")


def block_means(values: np.ndarray, sizes: np.ndarray, part: Partition) -> np.ndarray:
    """Each level's ``sizes``-weighted block mean of ``values``."""
    blocks = part.block_of
    totals = np.bincount(blocks, weights=sizes, minlength=part.n_blocks)
    sums = np.bincount(blocks, weights=sizes * values, minlength=part.n_blocks)
    return (sums / totals)[blocks]


def model_name(part: Partition) -> str:
    """"equal means", "separate means" or the spec."""
    if part.n_blocks == 1:
        return "equal means"
    if part.n_blocks == len(part.levels):
        return "separate means"
    return repr(part.to_spec())


def is_count(x: Any) -> bool:
    """A whole number (Python or numpy integer, not bool)."""
    return isinstance(x, (int, np.integer)) and not isinstance(x, bool)


def as_count(v: Any) -> int:
    """A group size from a curve's values (whole numbers only)."""
    if not is_count(v):
        raise DataError(f"group sizes must be whole numbers. Got {v!r}.")
    return int(v)


def read_allocation(allocation: Any, levels: tuple[str, ...]) -> tuple[float, ...]:
    """Allocation ratios in level order, divided by the smallest (which becomes 1).

    ``allocation`` is ``{level: ratio}`` (every level once, keys compared as strings)
    or a sequence of ratios in level order; each ratio positive and finite.

    Raises
    ------
    DataError
        A level without a ratio, a key that is not a level, the wrong number of
        ratios, or a ratio that is not a positive finite number (naming the level).
    """
    listed = ", ".join(levels)
    if isinstance(allocation, Mapping):
        given = {str(key): value for key, value in allocation.items()}
        extra = [key for key in given if key not in levels]
        if extra:
            raise DataError(f"the allocation names {extra[0]!r}, which is not a level "
                            f"(levels: {listed})")
        missing = [lev for lev in levels if lev not in given]
        if missing:
            raise DataError(f"the allocation gives no ratio for level {missing[0]!r}; give one "
                            f"ratio for every level ({listed})")
        values = [given[lev] for lev in levels]
    elif isinstance(allocation, (Sequence, np.ndarray)) and not isinstance(allocation, str):
        values = list(allocation)
        if len(values) != len(levels):
            raise DataError(f"the allocation must give one ratio per level ({len(levels)}: "
                            f"{listed}). Got {len(values)}.")
    else:
        raise DataError("the allocation must be {level: ratio} or one ratio per level in "
                        f"level order ({listed}). Got {allocation!r}.")
    for lev, value in zip(levels, values):
        if not (is_real(value) and math.isfinite(value) and value > 0):
            raise DataError(f"the allocation ratio for level {lev!r} must be a positive finite "
                            f"number. Got {value!r}.")
    smallest = min(float(v) for v in values)
    return tuple(float(v) / smallest for v in values)


def allocated_sizes(m: int, ratios: tuple[float, ...]) -> tuple[int, ...]:
    """Group sizes ``n_i = ceil(m * q_i)`` for ratios ``q_i = r_i / min(r)`` (from
    :func:`read_allocation`), so the smallest group gets exactly ``m``.

    A product within a relative ``ROUNDING_TOLERANCE`` of a whole number counts as
    that number, so that ratios such as ``0.3 : 0.1`` (stored as 2.9999999999999996)
    give exactly ``3 m`` rather than one more or less. Every ``n_i`` is
    non-decreasing in ``m``.
    """
    sizes = [(whole(m * q), m * q) for q in ratios]
    return tuple(n if n is not None else math.ceil(x) for n, x in sizes)


def whole(x: float) -> int | None:
    """``x`` as a whole number when it is one within a relative ``ROUNDING_TOLERANCE``."""
    nearest = round(x)
    return int(nearest) if abs(x - nearest) <= ROUNDING_TOLERANCE * max(1.0, x) else None
