"""The grouping summary of all-pairs decisions: maximal sets of levels not declared different."""

from __future__ import annotations

import itertools

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nestfit import contrasts as nc
from nestfit.errors import ContrastError
from tests.contrasts._helpers import random_groups, separate


def _data(means: dict[str, float], n: int, noise: float) -> pd.DataFrame:
    """Invented data whose level means are exactly ``means``: each level gets the same
    deviations, scaled to standard deviation ``noise`` and summing to zero."""
    dev = np.linspace(-1.0, 1.0, n)
    dev = noise * dev / dev.std(ddof=1)
    rows = [(mu + d, lv) for lv, mu in means.items() for d in dev]
    return pd.DataFrame(rows, columns=["y", "g"])


def test_separated_clusters() -> None:
    """Invented data with three well-separated clusters of means give three sets."""
    data = _data({"A": 0.0, "B": 0.05, "C": 5.0, "D": 5.05, "E": 10.0}, 10, 0.3)
    result = nc.cell_means(separate(data)).family(nc.all_pairs()).adjust("tukey")
    g = result.grouping()
    assert g.sets == (("A", "B"), ("C", "D"), ("E",))
    assert g.text == "{A B} {C D} {E}"
    assert "not declared different" in g.sentence() and "not transitive" in g.sentence()
    assert g.to_dict()["sets"] == [["A", "B"], ["C", "D"], ["E"]]


def test_overlapping_sets() -> None:
    """A, B, C one step apart: neighbours not declared different, the ends are."""
    data = _data({"A": 0.0, "B": 1.0, "C": 2.0}, 30, 2.1)  # SE of a difference 0.54
    result = nc.cell_means(separate(data)).family(nc.all_pairs()).adjust("bonferroni")
    rejected = dict(zip(result.labels, result.rejected()))
    assert rejected == {"A - B": False, "A - C": True, "B - C": False}
    assert result.grouping().sets == (("A", "B"), ("B", "C"))
    assert result.grouping(alpha=1e-12).sets == (("A", "B", "C"),)
    assert "No two levels were declared different" in result.grouping(alpha=1e-12).sentence()


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 10_000), st.floats(0.001, 0.9))
def test_sets_are_the_maximal_cliques(seed: int, alpha: float) -> None:
    """Every set is a clique of 'not declared different', no set can be enlarged, and every
    non-rejected pair lies in some set (checked by brute force over all subsets)."""
    data = random_groups(seed, [4, 5, 6, 4, 5, 6], spread=1.5)
    result = nc.cell_means(separate(data)).family(nc.all_pairs()).adjust("holm")
    g = result.grouping(alpha)
    same = {frozenset(r.label.split(" - ")): not rej
            for r, rej in zip(result.rows, result.rejected(alpha))}
    levels = result.levels

    def clique(s: tuple[str, ...]) -> bool:
        return all(same[frozenset(p)] for p in itertools.combinations(s, 2))

    brute = {frozenset(s) for r in range(1, len(levels) + 1)
             for s in itertools.combinations(levels, r) if clique(s)}
    maximal = {s for s in brute if not any(s < t for t in brute)}
    assert {frozenset(s) for s in g.sets} == maximal
    means = dict(zip(g.levels, g.means))
    for s in g.sets:
        assert [means[lv] for lv in s] == sorted(means[lv] for lv in s)


def test_grouping_refused_for_other_families() -> None:
    means = nc.cell_means(separate(random_groups(1, [5, 6, 7])))
    with pytest.raises(ContrastError, match="needs pairwise differences only"):
        means.family(nc.trends()).adjust("holm").grouping()
    with pytest.raises(ContrastError, match="the pair L1 - L2 is missing"):
        means.family(nc.versus_control("L0")).adjust("holm").grouping()
