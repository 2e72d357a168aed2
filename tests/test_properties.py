"""Invariances of nested comparisons (hypothesis property tests)."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

import nestfit

SETTINGS = settings(max_examples=60, deadline=None)


@st.composite
def grouped_data(draw: st.DrawFn) -> tuple[np.ndarray, np.ndarray]:
    k = draw(st.integers(4, 6))  # the chain below needs a partition strictly inside
    sizes = draw(st.lists(st.integers(2, 7), min_size=k, max_size=k))
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    labels = np.repeat(np.array([f"g{j}" for j in range(k)]), sizes)
    y = rng.normal(0, 1, labels.size) + rng.normal(0, 2, k).repeat(sizes)
    return y, labels


def chain(y: np.ndarray, labels: np.ndarray) -> nestfit.Comparison:
    return nestfit.groups(y=y, factor=labels).chain("g0 | ...", "g0 | g1 | ...")


def _close(a: nestfit.Comparison, b: nestfit.Comparison, scale: float = 1.0) -> None:
    for m, n in zip(a.models, b.models):
        np.testing.assert_allclose(m.residual_ss * scale, n.residual_ss, rtol=1e-9, atol=1e-12)
    for s, t in zip(a.steps, b.steps):
        np.testing.assert_allclose(s.f, t.f, rtol=1e-8)


@SETTINGS
@given(grouped_data(), st.integers(0, 2**32 - 1))
def test_row_order_does_not_matter(d: tuple, seed: int) -> None:
    y, labels = d
    perm = np.random.default_rng(seed).permutation(y.size)
    _close(chain(y, labels), chain(y[perm], labels[perm]))


@SETTINGS
@given(grouped_data())
def test_relabelling_levels_does_not_matter(d: tuple) -> None:
    y, labels = d
    renamed = np.array(["lvl-" + s for s in labels])
    a = nestfit.groups(y=y, factor=labels).chain("g0 | ...")
    b = nestfit.groups(y=y, factor=renamed).chain("lvl-g0 | ...")
    _close(a, b)


@SETTINGS
@given(grouped_data(), st.floats(-1e6, 1e6, allow_nan=False))
def test_shifting_y_changes_no_sum_of_squares(d: tuple, c: float) -> None:
    y, labels = d
    _close(chain(y, labels), chain(y + c, labels))


@SETTINGS
@given(grouped_data(), st.floats(1e-3, 1e3))
def test_scaling_y_scales_sums_of_squares_by_c_squared(d: tuple, c: float) -> None:
    y, labels = d
    _close(chain(y, labels), chain(y * c, labels), scale=c * c)


@SETTINGS
@given(grouped_data())
def test_rss_never_increases_along_a_chain_and_f_nonnegative(d: tuple) -> None:
    y, labels = d
    comp = chain(y, labels)
    rss = [m.residual_ss for m in comp.models]
    assert all(a >= b for a, b in zip(rss, rss[1:]))
    assert all(s.f >= 0 and 0 <= s.p <= 1 for s in comp.steps)


@SETTINGS
@given(grouped_data())
def test_dense_formula_path_agrees(d: tuple) -> None:
    import pandas as pd

    y, labels = d
    data = pd.DataFrame({"y": y, "g": labels})
    dense = nestfit.compare(nestfit.fit("y ~ 1", data), nestfit.fit("y ~ C(g)", data))
    grouped = nestfit.groups(data, "y", "g").oneway()
    _close(grouped, dense)
