"""Plots of a worked analysis (matplotlib, Agg canvas; no display, no global pyplot state).

Every plot function takes result objects and returns a
:class:`matplotlib.figure.Figure`; every number drawn is an attribute of a
result object (the horizontal spread of the observations within a level is a
fixed-seed jitter for legibility and carries no value). Artists a reader (or a
test) may want to find carry a ``gid``: ``"observations"``, ``"fitted
means"``, ``"residuals"``, ``"ordinary intervals"``, ``"simultaneous
intervals"``, ``"estimates"``, ``"intervals"``, ``"power"``...
"""

from __future__ import annotations

import functools
import io
import math
from collections.abc import Callable, Sequence
from typing import TYPE_CHECKING, Any, TypeVar

import numpy as np

from nestfit.report._style import FIGSIZE, PALETTE, figure_rc

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from nestfit._summary import ModelWork, WorkedAnalysis
    from nestfit.contrasts import FamilyResult
    from nestfit.power import PowerCurve

__all__ = ["label_text", "new_figure", "plot_contrasts", "plot_level_means",
           "plot_nested_models", "plot_power", "png_bytes", "styled"]

F = TypeVar("F", bound=Callable[..., Any])

_JITTER_SEED = 20240611
_HALF_WIDTH = 0.34  # half the width of a level's column of points and of its mean bar


def label_text(text: Any) -> str:
    """User text for a matplotlib label: ``$`` escaped so that it is never read as mathtext."""
    return str(text).replace("$", r"\$")


def styled(func: F) -> F:
    """Run a plot function inside the report's matplotlib settings (:func:`figure_rc`)."""

    @functools.wraps(func)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        import matplotlib

        rc: Any = figure_rc()
        with matplotlib.rc_context(rc):
            return func(*args, **kwargs)

    return wrapper  # type: ignore[return-value]


