"""Checked inputs of power plans: means, sigma, partitions, group sizes."""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from nestfit.checks._result import is_real
from nestfit.design._partition import Partition
from nestfit.errors import DataError

__all__ = ["as_count", "block_means", "is_count", "model_name", "read_means", "read_partition",
           "read_sigma"]


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
