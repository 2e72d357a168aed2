"""Refinement cost policy: the split first residual and the early stop (nestfit.linalg._refine).

References: exact rational arithmetic (fractions.Fraction normal equations on
the float64 inputs, ``exact_wls`` of test_qr) and the refinement run to its
full step count without the early stop.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

from nestfit.linalg import _precision, least_squares
from nestfit.linalg._factor import factorize
from nestfit.linalg._precision import ExtendedOperator
from nestfit.linalg._refine import Refiner
from tests.linalg.test_qr import exact_wls

EPS = float(np.finfo(float).eps)
METHODS = ["compensated"] + (["longdouble"] if _precision.LONGDOUBLE_IS_EXTENDED else [])


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("weighted", [False, True])
def test_residual_split_is_residual_and_its_remainder(method: str, weighted: bool) -> None:
    rng = np.random.default_rng(1)
    n, k = 30, 4
    x = rng.standard_normal((n, k)) * 10.0 ** rng.integers(-4, 5, size=(n, k))
    c = rng.standard_normal((k, 1))
    u = x @ c + 1e-7 * rng.standard_normal((n, 1))
    s = rng.uniform(0.5, 2.0, n) if weighted else None
    op = ExtendedOperator(x, s, method)  # type: ignore[arg-type]
    hi, lo = op.residual_split(u, c)
    np.testing.assert_array_equal(hi, op.residual(u, np.zeros_like(u), c))
    u_ext = _precision.EXTENDED_ROUNDOFF[method]
    fr = [[Fraction(v) for v in row] for row in x]
    for i in range(n):
        dot = sum((fr[i][j] * Fraction(c[j, 0]) for j in range(k)), Fraction(0))
        scale = Fraction(s[i]) if s is not None else Fraction(1)
        exact = scale * (Fraction(u[i, 0]) - dot)
        size = abs(scale) * (abs(Fraction(u[i, 0])) + sum(
            (abs(fr[i][j] * Fraction(c[j, 0])) for j in range(k)), Fraction(0)))
        # hi + lo carries the extended value: error within the scheme's bound
        assert abs(Fraction(hi[i, 0]) + Fraction(lo[i, 0]) - exact) <= 8 * u_ext * size


def _problem(seed: int, n: int, p: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = rng.standard_normal((n, p))
    x[:, 0] = 1.0
    return x, x @ rng.standard_normal(p) + rng.standard_normal(n)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_early_stop_on_well_conditioned_data_keeps_exact_digits(seed: int) -> None:
    x, y = _problem(seed, 400, 5)
    fit = least_squares(x, y)
    assert fit.refinement_steps == 1  # one step was enough, and was seen to be
    b_exact, rss_exact = exact_wls(x, y)
    for est, ref in zip(fit.coefficients, b_exact):
        assert abs(Fraction(float(est)) - ref) <= 2 * EPS * abs(ref)
    assert abs(fit.residual_ss / float(rss_exact) - 1) <= 1e-14


@pytest.mark.parametrize("seed", [3, 4])
def test_early_stop_agrees_with_the_full_step_count(seed: int) -> None:
    x, y = _problem(seed, 3000, 8)
    w = np.random.default_rng(seed).uniform(0.5, 2.0, x.shape[0])
    for weights in (None, w):
        factor = factorize(x, weights, 1e-12)
        sw = factor.sqrt_weights if weights is not None else None
        args = (factor.x_scaled, sw, factor.q, factor.r, "compensated")
        u = y[:, None]
        c_stop, r_stop, steps_stop = Refiner(*args, condition=factor.condition).solve(u, 3)
        c_full, r_full, steps_full = Refiner(*args).solve(u, 3)
        assert steps_stop == 1 < steps_full
        np.testing.assert_allclose(c_stop, c_full, rtol=2 * EPS, atol=0)
        assert np.linalg.norm(r_stop - r_full) <= 2 * EPS * np.linalg.norm(r_full)


def test_no_early_stop_when_the_contraction_bound_is_weak() -> None:
    # cond(A) large enough that n * k * cond * eps >= 1/2: the bound says nothing
    x, _ = _problem(5, 50, 3)
    factor = factorize(x, None, 1e-12)
    refiner = Refiner(factor.x_scaled, None, factor.q, factor.r, "compensated",
                      condition=1.0 / (50 * 3 * EPS))
    assert refiner.contraction is None
    assert Refiner(factor.x_scaled, None, factor.q, factor.r, "compensated",
                   condition=factor.condition).contraction is not None