def new_figure(ncols: int = 1, *, size: tuple[float, float] = FIGSIZE,
               sharey: bool = False) -> tuple[Figure, list[Axes]]:
    """A figure on an Agg canvas (never a display window) with ``ncols`` axes side by side."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size, layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(1, ncols, sharey=sharey, squeeze=False)[0]
    return fig, list(axes)


def png_bytes(fig: Figure) -> bytes:
    """The figure as PNG bytes."""
    import matplotlib

    buf = io.BytesIO()
    rc: Any = figure_rc()
    with matplotlib.rc_context(rc):
        fig.savefig(buf, format="png")
    return buf.getvalue()


def _jitter(codes: np.ndarray) -> np.ndarray:
    rng = np.random.default_rng(_JITTER_SEED)
    return codes + rng.uniform(-_HALF_WIDTH * 0.8, _HALF_WIDTH * 0.8, size=codes.size)


def _level_axis(ax: Axes, levels: Sequence[str], factor: str) -> None:
    ax.set_xticks(range(len(levels)), [label_text(lv) for lv in levels])
    ax.set_xlim(-0.6, len(levels) - 0.4)
    ax.set_xlabel(label_text(factor))
    ax.grid(axis="x", visible=False)


def _model_panel(ax: Axes, work: ModelWork, x: np.ndarray, y: np.ndarray, codes: np.ndarray,
                 colour: str, style: str) -> None:
    from matplotlib.collections import LineCollection

    fitted = work.fitted_means
    segments = np.stack([np.column_stack([x, fitted[codes]]), np.column_stack([x, y])], axis=1)
    residuals = LineCollection(list(segments), colors=PALETTE["light"], linewidths=0.9, zorder=1)
    residuals.set_gid("residuals")
    ax.add_collection(residuals)
    points = ax.scatter(x, y, s=14, color=PALETTE["grey"], edgecolors="none", zorder=2)
    points.set_gid("observations")
    k = fitted.size
    bars = LineCollection([[(j - _HALF_WIDTH, fitted[j]), (j + _HALF_WIDTH, fitted[j])]
                           for j in range(k)], colors=colour, linewidths=2.6,
                          linestyles=style, zorder=3)
    bars.set_gid("fitted means")
    ax.add_collection(bars)
    ax.set_title(label_text(f"{work.label}: {work.fit.name}"), loc="left")


@styled
def plot_nested_models(analysis: WorkedAnalysis, step: int = 0, *,
                       units: str | None = None) -> Figure:
    """Two nested models side by side: observations, each model's fitted means, residuals.

    Parameters
    ----------
    analysis : WorkedAnalysis
    step : int
        Which step of the comparison (0 = the first two models).
    units : str, optional
        Units of the response, for the axis label.

    Returns
    -------
    matplotlib.figure.Figure
        Two axes. In each: the observations (``gid="observations"``, one
        point each, jittered within its level), the model's fitted level means
        (``"fitted means"``, one bar per level) and a segment from every
        observation to its fitted mean (``"residuals"``), whose squared lengths
        add up to the model's residual SS.
    """
    small, large = analysis.models[step], analysis.models[step + 1]
    fig, axes = new_figure(2, size=(FIGSIZE[0] * 1.35, FIGSIZE[1]), sharey=True)
    x, y, codes = _jitter(analysis.codes), analysis.observations, analysis.codes
    for ax, work, colour, style in ((axes[0], small, PALETTE["blue"], "solid"),
                                    (axes[1], large, PALETTE["orange"], "dashed")):
        _model_panel(ax, work, x, y, codes, colour, style)
        _level_axis(ax, analysis.levels, analysis.factor)
    axes[0].set_ylabel(_response_label(analysis.response, units))
    return fig


def _response_label(response: str, units: str | None) -> str:
    return label_text(f"{response} ({units})" if units else response)


@styled
def plot_level_means(analysis: WorkedAnalysis, *, units: str | None = None) -> Figure:
    """Level means with one-at-a-time and (when available) simultaneous intervals.

    Returns
    -------
    matplotlib.figure.Figure
        One axes: the means (``gid="estimates"``), the ordinary intervals
        (``"ordinary intervals"``, one per level, from
        ``analysis.mean_intervals``) and the simultaneous ones
        (``"simultaneous intervals"``, from ``analysis.simultaneous_means``).
    """
    from matplotlib.collections import LineCollection
    from matplotlib.lines import Line2D

    fig, (ax,) = new_figure(1)
    ordinary = analysis.mean_intervals
    k = len(ordinary.rows)
    pos = np.arange(k, dtype=float)
    handles = []
    sim = analysis.simultaneous_means
    if sim is not None:
        lines = LineCollection([[(j + 0.12, r.lower), (j + 0.12, r.upper)]
                                for j, r in enumerate(sim.rows)],
                               colors=PALETTE["orange"], linewidths=1.4, zorder=2)
        lines.set_gid("simultaneous intervals")
        ax.add_collection(lines)
        name = label_text(f"simultaneous {sim.level:.0%} ({sim.method_name})")
        handles.append(Line2D([], [], color=PALETTE["orange"], linewidth=1.4, label=name))
    lines = LineCollection([[(j, r.lower), (j, r.upper)] for j, r in enumerate(ordinary.rows)],
                           colors=PALETTE["blue"], linewidths=4.0, zorder=3)
    lines.set_gid("ordinary intervals")
    ax.add_collection(lines)
    handles.insert(0, Line2D([], [], color=PALETTE["blue"], linewidth=4.0,
                             label=f"{ordinary.level:.0%} interval, one level at a time"))
    points = ax.scatter(pos, [r.estimate for r in ordinary.rows], s=36, color=PALETTE["ink"],
                        zorder=4, marker="D")
    points.set_gid("estimates")
    handles.append(Line2D([], [], color=PALETTE["ink"], marker="D", linestyle="none",
                          label="level mean"))
    _level_axis(ax, analysis.levels, analysis.factor)
    ax.set_ylabel(_response_label(analysis.response, units))
    ax.autoscale_view()
    fig.legend(handles=handles, loc="outside lower center", ncols=len(handles), fontsize=9)
    return fig


def _finite_limits(values: Sequence[float], fallback: float) -> list[float]:
    return [v if math.isfinite(v) else fallback for v in values]


@styled
def plot_contrasts(result: FamilyResult, *, units: str | None = None) -> Figure:
    """Contrast estimates with their intervals, against the line at zero.

    Returns
    -------
    matplotlib.figure.Figure
        One axes: one estimate per contrast (``gid="estimates"``) and one
        interval each (``"intervals"``); infinite one-sided limits are drawn
        to the edge of the axes and marked with an arrow head.
    """
    from matplotlib.collections import LineCollection

    rows = result.rows
    m = len(rows)
    height = max(2.4, 0.45 * m + 1.4)
    fig, (ax,) = new_figure(1, size=(FIGSIZE[0], height))
    finite = [v for r in rows for v in (r.lower, r.upper, r.estimate) if math.isfinite(v)]
    span = (max(finite) - min(finite)) or 1.0
    low_edge, high_edge = min(min(finite), 0.0) - 0.15 * span, max(max(finite), 0.0) + 0.15 * span
    lower = _finite_limits([r.lower for r in rows], low_edge)
    upper = _finite_limits([r.upper for r in rows], high_edge)
    pos = np.arange(m)[::-1]
    lines = LineCollection([[(lo, p), (hi, p)] for lo, hi, p in zip(lower, upper, pos)],
                           colors=PALETTE["blue"], linewidths=2.2, zorder=2)
    lines.set_gid("intervals")
    ax.add_collection(lines)
    for r, p in zip(rows, pos):
        if not math.isfinite(r.lower):
            ax.plot([low_edge], [p], marker="<", color=PALETTE["blue"])
        if not math.isfinite(r.upper):
            ax.plot([high_edge], [p], marker=">", color=PALETTE["blue"])
    points = ax.scatter([r.estimate for r in rows], pos, s=34, color=PALETTE["ink"], zorder=3)
    points.set_gid("estimates")
    ax.axvline(0.0, color=PALETTE["orange"], linestyle="--", linewidth=1.2, zorder=1)
    ax.set_yticks(pos, [label_text(r.label) for r in rows])
    ax.set_ylim(-0.7, m - 0.3)
    ax.set_xlim(low_edge, high_edge)
    ax.grid(axis="y", visible=False)
    unit = f" ({units})" if units else ""
    ax.set_xlabel(label_text(f"estimate{unit}, {result.interval} {result.level:.0%} interval"))
    return fig


@styled
def plot_power(curve: PowerCurve, *, target: float | None = 0.8) -> Figure:
    """Power against the number of observations per level.

    Returns
    -------
    matplotlib.figure.Figure
        One axes: the curve (``gid="power"``, one point per group size of the
        curve object) and, if ``target`` is given, a reference line at it.
    """
    fig, (ax,) = new_figure(1)
    sizes = [p.sizes[0] for p in curve.points]
    power = [p.power for p in curve.points]
    (line,) = ax.plot(sizes, power, color=PALETTE["blue"], marker="o", linewidth=2.0)
    line.set_gid("power")
    if target is not None:
        ax.axhline(target, color=PALETTE["orange"], linestyle="--", linewidth=1.2)
        ax.annotate(f"power {target:g}", (sizes[0], target), xytext=(2, 4),
                    textcoords="offset points", color=PALETTE["orange"], fontsize=9)
    ax.set_ylim(0.0, 1.02)
    ax.set_xlabel("observations per level")
    ax.set_ylabel(f"power at alpha = {curve.alpha:g}")
    ax.set_title(label_text(curve.test), loc="left", fontsize=10)
    return fig
