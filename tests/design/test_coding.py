"""Tests for the codings in nestfit.design._coding.

References used below:

* "definition" -- the matrix written out by hand from the coding's definition
  (common practice, no source), as stated in the coding's docstring.
* patsy.contrasts (Treatment, Sum, Helmert, Poly, Diff) as a reference
  implementation where the definitions coincide or differ only in scale.
* numpy.linalg.lstsq and statsmodels OLS as independent least-squares fitters.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import patsy
import pytest
import statsmodels.api as sm
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from patsy.contrasts import Diff, Poly, Sum, Treatment
from patsy.contrasts import Helmert as PatsyHelmert

from nestfit.design._coding import (
    Coding,
    CodingMatrix,
    Deviation,
    FromHypotheses,
    Helmert,
    Indicator,
    Polynomial,
    Reference,
    SuccessiveDifferences,
    coding_from_name,
)
from nestfit.errors import ContrastError, FactorError, RankDeficientError

ABC = ["A", "B", "C"]
ABCD = ["A", "B", "C", "D"]
R2, R6, R20 = np.sqrt(2), np.sqrt(6), np.sqrt(20)

CONTRAST_CODINGS: list[Coding] = [
    Reference(), Reference(baseline="B"), Deviation(), Deviation(omit="A"), Helmert(),
    Polynomial(), SuccessiveDifferences(),
]
ALL_CODINGS: list[Coding] = [Indicator(), *CONTRAST_CODINGS]


def levels_of(k: int) -> list[str]:
    return [f"L{i}" for i in range(k)]


def with_ones(c: np.ndarray) -> np.ndarray:
    return np.column_stack([np.ones(c.shape[0]), c])


def same_span(a: np.ndarray, b: np.ndarray) -> bool:
    ra, rb = np.linalg.matrix_rank(a), np.linalg.matrix_rank(b)
    return ra == rb == np.linalg.matrix_rank(np.column_stack([a, b]))


def simulate(sizes: list[int], seed: int = 1) -> tuple[np.ndarray, np.ndarray]:
    """Group index per observation and a response with distinct group means."""
    rng = np.random.default_rng(seed)
    group = np.repeat(np.arange(len(sizes)), sizes)
    means = rng.normal(10.0, 3.0, size=len(sizes))
    return group, means[group] + rng.normal(0.0, 1.0, size=group.size)


def cell_means(group: np.ndarray, y: np.ndarray, k: int) -> np.ndarray:
    return np.array([y[group == i].mean() for i in range(k)])


def lstsq_coef(x_cells: np.ndarray, group: np.ndarray, y: np.ndarray) -> np.ndarray:
    return np.linalg.lstsq(x_cells[group], y, rcond=None)[0]


# --- matrices written out by hand --------------------------------------------------------

# definition, common practice, no source (each matches the coding's docstring)
HAND = [
    (Indicator(), ABC, True, np.eye(3), ("A", "B", "C")),
    (Indicator(), ABC, False, [[0, 0], [1, 0], [0, 1]], ("B-A", "C-A")),
    (Indicator(), ABCD, True, np.eye(4), ("A", "B", "C", "D")),
    (Reference(), ABC, False, [[0, 0], [1, 0], [0, 1]], ("B-A", "C-A")),
    (Reference(), ABC, True, [[1, 0, 0], [1, 1, 0], [1, 0, 1]], ("A", "B-A", "C-A")),
    (Reference("B"), ABC, False, [[1, 0], [0, 0], [0, 1]], ("A-B", "C-B")),
    (Reference("D"), ABCD, False, np.eye(4)[:, :3], ("A-D", "B-D", "C-D")),
    (Deviation(), ABC, False, [[1, 0], [0, 1], [-1, -1]], ("A-mean", "B-mean")),
    (Deviation(), ABC, True, [[1, 1, 0], [1, 0, 1], [1, -1, -1]], ("mean", "A-mean", "B-mean")),
    (Deviation(omit="A"), ABC, False, [[-1, -1], [1, 0], [0, 1]], ("B-mean", "C-mean")),
    (Deviation(), ABCD, False, [[1, 0, 0], [0, 1, 0], [0, 0, 1], [-1, -1, -1]],
     ("A-mean", "B-mean", "C-mean")),
    (Helmert(), ABC, False, [[-1 / 2, -1 / 3], [1 / 2, -1 / 3], [0, 2 / 3]],
     ("B-A", "C-mean(A,B)")),
    (Helmert(), ABCD, False,
     [[-1 / 2, -1 / 3, -1 / 4], [1 / 2, -1 / 3, -1 / 4], [0, 2 / 3, -1 / 4], [0, 0, 3 / 4]],
     ("B-A", "C-mean(A,B)", "D-mean(A..C)")),
    # classical tabulated orthogonal-polynomial coefficients, normalised to unit length
    (Polynomial(), ABC, False, [[-1 / R2, 1 / R6], [0, -2 / R6], [1 / R2, 1 / R6]],
     ("linear", "quadratic")),
    (Polynomial(), ABCD, False,
     np.array([[-3, 1 / 2 * R20, -1], [-1, -1 / 2 * R20, 3],
               [1, -1 / 2 * R20, -3], [3, 1 / 2 * R20, 1]]) / R20,
     ("linear", "quadratic", "cubic")),
    (Polynomial(), ABC, True, [[1, -1 / R2, 1 / R6], [1, 0, -2 / R6], [1, 1 / R2, 1 / R6]],
     ("mean", "linear", "quadratic")),
    (SuccessiveDifferences(), ABC, False, [[-2 / 3, -1 / 3], [1 / 3, -1 / 3], [1 / 3, 2 / 3]],
     ("B-A", "C-B")),
    (SuccessiveDifferences(), ABCD, False,
     [[-3 / 4, -1 / 2, -1 / 4], [1 / 4, -1 / 2, -1 / 4], [1 / 4, 1 / 2, -1 / 4],
      [1 / 4, 1 / 2, 3 / 4]], ("B-A", "C-B", "D-C")),
]


@pytest.mark.parametrize(("coding", "levels", "full_rank", "expected", "labels"), HAND)
def test_matrix_by_hand(coding, levels, full_rank, expected, labels):
    cm = coding.matrix(levels, full_rank=full_rank)
    np.testing.assert_allclose(cm.matrix, np.asarray(expected, dtype=float), atol=1e-14)
    assert cm.column_labels == labels
    assert cm.levels == tuple(levels)
    assert cm.coding == coding.label
    assert cm.full_rank is full_rank


# definition, common practice, no source: the rows of pinv([1, C]), as in the docstrings
HAND_HYPOTHESES = [
    (Reference(), ABC, [[1, 0, 0], [-1, 1, 0], [-1, 0, 1]]),
    (Indicator(), ABC, [[1, 0, 0], [-1, 1, 0], [-1, 0, 1]]),
    (Reference("B"), ABC, [[0, 1, 0], [1, -1, 0], [0, -1, 1]]),
    (Deviation(), ABC, [[1 / 3] * 3, [2 / 3, -1 / 3, -1 / 3], [-1 / 3, 2 / 3, -1 / 3]]),
    (Helmert(), ABCD, [[1 / 4] * 4, [-1, 1, 0, 0], [-1 / 2, -1 / 2, 1, 0],
                       [-1 / 3, -1 / 3, -1 / 3, 1]]),
    (SuccessiveDifferences(), ABCD, [[1 / 4] * 4, [-1, 1, 0, 0], [0, -1, 1, 0], [0, 0, -1, 1]]),
    (Polynomial(), ABC, [[1 / 3] * 3, [-1 / R2, 0, 1 / R2], [1 / R6, -2 / R6, 1 / R6]]),
]


@pytest.mark.parametrize(("coding", "levels", "expected"), HAND_HYPOTHESES)
def test_hypothesis_rows_by_hand(coding, levels, expected):
    reduced = coding.matrix(levels, full_rank=False)
    np.testing.assert_allclose(reduced.hypothesis_matrix(), expected, atol=1e-12)
    # the full-rank coding without intercept gives the same rows (constant <-> intercept)
    full = coding.matrix(levels, full_rank=True)
    if not isinstance(coding, Indicator):
        np.testing.assert_allclose(full.hypothesis_matrix(), expected, atol=1e-12)


def test_indicator_full_rank_hypotheses_are_cell_means():
    cm = Indicator().matrix(ABCD, full_rank=True)
    np.testing.assert_array_equal(cm.hypothesis_matrix(), np.eye(4))
    assert cm.hypothesis_frame().index.tolist() == ABCD


def test_indicator_reduced_equals_reference_on_first_level():
    for k in (2, 3, 5):
        ind = Indicator().matrix(levels_of(k), full_rank=False)
        ref = Reference().matrix(levels_of(k), full_rank=False)
        np.testing.assert_array_equal(ind.matrix, ref.matrix)
        assert ind.column_labels == ref.column_labels
        assert ind.coding == "indicator"


@pytest.mark.parametrize("coding", ALL_CODINGS, ids=repr)
@pytest.mark.parametrize("k", [2, 3, 4, 7])
def test_spans_all_cell_means(coding, k):
    levels = ["A", "B", *levels_of(k - 2)]  # Reference("B") and Deviation("A") need these
    reduced = coding.matrix(levels, full_rank=False)
    full = coding.matrix(levels, full_rank=True)
    assert reduced.matrix.shape == (k, k - 1)
    assert full.matrix.shape == (k, k)
    assert np.linalg.matrix_rank(with_ones(reduced.matrix)) == k
    assert np.linalg.matrix_rank(full.matrix) == k
    assert same_span(with_ones(reduced.matrix), full.matrix)


@pytest.mark.parametrize("coding", ALL_CODINGS, ids=repr)
def test_coefficients_are_hypothesis_rows_of_cell_means_unbalanced(coding):
    # Key property for every square coding: for any group sizes, the least-squares
    # coefficients equal hypothesis_matrix @ (sample cell means).
    levels = ["A", "B", "C", "D"]
    group, y = simulate([3, 8, 5, 11], seed=7)
    ybar = cell_means(group, y, 4)
    for full_rank in (False, True):
        cm = coding.matrix(levels, full_rank=full_rank)
        x = cm.matrix if full_rank else with_ones(cm.matrix)
        np.testing.assert_allclose(lstsq_coef(x, group, y), cm.hypothesis_matrix() @ ybar,
                                   rtol=0, atol=1e-10)


# --- patsy as a reference implementation ------------------------------------------------


@pytest.mark.parametrize("levels", [ABC, ABCD, levels_of(6)])
def test_against_patsy_treatment(levels):
    # Same definition with an intercept: identical matrices.
    ours = Reference().matrix(levels, full_rank=False).matrix
    np.testing.assert_array_equal(ours, Treatment().code_without_intercept(levels).matrix)
    ours_b = Reference(baseline=levels[1]).matrix(levels, full_rank=False).matrix
    theirs_b = Treatment(reference=levels[1]).code_without_intercept(levels).matrix
    np.testing.assert_array_equal(ours_b, theirs_b)
    # Without an intercept patsy switches to cell means (identity) -- that is our Indicator;
    # our Reference keeps its contrasts next to a constant column: same column space.
    theirs_full = Treatment().code_with_intercept(levels).matrix
    np.testing.assert_array_equal(Indicator().matrix(levels, full_rank=True).matrix, theirs_full)
    assert same_span(Reference().matrix(levels, full_rank=True).matrix, theirs_full)


@pytest.mark.parametrize("levels", [ABC, ABCD, levels_of(6)])
def test_against_patsy_sum(levels):
    # Same definition (omitted level last by default), with and without intercept.
    for omit in (None, levels[0]):
        ours = Deviation(omit=omit)
        theirs = Sum(omit=omit)
        np.testing.assert_array_equal(ours.matrix(levels, full_rank=False).matrix,
                                      theirs.code_without_intercept(levels).matrix)
        np.testing.assert_array_equal(ours.matrix(levels, full_rank=True).matrix,
                                      theirs.code_with_intercept(levels).matrix)


@pytest.mark.parametrize("levels", [ABC, ABCD, levels_of(6)])
def test_against_patsy_helmert(levels):
    # patsy uses the unscaled convention, column j = (-1, ..., -1, j, 0, ...); ours is that
    # column divided by j + 1 so each coefficient is the difference itself.
    k = len(levels)
    theirs = PatsyHelmert().code_without_intercept(levels).matrix
    ours = Helmert().matrix(levels, full_rank=False).matrix
    np.testing.assert_allclose(ours, theirs / np.arange(2, k + 1), atol=1e-15)
    assert same_span(Helmert().matrix(levels, full_rank=True).matrix,
                     PatsyHelmert().code_with_intercept(levels).matrix)


@pytest.mark.parametrize("levels", [ABC, ABCD, levels_of(6)])
def test_against_patsy_poly(levels):
    # Same construction (QR of the Vandermonde matrix of centred scores, positive diagonal).
    np.testing.assert_allclose(Polynomial().matrix(levels, full_rank=False).matrix,
                               Poly().code_without_intercept(levels).matrix, atol=1e-12)
    np.testing.assert_allclose(Polynomial().matrix(levels, full_rank=True).matrix,
                               Poly().code_with_intercept(levels).matrix, atol=1e-12)


@pytest.mark.parametrize("levels", [ABC, ABCD, levels_of(6)])
def test_against_patsy_diff(levels):
    # Same definition (backward differences with a grand-mean intercept).
    np.testing.assert_allclose(SuccessiveDifferences().matrix(levels, full_rank=False).matrix,
                               Diff().code_without_intercept(levels).matrix, atol=1e-15)
    np.testing.assert_allclose(SuccessiveDifferences().matrix(levels, full_rank=True).matrix,
                               Diff().code_with_intercept(levels).matrix, atol=1e-15)


# --- polynomial with unequal spacing ---------------------------------------------------


def test_polynomial_unequal_spacing():
    doses = [0.0, 1.0, 2.0, 4.0]
    cm = Polynomial(spacing=doses).matrix(ABCD, full_rank=False)
    q = cm.matrix
    np.testing.assert_allclose(q.T @ q, np.eye(3), atol=1e-12)
    np.testing.assert_allclose(q.sum(axis=0), 0.0, atol=1e-12)
    centred = np.array(doses) - np.mean(doses)
    np.testing.assert_allclose(q[:, 0], centred / np.linalg.norm(centred), atol=1e-12)
    # column j is a polynomial of degree j in the doses: an exact degree-j fit
    for j in (1, 2, 3):
        coef = np.polyfit(doses, q[:, j - 1], j)
        np.testing.assert_allclose(np.polyval(coef, doses), q[:, j - 1], atol=1e-10)
        assert abs(coef[0]) > 1e-6
    # reference: patsy's Poly with the same scores (same construction and sign convention)
    np.testing.assert_allclose(q, Poly(scores=doses).code_without_intercept(ABCD).matrix,
                               atol=1e-12)
    # spacing only matters up to location and scale
    rescaled = Polynomial(spacing=[10 + 3 * d for d in doses]).matrix(ABCD, full_rank=False)
    np.testing.assert_allclose(rescaled.matrix, q, atol=1e-12)


def test_polynomial_reduced_degree():
    levels = levels_of(5)
    full = Polynomial(spacing=[1, 2, 4, 8, 16]).matrix(levels, full_rank=False)
    red = Polynomial(spacing=[1, 2, 4, 8, 16], degree=2).matrix(levels, full_rank=False)
    assert red.column_labels == ("linear", "quadratic")
    np.testing.assert_allclose(red.matrix, full.matrix[:, :2], atol=1e-12)
    red_full = Polynomial(degree=2).matrix(levels, full_rank=True)
    assert red_full.column_labels == ("mean", "linear", "quadratic")
    # hypothesis rows: 1/k, then the orthonormal columns themselves
    np.testing.assert_allclose(red.hypothesis_matrix(),
                               np.vstack([np.full(5, 0.2), red.matrix.T]), atol=1e-12)
    labels = Polynomial().matrix(levels_of(7), full_rank=False).column_labels
    assert labels == ("linear", "quadratic", "cubic", "degree 4", "degree 5", "degree 6")


@settings(max_examples=60, deadline=None)
@given(
    start=st.floats(-100, 100),
    gaps=st.lists(st.floats(0.05, 20.0), min_size=1, max_size=8),
    data=st.data(),
)
def test_polynomial_property_orthonormal(start, gaps, data):
    spacing = start + np.concatenate([[0.0], np.cumsum(gaps)])
    k = spacing.size
    assume(np.all(np.diff(spacing) > 0))
    degree = data.draw(st.integers(1, k - 1), label="degree")
    q = Polynomial(spacing=spacing.tolist(), degree=degree).matrix(levels_of(k),
                                                                   full_rank=False).matrix
    assert q.shape == (k, degree)
    np.testing.assert_allclose(q.T @ q, np.eye(degree), atol=1e-9)
    np.testing.assert_allclose(np.ones(k) @ q, 0.0, atol=1e-9)
    centred = spacing - spacing.mean()
    np.testing.assert_allclose(q[:, 0], centred / np.linalg.norm(centred), atol=1e-9)


# --- FromHypotheses --------------------------------------------------------------------

# Non-orthogonal contrasts on four levels: B-A, C-A, D-mean(A,B,C).
L4 = np.array([[-1, 1, 0, 0], [-1, 0, 1, 0], [-1 / 3, -1 / 3, -1 / 3, 1]])


def test_from_hypotheses_fit_gives_the_contrasts_unbalanced():
    cm = FromHypotheses(L4, labels=["B-A", "C-A", "D-rest"]).matrix(ABCD, full_rank=False)
    assert cm.column_labels == ("B-A", "C-A", "D-rest")
    group, y = simulate([4, 9, 6, 13], seed=3)
    ybar = cell_means(group, y, 4)
    coef = lstsq_coef(with_ones(cm.matrix), group, y)
    np.testing.assert_allclose(coef[0], ybar.mean(), rtol=0, atol=1e-10)
    np.testing.assert_allclose(coef[1:], L4 @ ybar, rtol=0, atol=1e-10)
    # independent fitter: statsmodels OLS on the same design
    ols = sm.OLS(y, with_ones(cm.matrix)[group]).fit()
    np.testing.assert_allclose(ols.params[1:], L4 @ ybar, rtol=0, atol=1e-10)
    np.testing.assert_allclose(cm.hypothesis_matrix(), np.vstack([np.full(4, 0.25), L4]),
                               atol=1e-12)


def test_from_hypotheses_full_rank_without_intercept():
    cm = FromHypotheses(L4).matrix(ABCD, full_rank=True)
    assert cm.column_labels == ("mean", "c1", "c2", "c3")
    np.testing.assert_array_equal(cm.matrix[:, 0], 1.0)
    group, y = simulate([2, 5, 3, 7], seed=4)
    ybar = cell_means(group, y, 4)
    np.testing.assert_allclose(lstsq_coef(cm.matrix, group, y),
                               np.concatenate([[ybar.mean()], L4 @ ybar]), rtol=0, atol=1e-10)


def test_from_hypotheses_mapping_forms_and_helmert():
    by_level = FromHypotheses({"H2-H1": {"H2": 1, "H1": -1},
                               "H3-rest": {"H1": -0.5, "H2": -0.5, "H3": 1}})
    by_position = FromHypotheses({"H2-H1": [-1, 1, 0], "H3-rest": (-0.5, -0.5, 1)})
    heads = ["H1", "H2", "H3"]
    a = by_level.matrix(heads, full_rank=False)
    b = by_position.matrix(heads, full_rank=False)
    assert a.column_labels == b.column_labels == ("H2-H1", "H3-rest")
    np.testing.assert_allclose(a.matrix, b.matrix, atol=1e-15)
    # these are the Helmert contrasts, so the coding is the Helmert coding
    np.testing.assert_allclose(a.matrix, Helmert().matrix(heads, full_rank=False).matrix,
                               atol=1e-14)
    assert "H2-H1" in repr(by_level)


@pytest.mark.parametrize("coding", CONTRAST_CODINGS, ids=repr)
def test_from_hypotheses_round_trip(coding):
    # Feeding a coding's own contrast rows back in rebuilds that coding.
    cm = coding.matrix(ABCD, full_rank=False)
    rows = cm.hypothesis_matrix()[1:]
    if isinstance(coding, Reference):
        # reference contrasts sum to zero, but its intercept is the baseline, not the grand
        # mean: the rebuilt coding has the same contrasts and a grand-mean intercept.
        rebuilt = FromHypotheses(rows).matrix(ABCD, full_rank=False)
        np.testing.assert_allclose(rebuilt.hypothesis_matrix()[1:], rows, atol=1e-12)
        assert same_span(with_ones(rebuilt.matrix), with_ones(cm.matrix))
        return
    rebuilt = FromHypotheses(rows).matrix(ABCD, full_rank=False)
    np.testing.assert_allclose(rebuilt.matrix, cm.matrix, atol=1e-12)


def test_from_hypotheses_fewer_contrasts():
    one = FromHypotheses({"D-A": {"D": 1, "A": -1}})
    cm = one.matrix(ABCD, full_rank=False)
    assert cm.matrix.shape == (4, 1)
    np.testing.assert_allclose(cm.hypothesis_matrix(), [[0.25] * 4, [-1, 0, 0, 1]], atol=1e-12)
    # balanced groups: the coefficient is exactly the contrast of the sample cell means
    group, y = simulate([6, 6, 6, 6], seed=5)
    ybar = cell_means(group, y, 4)
    coef = lstsq_coef(with_ones(cm.matrix), group, y)
    np.testing.assert_allclose(coef, [ybar.mean(), ybar[3] - ybar[0]], rtol=0, atol=1e-10)
    # unbalanced groups: a count-weighted version, which hypothesis_matrix(weights=) gives
    sizes = [3, 10, 4, 8]
    group, y = simulate(sizes, seed=6)
    ybar = cell_means(group, y, 4)
    coef = lstsq_coef(with_ones(cm.matrix), group, y)
    np.testing.assert_allclose(coef, cm.hypothesis_matrix(weights=sizes) @ ybar, atol=1e-10)
    assert abs(coef[1] - (ybar[3] - ybar[0])) > 1e-6


def test_from_hypotheses_allow_general():
    # "mean of A" is not a contrast; allowed on request.
    gen = FromHypotheses({"A": {"A": 1}, "B-A": {"B": 1, "A": -1}}, allow_general=True)
    full = gen.matrix(ABC, full_rank=True)
    group, y = simulate([3, 6, 4], seed=8)
    ybar = cell_means(group, y, 3)
    np.testing.assert_allclose(lstsq_coef(full.matrix, group, y),
                               [ybar.mean(), ybar[0], ybar[1] - ybar[0]], rtol=0, atol=1e-10)
    assert not np.allclose(full.matrix[:, 0], 1.0)
    # next to an intercept the general row is estimated in centred form
    reduced = gen.matrix(ABC, full_rank=False)
    np.testing.assert_allclose(reduced.hypothesis_matrix()[1], [2 / 3, -1 / 3, -1 / 3],
                               atol=1e-12)


def test_typing_weights_as_coding_estimates_pseudo_inverse_rows():
    # The pitfall explained in docs/coding-vs-hypotheses.md: using the weights of B-A and
    # C-A as coding columns. Inverse of [[1,-1,-1],[1,1,0],[1,0,1]] by hand (det 3).
    typed = CodingMatrix(tuple(ABC), np.array([[-1, 1, 0], [-1, 0, 1]]).T, ("x1", "x2"), "typed")
    np.testing.assert_allclose(typed.hypothesis_matrix(),
                               [[1 / 3] * 3, [-1 / 3, 2 / 3, -1 / 3], [-1 / 3, -1 / 3, 2 / 3]],
                               atol=1e-12)
    built = FromHypotheses({"B-A": [-1, 1, 0], "C-A": [-1, 0, 1]}).matrix(ABC, full_rank=False)
    np.testing.assert_allclose(built.matrix, [[-1 / 3, -1 / 3], [2 / 3, -1 / 3], [-1 / 3, 2 / 3]],
                               atol=1e-12)


@settings(max_examples=40, deadline=None)
@given(k=st.integers(2, 7), seed=st.integers(0, 2**32 - 1))
def test_from_hypotheses_property_random_contrasts(k, seed):
    rng = np.random.default_rng(seed)
    rows = rng.normal(size=(k - 1, k))
    rows -= rows.mean(axis=1, keepdims=True)
    assume(np.linalg.cond(np.vstack([np.full(k, 1 / k), rows])) < 1e6)
    cm = FromHypotheses(rows).matrix(levels_of(k), full_rank=False)
    np.testing.assert_allclose(np.vstack([np.full(k, 1 / k), rows]) @ with_ones(cm.matrix),
                               np.eye(k), atol=1e-8)


# --- inside patsy formulas -------------------------------------------------------------


@pytest.fixture
def frame() -> pd.DataFrame:
    return pd.DataFrame({"g": ["B", "A", "C", "D", "A", "C", "B", "D"],
                         "x": np.arange(8.0)})


def test_patsy_formula_with_intercept(frame):
    dm = patsy.dmatrix("C(g, Helmert())", frame)
    assert dm.design_info.column_names == [
        "Intercept", "C(g, Helmert())[B-A]", "C(g, Helmert())[C-mean(A,B)]",
        "C(g, Helmert())[D-mean(A..C)]"]
    coding = Helmert().matrix(ABCD, full_rank=False).matrix
    rows = [ABCD.index(g) for g in frame["g"]]
    np.testing.assert_allclose(np.asarray(dm), with_ones(coding)[rows], atol=1e-15)


def test_patsy_formula_without_intercept(frame):
    dm = patsy.dmatrix("0 + C(g, Helmert())", frame)
    assert dm.design_info.column_names == [
        "C(g, Helmert())[mean]", "C(g, Helmert())[B-A]", "C(g, Helmert())[C-mean(A,B)]",
        "C(g, Helmert())[D-mean(A..C)]"]
    coding = Helmert().matrix(ABCD, full_rank=True).matrix
    rows = [ABCD.index(g) for g in frame["g"]]
    np.testing.assert_allclose(np.asarray(dm), coding[rows], atol=1e-15)


def test_patsy_formula_other_codings(frame):
    names = patsy.dmatrix("C(g, Reference(baseline='C'))", frame).design_info.column_names
    assert names[1:] == [f"C(g, Reference(baseline='C'))[{lv}-C]" for lv in "ABD"]
    names = patsy.dmatrix("0 + C(g, Indicator())", frame).design_info.column_names
    assert names == [f"C(g, Indicator())[{lv}]" for lv in ABCD]
    names = patsy.dmatrix("C(g, Polynomial(spacing=[0, 1, 2, 4]))", frame).design_info.column_names
    assert names[-1].endswith("[cubic]")
    contrasts = {"B-A": {"B": 1, "A": -1}, "D-C": {"D": 1, "C": -1}, "CD-AB": [-1, -1, 1, 1]}
    dm = patsy.dmatrix("C(g, FromHypotheses(contrasts))", frame)
    assert dm.design_info.column_names[1:] == [f"C(g, FromHypotheses(contrasts))[{c}]"
                                               for c in contrasts]
    # integer levels work: they are turned into labels
    dm = patsy.dmatrix("C(n, SuccessiveDifferences())", {"n": [1, 2, 3, 1]})
    assert dm.design_info.column_names[1:] == ["C(n, SuccessiveDifferences())[2-1]",
                                               "C(n, SuccessiveDifferences())[3-2]"]


def test_patsy_protocol_methods():
    cm = Deviation().code_without_intercept(ABC)
    assert isinstance(cm, patsy.ContrastMatrix)
    assert cm.column_suffixes == ["[A-mean]", "[B-mean]"]
    assert Deviation().code_with_intercept(ABC).column_suffixes[0] == "[mean]"


# --- CodingMatrix ----------------------------------------------------------------------


def test_coding_matrix_is_read_only_and_frames():
    cm = Reference().matrix(ABC, full_rank=False)
    with pytest.raises(ValueError, match="read-only"):
        cm.matrix[0, 0] = 5.0
    frame = cm.to_frame()
    assert frame.index.tolist() == ABC and frame.columns.tolist() == ["B-A", "C-A"]
    frame.iloc[0, 0] = 9.0  # a copy
    assert cm.matrix[0, 0] == 0.0
    hyp = cm.hypothesis_frame()
    assert hyp.index.tolist() == ["intercept", "B-A", "C-A"]
    np.testing.assert_allclose(hyp.loc["C-A"], [-1.0, 0.0, 1.0], atol=1e-14)
    assert cm == Reference().matrix(ABC, full_rank=False)
    assert hash(cm) == hash(Reference().matrix(ABC, full_rank=False))
    assert cm != Reference().matrix(ABC, full_rank=True)


def test_coding_matrix_without_columns():
    # e.g. a factor whose levels are all merged: only the intercept remains
    empty = CodingMatrix(tuple(ABC), np.zeros((3, 0)), (), "merged")
    np.testing.assert_allclose(empty.hypothesis_matrix(), [[1 / 3] * 3])
    np.testing.assert_allclose(empty.hypothesis_matrix(weights=[1, 2, 3]), [[1 / 6, 2 / 6, 3 / 6]])
    assert empty.hypothesis_matrix(with_intercept=False).shape == (0, 3)


def test_coding_matrix_errors():
    with pytest.raises(ContrastError, match=r"shape \(3, 2\), expected \(3, 1\)"):
        CodingMatrix(tuple(ABC), np.zeros((3, 2)), ("x",), "typed")
    with pytest.raises(ContrastError, match="non-finite"):
        CodingMatrix(tuple(ABC), np.array([[0.0], [np.nan], [1.0]]), ("x",), "typed")
    with pytest.raises(ContrastError, match="'x' occurs twice"):
        CodingMatrix(tuple(ABC), np.zeros((3, 2)), ("x", "x"), "typed")
    full = Indicator().matrix(ABC, full_rank=True)
    with pytest.raises(RankDeficientError, match="plus an intercept are linearly dependent"):
        full.hypothesis_matrix(with_intercept=True)
    reduced = Reference().matrix(ABC, full_rank=False)
    with pytest.raises(ContrastError, match="weights must be 3 positive finite numbers"):
        reduced.hypothesis_matrix(weights=[1, 2])
    with pytest.raises(ContrastError, match="weights must be 3 positive"):
        reduced.hypothesis_matrix(weights=[1, 0, 2])


# --- bad input -------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("levels", "message"),
    [
        (["A"], r"at least 2 levels, got 1 \(A\)"),
        ([], "at least 2 levels, got 0"),
        (["A", "B", "A"], r"level 'A' appears more than once"),
        ("ABC", "not the single string 'ABC'"),
    ],
)
def test_bad_levels(levels, message):
    for coding in (Helmert(), Indicator(), FromHypotheses([[-1, 1]])):
        with pytest.raises(FactorError, match=message):
            coding.matrix(levels, full_rank=False)


def test_unknown_baseline_and_omit():
    with pytest.raises(FactorError, match=r"unknown baseline level 'Z'.*levels are A, B, C"):
        Reference(baseline="Z").matrix(ABC, full_rank=False)
    with pytest.raises(FactorError, match=r"unknown baseline level 'Z'"):
        Reference(baseline="Z").matrix(ABC, full_rank=True)
    with pytest.raises(FactorError, match=r"unknown omit level 'Q' for deviation coding"):
        Deviation(omit="Q").matrix(ABC, full_rank=False)


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"spacing": [0, 1, np.inf]}, "spacing value inf at position 3 is not finite"),
        ({"spacing": [0, np.nan, 2]}, "position 2 is not finite"),
        ({"spacing": [0, 2, 1]}, r"strictly increasing.*2 \(position 2\) is followed by 1"),
        ({"spacing": [0, 1, 1, 3]}, r"value 1 is repeated \(positions 2 and 3\)"),
        ({"spacing": [2, 0, 1, 2]}, r"value 2 is repeated \(positions 1 and 4\)"),
        ({"spacing": ["a", "b"]}, "spacing must be a sequence of numbers"),
        ({"spacing": "012"}, "spacing must be a sequence of numbers"),
        ({"spacing": [[0, 1], [2, 3]]}, r"flat sequence.*shape \(2, 2\)"),
        ({"degree": 0}, "degree must be a whole number >= 1, got 0"),
        ({"degree": True}, "degree must be a whole number >= 1, got True"),
        ({"degree": 1.5}, "degree must be a whole number >= 1, got 1.5"),
    ],
)
def test_polynomial_bad_arguments(kwargs, message):
    with pytest.raises(ContrastError, match=message):
        Polynomial(**kwargs)


def test_polynomial_arguments_not_fitting_levels():
    with pytest.raises(ContrastError, match=r"spacing has 3 values but the factor has 4 levels"):
        Polynomial(spacing=[0, 1, 2]).matrix(ABCD, full_rank=False)
    with pytest.raises(ContrastError, match=r"degree 3 is out of range for 3 levels.*k - 1 = 2"):
        Polynomial(degree=3).matrix(ABC, full_rank=False)


@pytest.mark.parametrize(
    ("contrasts", "kwargs", "message"),
    [
        ([[1, 1, 0]], {}, r"contrast 'c1' \(row 1\) has weights summing to 2, not 0"),
        ({"up": [-1, 1, 0], "odd": {"C": 1}}, {}, r"contrast 'odd' \(row 2\) has weights summing"),
        ([[-1, 1, 0], [1, -1, 0]], {}, r"contrast 'c2' \(row 2\) is a linear combination.*'c1'"),
        ({"mean-ish": [1, 1, 1]}, {"allow_general": True},
         r"'mean-ish' \(row 1\) is a linear combination of the grand-mean row"),
        ([[0, 0, 0]], {}, r"contrast 'c1' \(row 1\) has all weights zero"),
        ([[-1, 1]], {}, r"contrast 'c1' has 2 weights but the factor has 3 levels.*expected 3"),
        ({"x": [-1, 0, 0, 1]}, {}, r"'x' has 4 weights but the factor has 3 levels"),
        ({"x": {"A": 1, "Z": -1}}, {}, r"contrast 'x' names level 'Z'.*levels: A, B, C"),
        ([[-1, 1, 0], [-1, 0, 1], [0, -1, 1]], {}, r"got 3 contrasts for a factor with 3 levels"),
    ],
)
def test_from_hypotheses_bad_contrasts_at_matrix_time(contrasts, kwargs, message):
    coding = FromHypotheses(contrasts, **kwargs)
    with pytest.raises(ContrastError, match=message):
        coding.matrix(ABC, full_rank=False)


def test_from_hypotheses_dependent_on_several_earlier_rows():
    coding = FromHypotheses({"a": [-1, 1, 0, 0], "b": [0, -1, 1, 0], "a+b": [-1, 0, 1, 0]})
    with pytest.raises(ContrastError,
                       match=r"contrast 'a\+b' \(row 3\) is a linear combination.*\('a', 'b'\)"):
        coding.matrix(ABCD, full_rank=True)


@pytest.mark.parametrize(
    ("contrasts", "kwargs", "message"),
    [
        ([], {}, "no contrasts given"),
        ({}, {}, "no contrasts given"),
        ([[-1, 1, 0], [1, 0]], {}, "could not read the given object as numbers"),
        ("B-A", {}, "not the string 'B-A'"),
        (np.zeros((2, 2, 2)), {}, "2-D .* 3 dimensions"),
        ([[-1, np.inf, 0]], {}, "weight inf is not finite"),
        ({"x": [-1, "one", 0]}, {}, r"contrast 'x', position 2: weight 'one' is not a number"),
        ({"x": {"A": None}}, {}, r"contrast 'x', level 'A': weight None is not a number"),
        ({"x": 3}, {}, "expected a sequence of weights or a mapping"),
        ({"x": "AB"}, {}, "got the string 'AB'"),
        ([[-1, 1, 0]], {"labels": ["a", "b"]}, "labels has 2 entries but there are 1"),
        ([[-1, 1, 0], [0, -1, 1]], {"labels": ["a", "a"]}, "label.*'a' used twice"),
        ([[-1, 1, 0]], {"labels": [""]}, "empty label"),
        ({"x": [-1, 1, 0]}, {"labels": ["y"]}, "labels= is only for an array"),
    ],
)
def test_from_hypotheses_bad_contrasts_at_construction(contrasts, kwargs, message):
    with pytest.raises(ContrastError, match=message):
        FromHypotheses(contrasts, **kwargs)


# --- coding_from_name ------------------------------------------------------------------


def test_coding_from_name():
    assert coding_from_name("helmert") == Helmert()
    assert coding_from_name(" Reference ", baseline="B") == Reference(baseline="B")
    assert coding_from_name("polynomial", spacing=[0, 1, 3]) == Polynomial(spacing=(0, 1, 3))
    assert isinstance(coding_from_name("successive"), SuccessiveDifferences)
    assert isinstance(coding_from_name("indicator"), Indicator)
    assert isinstance(coding_from_name("deviation", omit="A"), Deviation)
    with pytest.raises(ContrastError, match=r"unknown coding 'treatmnt'; valid names are "
                                            r"deviation, helmert, indicator, polynomial, "
                                            r"reference, successive"):
        coding_from_name("treatmnt")
    with pytest.raises(ContrastError, match=r"coding 'helmert' does not take baseline; "
                                            r"it takes no options"):
        coding_from_name("helmert", baseline="A")
    with pytest.raises(ContrastError, match=r"does not take omit; it takes spacing, degree"):
        coding_from_name("polynomial", omit="A")


def test_codings_are_hashable_values():
    assert len({Helmert(), Helmert(), Reference("A"), Reference("A"), Polynomial([0, 1])}) == 3
    assert repr(Reference(baseline="B")) == "Reference(baseline='B')"
