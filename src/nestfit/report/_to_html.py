"""HTML renderer: one self-contained page (inline style, figures as data: URIs, no script).

The page loads nothing: no ``<link>``, no ``<script>``, no remote font or
image; figures are inlined as base64 PNG. A Content-Security-Policy meta tag
(``default-src 'none'``) repeats the promise to the browser, so that even a
page edited by hand cannot fetch or run anything. Every piece of text is
escaped with :func:`html.escape`.
"""

from __future__ import annotations

import base64
from collections.abc import Sequence

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
    slug,
)
from nestfit.report._escape import html_text
from nestfit.report._style import PAGE_CSS

__all__ = ["CSP", "render_html", "render_html_fragment", "render_html_sections"]

CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def _code(text: str) -> str:
    return f"<code>{html_text(text)}</code>"


_INLINE = InlineStyle(
    text=html_text, code=_code, strong=lambda t: f"<strong>{html_text(t)}</strong>",
    math=lambda m: f'<span class="math">{html_text(m.plain)}</span>',
)
# formula lines: the line is already set in a formula face, so no markup but code
_FORMULA = InlineStyle(text=html_text, code=_code, strong=html_text,
                       math=lambda m: html_text(m.plain))
_inline, _plain = _INLINE.join, _FORMULA.join


def _table(t: Table, number: int | None) -> str:
    cls = ['' if a == "l" else ' class="num"' for a in t.align]
    head = "".join(f"<th{c}>{html_text(h)}</th>" for c, h in zip(cls, t.headers))
    rows = "\n".join("<tr>" + "".join(f"<td{c}>{html_text(v)}</td>" for c, v in zip(cls, row))
                     + "</tr>" for row in t.rows)
    caption = ""
    if t.caption:
        label = f"Table {number}. " if number is not None else ""
        caption = f'<p class="caption">{html_text(label + t.caption)}</p>'
    return (f'<div class="table-wrap">{caption}<table><thead><tr>{head}</tr></thead>'
            f"<tbody>\n{rows}\n</tbody></table></div>")


def _figure(f: Figure, number: int) -> str:
    data = base64.b64encode(f.png).decode("ascii")
    return (f'<figure id="figure-{html_text(f.name)}"><img src="data:image/png;base64,{data}" '
            f'alt="{html_text(f.alt)}"><figcaption>Figure {number}. '
            f"{html_text(f.caption)}</figcaption></figure>")


def _block(b: Block, counters: dict[str, int] | None) -> str:
    if isinstance(b, Paragraph):
        return f"<p>{_inline(b.parts)}</p>"
    if isinstance(b, Note):
        return f'<aside class="note"><p><strong>Note.</strong> {_inline(b.parts)}</p></aside>'
    if isinstance(b, BulletList):
        return "<ul>" + "".join(f"<li>{_inline(item)}</li>" for item in b.items) + "</ul>"
    if isinstance(b, Formula):
        lines = "".join(f'<div class="line">{_plain(line)}</div>' for line in b.lines)
        return f'<div class="formula">{lines}</div>'
    if isinstance(b, Table):
        number = None
        if counters is not None:
            counters["table"] += 1
            number = counters["table"]
        return _table(b, number)
    assert isinstance(b, Figure)
    counters = counters if counters is not None else {"figure": 0}
    counters["figure"] += 1
    return _figure(b, counters["figure"])


def _section(s: Section, anchor: str, counters: dict[str, int]) -> str:
    tag = f"h{min(max(s.level, 2), 4)}"
    body = "\n".join(_block(b, counters) for b in s.blocks)
    return (f'<section id="{anchor}"><{tag}>{html_text(s.title)}</{tag}>\n{body}\n'
            "</section>")


def _toc(sections: Sequence[Section], anchors: Sequence[str]) -> str:
    items: list[str] = []
    subs: list[str] = []

    def close() -> None:
        if subs and items:
            items[-1] = items[-1][:-5] + "<ul>" + "".join(subs) + "</ul></li>"
        subs.clear()

    for s, a in zip(sections, anchors):
        link = f'<a href="#{a}">{html_text(s.title)}</a>'
        if s.level <= 2 or not items:
            close()
            items.append(f"<li>{link}</li>")
        else:
            subs.append(f"<li>{link}</li>")
    close()
    return "".join(items)


def render_html(doc: Document) -> str:
    """The document as one self-contained HTML page (see the module documentation)."""
    used: set[str] = set()
    anchors = [slug(s.anchor or s.title, used) for s in doc.sections]
    counters = {"table": 0, "figure": 0}
    toc = _toc(doc.sections, anchors)
    sections = "\n".join(_section(s, a, counters) for s, a in zip(doc.sections, anchors))
    subtitle = f'<p class="subtitle">{html_text(doc.subtitle)}</p>' if doc.subtitle else ""
    return "\n".join([
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{html_text(doc.title)}</title>",
        f"<style>{PAGE_CSS}</style>",
        "</head>",
        "<body>",
        "<main>",
        f"<header><h1>{html_text(doc.title)}</h1>{subtitle}</header>",
        f'<nav aria-label="Contents"><h2>Contents</h2><ol>{toc}</ol></nav>',
        sections,
        "</main>",
        "</body>",
        "</html>",
        "",
    ])


def render_html_fragment(blocks: Sequence[Block], title: str = "") -> str:
    """A few blocks as an HTML fragment (for notebooks): no page, no numbering, scoped style."""
    from nestfit.report._style import FRAGMENT_CSS

    head = f"<strong>{html_text(title)}</strong>" if title else ""
    body = "\n".join(_block(b, None) for b in blocks)
    return f'<div class="nestfit-result"><style>{FRAGMENT_CSS}</style>{head}\n{body}</div>'


def render_html_sections(doc: Document) -> str:
    """The document's title and sections as a fragment (for notebooks): no page, scoped style."""
    from nestfit.report._style import FRAGMENT_CSS

    used: set[str] = set()
    counters = {"table": 0, "figure": 0}
    body = "\n".join(_section(s, "nestfit-" + slug(s.anchor or s.title, used), counters)
                     for s in doc.sections)
    return (f'<div class="nestfit-result"><style>{FRAGMENT_CSS}</style>'
            f"<h1>{html_text(doc.title)}</h1>\n{body}</div>")
