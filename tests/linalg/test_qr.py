"""least_squares: agreement with reference solvers, rank deficiency, centring, validation.

References: numpy.linalg.lstsq (LAPACK xGELSD, SVD based) and statsmodels
OLS/WLS on well-conditioned random problems, where any backward-stable solver
agrees to about cond * eps; exact rational arithmetic (fractions.Fraction
normal equations on the float64 inputs) where the point is the last digits.
"""

from __future__ import annotations

import dataclasses
from fractions import Fraction

import numpy as np
import pytest
import statsmodels.api as sm

from nestfit.errors import DataError, RankDeficiencyWarning
from nestfit.linalg import LONGDOUBLE_IS_EXTENDED, LeastSquares, least_squares, qr_factor


def random_problem(
    seed: int, n: int = 50, p: int = 4, intercept: bool = True
) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((n, p))
    if intercept:
        x[:, 0] = 1.0
    y = x @ rng.standard_normal(p) + 0.5 * rng.standard_normal(n)
    return x, y


def exact_wls(
    x: np.ndarray, y: np.ndarray, w: np.ndarray | None = None
) -> tuple[list[Fraction], Fraction]:
    """Exact weighted least squares: Fraction normal equations X'WX b = X'Wy, and its RSS."""
    n, p = x.shape
    xf = [[Fraction(float(v)) for v in row] for row in x]
    yf = [Fraction(float(v)) for v in y]
    wf = [Fraction(1)] * n if w is None else [Fraction(float(v)) for v in w]
    aug = [
        [sum((wf[k] * xf[k][i] * xf[k][j] for k in range(n)), Fraction(0)) for j in range(p)]
        + [sum((wf[k] * xf[k][i] * yf[k] for k in range(n)), Fraction(0))]
        for i in range(p)
    ]
    for c in range(p):
        piv = next(r for r in range(c, p) if aug[r][c] != 0)
        aug[c], aug[piv] = aug[piv], aug[c]
        for r in range(p):
            if r != c and aug[r][c] != 0:
                f = aug[r][c] / aug[c][c]
                aug[r] = [a - f * b for a, b in zip(aug[r], aug[c])]
    b = [aug[i][p] / aug[i][i] for i in range(p)]
    res = [yf[k] - sum((xf[k][j] * b[j] for j in range(p)), Fraction(0)) for k in range(n)]
    return b, sum((wf[k] * res[k] ** 2 for k in range(n)), Fraction(0))


# -- agreement with reference solvers ---------------------------------------------------


