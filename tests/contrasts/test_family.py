"""Families: built-in families, the joint F test, orthogonality and the SS split."""

from __future__ import annotations

import numpy as np
import pytest

import nestfit
from nestfit import contrasts as nc
from nestfit.design import Polynomial
from nestfit.errors import ContrastError, FactorError
from tests.contrasts._helpers import random_groups, separate

LEVELS = ("A", "B", "C", "D")


def weights(fam: nc.ContrastFamily, levels: tuple[str, ...] = LEVELS) -> np.ndarray:
    return np.vstack([c.weights_for(levels) for c in fam.resolve(levels)])


def test_builtin_families() -> None:
    pairs = nc.all_pairs().resolve(LEVELS)
    assert [c.label for c in pairs] == ["A - B", "A - C", "A - D", "B - C", "B - D", "C - D"]
    np.testing.assert_array_equal(weights(nc.versus_control("B")),
                                  [[1, -1, 0, 0], [0, -1, 1, 0], [0, -1, 0, 1]])
    np.testing.assert_allclose(weights(nc.versus_rest())[1], [-1 / 3, 1, -1 / 3, -1 / 3])
    np.testing.assert_array_equal(weights(nc.consecutive()),
                                  [[-1, 1, 0, 0], [0, -1, 1, 0], [0, 0, -1, 1]])
    poly = Polynomial(spacing=[0, 1, 2, 4]).matrix(LEVELS, full_rank=False)
    np.testing.assert_allclose(weights(nc.trends(spacing=[0, 1, 2, 4])), np.asarray(poly.matrix).T)
    assert [c.label for c in nc.trends(degree=2).resolve(LEVELS)] == ["linear", "quadratic"]
    # Polynomial's own table (k = 4, equal spacing): linear (-3, -1, 1, 3) / sqrt(20).
    np.testing.assert_allclose(weights(nc.trends())[0], np.array([-3, -1, 1, 3]) / np.sqrt(20))
    with pytest.raises(FactorError, match="control level 'Z' is not a level"):
        nc.versus_control("Z").resolve(LEVELS)
    with pytest.raises(ContrastError, match="spacing has 3 values but the factor has 4"):
        nc.trends(spacing=[0, 1, 2]).resolve(LEVELS)
    with pytest.raises(ContrastError, match="strictly increasing"):
        nc.trends(spacing=[0, 2, 1, 3])
    with pytest.raises(ContrastError, match="'x' appear twice in the family"):
        nc.family("x = A - B", "x = C - D")
    with pytest.raises(ContrastError, match="at least one contrast"):
        nc.family()


@pytest.mark.parametrize("seed", range(3))
def test_joint_test_of_all_pairs_is_the_oneway_f(seed: int) -> None:
    """All pairs span every contrast (rank k - 1): restricting them all gives equal means,
    so the joint F is the one-way F (scipy.stats.f_oneway as reference)."""
    from scipy import stats

    data = random_groups(seed, [4, 7, 5, 9, 6])
    models = nestfit.groups(data, "y", "g")
    fam = nc.cell_means(models.separate_means()).family(nc.all_pairs())
    assert fam.rank == 4 and len(fam) == 10
    step = fam.joint_test().steps[0]
    oneway = models.oneway().steps[0]
    assert step.df == 4
    assert step.f == pytest.approx(oneway.f, rel=1e-10)
    ref = stats.f_oneway(*[data.y[data.g == lv] for lv in sorted(set(data.g))])
    assert step.f == pytest.approx(ref.statistic, rel=1e-10)
    assert step.p == pytest.approx(ref.pvalue, rel=1e-8)


