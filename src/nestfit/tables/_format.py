"""Plain-text layouts of the table, cell, means and contrast results.

Formatting only: every number shown is an attribute of the result object.
"""

from __future__ import annotations

import textwrap
from typing import TYPE_CHECKING

from nestfit._text import format_number, format_p, text_table

if TYPE_CHECKING:
    from nestfit.tables._cells import CellReport
    from nestfit.tables._mean_contrast import MeanContrast
    from nestfit.tables._means import EstimatedMeans
    from nestfit.tables._models import FactorialModels
    from nestfit.tables._table import SumsOfSquaresTable

__all__ = ["format_cells", "format_contrast", "format_means", "format_models", "format_table"]

ASSUMPTIONS = ("Each test assumes independent, normally distributed errors with equal variance "
               "in every cell.")
MULTIPLICITY = "Several tests read from one table are not adjusted for multiplicity."
DEFER = ("Decisions touching health, safety or regulation follow the applicable standards and "
         "a qualified statistician.")


def _wrap(text: str) -> list[str]:
    return textwrap.wrap(text, width=92, initial_indent="  ", subsequent_indent="  ")


def format_table(table: SumsOfSquaresTable) -> str:
    """The text shown by ``print(table)``."""
    head = [
        f"Sums of squares for {table.response_name!r}, kind {table.kind!r}: {table.description}",
        f"  {table.n_obs} observations; full model {table.full_model}; every F uses its "
        f"residual mean square {format_number(table.residual_ms)} on {table.residual_df} df",
        "",
    ]
    rows = [
        [r.term, r.smaller_model, r.larger_model, str(r.df), format_number(r.ss),
         format_number(r.mean_square), format_number(r.f, 5), format_p(r.p)]
        for r in table.rows
    ]
    rows.append(["residual", "", table.full_model, str(table.residual_df),
                 format_number(table.residual_ss), format_number(table.residual_ms), "", ""])
    rows.append(["total", "1", "", str(table.n_obs - 1), format_number(table.total_ss), "", "",
                 ""])
    body = text_table(["term", "smaller model", "larger model", "df", "SS", "mean square", "F",
                       "p"], rows, left=3)
    lines = [*head, body, ""]
    for r in table.rows:
        if r.note:
            lines.extend(_wrap(f"{r.term}: {r.note}."))
    for note in table.notes:
        lines.extend(_wrap(note))
    lines.extend(_wrap(f"{ASSUMPTIONS} {MULTIPLICITY} {DEFER}"))
    return "\n".join(lines)


def format_cells(report: CellReport) -> str:
    """The text shown by ``print(model.cells)``."""
    lines = ["Cells of the crossed factors"]
    for c in report.crossings:
        rows = [[lab, str(n)] for lab, n in zip(c.labels, c.counts)]
        lines.extend(["", f"  {' x '.join(c.factors)}", text_table(["cell", "n"], rows)])
    lines.append("")
    if report.empty:
        lines.extend(_wrap(f"Empty cells (no observations): {'; '.join(report.empty)}."))
    else:
        lines.append("  Every cell has observations" + (" (balanced)." if report.balanced else "."))
    if report.uncounted:
        lines.extend(_wrap(f"Cells of {', '.join(report.uncounted)} are not counted: the factor "
                           "is an expression of several columns."))
    if report.aliased:
        lines.extend(_wrap(f"Aliased columns of the full model: {', '.join(report.aliased)}."))
    short = [f"{t} on {d} of {k} df" for t, k, d in report.term_df if d < k]
    if short:
        lines.extend(_wrap("Testable with fewer df than columns: " + "; ".join(short) + "."))
    elif report.empty:
        lines.append("  Every term keeps all its df.")
    return "\n".join(lines)


def format_means(means: EstimatedMeans) -> str:
    """The text shown by ``print(means)``."""
    adjusted = "Adjusted" if means.at else ""
    if means.kind == "cell":
        what = f"{adjusted or 'Cell'} {'cell ' if adjusted else ''}means"
    else:
        what = f"{adjusted or 'Marginal'} means of {', '.join(means.factors)}"
        if means.averaged_over:
            what += f" ({means.weighting} weights)"
    head = [f"{what} of {means.response_name!r} from model {means.model}"]
    if means.at:
        head.append("  covariates at " + ", ".join(f"{k} = {format_number(v)}"
                                                   for k, v in means.at.items()))
    ci = means.conf_int()
    rows = []
    for i, lab in enumerate(means.labels):
        if means.estimable[i]:
            rows.append([lab, str(int(means.counts[i])), format_number(means.estimates[i]),
                         format_number(means.std_errors[i]), format_number(ci["lower"].iloc[i]),
                         format_number(ci["upper"].iloc[i])])
        else:
            rows.append([lab, str(int(means.counts[i])), "not estimable", "", "", ""])
    lines = [*head, "", text_table(["mean", "n", "estimate", "std error", "lower 95%",
                                    "upper 95%"], rows), ""]
    for i, lab in enumerate(means.labels):
        if not means.estimable[i]:
            cells = means.missing_cells(i)
            why = f"needs empty cell(s) {'; '.join(cells)}" if cells else "not identified"
            lines.extend(_wrap(f"{lab}: {why}."))
    averaged = bool(means.averaged_over)
    if averaged and means.weighting == "equal":
        lines.extend(_wrap(f"Equal weights: each mean averages the cell means over "
                           f"{', '.join(means.averaged_over)} with the same weight, whatever "
                           "the cell counts."))
    elif averaged and means.weighting == "proportional":
        lines.extend(_wrap(f"Proportional weights: each mean weighs the cell means over "
                           f"{', '.join(means.averaged_over)} by their observation counts."))
    lines.extend(_wrap(f"Intervals use t on {means.df} residual df, one at a time (not adjusted "
                       f"for multiplicity). {ASSUMPTIONS} {DEFER}"))
    return "\n".join(lines)


def format_contrast(c: MeanContrast) -> str:
    """The text shown by ``print(contrast)``."""
    pct = f"{100 * c.level:g}%"
    rows = [[c.label, format_number(c.estimate), format_number(c.std_error),
             format_number(c.t, 4), str(c.df), format_p(c.p), format_number(c.lower),
             format_number(c.upper)]]
    lines = [f"Contrast of the {c.means}", "",
             text_table(["contrast", "estimate", "std error", "t", "df", "p", f"lower {pct}",
                         f"upper {pct}"], rows), ""]
    lines.extend(_wrap("A test and interval for one contrast chosen before seeing the data; "
                       "for several, adjust for multiplicity (Holm, Scheffe, Tukey-Kramer). "
                       f"{ASSUMPTIONS} {DEFER}"))
    return "\n".join(lines)


def format_models(models: FactorialModels) -> str:
    """The text shown by ``print(models)``."""
    lines = [f"Models of {models.response_name!r} from {models.formula!r} "
             f"({models.n_obs} observations)", "", "  term structure:"]
    for t in models.terms.terms:
        if t.is_intercept:
            continue
        kinds = ", ".join(f"{models.terms.factor(c).name} ({models.terms.factor(c).kind})"
                          for c in t.factor_codes)
        lines.append(f"    {t.name}: {kinds}; {len(t.columns)} column(s)")
    if models.missing.n_dropped:
        lines.append(f"  {models.missing}")
    if models.terms.categorical:
        lines.append("")
        lines.append(str(models.cells))
    return "\n".join(lines)