@pytest.mark.parametrize("seed", range(5))
def test_matches_numpy_lstsq(seed: int) -> None:
    x, y = random_problem(seed, n=60, p=5)
    fit = least_squares(x, y)
    b_ref, rss_ref, rank_ref, _ = np.linalg.lstsq(x, y, rcond=None)
    assert fit.rank == rank_ref == 5
    np.testing.assert_allclose(fit.coefficients, b_ref, rtol=1e-10, atol=0)
    np.testing.assert_allclose(fit.residual_ss, rss_ref[0], rtol=1e-10)
    np.testing.assert_allclose(fit.residuals, y - x @ b_ref, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(fit.fitted, x @ b_ref, rtol=1e-10)


@pytest.mark.parametrize("seed", range(3))
def test_matches_statsmodels_ols(seed: int) -> None:
    x, y = random_problem(seed, n=40, p=4)
    fit = least_squares(x, y)
    ref = sm.OLS(y, x).fit()
    np.testing.assert_allclose(fit.coefficients, ref.params, rtol=1e-10)
    np.testing.assert_allclose(fit.residual_ss, ref.ssr, rtol=1e-10)
    np.testing.assert_allclose(fit.cov_unscaled, ref.normalized_cov_params, rtol=1e-10)
    np.testing.assert_allclose(fit.std_errors, ref.bse, rtol=1e-10)
    np.testing.assert_allclose(fit.sigma**2, ref.scale, rtol=1e-10)
    np.testing.assert_allclose(
        fit.leverages, ref.get_influence().hat_matrix_diag, rtol=1e-10, atol=1e-14
    )
    assert fit.df_residual == int(ref.df_resid)


@pytest.mark.parametrize("seed", range(3))
def test_matches_statsmodels_wls(seed: int) -> None:
    x, y = random_problem(seed, n=40, p=4)
    w = np.random.default_rng(100 + seed).uniform(0.1, 10.0, x.shape[0])
    fit = least_squares(x, y, weights=w)
    ref = sm.WLS(y, x, weights=w).fit()
    np.testing.assert_allclose(fit.coefficients, ref.params, rtol=1e-10)
    np.testing.assert_allclose(fit.residual_ss, ref.ssr, rtol=1e-10)  # sum w r^2
    np.testing.assert_allclose(fit.residuals, ref.resid, rtol=1e-9, atol=1e-12)  # unweighted
    np.testing.assert_allclose(fit.cov_unscaled, ref.normalized_cov_params, rtol=1e-10)
    np.testing.assert_allclose(fit.std_errors, ref.bse, rtol=1e-10)
    # weighted hat matrix W^1/2 X (X'WX)^-1 X' W^1/2 (Seber & Lee 2003, sec. 10.2, from memory)
    xw = x * np.sqrt(w)[:, None]
    hat = xw @ np.linalg.solve(xw.T @ xw, xw.T)
    np.testing.assert_allclose(fit.leverages, np.diag(hat), rtol=1e-10)


def test_weights_equal_to_row_replication() -> None:
    # integer weights = repeating rows (same RSS, same coefficients)
    x, y = random_problem(7, n=12, p=3)
    w = np.array([1, 2, 3, 1, 1, 2, 1, 4, 1, 1, 2, 1], dtype=float)
    fit_w = least_squares(x, y, weights=w)
    reps = w.astype(int)
    fit_r = least_squares(np.repeat(x, reps, axis=0), np.repeat(y, reps))
    np.testing.assert_allclose(fit_w.coefficients, fit_r.coefficients, rtol=1e-12)
    np.testing.assert_allclose(fit_w.residual_ss, fit_r.residual_ss, rtol=1e-12)


@pytest.mark.skipif(not LONGDOUBLE_IS_EXTENDED, reason="long double is float64 here")
def test_both_extended_schemes_agree() -> None:
    x, y = random_problem(11, n=30, p=4)
    a = least_squares(x, y, extended="compensated")
    b = least_squares(x, y, extended="longdouble")
    np.testing.assert_allclose(a.coefficients, b.coefficients, rtol=1e-14)
    np.testing.assert_allclose(a.residual_ss, b.residual_ss, rtol=1e-14)


# -- accuracy: centring and refinement ----------------------------------------------------


@pytest.mark.parametrize("weighted", [False, True])
@pytest.mark.parametrize("offset", [0.0, 1e6, 1e12])
def test_large_offset_keeps_residual_ss(weighted: bool, offset: float) -> None:
    rng = np.random.default_rng(5)
    n = 12
    t = rng.uniform(0.0, 1.0, n)
    x = np.column_stack([np.ones(n), t])
    y = offset + t + 1e-3 * rng.standard_normal(n)
    w = rng.uniform(0.5, 2.0, n) if weighted else None
    fit = least_squares(x, y, weights=w)
    b_exact, rss_exact = exact_wls(x, y, w)
    assert fit.centered
    # the exact RSS of the float64 data, to a few units in the last place
    assert abs(fit.residual_ss / float(rss_exact) - 1) <= 1e-14
    for est, ref in zip(fit.coefficients, b_exact):
        assert abs(est / float(ref) - 1) <= 1e-13


def test_large_offset_without_constant_column() -> None:
    # cell-means design: the constant lies in the column space as a sum of indicators,
    # plus a covariate with an offset of its own
    rng = np.random.default_rng(6)
    n = 15
    g = np.arange(n) % 3
    t = 1e6 + rng.uniform(0.0, 1.0, n)
    x = np.column_stack([(g[:, None] == np.arange(3)).astype(float), t])
    y = 1e12 + 0.3 * g + (t - 1e6) + 1e-3 * rng.standard_normal(n)
    fit = least_squares(x, y)
    b_exact, rss_exact = exact_wls(x, y)
    assert fit.centered
    assert abs(fit.residual_ss / float(rss_exact) - 1) <= 1e-13
    for est, ref in zip(fit.coefficients, b_exact):
        assert abs(est / float(ref) - 1) <= 1e-13


def test_exact_fit_gives_zero_residuals() -> None:
    # y = 1 + x + ... + x^5 on x = 0..20 (NIST Wampler1): integer data, exact solution all ones
    t = np.arange(21.0)
    x = t[:, None] ** np.arange(6)
    y = x.sum(axis=1)
    fit = least_squares(x, y)
    np.testing.assert_array_equal(fit.coefficients, np.ones(6))
    assert fit.residual_ss == 0.0


def test_refinement_improves_on_plain_qr() -> None:
    t = np.arange(21.0)
    x = t[:, None] ** np.arange(6)
    y = x.sum(axis=1)
    plain = least_squares(x, y, refine=0)
    err_plain = np.max(np.abs(plain.coefficients - 1))
    assert err_plain > 0  # plain QR does not hit the exact ones
    refined = least_squares(x, y, refine=2)
    assert 1 <= refined.refinement_steps <= 2
    assert np.max(np.abs(refined.coefficients - 1)) < err_plain


def test_no_constant_means_no_centring() -> None:
    x, y = random_problem(1, intercept=False)
    fit = least_squares(x, y)
    assert not fit.centered
    assert fit.offset == 0.0


# -- rank deficiency ----------------------------------------------------------------------


def test_duplicated_column_is_aliased_and_named() -> None:
    x, y = random_problem(2, n=30, p=3)
    xd = np.column_stack([x, x[:, 1]])
    names = ["const", "a", "b", "a_again"]
    with pytest.warns(RankDeficiencyWarning, match=r"rank 3 < 4 columns") as rec:
        fit = least_squares(xd, y, column_names=names)
    assert len(rec) == 1
    assert fit.rank == 3
    assert fit.aliased.sum() == 1
    (alias,) = fit.aliased_names()
    assert alias in ("a", "a_again")  # either copy may go, by pivot order
    assert repr(alias) in str(rec[0].message)
    j = names.index(alias)
    assert np.isnan(fit.coefficients[j])
    assert np.all(np.isnan(fit.cov_unscaled[j])) and np.all(np.isnan(fit.cov_unscaled[:, j]))
    assert np.isnan(fit.std_errors[j])
    # the fit is that of the design without the aliased column
    keep = [i for i in range(4) if i != j]
    ref = least_squares(xd[:, keep], y)
    np.testing.assert_allclose(fit.coefficients[keep], ref.coefficients, rtol=1e-12)
    np.testing.assert_allclose(fit.residual_ss, ref.residual_ss, rtol=1e-12)
    assert fit.df_residual == 30 - 3


def test_warning_can_be_suppressed() -> None:
    x, y = random_problem(3, n=20, p=2)
    # the suite turns NestfitWarning into errors, so this fails if anything is issued
    fit = least_squares(np.column_stack([x, 2 * x[:, 1]]), y, warn=False)
    assert fit.rank == 2


def test_unnamed_aliased_columns_are_labelled_by_index() -> None:
    x, y = random_problem(4, n=20, p=2)
    with pytest.warns(RankDeficiencyWarning, match="column 2"):
        fit = least_squares(np.column_stack([x, np.zeros(20)]), y)
    assert fit.aliased_names() == ("column 2",)


def test_wide_and_all_zero_designs() -> None:
    rng = np.random.default_rng(8)
    xw, yw = rng.standard_normal((3, 5)), rng.standard_normal(3)
    with pytest.warns(RankDeficiencyWarning):
        wide = least_squares(xw, yw)
    assert wide.rank == 3 and wide.aliased.sum() == 2
    np.testing.assert_allclose(wide.residuals, 0.0, atol=1e-12)
    with pytest.warns(RankDeficiencyWarning):
        zero = least_squares(np.zeros((4, 2)), np.arange(4.0))
    assert zero.rank == 0
    assert np.all(np.isnan(zero.coefficients))
    np.testing.assert_array_equal(zero.residuals, np.arange(4.0))
    assert zero.residual_ss == 14.0
    np.testing.assert_array_equal(zero.leverages, 0.0)


def test_rank_tolerance_is_relative_and_recorded() -> None:
    rng = np.random.default_rng(9)
    x = rng.standard_normal((40, 3))
    x = np.column_stack([x, x[:, 0] + 1e-9 * rng.standard_normal(40)])  # nearly collinear
    y = rng.standard_normal(40)
    fit = least_squares(x, y)  # default max(n, p) * eps ~ 9e-15: kept
    assert fit.rank == 4
    assert fit.rank_tol == 40 * np.finfo(float).eps
    assert fit.tolerance == pytest.approx(fit.rank_tol * fit.factor.r_diagonal[0], rel=0)
    assert fit.condition > 1e8  # the near-collinearity shows in the condition number
    with pytest.warns(RankDeficiencyWarning):
        loose = least_squares(x, y, rank_tol=1e-6)
    assert loose.rank == 3


def test_rank_decision_ignores_column_units() -> None:
    x, y = random_problem(10, n=25, p=3)
    scaled = x * np.array([1e-150, 1.0, 1e150])
    fit = least_squares(scaled, y)
    ref = least_squares(x, y)
    assert fit.rank == 3
    np.testing.assert_allclose(fit.residual_ss, ref.residual_ss, rtol=1e-13)
    np.testing.assert_allclose(
        fit.coefficients * np.array([1e-150, 1.0, 1e150]), ref.coefficients, rtol=1e-12
    )


# -- the result object --------------------------------------------------------------------


def test_result_is_immutable() -> None:
    x, y = random_problem(12)
    fit = least_squares(x, y)
    with pytest.raises(dataclasses.FrozenInstanceError):
        fit.residual_ss = 0.0  # type: ignore[misc]
    with pytest.raises(ValueError, match="read-only"):
        fit.coefficients[0] = 0.0
    with pytest.raises(ValueError, match="read-only"):
        fit.factor.q[0, 0] = 0.0
    assert isinstance(fit, LeastSquares)


def test_leverages_sum_to_rank_and_cov_matches_inverse() -> None:
    x, y = random_problem(13, n=30, p=4)
    w = np.random.default_rng(13).uniform(0.5, 3.0, 30)
    fit = least_squares(x, y, weights=w)
    assert fit.leverages.sum() == pytest.approx(4.0, rel=1e-13)
    assert np.all((fit.leverages >= 0) & (fit.leverages <= 1 + 1e-14))
    np.testing.assert_allclose(fit.cov_unscaled, np.linalg.inv((x * w[:, None]).T @ x), rtol=1e-10)
    q = fit.q
    np.testing.assert_allclose(q.T @ q, np.eye(4), atol=1e-14)


def test_condition_is_that_of_the_scaled_weighted_design() -> None:
    x, y = random_problem(14, n=30, p=3)
    w = np.random.default_rng(14).uniform(0.5, 3.0, 30)
    fit = least_squares(x, y, weights=w)
    a = x * np.sqrt(w)[:, None]
    a = a / fit.factor.scale
    assert fit.condition == pytest.approx(np.linalg.cond(a), rel=1e-10)


def test_projection_in_the_weighted_inner_product() -> None:
    x, y = random_problem(15, n=30, p=3)
    w = np.random.default_rng(15).uniform(0.5, 3.0, 30)
    fit = least_squares(x, y, weights=w)
    np.testing.assert_allclose(fit.project(y), fit.fitted, rtol=1e-12)
    np.testing.assert_allclose(fit.project(x), x, rtol=1e-12)  # columns are in their own span
    v = np.random.default_rng(16).standard_normal((30, 2))
    resid = fit.factor.project_out(v)
    np.testing.assert_allclose(x.T @ (w[:, None] * resid), 0.0, atol=1e-12)  # X' W (v - Pv) = 0
    np.testing.assert_allclose(resid + fit.project(v), v, rtol=1e-13, atol=1e-14)


def test_qr_factor_alone() -> None:
    x, _ = random_problem(17, n=20, p=3)
    factor = qr_factor(np.column_stack([x, x[:, 0] - x[:, 1]]))
    assert factor.rank == 3
    assert factor.aliased.sum() == 1
    a = np.column_stack([x, x[:, 0] - x[:, 1]]) / factor.scale
    np.testing.assert_allclose(factor.q @ factor.r, a[:, factor.retained], atol=1e-14)


# -- input validation ---------------------------------------------------------------------


def test_rejects_nan_in_x() -> None:
    x, y = random_problem(0, n=5, p=2)
    x[3, 1] = np.nan
    msg = r"X contains NaN or infinite values \(first at row 3, column 1\)"
    with pytest.raises(DataError, match=msg):
        least_squares(x, y)


def test_rejects_inf_in_y() -> None:
    x, y = random_problem(0, n=5, p=2)
    y[2] = np.inf
    with pytest.raises(DataError, match=r"y contains NaN or infinite values \(first at row 2\)"):
        least_squares(x, y)


@pytest.mark.parametrize(
    ("x", "y", "message"),
    [
        (np.ones((3, 2)), np.ones(4), "X has 3 rows but y has 4 values"),
        (np.ones(3), np.ones(3), "X must be a 2-D array"),
        (np.ones((3, 2)), np.ones((3, 1)), "y must be a 1-D array"),
        (np.ones((0, 2)), np.ones(0), "X has no rows"),
        (np.ones((3, 0)), np.ones(3), "X has no columns"),
        (np.ones((2, 2)) * 1j, np.ones(2), "X must be real"),
        (np.array([["a", "b"]]), np.ones(1), "X must be numeric"),
    ],
)
def test_rejects_bad_shapes_and_types(x: np.ndarray, y: np.ndarray, message: str) -> None:
    with pytest.raises(DataError, match=message):
        least_squares(x, y)


@pytest.mark.parametrize(
    ("weights", "message"),
    [
        ([1.0, 0.0, 1.0], "weight 0 at row 1 .*drop rows with zero weight"),
        ([1.0, -2.0, 1.0], r"strictly positive; got -2.0 at row 1"),
        ([1.0, np.nan, 1.0], "weights contains NaN or infinite values"),
        ([1.0, 1.0], "X has 3 rows but weights has 2 values"),
    ],
)
def test_rejects_bad_weights(weights: list[float], message: str) -> None:
    with pytest.raises(DataError, match=message):
        least_squares(np.eye(3), np.ones(3), weights=weights)


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"column_names": ["a"]}, "column_names has 1 names but X has 2 columns"),
        ({"column_names": ["a", "a"]}, "column_names must be distinct"),
        ({"column_names": "ab"}, "not a single string"),
        ({"rank_tol": -1.0}, r"rank_tol must be a number in \[0, 1\)"),
        ({"refine": -1}, "refine must be a non-negative integer"),
        ({"refine": 1.5}, "refine must be a non-negative integer"),
        ({"extended": "quad"}, "extended must be 'compensated' or 'longdouble'"),
    ],
)
def test_rejects_bad_options(kwargs: dict[str, object], message: str) -> None:
    with pytest.raises(DataError, match=message):
        least_squares(np.eye(3)[:, :2], np.ones(3), **kwargs)  # type: ignore[arg-type]


def test_accepts_integer_and_boolean_designs() -> None:
    x = np.array([[1, 0], [1, 1], [1, 2], [1, 3]])
    fit = least_squares(x, [1, 3, 5, 7])
    np.testing.assert_allclose(fit.coefficients, [1.0, 2.0], rtol=1e-15)
    fit_b = least_squares(x.astype(bool), [1.0, 2.0, 2.0, 2.0])
    np.testing.assert_allclose(fit_b.coefficients, [1.0, 1.0], rtol=1e-15)
