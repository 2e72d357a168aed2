"""Sets of levels whose means were not declared different, from all-pairs decisions.

Draw a graph on the levels with an edge between two levels when their
difference was *not* rejected. A set of levels none of which was declared
different from another is a clique of that graph; the summary lists the
maximal cliques (Bron & Kerbosch 1973, Comm. ACM 16, 575-577, with
pivoting; from memory), each with its levels in order of estimated mean,
the sets ordered by their lowest mean. "Not declared different" is not
transitive, so a level can be in several sets, and no set shows that its
means are equal.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from nestfit.contrasts._result import check_alpha
from nestfit.errors import ContrastError

if TYPE_CHECKING:
    from nestfit.contrasts._result import FamilyResult

__all__ = ["Grouping", "group_levels"]


@dataclass(frozen=True)
class Grouping:
    """Maximal sets of levels not declared different from each other.

    Attributes
    ----------
    levels : tuple of str
        The levels compared, in order of estimated mean (lowest first).
    means : tuple of float
        Their estimated means, same order.
    sets : tuple of tuple of str
        The maximal sets; levels within a set were not declared different.
    alpha : float
        Level of the decisions.
    method : str
        The adjustment behind the decisions.
    """

    levels: tuple[str, ...]
    means: tuple[float, ...]
    sets: tuple[tuple[str, ...], ...]
    alpha: float
    method: str

    @property
    def text(self) -> str:
        """The sets in compact form, e.g. ``{H1 H2 H3} {H3 H5} {H4}``."""
        return " ".join("{" + " ".join(s) + "}" for s in self.sets)

    def sentence(self) -> str:
        """A sentence saying how to read :attr:`text`."""
        if len(self.sets) == 1:
            return (f"No two levels were declared different ({self.method}, alpha {self.alpha:g}):"
                    f" {self.text}. This does not show that the means are equal.")
        return (f"Levels in the same set were not declared different from one another "
                f"({self.method}, alpha {self.alpha:g}); two levels that share no set were. "
                f"Sets: {self.text}. A level can be in more than one set, because 'not declared "
                "different' is not transitive; no set shows that its means are equal.")

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict form."""
        return {"alpha": self.alpha, "method": self.method, "sets": [list(s) for s in self.sets],
                "means": dict(zip(self.levels, self.means))}

    def __str__(self) -> str:
        return self.sentence()


def _maximal_cliques(adjacent: list[set[int]]) -> list[set[int]]:
    out: list[set[int]] = []

    def extend(clique: set[int], candidates: set[int], excluded: set[int]) -> None:
        if not candidates and not excluded:
            out.append(clique)
            return
        pivot = max(candidates | excluded, key=lambda v: len(adjacent[v] & candidates))
        for v in list(candidates - adjacent[pivot]):
            extend(clique | {v}, candidates & adjacent[v], excluded & adjacent[v])
            candidates = candidates - {v}
            excluded = excluded | {v}

    extend(set(), set(range(len(adjacent))), set())
    return out


def group_levels(result: FamilyResult, alpha: float | None = None) -> Grouping:
    """The maximal sets of levels not declared different in an all-pairs result.

    Raises
    ------
    ContrastError
        The family is not a complete set of pairwise differences.
    """
    a = result.alpha if alpha is None else check_alpha(alpha)
    levels = result.levels
    index = {lv: i for i, lv in enumerate(levels)}
    decided: dict[frozenset[int], bool] = {}
    for row in result.rows:
        w = dict(row.weights)
        if len(w) != 2 or sorted(w.values()) != [-1.0, 1.0]:
            raise ContrastError(f"a grouping needs pairwise differences only; contrast "
                                f"{row.label!r} is not one (use the all_pairs() family)")
        decided[frozenset(index[lv] for lv in w)] = row.p_adjusted <= a
    involved = sorted({i for pair in decided for i in pair})
    missing = [(levels[i], levels[j]) for n, i in enumerate(involved) for j in involved[n + 1:]
               if frozenset((i, j)) not in decided]
    if missing:
        raise ContrastError(f"a grouping needs every pair of the levels compared; the pair "
                            f"{missing[0][0]} - {missing[0][1]} is missing (use all_pairs())")
    means = np.array([result.level_means[i] for i in involved])
    order = [involved[i] for i in np.argsort(means, kind="stable")]
    position = {v: n for n, v in enumerate(order)}
    adjacent = [{position[j] for j in order if j != i and not decided[frozenset((i, j))]}
                for i in order]
    cliques = [sorted(c) for c in _maximal_cliques(adjacent)]
    cliques.sort(key=lambda c: (c[0], -len(c)))
    sets = tuple(tuple(levels[order[v]] for v in c) for c in cliques)
    return Grouping(tuple(levels[i] for i in order),
                    tuple(float(result.level_means[i]) for i in order), sets, float(a),
                    result.method_name)
