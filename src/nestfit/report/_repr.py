"""HTML for notebooks: ``_repr_html_`` of fits, comparisons and contrast family results.

Each function takes a result object and returns an escaped HTML fragment (a
table of our own layout). They are registered with :mod:`nestfit._display`
when this module is imported (``import nestfit`` imports it), and the result
classes' ``_repr_html_`` looks them up there, so the statistics floor never
imports the report floor.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from nestfit._display import register_html
from nestfit.report._document import Block, Code, Note, Paragraph, Table
from nestfit.report._format import num, pval, weight_text
from nestfit.report._to_html import render_html_fragment

if TYPE_CHECKING:
    from nestfit._compare import Comparison
    from nestfit._fit import Fit
    from nestfit.contrasts import FamilyResult

__all__ = ["comparison_html", "family_html", "fit_html"]


def fit_html(fit: Fit) -> str:
    """A fit as HTML: its summary line and the coefficient table."""
    frame = fit.to_frame()
    rows = tuple((str(name), num(r.estimate), num(r.std_error), num(r.t, 4), pval(r.p))
                 for name, r in frame.iterrows())
    blocks: list[Block] = [
        Paragraph(("Model ", Code(fit.name), " of ", Code(fit.response_name),
                   f" ({fit.method}): {fit.n_obs} observations, rank {fit.rank} of "
                   f"{fit.design.n_columns} columns, residual df {fit.residual_df}, residual SS "
                   f"{num(fit.residual_ss)}, sigma {num(fit.sigma)}, R squared "
                   f"{num(fit.r_squared, 4)}.",)),
        Table(("column", "estimate", "std error", "t", "p"), rows),
    ]
    if fit.aliased:
        blocks.append(Note(("Aliased (not estimable): ", ", ".join(fit.aliased), ".")))
    return render_html_fragment(blocks, "Least-squares fit")


def comparison_html(comp: Comparison) -> str:
    """A comparison as HTML: the models, smallest first, and the F test of each step."""
    label = {m.name: f"M{i}" for i, m in enumerate(comp.models)}
    models = tuple((f"M{i}", m.name, str(m.parameters), str(m.residual_df), num(m.residual_ss))
                   for i, m in enumerate(comp.models))
    steps = tuple((f"{label[s.smaller]} -> {label[s.larger]}", str(s.df), num(s.ss),
                   num(s.mean_square), num(s.f, 5), pval(s.p)) for s in comp.steps)
    last = comp.steps[-1]
    den = (f"F = (extra SS / df) / {num(last.denominator_ms)}, the residual mean square of "
           f"{label[comp.models[-1].name]} on {last.denominator_df} df"
           if comp.denominator == "largest" else
           "each F uses the residual mean square of the step's larger model")
    blocks: list[Block] = [
        Table(("", "model", "parameters", "residual df", "residual SS"), models, align="llrrr",
              caption=f"Nested models for {comp.response_name} (n = {comp.n_obs})"),
        Table(("step", "df", "extra SS", "mean square", "F", "p"), steps),
        Paragraph((den + ".",)),
    ]
    return render_html_fragment(blocks, "Nested comparison")


def family_html(result: FamilyResult) -> str:
    """A contrast family result as HTML: method, the contrast table, notes."""
    rejected = result.rejected()
    rows = tuple((r.label, weight_text(r.weights), num(r.estimate), num(r.std_error),
                  num(r.t, 4), pval(r.p), pval(r.p_adjusted), num(r.lower), num(r.upper),
                  "yes" if rej else "no") for r, rej in zip(result.rows, rejected))
    blocks: list[Block] = [
        Paragraph(("Family ", Code(result.family), " in model ", Code(result.model),
                   f"; method {result.method_name} ({result.error_rate}); intervals "
                   f"{result.interval} at {result.level:.0%}.",)),
        Table(("contrast", "weights", "estimate", "std error", "t", "p", "adjusted p", "lower",
               "upper", f"reject at {result.alpha:.3g}"), rows, align="llrrrrrrrr"),
        *(Note((n,)) for n in result.notes),
    ]
    return render_html_fragment(blocks, "Contrast family")


register_html("fit", fit_html)
register_html("comparison", comparison_html)
register_html("family", family_html)
