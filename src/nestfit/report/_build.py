"""Build the report's document model from a worked analysis (no statistics computed here)."""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from nestfit.report._build_extras import (
    checks_section,
    contrasts_section,
    means_section,
    power_section,
)
from nestfit.report._build_models import comparison_sections, model_sections, regression_section
from nestfit.report._document import (
    Block,
    BulletList,
    Code,
    Document,
    Figure,
    Note,
    Paragraph,
    Section,
    Table,
)
from nestfit.report._format import num

if TYPE_CHECKING:
    from nestfit._summary import WorkedAnalysis

__all__ = ["Options", "build_document", "make_figures"]


@dataclass(frozen=True)
class Options:
    """What the report says beyond the numbers.

    Attributes
    ----------
    title : str
    question : str
        The question the analysis answers, in words.
    data_note : str
        Where the data come from (say here if they are invented).
    units : str
        Units of the response, for tables and axes.
    figures : bool
        Draw the figures (needs matplotlib).
    design_rows : int
        Rows of each design matrix shown.
    progress : callable, optional
        Called with the name of each stage (e.g. to print it on stderr).
    """

    title: str = ""
    question: str = ""
    data_note: str = ""
    units: str = ""
    figures: bool = True
    design_rows: int = 6
    progress: Callable[[str], None] | None = None


def _data_section(a: WorkedAnalysis, opts: Options) -> Section:
    g = a.groups
    blocks: list[Block] = []
    if opts.question:
        blocks.append(Paragraph(("Question: ", opts.question)))
    if opts.data_note:
        blocks.append(Paragraph((opts.data_note,)))
    unit = f" (in {opts.units})" if opts.units else ""
    used = f"{g.n_obs} observations are used"
    if a.missing is not None and a.missing.n_dropped:
        used += f"; {a.missing}"
    blocks.append(Paragraph((
        "The response is ", Code(a.response), unit, " and the factor is ", Code(a.factor),
        f", with {len(a.levels)} levels. {used}.",)))
    rows = tuple((lv, str(int(n)), num(m), num(s)) for lv, n, m, s in
                 zip(g.levels, g.counts, g.means, g.std_devs))
    blocks.append(Table((a.factor, "n", "mean", "standard deviation"), rows,
                        caption=f"Observations, mean and standard deviation of {a.response} in "
                                "each level (standard deviation with divisor n - 1)."))
    return Section("The question and the data", tuple(blocks))


def _cautions(a: WorkedAnalysis) -> Section:
    items = (
        ("Assumptions. Every F test, contrast and interval here assumes independent "
         "observations and normally distributed errors with the same variance in every level "
         "(the pooled residual mean square is the error term). Check them against how the data "
         "were collected, not only against the tests above.",),
        ("A p-value is not the probability that a model is true. A large p-value does not show "
         "that the smaller model holds; a small one does not show that a difference matters in "
         "practice: read the size of differences from the means and intervals.",),
        ("Multiplicity and selection. Each unadjusted p-value is valid for one test chosen "
         "before seeing the data. Several tests raise the chance of a false alarm; models, "
         "partitions or contrasts chosen after looking at the data need a method that covers "
         "the selection (for example Scheffe's over all contrasts), or a new study to confirm "
         "them.",),
        ("Decisions touching health, safety or regulation defer to the applicable standards "
         "and a qualified statistician.",),
    )
    return Section("Cautions", (BulletList(items),))


def make_figures(a: WorkedAnalysis, opts: Options) -> tuple[dict[str, Figure], str]:
    """Draw every figure the analysis supports; returns them by name and a note (if any)."""
    if not opts.figures:
        return {}, ""
    try:
        import matplotlib  # noqa: F401
    except ImportError:
        return {}, ("Figures were left out: they need matplotlib (install nestfit with the "
                    "plot extra).")
    from nestfit.report._plots import (
        plot_contrasts,
        plot_level_means,
        plot_nested_models,
        plot_power,
        png_bytes,
    )
    from nestfit.report._plots_residuals import plot_residuals

    units = opts.units or None
    out: dict[str, Figure] = {}

    def add(name: str, caption: str, alt: str, draw: Callable[[], Any]) -> None:
        if opts.progress is not None:
            opts.progress(f"drawing figure {name}")
        out[name] = Figure(name, caption, alt, png_bytes(draw()))

    for i, _ in enumerate(a.comparison.steps):
        s, b = a.models[i], a.models[i + 1]
        add(f"step-{i + 1}-models",
            f"{s.label} ({s.fit.name}) beside {b.label} ({b.fit.name}): each point is an "
            "observation, each bar a fitted level mean, each grey segment a residual.",
            f"Two panels of {a.response} by {a.factor}, showing the observations with the fitted "
            f"means of {s.label} and of {b.label} and the residual of every observation.",
            functools.partial(plot_nested_models, a, i, units=units))
    add("level-means", "Level means with intervals, one level at a time (thick) and "
        "simultaneous over all levels (thin).",
        f"The mean of {a.response} in each level of {a.factor} with two intervals each.",
        lambda: plot_level_means(a, units=units))
    if a.contrasts is not None:
        add("contrasts", "Contrast estimates with their intervals; the dashed line is zero.",
            "Each contrast's estimate as a point with its interval as a horizontal line.",
            lambda: plot_contrasts(a.contrasts, units=units))  # type: ignore[arg-type]
    if a.diagnostics is not None:
        add("residuals", "Residual diagnostics: normal quantiles of the standardized residuals, "
            "residuals against fitted values, and residual spread by level.",
            "Three panels: a normal quantile plot, residuals against fitted values, and "
            "residuals by level with bars at plus and minus each level's standard deviation.",
            lambda: plot_residuals(a, units=units))
    if a.power is not None:
        add("power", "Power against the number of observations per level.",
            "A rising curve of power against group size, with a dashed line at power 0.8.",
            lambda: plot_power(a.power))  # type: ignore[arg-type]
    return out, ""


def build_document(a: WorkedAnalysis, opts: Options | None = None) -> Document:
    """The worked-analysis document: data, models, comparisons, regression view, intervals,
    contrasts, checks, power, cautions (sections for results not given are left out)."""
    opts = opts or Options()
    figures, figure_note = make_figures(a, opts)
    if opts.progress is not None:
        opts.progress("writing the sections")
    sections: list[Section] = [_data_section(a, opts)]
    if figure_note:
        sections[0] = Section(sections[0].title, (*sections[0].blocks, Note((figure_note,))))
    sections += model_sections(a, opts)
    sections += comparison_sections(a, figures)
    sections.append(regression_section(a))
    sections.append(means_section(a, figures))
    for extra in (contrasts_section(a, figures), checks_section(a, figures),
                  power_section(a, figures)):
        if extra is not None:
            sections.append(extra)
    sections.append(_cautions(a))
    title = opts.title or f"Worked analysis: {a.response} by {a.factor}"
    chain = " -> ".join(m.label for m in a.models)
    subtitle = (f"{len(a.models)} nested models ({chain}) of {a.response} by {a.factor}, "
                f"n = {a.comparison.n_obs}; every number below comes from a nestfit result "
                "object.")
    return Document(title, tuple(sections), subtitle)
