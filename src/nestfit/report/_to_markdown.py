"""Markdown renderer (GitHub-flavoured tables; figures as image files beside the text)."""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence

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
from nestfit.report._escape import markdown_cell, markdown_code, markdown_text, terminal_text

__all__ = ["render_markdown"]


_INLINE = InlineStyle(
    text=markdown_text, code=markdown_code, strong=lambda t: f"**{markdown_text(t)}**",
    math=lambda m: markdown_code(m.plain),
)
# formula lines go inside a fenced block, where Markdown shows text literally
_FENCED = InlineStyle(text=terminal_text, code=terminal_text, strong=terminal_text,
                      math=lambda m: m.plain)
_inline, _plain = _INLINE.join, _FENCED.join


def _table(t: Table, number: int) -> str:
    head = "| " + " | ".join(markdown_cell(h) for h in t.headers) + " |"
    rule = "| " + " | ".join("---:" if a == "r" else ":---" for a in t.align) + " |"
    rows = ["| " + " | ".join(markdown_cell(c) for c in row) + " |" for row in t.rows]
    caption = f"**Table {number}.** {markdown_text(t.caption)}\n\n" if t.caption else ""
    return caption + "\n".join([head, rule, *rows])


def _fenced(lines: Sequence[str]) -> str:
    runs = [len(r) for line in lines for r in re.findall(r"`+", line)]
    fence = "`" * max(3, max(runs, default=0) + 1)
    return "\n".join([fence + "text", *lines, fence])


def _block(b: Block, counters: dict[str, int], files: Mapping[str, str]) -> str:
    if isinstance(b, Paragraph):
        return _inline(b.parts)
    if isinstance(b, Note):
        return "> **Note.** " + _inline(b.parts)
    if isinstance(b, BulletList):
        return "\n".join("- " + _inline(item) for item in b.items)
    if isinstance(b, Formula):
        return _fenced([_plain(line) for line in b.lines])
    if isinstance(b, Table):
        counters["table"] += 1
        return _table(b, counters["table"])
    assert isinstance(b, Figure)
    counters["figure"] += 1
    caption = f"*Figure {counters['figure']}.* {markdown_text(b.caption)}"
    if b.name not in files:
        return caption + " (figure not written)"
    return f"![{markdown_text(b.alt)}]({files[b.name]})\n\n{caption}"


def _section(s: Section, counters: dict[str, int], files: Mapping[str, str]) -> str:
    head = "#" * min(max(s.level, 2), 4) + " " + markdown_text(s.title)
    return "\n\n".join([head, *(_block(b, counters, files) for b in s.blocks)])


def render_markdown(doc: Document, figure_files: Mapping[str, str] | None = None) -> str:
    """The document as Markdown.

    Parameters
    ----------
    doc : Document
    figure_files : mapping, optional
        Figure name -> relative path of its PNG file (written by the caller);
        a figure without a file is shown by its caption only.
    """
    files = dict(figure_files or {})
    counters = {"table": 0, "figure": 0}
    parts = ["# " + markdown_text(doc.title)]
    if doc.subtitle:
        parts.append(markdown_text(doc.subtitle))
    parts.extend(_section(s, counters, files) for s in doc.sections)
    return "\n\n".join(parts) + "\n"
