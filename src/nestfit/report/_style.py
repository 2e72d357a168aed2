"""The one place colours, figure settings and page style are defined.

Palette. Our own set, chosen by the principle of colour-universal design
(Okabe & Ito 2008, "Color Universal Design (CUD): how to make figures and
presentations that are friendly to colorblind people", J*FLY, from memory):
two hues from the blue-orange axis, which stays distinct under the common
red-green colour-vision deficiencies, plus neutrals; the hues also differ in
lightness, so they stay apart in greyscale print. Every line colour has a
contrast ratio of at least 3:1 against white (WCAG 2.1, success criterion
1.4.11, for graphical objects), and no plot relies on colour alone: the two
models of a figure also differ in line style, ordinary and simultaneous
intervals in width, flagged points in marker.
"""

from __future__ import annotations

from typing import Any

__all__ = ["FRAGMENT_CSS", "PAGE_CSS", "PALETTE", "figure_rc"]

#: Colours by role (hex sRGB).
PALETTE: dict[str, str] = {
    "ink": "#1c1c1c",      # text, axes, reference lines        (contrast 17.0:1)
    "grey": "#6b6b6b",     # observations                        (5.3:1)
    "light": "#c4c4c4",    # residual segments, grid (background elements)
    "blue": "#1f5fa6",     # first model, estimates, per-mean intervals  (6.5:1)
    "orange": "#b8560f",   # second model, simultaneous intervals        (4.8:1)
    "sky": "#7fb2de",      # fills and bands behind blue lines
}

#: Figure size in inches and resolution (PNG) of every plot.
FIGSIZE = (7.2, 4.2)
DPI = 110


def figure_rc() -> dict[str, Any]:
    """matplotlib settings used inside ``matplotlib.rc_context`` by every plot."""
    from cycler import cycler

    return {
        "font.family": "DejaVu Sans",
        "font.size": 10,
        "axes.edgecolor": PALETTE["ink"],
        "axes.labelcolor": PALETTE["ink"],
        "axes.titlesize": 11,
        "axes.grid": True,
        "axes.axisbelow": True,
        "grid.color": "#e3e3e3",
        "grid.linewidth": 0.7,
        "xtick.color": PALETTE["ink"],
        "ytick.color": PALETTE["ink"],
        "legend.frameon": False,
        "savefig.dpi": DPI,
        "figure.dpi": DPI,
        "axes.prop_cycle": cycler(color=[PALETTE["blue"], PALETTE["orange"], PALETTE["grey"]]),
    }


#: Style of the HTML page: local fonts only (nothing is fetched), readable measure, print rules.
PAGE_CSS = """
:root { color-scheme: light; }
body { margin: 0; background: #ffffff; color: #1c1c1c;
  font: 16px/1.55 "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif; }
main { max-width: 62rem; margin: 0 auto; padding: 1.5rem 1.5rem 4rem; }
header h1 { font-size: 1.9rem; margin: 0.5rem 0 0.3rem; line-height: 1.25; }
.subtitle { color: #3d3d3d; margin-top: 0.2rem; }
h2 { font-size: 1.45rem; margin: 2.2rem 0 0.6rem; padding-bottom: 0.25rem;
  border-bottom: 2px solid #1f5fa6; }
h3 { font-size: 1.15rem; margin: 1.6rem 0 0.4rem; }
nav { background: #f3f6fa; border: 1px solid #d5dde8; padding: 0.6rem 1.2rem; margin: 1rem 0; }
nav h2 { font-size: 1rem; border: 0; margin: 0.3rem 0; padding: 0; }
nav ol { margin: 0.2rem 0 0.4rem; padding-left: 1.4rem; columns: 2; }
nav li { break-inside: avoid; }
nav ul { margin: 0.1rem 0 0.2rem; padding-left: 1.1rem; font-size: 0.92rem;
  list-style: circle; }
a { color: #1a4f8c; }
code, .math, .formula { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace;
  font-size: 0.9em; }
code { background: #f1f1f1; padding: 0 0.2em; border-radius: 3px; }
.formula { background: #f6f8fa; border-left: 4px solid #1f5fa6; padding: 0.6rem 1rem;
  margin: 0.8rem 0; white-space: pre-wrap; overflow-wrap: anywhere; }
.formula .line { margin: 0.15rem 0; }
.table-wrap { overflow-x: auto; margin: 0.8rem 0 1.1rem; }
table { border-collapse: collapse; font-size: 0.92rem; font-variant-numeric: tabular-nums; }
p.caption { font-weight: bold; margin: 0 0 0.3rem; color: #2b2b2b; font-size: 0.95rem; }
th, td { padding: 0.25rem 0.7rem; border-bottom: 1px solid #dcdcdc; vertical-align: top; }
th { background: #eef2f7; text-align: left; border-bottom: 2px solid #9aa9bb; }
td.num, th.num { text-align: right; white-space: nowrap; }
tbody tr:nth-child(even) td { background: #fafafa; }
figure { margin: 1.2rem 0; }
figure img { max-width: 100%; height: auto; border: 1px solid #e0e0e0; }
figcaption { font-size: 0.92rem; color: #333333; margin-top: 0.3rem; }
aside.note { border-left: 4px solid #b8560f; background: #fdf6f0; padding: 0.2rem 1rem;
  margin: 0.9rem 0; }
@media print { nav { display: none; } main { max-width: none; padding: 0; }
  h2 { break-after: avoid; } figure, table { break-inside: avoid; } }
"""

#: Style of the notebook fragments, scoped to their container.
FRAGMENT_CSS = """
.nestfit-result table { border-collapse: collapse; margin: 0.4rem 0;
  font-variant-numeric: tabular-nums; }
.nestfit-result th, .nestfit-result td { padding: 0.2rem 0.6rem;
  border-bottom: 1px solid #dcdcdc; }
.nestfit-result td.num, .nestfit-result th.num { text-align: right; }
.nestfit-result p.caption { font-weight: bold; margin: 0.3rem 0; }
.nestfit-result .formula { font-family: monospace; white-space: pre-wrap; }
"""
