"""Plain-text renderer (terminal): headings underlined, tables padded, paragraphs wrapped."""

from __future__ import annotations

import textwrap
from collections.abc import Mapping

from nestfit._text import text_table
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
from nestfit.report._escape import terminal_text

__all__ = ["render_text"]

WIDTH = 88


_inline = InlineStyle(
    text=terminal_text, code=lambda t: f"'{terminal_text(t)}'",
    strong=lambda t: terminal_text(t).upper(), math=lambda m: m.plain,
).join


def _wrap(text: str, indent: str = "", first: str | None = None) -> str:
    return textwrap.fill(text, WIDTH, initial_indent=indent if first is None else first,
                         subsequent_indent=indent, break_on_hyphens=False,
                         break_long_words=False)


def _table(t: Table, number: int) -> str:
    left = len(t.align) - len(t.align.lstrip("l"))
    cells = [[terminal_text(c) for c in row] for row in t.rows]
    body = text_table([terminal_text(h) for h in t.headers], cells, left=max(left, 0))
    caption = _wrap(f"Table {number}. {terminal_text(t.caption)}") if t.caption else ""
    return "\n".join(x for x in (caption, body) if x)


def _block(b: Block, counters: dict[str, int], files: Mapping[str, str]) -> str:
    if isinstance(b, Paragraph):
        return _wrap(_inline(b.parts))
    if isinstance(b, Note):
        return _wrap(_inline(b.parts), indent="      ", first="Note: ")
    if isinstance(b, BulletList):
        return "\n".join(_wrap(_inline(item), indent="    ", first="  - ") for item in b.items)
    if isinstance(b, Formula):
        lines = [_inline(line) for line in b.lines]
        return "\n".join(("        " if t.startswith("= ") else "    ") + t for t in lines)
    if isinstance(b, Table):
        counters["table"] += 1
        return _table(b, counters["table"])
    assert isinstance(b, Figure)
    counters["figure"] += 1
    where = f" (file {files[b.name]})" if b.name in files else ""
    return _wrap(f"[Figure {counters['figure']}. {terminal_text(b.caption)}{where}]")


def _section(s: Section, number: str, counters: dict[str, int], files: Mapping[str, str]) -> str:
    title = f"{number} {terminal_text(s.title)}".strip()
    rule = ("-" if s.level <= 2 else "~") * min(len(title), WIDTH)
    return "\n\n".join([f"{title}\n{rule}", *(_block(b, counters, files) for b in s.blocks)])


def render_text(doc: Document, figure_files: Mapping[str, str] | None = None) -> str:
    """The document as plain text.

    Parameters
    ----------
    doc : Document
    figure_files : mapping, optional
        Figure name -> file path, mentioned next to each figure's caption.
    """
    files = dict(figure_files or {})
    counters = {"table": 0, "figure": 0}
    title = terminal_text(doc.title)
    parts = [f"{title}\n{'=' * min(len(title), WIDTH)}"]
    if doc.subtitle:
        parts.append(_wrap(terminal_text(doc.subtitle)))
    major, minor = 0, 0
    for s in doc.sections:
        if s.level <= 2:
            major, minor = major + 1, 0
            number = f"{major}."
        else:
            minor += 1
            number = f"{major}.{minor}"
        parts.append(_section(s, number, counters, files))
    return "\n\n".join(parts) + "\n"
