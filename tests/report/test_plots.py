"""Each plot returns a Figure with the expected artists, and saves to PNG."""

from __future__ import annotations

import io
import math

import numpy as np
import pytest

from nestfit.errors import DataError
from nestfit.report import (
    PALETTE,
    plot_contrasts,
    plot_level_means,
    plot_nested_models,
    plot_power,
    plot_residuals,
)
from nestfit.report._plots import label_text
from tests.report.conftest import Case
from tests.report.pngs import png_info

pytest.importorskip("matplotlib")


def _by_gid(ax, gid):
    found = [a for a in ax.get_children() if a.get_gid() == gid]
    assert len(found) == 1, (gid, found)
    return found[0]


def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    data = buf.getvalue()
    w, h, distinct = png_info(data)
    assert w > 300 and h > 200 and distinct > 50
    return data


def test_nested_models_plot(demo: Case) -> None:
    a = demo.report.analysis
    n, k = a.comparison.n_obs, len(a.levels)
    for step in range(len(a.comparison.steps)):
        fig = plot_nested_models(a, step, units="g")
        assert len(fig.axes) == 2
        for ax, work in zip(fig.axes, a.models[step:step + 2]):
            points = _by_gid(ax, "observations")
            assert points.get_offsets().shape == (n, 2)
            np.testing.assert_allclose(points.get_offsets()[:, 1], a.observations)
            segments = _by_gid(ax, "residuals").get_segments()
            assert len(segments) == n
            # each segment runs from the fitted mean to the observation: its squared
            # lengths add up to the model's residual sum of squares
            lengths = np.array([s[1][1] - s[0][1] for s in segments])
            assert math.fsum(lengths ** 2) == pytest.approx(work.fit.residual_ss, rel=1e-9)
            bars = _by_gid(ax, "fitted means").get_segments()
            assert len(bars) == k
            np.testing.assert_allclose([b[0][1] for b in bars], work.fitted_means)
        assert fig.axes[0].get_ylabel() == "weight (g)"
        assert fig.axes[0].get_xlabel() == "head"
        _png(fig)


def test_level_means_plot(demo: Case) -> None:
    a = demo.report.analysis
    fig = plot_level_means(a)
    (ax,) = fig.axes
    ordinary = _by_gid(ax, "ordinary intervals").get_segments()
    simultaneous = _by_gid(ax, "simultaneous intervals").get_segments()
    assert len(ordinary) == len(simultaneous) == len(a.levels)
    for seg, row in zip(ordinary, a.mean_intervals.rows):
        assert (seg[0][1], seg[1][1]) == pytest.approx((row.lower, row.upper))
    for seg, row in zip(simultaneous, a.simultaneous_means.rows):
        assert (seg[0][1], seg[1][1]) == pytest.approx((row.lower, row.upper))
        assert seg[1][1] - seg[0][1] > 0
    assert _by_gid(ax, "estimates").get_offsets().shape == (len(a.levels), 2)
    assert [t.get_text() for t in ax.get_xticklabels()] == list(a.levels)
    _png(fig)


def test_contrast_plot(demo: Case) -> None:
    r = demo.contrasts
    fig = plot_contrasts(r, units="g")
    (ax,) = fig.axes
    intervals = _by_gid(ax, "intervals").get_segments()
    assert len(intervals) == len(r.rows)
    # rows are drawn top to bottom in family order
    for seg, row in zip(intervals, r.rows):
        assert (seg[0][0], seg[1][0]) == pytest.approx((row.lower, row.upper))
    estimates = _by_gid(ax, "estimates").get_offsets()
    np.testing.assert_allclose(estimates[:, 0], [row.estimate for row in r.rows])
    assert [t.get_text() for t in ax.get_yticklabels()] == [row.label for row in r.rows]
    _png(fig)


def test_contrast_plot_with_one_sided_bounds(demo: Case) -> None:
    from nestfit import contrasts as nc

    result = nc.cell_means(demo.models.separate_means()).family(nc.versus_rest()).adjust(
        "bonferroni", alternative="greater")
    fig = plot_contrasts(result)
    (ax,) = fig.axes
    segments = _by_gid(ax, "intervals").get_segments()
    high = ax.get_xlim()[1]
    assert all(math.isfinite(s[1][0]) and s[1][0] == pytest.approx(high) for s in segments)
    _png(fig)


def test_residual_plot(demo: Case) -> None:
    a = demo.report.analysis
    fig = plot_residuals(a, units="g")
    qq, resid, spread = fig.axes
    assert _by_gid(qq, "quantiles").get_offsets().shape == (a.comparison.n_obs, 2)
    np.testing.assert_allclose(np.sort(_by_gid(qq, "quantiles").get_offsets()[:, 1]),
                               a.quantiles.ordered)
    shown = _by_gid(resid, "residuals").get_offsets().shape[0]
    flagged = _by_gid(resid, "flagged").get_offsets().shape[0]
    assert shown + flagged == a.comparison.n_obs and flagged == a.diagnostics.flagged.size
    ticks = _by_gid(spread, "spread").get_segments()
    assert len(ticks) == 2 * len(a.levels)
    np.testing.assert_allclose(sorted(t[0][1] for t in ticks if t[0][1] > 0),
                               sorted(a.groups.std_devs))
    _png(fig)


def test_residual_plot_needs_diagnostics(demo_text_only: Case) -> None:
    from nestfit._summary import worked_analysis

    models = demo_text_only.models
    a = worked_analysis(models.oneway(), models=models)
    with pytest.raises(DataError, match="no residual diagnostics"):
        plot_residuals(a)


def test_power_plot(demo: Case) -> None:
    fig = plot_power(demo.power, target=0.8)
    (ax,) = fig.axes
    line = _by_gid(ax, "power")
    np.testing.assert_allclose(line.get_xdata(), [p.sizes[0] for p in demo.power.points])
    np.testing.assert_allclose(line.get_ydata(), [p.power for p in demo.power.points])
    assert line.get_color() == PALETTE["blue"]
    _png(fig)


def test_hostile_names_do_not_break_the_plots(hostile: Case) -> None:
    a = hostile.report.analysis
    for fig in (plot_nested_models(a, 0), plot_level_means(a), plot_contrasts(hostile.contrasts),
                plot_residuals(a)):
        _png(fig)  # mathtext would fail on an unescaped "$x_1$ {#}" pair
    assert label_text("$x$") == r"\$x\$"


def test_plots_never_touch_pyplot(demo: Case) -> None:
    import sys

    plot_power(demo.power)
    if "matplotlib.pyplot" in sys.modules:
        import matplotlib.pyplot as plt

        assert plt.get_fignums() == []  # figures live on their own Agg canvases
