"""Worked-analysis reports, plots and notebook HTML (floor 5: renderers compute nothing).

worked_report(comparison, models=..., contrasts=..., checks=..., diagnostics=..., power=...)
    A :class:`Report` walking through the data, each model, each nested comparison, the
    regression view, level-mean intervals, contrasts, checks, power and cautions;
    ``report.save("report.html" | "report.md" | "report.tex" | "report.txt")``.
Plots (each returns a matplotlib Figure on an Agg canvas)
    plot_nested_models, plot_level_means, plot_contrasts, plot_residuals, plot_power.
Notebook HTML
    fit_html, comparison_html, family_html (the ``_repr_html_`` of the result classes).
The document model and its renderers
    Document, Section and its blocks; render_text, render_markdown, render_html, render_latex.

Every number shown comes from a result object: the statistics a report needs beyond
the comparison, contrast and check results are gathered by
:func:`nestfit._summary.worked_analysis` (floor 4), never here.
"""

from __future__ import annotations

from nestfit.report._build import Options, build_document
from nestfit.report._document import (
    BulletList,
    Code,
    Document,
    Figure,
    Formula,
    Math,
    Note,
    Paragraph,
    Section,
    Strong,
    Table,
)
from nestfit.report._plots import plot_contrasts, plot_level_means, plot_nested_models, plot_power
from nestfit.report._plots_residuals import plot_residuals
from nestfit.report._report import FORMATS, Report, format_of, worked_report
from nestfit.report._repr import comparison_html, family_html, fit_html
from nestfit.report._style import PALETTE
from nestfit.report._to_html import render_html
from nestfit.report._to_latex import render_latex
from nestfit.report._to_markdown import render_markdown
from nestfit.report._to_text import render_text

__all__ = [
    "FORMATS",
    "PALETTE",
    "BulletList",
    "Code",
    "Document",
    "Figure",
    "Formula",
    "Math",
    "Note",
    "Options",
    "Paragraph",
    "Report",
    "Section",
    "Strong",
    "Table",
    "build_document",
    "comparison_html",
    "family_html",
    "fit_html",
    "format_of",
    "plot_contrasts",
    "plot_level_means",
    "plot_nested_models",
    "plot_power",
    "plot_residuals",
    "render_html",
    "render_latex",
    "render_markdown",
    "render_text",
    "worked_report",
]
