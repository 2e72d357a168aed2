"""``Blocks``: a partition of levels used as a coding, so partition models work in formulas."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any, ClassVar

import numpy as np

from nestfit.design._coding import Coding
from nestfit.design._partition import Partition

__all__ = ["Blocks"]


class Blocks(Coding):
    """Levels in the same block share a coefficient: ``C(head, Blocks("H4 | ..."))``.

    Parameters
    ----------
    spec : str or mapping
        A partition spec (``"A | B C D"``, ``...`` for the remaining levels) or
        a mapping ``{block label: levels}``; see :class:`~nestfit.Partition`.

    Notes
    -----
    Without an intercept the coding matrix is the block indicator ``B``
    (``B[j, b] = 1`` when level ``j`` is in block ``b``), one column per
    block; with an intercept it is ``B`` without its first column, so the
    coefficients are differences from the first block's mean. The model
    claims that levels in a block have equal means; it is nested between
    equal means and separate means.
    """

    label: ClassVar[str] = "blocks"

    def __init__(self, spec: str | Mapping[str, Any]) -> None:
        self.spec = spec

    def __repr__(self) -> str:
        return f"Blocks({self.spec!r})"

    def partition(self, levels: tuple[str, ...]) -> Partition:
        """The partition this coding expresses over ``levels``."""
        if isinstance(self.spec, str):
            return Partition.parse(self.spec, levels)
        return Partition.from_mapping(self.spec, levels)

    def _full_rank(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        part = self.partition(levels)
        return np.eye(part.n_blocks)[part.block_of], list(part.block_labels)

    def _contrasts(self, levels: tuple[str, ...]) -> tuple[np.ndarray, list[str]]:
        full, labels = self._full_rank(levels)
        return full[:, 1:], labels[1:]
