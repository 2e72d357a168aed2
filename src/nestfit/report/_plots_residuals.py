"""Residual diagnostics in three panels: normal quantiles, residuals by fitted value, spread."""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from nestfit.errors import DataError
from nestfit.report._plots import (
    FIGSIZE,
    _jitter,
    _level_axis,
    label_text,
    new_figure,
    styled,
)
from nestfit.report._style import PALETTE

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from nestfit._summary import WorkedAnalysis

__all__ = ["plot_residuals"]


@styled
def plot_residuals(analysis: WorkedAnalysis, *, units: str | None = None) -> Figure:
    """Normal quantile plot, residuals against fitted values, and residual spread by level.

    Parameters
    ----------
    analysis : WorkedAnalysis
        With :attr:`~nestfit._summary.WorkedAnalysis.diagnostics` (residual
        diagnostics of the separate-means model) and its quantiles.
    units : str, optional
        Units of the response, for the residual axes.

    Returns
    -------
    matplotlib.figure.Figure
        Three axes. Left: ordered standardized residuals against normal
        quantiles (``gid="quantiles"``, one point per observation) and the
        line ``y = x`` (``"reference"``). Middle: raw residuals against
        fitted values (``"residuals"``), observations flagged by any rule of
        the diagnostics as diamonds (``"flagged"``). Right: residuals by level
        (``"observations"``) with each level's standard deviation ``-/+ s_i``
        (``"spread"``, two ticks per level) from the group summary.

    Raises
    ------
    DataError
        The analysis has no residual diagnostics.
    """
    from matplotlib.collections import LineCollection

    d, q = analysis.diagnostics, analysis.quantiles
    if d is None or q is None:
        raise DataError("this analysis has no residual diagnostics; pass diagnostics= "
                        "(nestfit.checks.residual_diagnostics) to worked_analysis")
    fig, axes = new_figure(3, size=(FIGSIZE[0] * 1.55, FIGSIZE[1]))
    unit = f" ({units})" if units else ""

    ax = axes[0]
    pts = ax.scatter(q.theoretical, q.ordered, s=12, color=PALETTE["blue"], edgecolors="none")
    pts.set_gid("quantiles")
    edge = float(np.max(np.abs(np.concatenate([q.theoretical, q.ordered])))) * 1.05
    (ref,) = ax.plot([-edge, edge], [-edge, edge], color=PALETTE["orange"], linestyle="--",
                     linewidth=1.2)
    ref.set_gid("reference")
    ax.set_xlabel("normal quantile")
    ax.set_ylabel("standardized residual (ordered)")
    ax.set_title("Normal quantiles", loc="left")

    ax = axes[1]
    flagged = np.zeros(d.n_obs, dtype=bool)
    flagged[d.flagged] = True
    pts = ax.scatter(d.fitted[~flagged], d.residuals[~flagged], s=12, color=PALETTE["grey"],
                     edgecolors="none")
    pts.set_gid("residuals")
    marks = ax.scatter(d.fitted[flagged], d.residuals[flagged], s=40, marker="D",
                       facecolors="none", edgecolors=PALETTE["orange"], linewidths=1.4)
    marks.set_gid("flagged")
    ax.axhline(0.0, color=PALETTE["ink"], linewidth=0.9)
    ax.set_xlabel(label_text(f"fitted value{unit}"))
    ax.set_ylabel(label_text(f"residual{unit}"))
    ax.set_title(label_text(f"Residuals of {d.model}"), loc="left")

    ax = axes[2]
    codes = analysis.codes
    pts = ax.scatter(_jitter(codes), d.residuals, s=10, color=PALETTE["grey"], edgecolors="none")
    pts.set_gid("observations")
    sd = analysis.groups.std_devs
    ticks = [[(j - 0.36, sign * s), (j + 0.36, sign * s)]
             for j, s in enumerate(sd) if np.isfinite(s) for sign in (-1.0, 1.0)]
    spread = LineCollection(ticks, colors=PALETTE["blue"], linewidths=2.2)
    spread.set_gid("spread")
    ax.add_collection(spread)
    ax.axhline(0.0, color=PALETTE["ink"], linewidth=0.9)
    _level_axis(ax, analysis.levels, analysis.factor)
    ax.set_ylabel(label_text(f"residual{unit}"))
    ax.set_title("Spread by level (bars at -/+ s)", loc="left")
    return fig
