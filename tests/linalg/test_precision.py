"""Error-free transformations and extended-precision products (nestfit.linalg._precision).

Reference: exact rational arithmetic (fractions.Fraction) on the float64 inputs.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest

from nestfit.linalg import _precision
from nestfit.linalg._precision import (
    LONGDOUBLE_IS_EXTENDED,
    ExtendedOperator,
    accurate_sum,
    accurate_sum_of_squares,
    two_product,
    two_sum,
)

METHODS = ["compensated"] + (["longdouble"] if LONGDOUBLE_IS_EXTENDED else [])


def _spread(rng: np.random.Generator, shape: tuple[int, ...]) -> np.ndarray:
    """Values over many binades, both signs."""
    return rng.standard_normal(shape) * 10.0 ** rng.integers(-8, 9, size=shape)


def test_two_sum_is_error_free() -> None:
    rng = np.random.default_rng(0)
    a, b = _spread(rng, (500,)), _spread(rng, (500,))
    s, e = two_sum(a, b)
    np.testing.assert_array_equal(s, a + b)
    for ai, bi, si, ei in zip(a, b, s, e):
        assert Fraction(ai) + Fraction(bi) == Fraction(si) + Fraction(ei)


def test_two_product_is_error_free() -> None:
    rng = np.random.default_rng(1)
    a, b = _spread(rng, (500,)), _spread(rng, (500,))
    p, e = two_product(a, b)
    np.testing.assert_array_equal(p, a * b)
    for ai, bi, pi, ei in zip(a, b, p, e):
        assert Fraction(ai) * Fraction(bi) == Fraction(pi) + Fraction(ei)


def test_accurate_sums_are_correctly_rounded() -> None:
    rng = np.random.default_rng(2)
    v = np.concatenate([_spread(rng, (300,)), [1e16, 1.0, -1e16]])
    assert accurate_sum(v) == float(sum(Fraction(x) for x in v))
    assert accurate_sum_of_squares(v) == float(sum(Fraction(x) ** 2 for x in v))


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("weighted", [False, True])
def test_operator_matches_exact_arithmetic(method: str, weighted: bool) -> None:
    rng = np.random.default_rng(3)
    n, k, m = 40, 5, 2
    x = _spread(rng, (n, k))
    c = _spread(rng, (k, m))
    # a right-hand side that nearly cancels x @ c, as in refinement
    u = x @ c + 1e-9 * rng.standard_normal((n, m))
    r = 1e-10 * rng.standard_normal((n, m))
    s = rng.uniform(0.5, 2.0, n) if weighted else None
    op = ExtendedOperator(x, s, method)  # type: ignore[arg-type]
    f = op.residual(u, r, c)
    g = op.rmatmul(r)
    fr = [[Fraction(v) for v in row] for row in x]
    sc = [Fraction(v) for v in s] if s is not None else [Fraction(1)] * n
    # unit roundoff of the scheme, plus one final float64 rounding
    u_ext = _precision.EXTENDED_ROUNDOFF[method]
    for i in range(n):
        for col in range(m):
            dot = sum((fr[i][j] * Fraction(c[j, col]) for j in range(k)), Fraction(0))
            exact = sc[i] * (Fraction(u[i, col]) - dot) - Fraction(r[i, col])
            size = abs(Fraction(u[i, col])) + sum(
                (abs(fr[i][j] * Fraction(c[j, col])) for j in range(k)), Fraction(0)
            )
            bound = 8 * u_ext * float(abs(sc[i]) * size + abs(Fraction(r[i, col])))
            assert abs(Fraction(f[i, col]) - exact) <= abs(exact) * 2.0**-52 + Fraction(bound)
    for j in range(k):
        for col in range(m):
            terms = [fr[i][j] * sc[i] * Fraction(r[i, col]) for i in range(n)]
            exact = sum(terms, Fraction(0))
            bound = 8 * n * u_ext * float(sum(abs(t) for t in terms))
            assert abs(Fraction(g[j, col]) - exact) <= abs(exact) * 2.0**-52 + Fraction(bound)


def test_compensated_chunking_gives_identical_results(monkeypatch: pytest.MonkeyPatch) -> None:
    rng = np.random.default_rng(4)
    x = rng.standard_normal((37, 4))
    u, r = rng.standard_normal((37, 2)), rng.standard_normal((37, 2))
    c = rng.standard_normal((4, 2))
    s = rng.uniform(0.5, 2.0, 37)
    op = ExtendedOperator(x, s, "compensated")
    f_one, g_one = op.residual(u, r, c), op.rmatmul(r)
    monkeypatch.setattr(_precision, "_chunk_rows", lambda k: 5)  # 8 chunks, last one short
    f_many, g_many = op.residual(u, r, c), op.rmatmul(r)
    np.testing.assert_allclose(f_many, f_one, rtol=1e-15, atol=0)
    np.testing.assert_allclose(g_many, g_one, rtol=1e-15, atol=0)


def test_unknown_method_rejected() -> None:
    with pytest.raises(ValueError, match="unknown extended-precision method"):
        ExtendedOperator(np.ones((2, 1)), None, "quad")  # type: ignore[arg-type]
