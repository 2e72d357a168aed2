"""LaTeX renderer: a standalone article (standard packages only; figures as PNG files)."""

from __future__ import annotations

from collections.abc import Mapping

from nestfit.report._document import (
    Block,
    BulletList,
    Document,
    Figure,
    Formula,
    InlineStyle,
    Note,
    Paragraph,
    Section,
    Table,
)
from nestfit.report._escape import latex_text

__all__ = ["render_latex"]

PREAMBLE = r"""\documentclass[11pt]{article}
\usepackage[T1]{fontenc}
\usepackage[utf8]{inputenc}
\IfFileExists{lmodern.sty}{\usepackage{lmodern}}{}
\usepackage[margin=2.2cm]{geometry}
\usepackage{amsmath}
\usepackage{graphicx}
\usepackage{booktabs}
\setlength{\parindent}{0pt}
\setlength{\parskip}{0.6em}
"""


_INLINE = InlineStyle(
    text=latex_text, code=lambda t: rf"\texttt{{{latex_text(t)}}}",
    strong=lambda t: rf"\textbf{{{latex_text(t)}}}", math=lambda m: f"${m.tex}$",
)
# formula lines are set in math mode: text goes inside \text{...}
_MATH_LINE = InlineStyle(
    text=lambda t: rf"\text{{{latex_text(t)}}}",
    code=lambda t: rf"\text{{\texttt{{{latex_text(t)}}}}}",
    strong=lambda t: rf"\text{{\textbf{{{latex_text(t)}}}}}", math=lambda m: m.tex,
)
_inline, _math_line = _INLINE.join, _MATH_LINE.join


def _table(t: Table) -> str:
    head = " & ".join(rf"\textbf{{{latex_text(h)}}}" for h in t.headers) + r" \\"
    rows = "\n".join(" & ".join(latex_text(c) for c in row) + r" \\" for row in t.rows)
    caption = rf"\textit{{{latex_text(t.caption)}}}\\[0.3em]" + "\n" if t.caption else ""
    return "\n".join([
        r"\begin{center}\small",
        caption + rf"\begin{{tabular}}{{{t.align}}}",
        r"\toprule", head, r"\midrule", rows, r"\bottomrule",
        r"\end{tabular}", r"\end{center}",
    ])


def _block(b: Block, files: Mapping[str, str]) -> str:
    if isinstance(b, Paragraph):
        return _inline(b.parts)
    if isinstance(b, Note):
        return r"\begin{quote}\textbf{Note.} " + _inline(b.parts) + r"\end{quote}"
    if isinstance(b, BulletList):
        items = "\n".join(r"\item " + _inline(item) for item in b.items)
        return "\\begin{itemize}\n" + items + "\n\\end{itemize}"
    if isinstance(b, Formula):
        lines = " \\\\\n".join(_math_line(line) for line in b.lines)
        return "\\begin{gather*}\n" + lines + "\n\\end{gather*}"
    if isinstance(b, Table):
        return _table(b)
    assert isinstance(b, Figure)
    caption = rf"\caption{{{latex_text(b.caption)}}}"
    if b.name not in files:
        return (r"\begin{figure}[htbp]\centering\fbox{figure not written}" + caption
                + r"\end{figure}")
    return "\n".join([r"\begin{figure}[htbp]", r"\centering",
                      rf"\includegraphics[width=0.95\linewidth]{{{files[b.name]}}}",
                      caption, r"\end{figure}"])


def _section(s: Section, files: Mapping[str, str]) -> str:
    command = {2: "section", 3: "subsection"}.get(s.level, "subsubsection")
    return "\n\n".join([rf"\{command}{{{latex_text(s.title)}}}",
                        *(_block(b, files) for b in s.blocks)])


def render_latex(doc: Document, figure_files: Mapping[str, str] | None = None) -> str:
    """The document as a standalone LaTeX article.

    Parameters
    ----------
    doc : Document
    figure_files : mapping, optional
        Figure name -> relative path of its PNG file (written by the caller).
        Paths must be plain (letters, digits, hyphens, dots, slashes).
    """
    files = dict(figure_files or {})
    title = rf"\title{{{latex_text(doc.title)}}}" + "\n\\date{}\n"
    subtitle = latex_text(doc.subtitle) + "\n\n" if doc.subtitle else ""
    body = "\n\n".join(_section(s, files) for s in doc.sections)
    return (PREAMBLE + title + "\\begin{document}\n\\maketitle\n\n" + subtitle + body
            + "\n\n\\end{document}\n")