def test_joint_test_of_a_planned_pair() -> None:
    """Two contrasts: the joint F equals the nested comparison with the partition model that
    the two constraints describe (L0 = L1 and L2 = L3)."""
    data = random_groups(4, [5, 6, 7, 8])
    models = nestfit.groups(data, "y", "g")
    fam = nc.cell_means(models.separate_means()).family(["L0 - L1", "L2 - L3"])
    step = fam.joint_test().steps[0]
    ref = nestfit.compare(models.blocks("L0 L1 | L2 L3"), models.separate_means()).steps[0]
    assert step.df == 2
    assert step.f == pytest.approx(ref.f, rel=1e-10)
    assert step.ss == pytest.approx(ref.ss, rel=1e-10)


def test_orthogonal_split_balanced_trends() -> None:
    """Balanced groups: the k - 1 polynomial contrasts are orthogonal and their single-df SS
    add up to the between-groups SS of the one-way layout."""
    data = random_groups(2, [6, 6, 6, 6, 6], spread=2.0)
    models = nestfit.groups(data, "y", "g")
    fam = nc.cell_means(models.separate_means()).family(nc.trends())
    assert fam.is_orthogonal()
    split = fam.ss_split()
    between = models.oneway().steps[0].ss
    assert split["ss"].sum() == pytest.approx(between, rel=1e-12)
    assert split["share"].sum() == pytest.approx(1.0, rel=1e-12)
    assert split["ss"].sum() == pytest.approx(fam.joint_test().steps[0].ss, rel=1e-10)


def test_orthogonal_split_unbalanced() -> None:
    """Unbalanced groups: 'level j against the count-weighted mean of the levels before it'
    is orthogonal under the sizes (sum w v / n = 0) and splits the between SS exactly;
    the equally weighted trends are not orthogonal there, and the split is refused."""
    sizes = [3, 8, 5, 11, 4]
    data = random_groups(6, sizes, spread=1.5)
    models = nestfit.groups(data, "y", "g")
    means = nc.cell_means(models.separate_means())
    levels = means.levels
    rows = []
    for j in range(1, len(sizes)):
        w = {levels[i]: sizes[i] / sum(sizes[:j]) for i in range(j)}
        w[levels[j]] = -1.0
        rows.append(nc.contrast(w, label=f"{levels[j]} vs before"))
    fam = means.family(rows)
    assert fam.is_orthogonal()
    ortho = fam.orthogonality().to_numpy()
    assert np.abs(ortho - np.diag(np.diag(ortho))).max() < 1e-12
    assert fam.ss_split()["ss"].sum() == pytest.approx(models.oneway().steps[0].ss, rel=1e-12)
    trends = means.family(nc.trends())
    assert not trends.is_orthogonal()
    with pytest.raises(ContrastError, match="are not orthogonal under these group sizes"):
        trends.ss_split()


def test_orthogonality_matrix_is_sum_w_v_over_n() -> None:
    sizes = [4, 9, 6]
    means = nc.cell_means(separate(random_groups(8, sizes)))
    fam = means.family(["L0 - L1", "L0 - L2"])
    expected = 1.0 / sizes[0]  # (1)(1)/n0 + (-1)(0)/n1 + (0)(-1)/n2
    assert fam.orthogonality().iloc[0, 1] == pytest.approx(expected, rel=1e-12)
    assert fam.orthogonality().iloc[0, 0] == pytest.approx(1 / 4 + 1 / 9, rel=1e-12)


def test_family_from_strings_and_errors() -> None:
    means = nc.cell_means(separate(random_groups(3, [5, 5, 5])))
    fam = means.family(["a = L0 - L1", "L1 - L2"], name="planned")
    assert fam.name == "planned" and fam.labels == ("a", "L1 - L2")
    assert fam.to_frame().shape == (2, 6)
    with pytest.raises(ContrastError, match="'dup' appear twice"):
        means.family(["dup = L0 - L1", "dup = L1 - L2"])
    with pytest.raises(ContrastError, match="a family is a ContrastFamily or a sequence"):
        means.family(3)  # type: ignore[arg-type]
    with pytest.raises(ContrastError, match="unknown adjustment method 'fast'"):
        fam.adjust("fast")
    with pytest.raises(ContrastError, match="span must be 'family' or 'all'"):
        fam.adjust("scheffe", span="some")
