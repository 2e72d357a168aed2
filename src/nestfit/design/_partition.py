"""Partitions of a factor's levels into blocks, and the parser for ``"A | B C D"``.

A partition says which levels share a mean. The equal-means model is the
partition with one block; the separate-means model has one block per level.
Partition ``P`` is *nested in* ``Q`` when every block of ``Q`` lies inside a
block of ``P`` (``Q`` refines ``P``): then the column space of the block
indicators of ``P`` lies inside that of ``Q``, and the two models can be
compared with the extra-sum-of-squares F test.

Spec grammar (our own)::

    spec   := block ("|" block)*
    block  := item ((" " | ",") item)*
    item   := label | '"' text '"' | "'" text "'" | "..."

``...`` stands for every level not named elsewhere, so ``"H4 | ..."`` is
"H4 against the rest".
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from nestfit.errors import FactorError, ParseError

__all__ = ["Partition"]

_REST = object()  # marker for "..." in a parsed spec


@dataclass(frozen=True, eq=False)
class Partition:
    """A grouping of a factor's levels into blocks that share a mean.

    Parameters
    ----------
    levels : tuple of str
        The factor's levels, in order.
    block_of : ndarray of intp, shape (k,)
        ``block_of[j]`` is the block index of level ``j``. Blocks keep the
        order in which they were given; two partitions are equal when they
        group the levels the same way, whatever the block order.
    block_labels : tuple of str
        One label per block (its levels joined by spaces, unless given).

    Examples
    --------
    >>> p = Partition.parse("H4 | ...", levels=["H1", "H2", "H3", "H4"])
    >>> p.blocks
    (('H4',), ('H1', 'H2', 'H3'))
    >>> p.is_nested_in(Partition.separate(["H1", "H2", "H3", "H4"]))
    True
    """

    levels: tuple[str, ...]
    block_of: np.ndarray = field(repr=False)
    block_labels: tuple[str, ...]

    def __post_init__(self) -> None:
        block_of = np.asarray(self.block_of, dtype=np.intp)
        block_of.flags.writeable = False
        object.__setattr__(self, "block_of", block_of)

    # ----------------------------------------------------------- builders
    @classmethod
    def equal(cls, levels: Sequence[str]) -> Partition:
        """One block holding every level: the equal-means model."""
        lv = _check_levels(levels)
        return cls(lv, np.zeros(len(lv), dtype=np.intp), ("all levels",))

    @classmethod
    def separate(cls, levels: Sequence[str]) -> Partition:
        """One block per level: the separate-means (cell-means) model."""
        lv = _check_levels(levels)
        return cls(lv, np.arange(len(lv), dtype=np.intp), lv)

    @classmethod
    def from_blocks(
        cls,
        blocks: Sequence[Sequence[str]],
        levels: Sequence[str],
        *,
        labels: Sequence[str] | None = None,
    ) -> Partition:
        """Build from explicit blocks; each level must appear in exactly one block.

        Raises
        ------
        FactorError
            Naming an unknown level, a level used twice, a level left out, or
            an empty block.
        """
        lv = _check_levels(levels)
        index = {lab: j for j, lab in enumerate(lv)}
        block_of = np.full(len(lv), -1, dtype=np.intp)
        for b, block in enumerate(blocks):
            if len(block) == 0:
                raise FactorError(f"block {b + 1} of the partition is empty")
            for lab in block:
                j = index.get(str(lab))
                if j is None:
                    raise FactorError(
                        f"the partition names level {lab!r}, which is not a level of the "
                        f"factor; its levels are {list(lv)}"
                    )
                if block_of[j] >= 0:
                    raise FactorError(f"level {lab!r} appears in more than one block")
                block_of[j] = b
        missing = [lv[j] for j in np.flatnonzero(block_of < 0)]
        if missing:
            raise FactorError(
                f"level(s) {missing} are in no block; add them to a block or use '...' "
                "for 'all remaining levels'"
            )
        names = [" ".join(str(x) for x in block) for block in blocks]
        if labels is not None:
            if len(labels) != len(blocks):
                raise FactorError(f"{len(labels)} block labels given for {len(blocks)} blocks")
            names = [str(x) for x in labels]
        return cls(lv, block_of, tuple(names))

    @classmethod
    def from_mapping(cls, mapping: Mapping[str, Iterable[str]], levels: Sequence[str]) -> Partition:
        """Build from ``{block label: levels}``, e.g. ``{"serviced": ["H4"], "rest": [...]}``."""
        blocks = [[str(x) for x in ([v] if isinstance(v, str) else list(v))]
                  for v in mapping.values()]
        return cls.from_blocks(blocks, levels, labels=[str(k) for k in mapping])

    @classmethod
    def parse(cls, spec: str, levels: Sequence[str]) -> Partition:
        """Parse a spec such as ``"A | B C D"``, ``"A, B | C"`` or ``'"lot 1" | ...'``.

        Raises
        ------
        ParseError
            For malformed text, pointing at the position.
        FactorError
            For unknown, repeated or missing levels.
        """
        lv = _check_levels(levels)
        parsed = _parse_spec(spec)
        rest_blocks = [b for b, block in enumerate(parsed) if any(i is _REST for i in block)]
        if len(rest_blocks) > 1:
            raise ParseError("'...' may appear in one block only", spec, spec.rfind("..."))
        named = {str(i) for block in parsed for i in block if i is not _REST}
        blocks: list[list[str]] = []
        for block in parsed:
            items: list[str] = []
            for item in block:
                if item is _REST:
                    items.extend(lab for lab in lv if lab not in named)
                else:
                    items.append(str(item))
            if not items:
                raise FactorError(f"'...' in {spec!r} stands for no level: every level is named")
            blocks.append(items)
        return cls.from_blocks(blocks, lv)

    # ------------------------------------------------------------ queries
    @property
    def n_blocks(self) -> int:
        """Number of blocks (the number of distinct means the model allows)."""
        return len(self.block_labels)

    @property
    def blocks(self) -> tuple[tuple[str, ...], ...]:
        """The levels of each block, in block order."""
        return tuple(
            tuple(self.levels[j] for j in np.flatnonzero(self.block_of == b))
            for b in range(self.n_blocks)
        )

    def is_nested_in(self, other: Partition) -> bool:
        """True when every block of ``other`` lies inside one block of ``self``.

        Then the model "means equal within each block of self" is a special
        case of the model for ``other`` (its column space is contained in
        the other's).
        """
        if self.levels != other.levels:
            return False
        first_block: dict[int, int] = {}
        for mine, theirs in zip(self.block_of.tolist(), other.block_of.tolist()):
            if first_block.setdefault(theirs, mine) != mine:
                return False
        return True

    def to_spec(self) -> str:
        """The partition written in spec syntax (labels quoted when needed)."""
        return " | ".join(" ".join(_quote(lab) for lab in block) for block in self.blocks)

    def describe(self) -> str:
        """A sentence saying what the model claims."""
        if self.n_blocks == 1:
            return "all levels share one mean"
        if self.n_blocks == len(self.levels):
            return "every level has its own mean"
        parts = [
            "{" + ", ".join(block) + "}" for block in self.blocks
        ]
        return "levels share a mean within each block: " + " ".join(parts)

    def _grouping(self) -> tuple[int, ...]:
        """Block indices renumbered by first appearance: equal for equal groupings."""
        order: dict[int, int] = {}
        return tuple(order.setdefault(b, len(order)) for b in self.block_of.tolist())

    def __eq__(self, other: object) -> bool:
        return (
            isinstance(other, Partition)
            and self.levels == other.levels
            and self._grouping() == other._grouping()
        )

    def __hash__(self) -> int:
        return hash((self.levels, self._grouping()))

    def __repr__(self) -> str:
        return f"Partition({self.to_spec()!r})"


def _check_levels(levels: Sequence[str]) -> tuple[str, ...]:
    lv = tuple(str(x) for x in levels)
    if len(lv) == 0:
        raise FactorError("a partition needs at least one level")
    if len(set(lv)) != len(lv):
        dup = sorted({x for x in lv if lv.count(x) > 1})
        raise FactorError(f"level(s) {dup} are listed more than once")
    return lv


def _quote(label: str) -> str:
    if label and not any(c in label for c in " ,|\"'") and label != "...":
        return label
    return '"' + label + '"' if '"' not in label else "'" + label + "'"


def _parse_spec(spec: str) -> list[list[object]]:
    """Tokenise ``spec`` into blocks of items; ``_REST`` marks ``...``."""
    if not isinstance(spec, str):
        raise ParseError(f"a partition spec must be text, got {type(spec).__name__}")
    if not spec.strip():
        raise ParseError("the partition spec is empty; write blocks such as 'A | B C'", spec, 0)
    blocks: list[list[object]] = [[]]
    i, n = 0, len(spec)
    while i < n:
        c = spec[i]
        if c in " \t,":
            i += 1
        elif c == "|":
            if not blocks[-1]:
                raise ParseError("empty block before '|'", spec, i)
            blocks.append([])
            i += 1
        elif c in "\"'":
            end = spec.find(c, i + 1)
            if end < 0:
                raise ParseError("unclosed quote", spec, i)
            if end == i + 1:
                raise ParseError("empty quoted label", spec, i)
            blocks[-1].append(spec[i + 1 : end])
            i = end + 1
        elif spec.startswith("...", i):
            blocks[-1].append(_REST)
            i += 3
        else:
            j = i
            while j < n and spec[j] not in " \t,|\"'":
                j += 1
            blocks[-1].append(spec[i:j])
            i = j
    if not blocks[-1]:
        raise ParseError("empty block after '|'", spec, len(spec.rstrip()) - 1)
    return blocks
