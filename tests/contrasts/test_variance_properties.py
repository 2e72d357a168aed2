"""Invariances of Welch-type and sandwich contrast standard errors (hypothesis property tests).

Row order and level names never matter; shifting y changes no standard error or df;
scaling y by c scales estimates and standard errors by |c| and leaves t and df alone
(common practice, no source: both follow from the formulas being functions of the
within-level deviations and the residuals).
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

import nestfit
from nestfit import contrasts as nc

SETTINGS = settings(max_examples=40, deadline=None)
VARIANCES = st.sampled_from(["welch", "HC0", "HC2", "HC3"])


@st.composite
def layouts(draw: st.DrawFn) -> tuple[np.ndarray, np.ndarray]:
    k = draw(st.integers(3, 5))
    sizes = draw(st.lists(st.integers(3, 8), min_size=k, max_size=k))
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    labels = np.repeat(np.array([f"g{j}" for j in range(k)]), sizes)
    spread = rng.uniform(0.2, 3.0, k).repeat(sizes)
    y = rng.normal(0, 1, labels.size) * spread + rng.normal(0, 2, k).repeat(sizes)
    return y, labels


def _rows(y: np.ndarray, labels: np.ndarray, variance: str,
          levels: list[str] | None = None) -> list[tuple[float, float, float, float]]:
    fit = nestfit.groups(y=y, factor=labels, levels=levels).separate_means()
    fam = nc.cell_means(fit, variance=variance).family(nc.consecutive())
    return [(e.estimate, e.std_error, e.df, e.t) for e in fam.estimates]


@SETTINGS
@given(layouts(), VARIANCES, st.integers(0, 2**32 - 1))
def test_row_order_does_not_matter(d: tuple, variance: str, seed: int) -> None:
    y, labels = d
    perm = np.random.default_rng(seed).permutation(y.size)
    np.testing.assert_allclose(_rows(y[perm], labels[perm], variance), _rows(y, labels, variance),
                               rtol=1e-9, atol=1e-12)


@SETTINGS
@given(layouts(), VARIANCES)
def test_level_names_do_not_matter(d: tuple, variance: str) -> None:
    y, labels = d
    names = {f"g{j}": f"site {chr(90 - j)}" for j in range(len(set(labels)))}
    renamed = np.array([names[x] for x in labels])
    order = [names[f"g{j}"] for j in range(len(names))]
    np.testing.assert_allclose(_rows(y, renamed, variance, levels=order),
                               _rows(y, labels, variance), rtol=1e-12, atol=1e-14)


@SETTINGS
@given(layouts(), VARIANCES, st.floats(-1e4, 1e4, allow_nan=False))
def test_shifting_y_changes_no_standard_error(d: tuple, variance: str, shift: float) -> None:
    y, labels = d
    a, b = np.array(_rows(y + shift, labels, variance)), np.array(_rows(y, labels, variance))
    np.testing.assert_allclose(a[:, 1:], b[:, 1:], rtol=1e-7)
    np.testing.assert_allclose(a[:, 0], b[:, 0], rtol=1e-7, atol=1e-9 * (1 + abs(shift)))


@SETTINGS
@given(layouts(), VARIANCES, st.floats(1e-3, 1e3) | st.floats(-1e3, -1e-3))
def test_scaling_y_scales_estimates_and_standard_errors(d: tuple, variance: str,
                                                       c: float) -> None:
    y, labels = d
    a, b = np.array(_rows(c * y, labels, variance)), np.array(_rows(y, labels, variance))
    np.testing.assert_allclose(a[:, 0], c * b[:, 0], rtol=1e-9, atol=1e-12 * abs(c))
    np.testing.assert_allclose(a[:, 1], abs(c) * b[:, 1], rtol=1e-9)
    np.testing.assert_allclose(a[:, 2], b[:, 2], rtol=1e-9)
    np.testing.assert_allclose(a[:, 3], np.sign(c) * b[:, 3], rtol=1e-8, atol=1e-12)
