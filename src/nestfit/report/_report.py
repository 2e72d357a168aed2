"""The Report object: one document, four formats, and saving with figures beside it."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from nestfit.errors import DataError
from nestfit.report._build import Options, build_document
from nestfit.report._document import Document
from nestfit.report._to_html import render_html
from nestfit.report._to_latex import render_latex
from nestfit.report._to_markdown import render_markdown
from nestfit.report._to_text import render_text

if TYPE_CHECKING:
    from nestfit._compare import Comparison
    from nestfit._groups import GroupModels
    from nestfit._summary import WorkedAnalysis
    from nestfit.checks import AssumptionChecks, ResidualDiagnostics
    from nestfit.contrasts import FamilyResult
    from nestfit.power import PowerCurve

__all__ = ["FORMATS", "Report", "format_of", "worked_report"]

#: Output formats by file extension.
FORMATS: dict[str, str] = {".html": "html", ".htm": "html", ".md": "markdown",
                           ".markdown": "markdown", ".tex": "latex", ".txt": "text"}


def format_of(path: str | Path) -> str:
    """The output format a file name asks for, from its extension.

    Raises
    ------
    DataError
        An extension that is not one of ``.html .htm .md .markdown .tex .txt``.
    """
    suffix = Path(path).suffix.lower()
    if suffix not in FORMATS:
        raise DataError(f"cannot tell the report format from {str(path)!r}: the file name must "
                        "end in .html, .md, .tex or .txt")
    return FORMATS[suffix]


@dataclass(frozen=True, eq=False)
class Report:
    """A worked-analysis report, renderable as text, Markdown, HTML or LaTeX.

    Attributes
    ----------
    document : Document
        The document model the renderers walk.
    analysis : WorkedAnalysis or None
        The result objects it was built from.
    """

    document: Document
    analysis: WorkedAnalysis | None = field(default=None, repr=False)

    def figure_files(self, stem: str) -> dict[str, str]:
        """File names the figures get beside a report called ``stem``."""
        return {f.name: f"{stem}-{f.name}.png" for f in self.document.figures}

    def to_text(self, figure_files: dict[str, str] | None = None) -> str:
        """Plain text (figures named by caption, and by file when ``figure_files`` is given)."""
        return render_text(self.document, figure_files)

    def to_markdown(self, figure_files: dict[str, str] | None = None) -> str:
        """Markdown; figures link to ``figure_files`` (name -> relative path) when given."""
        return render_markdown(self.document, figure_files)

    def to_html(self) -> str:
        """One self-contained HTML page (figures inlined; nothing loaded, no script)."""
        return render_html(self.document)

    def to_latex(self, figure_files: dict[str, str] | None = None) -> str:
        """A standalone LaTeX article; figures included from ``figure_files`` when given."""
        return render_latex(self.document, figure_files)

    def save(self, path: str | Path) -> list[Path]:
        """Write the report in the format its extension names; returns every file written.

        HTML is one file. Markdown and LaTeX get each figure as a PNG beside
        them, named ``<stem>-<figure>.png``; plain text names those files
        without writing them.

        Raises
        ------
        DataError
            An unknown extension.
        OSError
            The file cannot be written.
        """
        target = Path(path)
        fmt = format_of(target)
        written: list[Path] = []
        if fmt == "html":
            target.write_text(self.to_html(), encoding="utf-8")
            return [target]
        files = self.figure_files(target.stem)
        if fmt in ("markdown", "latex"):
            for fig in self.document.figures:
                image = target.with_name(files[fig.name])
                image.write_bytes(fig.png)
                written.append(image)
            text = self.to_markdown(files) if fmt == "markdown" else self.to_latex(files)
        else:
            text = self.to_text()
        target.write_text(text, encoding="utf-8")
        return [target, *written]

    def __str__(self) -> str:
        return self.to_text()

    def _repr_html_(self) -> str:  # notebooks
        from nestfit.report._to_html import render_html_sections

        return render_html_sections(self.document)


def worked_report(
    comparison: Comparison,
    *,
    models: GroupModels | None = None,
    contrasts: FamilyResult | None = None,
    checks: AssumptionChecks | None = None,
    diagnostics: ResidualDiagnostics | None = None,
    power: PowerCurve | None = None,
    coding: Any = "deviation",
    alpha: float = 0.05,
    level: float = 0.95,
    mean_method: str | None = "bonferroni",
    title: str = "",
    question: str = "",
    data_note: str = "",
    units: str = "",
    figures: bool = True,
    design_rows: int = 6,
    progress: Callable[[str], None] | None = None,
) -> Report:
    """A worked analysis of one factor's nested group models, step by step.

    The report walks through the data (group sizes, means, standard
    deviations), each model (its claim, an excerpt of its design matrix, its
    fitted means and its residual sum of squares written as the sum it is),
    each comparison (the extra-sum-of-squares F with the numbers substituted,
    and a careful reading), the regression view under ``coding`` with the
    hypothesis matrix, the level means with ordinary and simultaneous
    intervals, and, when given, a contrast family with its adjustment worked
    step by step, the assumption checks and residual diagnostics, and a power
    curve; it closes with the cautions. Every number comes from a result
    object (see :func:`nestfit._summary.worked_analysis`).

    Parameters
    ----------
    comparison : Comparison
        Nested group models of one factor (:func:`nestfit.compare` of fits
        from :func:`nestfit.groups`).
    models : GroupModels, optional
        The builder the fits came from (default: rebuilt from the fits).
    contrasts : FamilyResult, optional
        A contrast family adjusted for multiplicity.
    checks : AssumptionChecks, optional
    diagnostics : ResidualDiagnostics, optional
    power : PowerCurve, optional
    coding : str or Coding
        Coding of the regression view (default ``"deviation"``).
    alpha : float
        Level of the plain-words readings.
    level : float
        Confidence level of the level-mean intervals.
    mean_method : str or None
        Method making the level-mean intervals simultaneous (default Bonferroni).
    title, question, data_note, units : str
        Words for the reader: a title, the question asked, where the data
        come from (say so if they are invented), the response's units.
    figures : bool
        Draw the figures (matplotlib; left out with a note if it is missing).
    design_rows : int
        Rows of each design matrix shown.
    progress : callable, optional
        Called with the name of each stage.

    Returns
    -------
    Report

    Examples
    --------
    >>> import nestfit
    >>> from nestfit.report import worked_report
    >>> models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    >>> report = worked_report(models.chain("H4 | ..."), models=models, figures=False)
    >>> "Comparing the models" in report.to_markdown()
    True
    """
    from nestfit._summary import worked_analysis

    if progress is not None:
        progress("gathering the results")
    analysis = worked_analysis(comparison, models=models, coding=coding, contrasts=contrasts,
                               checks=checks, diagnostics=diagnostics, power=power,
                               alpha=alpha, level=level, mean_method=mean_method)
    opts = Options(title=title, question=question, data_note=data_note, units=units,
                   figures=figures, design_rows=int(design_rows), progress=progress)
    return Report(build_document(analysis, opts), analysis)
