"""Nesting checks and sequential sums of squares (nestfit.linalg._nested).

References: the prefix models fitted one by one through least_squares
(itself checked against numpy/statsmodels in test_qr.py), and, for the
relative residual, the explicit weighted projection computed with numpy.
"""

from __future__ import annotations

import numpy as np
import pytest

from nestfit.errors import DataError
from nestfit.linalg import (
    SequentialSS,
    column_space_residual,
    is_nested,
    least_squares,
    qr_factor,
    sequential_ss,
)


def indicators(codes: np.ndarray, k: int) -> np.ndarray:
    return (codes[:, None] == np.arange(k)).astype(float)


@pytest.fixture
def two_factor() -> dict[str, np.ndarray]:
    rng = np.random.default_rng(0)
    n = 36
    g = np.arange(n) % 4
    h = (np.arange(n) // 4) % 3
    return {
        "g": g,
        "h": h,
        "x": rng.standard_normal(n),
        "w": rng.uniform(0.5, 2.0, n),
        "y": 3.0 + 0.5 * g - 0.2 * h + rng.standard_normal(n),
    }


# -- is_nested ----------------------------------------------------------------------------


def test_reparametrised_models_are_nested(two_factor: dict[str, np.ndarray]) -> None:
    g = two_factor["g"]
    n = g.size
    cells = indicators(g, 4)  # one mean per group
    treatment = np.column_stack([np.ones(n), cells[:, 1:]])  # intercept + treatment contrasts
    equal = np.ones((n, 1))
    assert is_nested(equal, cells)[0]
    assert is_nested(equal, treatment)[0]
    assert is_nested(cells, treatment)[0]
    assert is_nested(treatment, cells)[0]
    nested, worst, rho = is_nested(cells, treatment)
    assert nested
    assert worst is not None and 0 <= worst < 4
    assert rho <= 1e-14


def test_not_nested_reports_the_worst_column(two_factor: dict[str, np.ndarray]) -> None:
    g, x = two_factor["g"], two_factor["x"]
    n = g.size
    small = np.column_stack([np.ones(n), x])
    large = indicators(g, 4)
    ok, worst, rho = is_nested(small, large)
    assert not ok
    assert worst == 1  # the covariate, not the constant
    # relative residual of x after least squares on the group indicators
    resid = x - large @ np.linalg.lstsq(large, x, rcond=None)[0]
    assert rho == pytest.approx(np.linalg.norm(resid) / np.linalg.norm(x), rel=1e-12)


def test_weighted_residual_uses_the_weighted_inner_product(
    two_factor: dict[str, np.ndarray],
) -> None:
    g, x, w = two_factor["g"], two_factor["x"], two_factor["w"]
    large = indicators(g, 4)
    ok, worst, rho = is_nested(x[:, None], large, weights=w)
    assert not ok and worst == 0
    sw = np.sqrt(w)
    a, v = large * sw[:, None], x * sw
    resid = v - a @ np.linalg.lstsq(a, v, rcond=None)[0]
    assert rho == pytest.approx(np.linalg.norm(resid) / np.linalg.norm(v), rel=1e-12)
    # nesting itself does not depend on the (positive) weights
    assert is_nested(np.ones((g.size, 1)), large, weights=w)[0]


def test_empty_smaller_model_is_nested(two_factor: dict[str, np.ndarray]) -> None:
    n = two_factor["g"].size
    assert is_nested(np.zeros((n, 0)), np.ones((n, 1))) == (True, None, 0.0)


def test_aliased_columns_of_the_larger_model(two_factor: dict[str, np.ndarray]) -> None:
    g = two_factor["g"]
    n = g.size
    overparam = np.column_stack([np.ones(n), indicators(g, 4)])  # rank 4 of 5 columns
    assert is_nested(indicators(g, 4), overparam)[0]
    assert not is_nested(two_factor["x"][:, None], overparam)[0]


def test_column_space_residual_from_a_fit(two_factor: dict[str, np.ndarray]) -> None:
    g, x, w, y = two_factor["g"], two_factor["x"], two_factor["w"], two_factor["y"]
    fit = least_squares(indicators(g, 4), y, weights=w)
    rho = column_space_residual(fit, np.column_stack([np.ones(g.size), x]))
    rho_factor = column_space_residual(qr_factor(indicators(g, 4), weights=w), x[:, None])
    assert rho[0] <= 1e-14
    assert rho[1] == pytest.approx(rho_factor[0], rel=1e-13)
    assert rho[1] > 0.5


def test_nesting_input_errors(two_factor: dict[str, np.ndarray]) -> None:
    n = two_factor["g"].size
    with pytest.raises(DataError, match="X_small has 3 rows but the larger model has"):
        is_nested(np.ones((3, 1)), np.ones((n, 1)))
    with pytest.raises(DataError, match="X_large contains NaN"):
        is_nested(np.ones((n, 1)), np.full((n, 1), np.nan))
    with pytest.raises(DataError, match="tol must be a non-negative number"):
        is_nested(np.ones((n, 1)), np.ones((n, 1)), tol=-1.0)


# -- sequential_ss ------------------------------------------------------------------------


def _chain_design(data: dict[str, np.ndarray]) -> tuple[np.ndarray, list[int]]:
    g, h, x = data["g"], data["h"], data["x"]
    n = g.size
    cols = [
        np.ones((n, 1)),  # block 0: constant
        indicators(g, 4)[:, 1:],  # block 1: g contrasts
        indicators(h, 3)[:, 1:],  # block 2: h contrasts
        # block 3: x and a column aliased with blocks 1-2 (g==1 plus h==2)
        np.column_stack([x, indicators(g, 4)[:, 1] + indicators(h, 3)[:, 2]]),
    ]
    return np.column_stack(cols), [c.shape[1] for c in cols]


def _check_against_prefix_fits(
    seq: SequentialSS, x: np.ndarray, y: np.ndarray, sizes: list[int], w: np.ndarray | None
) -> None:
    ends = np.cumsum(sizes)
    prev = seq.total_ss
    wv = np.ones_like(y) if w is None else w
    assert seq.total_ss == pytest.approx(float(np.sum(wv * y**2)), rel=1e-14)
    for j, end in enumerate(ends):
        fit = least_squares(x[:, :end], y, weights=w, warn=False)
        assert seq.rss[j] == pytest.approx(fit.residual_ss, rel=1e-10)
        assert seq.df_residual[j] == fit.df_residual
        assert int(seq.df[: j + 1].sum()) == fit.rank
        assert seq.extra_ss[j] == pytest.approx(prev - fit.residual_ss, rel=1e-10)
        prev = fit.residual_ss


@pytest.mark.parametrize("weighted", [False, True])
def test_sequential_ss_matches_prefix_fits(
    two_factor: dict[str, np.ndarray], weighted: bool
) -> None:
    x, sizes = _chain_design(two_factor)
    y = two_factor["y"]
    w = two_factor["w"] if weighted else None
    seq = sequential_ss(x, y, sizes, weights=w)
    np.testing.assert_array_equal(seq.df, [1, 3, 2, 1])  # the aliased column adds 0 df
    assert seq.rank == 7
    assert seq.aliased.tolist() == [False] * 7 + [True]
    assert seq.centered.all()
    _check_against_prefix_fits(seq, x, y, sizes, w)


def test_sequential_ss_with_a_large_offset(two_factor: dict[str, np.ndarray]) -> None:
    x, sizes = _chain_design(two_factor)
    y = 1e12 + two_factor["y"]
    seq = sequential_ss(x, y, sizes)
    assert seq.offset == pytest.approx(float(np.mean(y)), rel=1e-15)
    # the residual sums of squares do not see the offset at all: compare with the
    # stored response minus the offset (exact in float64, Sterbenz lemma)
    seq0 = sequential_ss(x, y - 1e12, sizes)
    np.testing.assert_allclose(seq.rss, seq0.rss, rtol=1e-13)
    np.testing.assert_allclose(seq.extra_ss[1:], seq0.extra_ss[1:], rtol=1e-12)
    _check_against_prefix_fits(seq, x, y, sizes, None)


def test_sequential_ss_without_constant_in_the_first_block(
    two_factor: dict[str, np.ndarray],
) -> None:
    x, _ = _chain_design(two_factor)
    # blocks: the covariate, then the constant, the g and h contrasts, the aliased column
    xr = x[:, [6, 0, 1, 2, 3, 4, 5, 7]]
    sizes_r = [1, 1, 3, 2, 1]
    seq = sequential_ss(xr, two_factor["y"], sizes_r)
    assert seq.centered.tolist() == [False, True, True, True, True]
    np.testing.assert_array_equal(seq.df, [1, 1, 3, 2, 0])
    _check_against_prefix_fits(seq, xr, two_factor["y"], sizes_r, None)


def test_sequential_ss_input_errors(two_factor: dict[str, np.ndarray]) -> None:
    x, _ = _chain_design(two_factor)
    y = two_factor["y"]
    with pytest.raises(DataError, match="block_sizes sum to 7 but X has 8 columns"):
        sequential_ss(x, y, [1, 3, 3])
    with pytest.raises(DataError, match="block_sizes is empty"):
        sequential_ss(x, y, [])
    with pytest.raises(DataError, match="non-negative integers"):
        sequential_ss(x, y, [9, -1])
    with pytest.raises(DataError, match="X has 36 rows but y has 2 values"):
        sequential_ss(x, y[:2], [8])
