"""Factors: categorical columns with labelled levels in a fixed order."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from nestfit.errors import FactorError

__all__ = ["Factor"]

# Integer factors whose values lie in [0, n * _DENSE_RANGE_FACTOR) are coded with
# a bincount presence table (O(n)) instead of a sort or hash. Common practice, no source.
_DENSE_RANGE_FACTOR = 4


@dataclass(frozen=True, eq=False)
class Factor:
    """A categorical column: level labels in a fixed order, integer codes and counts.

    Parameters
    ----------
    name : str
        Column name, used to label design columns (``name[level]``).
    levels : tuple of str
        Level labels in model order. Labels keep the user's spelling.
    codes : ndarray of intp, shape (n,)
        ``codes[i]`` is the index into ``levels`` of observation ``i``.

    Notes
    -----
    Build factors with :meth:`Factor.from_values`; the constructor checks
    only shapes. Level order is the order of a pandas ``Categorical``, the
    numeric order for numbers, and the order of first appearance sorted as
    text otherwise, unless ``levels`` is given.
    """

    name: str
    levels: tuple[str, ...]
    codes: np.ndarray = field(repr=False)
    _counts: np.ndarray | None = field(default=None, repr=False, compare=False)

    def __post_init__(self) -> None:
        codes = np.asarray(self.codes)
        if codes.ndim != 1:
            raise FactorError(f"factor {self.name!r}: codes must be one-dimensional")
        # A read-only view: the caller's array keeps its own flags.
        codes = codes.astype(np.intp, copy=False).view()
        codes.flags.writeable = False
        object.__setattr__(self, "codes", codes)
        if self._counts is not None:
            counts = np.asarray(self._counts, dtype=np.intp)
            if counts.shape != (len(self.levels),):
                raise FactorError(f"factor {self.name!r}: one count per level is needed")
            counts.flags.writeable = False
            object.__setattr__(self, "_counts", counts)

    # ------------------------------------------------------------------ build
    @classmethod
    def from_values(
        cls,
        values: Any,
        *,
        name: str = "group",
        levels: Sequence[Any] | None = None,
    ) -> Factor:
        """Build a factor from an array, list, pandas Series or Categorical.

        Parameters
        ----------
        values : array_like
            One label per observation. Missing labels are not allowed here;
            drop them first (see :func:`nestfit.groups`).
        name : str
            Factor name.
        levels : sequence, optional
            Level order to use. Every observed value must be one of them;
            levels that never occur are an error (an empty group has no mean).

        Raises
        ------
        FactorError
            On an empty factor, missing labels, unknown or unobserved levels.
        """
        if isinstance(values, pd.Series) and isinstance(values.dtype, pd.CategoricalDtype):
            values = values.array
        if isinstance(values, pd.Categorical) and levels is None:
            small = np.asarray(values.codes)  # int8/int16/...: cheaper to scan than intp
            if small.size and small.min() < 0:
                raise FactorError(
                    f"factor {name!r} has missing labels; drop those rows or give them a level"
                )
            labels = [str(c) for c in values.categories]
            return cls._finish(name, labels, small.astype(np.intp), drop_unused=True)
        arr = np.asarray(values)
        if arr.ndim != 1:
            raise FactorError(f"factor {name!r} must be one-dimensional, got shape {arr.shape}")
        if arr.size == 0:
            raise FactorError(f"factor {name!r} is empty: it has no observations")
        if levels is not None:
            return cls._from_given_levels(name, arr, levels)
        if arr.dtype.kind in "iu":
            return cls._from_integers(name, arr)
        if arr.dtype.kind == "f":
            if not np.all(np.isfinite(arr)):
                raise FactorError(f"factor {name!r} has NaN or infinite labels; drop those rows")
            uniq, codes = np.unique(arr, return_inverse=True)
            labels = [_number_label(v) for v in uniq]
            return cls._finish(name, labels, codes)
        series = pd.Series(arr, dtype=object)
        if series.isna().any():
            raise FactorError(
                f"factor {name!r} has missing labels; drop those rows or give them a level"
            )
        codes, uniq = pd.factorize(series.astype(str), sort=True)
        return cls._finish(name, [str(u) for u in uniq], codes)

    @classmethod
    def _from_integers(cls, name: str, arr: np.ndarray) -> Factor:
        lo, hi = int(arr.min()), int(arr.max())
        if lo >= 0 and hi < max(arr.size * _DENSE_RANGE_FACTOR, 1024):
            tally = np.bincount(arr.astype(np.intp, copy=False), minlength=hi + 1)
            present = tally > 0
            values = np.flatnonzero(present)
            if values.size == hi + 1:  # codes are the values themselves; tally is the counts
                return cls._finish(name, [str(v) for v in values],
                                   arr.astype(np.intp, copy=False), counts=tally)
            lookup = np.cumsum(present) - 1
            return cls._finish(name, [str(v) for v in values], lookup[arr],
                               counts=tally[values])
        uniq, codes = np.unique(arr, return_inverse=True)
        return cls._finish(name, [str(v) for v in uniq], codes)

    @classmethod
    def _from_given_levels(cls, name: str, arr: np.ndarray, levels: Sequence[Any]) -> Factor:
        labels = [str(v) for v in levels]
        position = {lab: i for i, lab in enumerate(labels)}
        if len(position) != len(labels):
            dup = sorted({lab for lab in labels if labels.count(lab) > 1})
            raise FactorError(f"factor {name!r}: level(s) {dup} are listed more than once")
        text = pd.Series(arr, dtype=object)
        if text.isna().any():
            raise FactorError(
                f"factor {name!r} has missing labels; drop those rows or give them a level"
            )
        text = text.map(_label_of)
        codes = text.map(position)
        if codes.isna().any():
            unknown = sorted(set(text[codes.isna()]))
            raise FactorError(
                f"factor {name!r} has value(s) {unknown[:5]} that are not among the given "
                f"levels {labels}; add them to the levels or drop those rows"
            )
        return cls._finish(name, labels, codes.to_numpy(dtype=np.intp))

    @classmethod
    def _finish(
        cls, name: str, labels: list[str], codes: np.ndarray, *, drop_unused: bool = False,
        counts: np.ndarray | None = None,
    ) -> Factor:
        factor = cls(name=name, levels=tuple(labels), codes=np.asarray(codes, dtype=np.intp),
                     _counts=counts)
        counts = factor.counts
        if np.any(counts == 0):
            if drop_unused:
                keep = np.flatnonzero(counts > 0)
                remap = np.full(len(labels), -1, dtype=np.intp)
                remap[keep] = np.arange(keep.size)
                return cls._finish(name, [labels[i] for i in keep], remap[factor.codes])
            empty = [labels[i] for i in np.flatnonzero(counts == 0)]
            raise FactorError(
                f"factor {name!r}: level(s) {empty} have no observations; "
                "remove them from the level list"
            )
        return factor

    # -------------------------------------------------------------- queries
    @property
    def n_levels(self) -> int:
        """Number of levels ``k``."""
        return len(self.levels)

    @property
    def n_obs(self) -> int:
        """Number of observations ``n``."""
        return int(self.codes.size)

    @property
    def counts(self) -> np.ndarray:
        """Observations per level, in level order (``n_g``; counted once, read-only)."""
        if self._counts is None:
            counts = np.bincount(self.codes, minlength=self.n_levels)
            counts.flags.writeable = False
            object.__setattr__(self, "_counts", counts)
        assert self._counts is not None
        return self._counts

    def index_of(self, level: Any) -> int:
        """Position of a level label; :class:`FactorError` naming the known levels if absent."""
        label = str(level)
        try:
            return self.levels.index(label)
        except ValueError:
            raise FactorError(
                f"factor {self.name!r} has no level {label!r}; its levels are {list(self.levels)}"
            ) from None

    def take(self, rows: np.ndarray) -> Factor:
        """The factor restricted to ``rows`` (indices or a boolean mask); unused levels drop."""
        return Factor._finish(self.name, list(self.levels), self.codes[rows], drop_unused=True)

    def __repr__(self) -> str:
        shown = ", ".join(self.levels[:8]) + (", ..." if self.n_levels > 8 else "")
        return f"Factor({self.name!r}, {self.n_levels} levels [{shown}], n={self.n_obs})"


def _number_label(v: float) -> str:
    return str(int(v)) if float(v).is_integer() else repr(float(v))


def _label_of(v: Any) -> str:
    if isinstance(v, (float, np.floating)) and float(v).is_integer():
        return str(int(v))
    return str(v)
