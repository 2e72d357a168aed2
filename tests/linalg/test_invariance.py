"""Property tests: least squares results that must not depend on how the problem is written.

Invariances of least squares (Seber & Lee, *Linear Regression Analysis*, 2nd ed.,
2003, ch. 3): the residual sum of squares depends only on the column space of X
and on y, so it is unchanged by reordering or rescaling columns, and, when the
constant lies in the column space, by adding a constant to y. Each is checked
to a relative tolerance close to the rounding of the data.

Section, algorithm and page numbers in the references of this module are cited
from memory.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from nestfit.linalg import least_squares, sequential_ss

SETTINGS = settings(max_examples=40, deadline=None)


@st.composite
def problems(draw: st.DrawFn) -> tuple[np.ndarray, np.ndarray]:
    """A random full-rank design with an intercept and a response (well conditioned)."""
    p = draw(st.integers(min_value=1, max_value=5))
    n = draw(st.integers(min_value=p + 2, max_value=30))
    rng = np.random.default_rng(draw(st.integers(min_value=0, max_value=2**32 - 1)))
    x = rng.standard_normal((n, p))
    x[:, 0] = 1.0
    y = x @ rng.standard_normal(p) + rng.standard_normal(n)
    return x, y


@SETTINGS
@given(problems(), st.data())
def test_rss_invariant_to_column_order(
    problem: tuple[np.ndarray, np.ndarray], data: st.DataObject
) -> None:
    x, y = problem
    perm = data.draw(st.permutations(list(range(x.shape[1]))))
    a = least_squares(x, y)
    b = least_squares(x[:, perm], y)
    assert abs(b.residual_ss / a.residual_ss - 1) <= 1e-12
    np.testing.assert_allclose(b.coefficients, a.coefficients[perm], rtol=1e-10, atol=1e-12)


@SETTINGS
@given(
    problems(),
    st.lists(
        st.floats(min_value=1e-3, max_value=1e3) | st.sampled_from([1e-200, 1e200, -1e100]),
        min_size=5,
        max_size=5,
    ),
)
def test_rss_invariant_to_column_scaling(
    problem: tuple[np.ndarray, np.ndarray], factors: list[float]
) -> None:
    x, y = problem
    s = np.array(factors[: x.shape[1]])
    a = least_squares(x, y)
    b = least_squares(x * s, y)
    assert b.rank == a.rank
    assert abs(b.residual_ss / a.residual_ss - 1) <= 1e-12
    np.testing.assert_allclose(b.coefficients * s, a.coefficients, rtol=1e-10, atol=1e-12)


@SETTINGS
@given(
    problems(),
    st.integers(min_value=-(2**50), max_value=2**50),
)
def test_rss_invariant_to_shifting_y_with_an_intercept(
    problem: tuple[np.ndarray, np.ndarray], shift_units: int
) -> None:
    x, y = problem
    # y on a grid of 2**-20 with |y| < 2**10 and shifts up to 2**30 in the same grid:
    # y + c is then exact in float64, so any change in RSS is the solver's rounding.
    y = np.round(y * 2.0**20) / 2.0**20
    c = shift_units * 2.0**-20
    shifted = y + c
    assert np.array_equal(shifted - c, y)
    a = least_squares(x, y)
    b = least_squares(x, shifted)
    assert b.centered
    assert abs(b.residual_ss / a.residual_ss - 1) <= 1e-13
    np.testing.assert_allclose(b.residuals, a.residuals, rtol=1e-9, atol=1e-13 * np.abs(y).max())


@SETTINGS
@given(problems(), st.floats(min_value=1e-6, max_value=1e6))
def test_common_weight_factor_scales_rss_only(
    problem: tuple[np.ndarray, np.ndarray], k: float
) -> None:
    x, y = problem
    w = np.linspace(0.5, 2.0, x.shape[0])
    a = least_squares(x, y, weights=w)
    b = least_squares(x, y, weights=k * w)
    assert abs(b.residual_ss / (k * a.residual_ss) - 1) <= 1e-13
    np.testing.assert_allclose(b.coefficients, a.coefficients, rtol=1e-12, atol=1e-14)


@SETTINGS
@given(problems())
def test_sequential_rss_of_the_full_model_is_the_fit_rss(
    problem: tuple[np.ndarray, np.ndarray],
) -> None:
    x, y = problem
    sizes = [1] * x.shape[1]
    seq = sequential_ss(x, y, sizes)
    fit = least_squares(x, y)
    assert abs(seq.rss[-1] / fit.residual_ss - 1) <= 1e-12
    # extra sums of squares add up: total = sum(extra) + RSS
    total = float(np.sum(seq.extra_ss)) + seq.rss[-1]
    assert abs(total / seq.total_ss - 1) <= 1e-12
