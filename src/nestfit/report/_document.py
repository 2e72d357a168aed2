"""The document model every renderer walks: sections of headings, paragraphs, tables, formulas.

A report is built once as a :class:`Document` (plain data, no numbers computed:
every number is already text, formatted from a result object) and then
rendered by four small renderers (text, Markdown, HTML, LaTeX). Text in the
model is *plain*: each renderer escapes it for its own format, so level and
column names (user data) can never become markup. The one exception is
:class:`Math`, whose ``tex`` form is written by the report builder from
numbers and fixed symbols only, never from user data.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

__all__ = [
    "Block",
    "BulletList",
    "Code",
    "Document",
    "Figure",
    "Formula",
    "Inline",
    "InlineStyle",
    "Math",
    "Note",
    "Paragraph",
    "Section",
    "Strong",
    "Table",
    "slug",
]


@dataclass(frozen=True)
class Code:
    """A name from the data (level, column, model), shown in a monospace face."""

    text: str


@dataclass(frozen=True)
class Strong:
    """Emphasised plain text."""

    text: str


@dataclass(frozen=True)
class Math:
    """A formula fragment: ``plain`` for text, Markdown and HTML; ``tex`` for LaTeX math mode.

    ``tex`` must hold only numbers and fixed symbols (it is not escaped).
    """

    plain: str
    tex: str


Inline = str | Code | Strong | Math


@dataclass(frozen=True)
class InlineStyle:
    """How one renderer writes each kind of inline piece (already escaped for its format)."""

    text: Callable[[str], str]
    code: Callable[[str], str]
    strong: Callable[[str], str]
    math: Callable[[Math], str]

    def join(self, parts: Sequence[Inline]) -> str:
        """The pieces rendered one by one and joined."""
        out = []
        for part in parts:
            if isinstance(part, Math):
                out.append(self.math(part))
            elif isinstance(part, Code):
                out.append(self.code(part.text))
            elif isinstance(part, Strong):
                out.append(self.strong(part.text))
            else:
                out.append(self.text(part))
        return "".join(out)


@dataclass(frozen=True)
class Paragraph:
    """Running text: plain strings, names, emphasis and formula fragments."""

    parts: tuple[Inline, ...]


@dataclass(frozen=True)
class Note:
    """A caution or remark set off from the text."""

    parts: tuple[Inline, ...]


@dataclass(frozen=True)
class BulletList:
    """An unordered list; each item is a sequence of inline parts."""

    items: tuple[tuple[Inline, ...], ...]


@dataclass(frozen=True)
class Table:
    """A table of plain-text cells.

    Attributes
    ----------
    headers : tuple of str
    rows : tuple of tuple of str
    align : str
        One letter per column, ``"l"`` or ``"r"``.
    caption : str
    """

    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    align: str = ""
    caption: str = ""

    def __post_init__(self) -> None:
        align = self.align or "l" + "r" * (len(self.headers) - 1)
        if len(align) != len(self.headers) or set(align) - {"l", "r"}:
            raise ValueError(f"align {align!r} does not fit {len(self.headers)} columns")
        for row in self.rows:
            if len(row) != len(self.headers):
                raise ValueError(f"row {row!r} has {len(row)} cells for "
                                 f"{len(self.headers)} columns")
        object.__setattr__(self, "align", align)


@dataclass(frozen=True)
class Formula:
    """A displayed formula, one or more lines of inline parts (strings become text in math)."""

    lines: tuple[tuple[Inline, ...], ...]


@dataclass(frozen=True)
class Figure:
    """A rendered figure.

    Attributes
    ----------
    name : str
        A file-name stem (letters, digits and hyphens only).
    caption : str
    alt : str
        A description of the picture for readers who cannot see it.
    png : bytes
        The picture, as PNG.
    """

    name: str
    caption: str
    alt: str
    png: bytes = field(repr=False)

    def __post_init__(self) -> None:
        if not re.fullmatch(r"[a-z0-9][a-z0-9-]*", self.name):
            raise ValueError(f"figure name {self.name!r} must be lower-case letters, digits "
                             "and hyphens")


Block = Paragraph | Note | BulletList | Table | Formula | Figure


@dataclass(frozen=True)
class Section:
    """A heading and its blocks; ``level`` 2 for sections, 3 for subsections."""

    title: str
    blocks: tuple[Block, ...]
    level: int = 2
    anchor: str = ""


@dataclass(frozen=True)
class Document:
    """A whole report: a title, an optional subtitle and its sections in order."""

    title: str
    sections: tuple[Section, ...]
    subtitle: str = ""

    @property
    def figures(self) -> tuple[Figure, ...]:
        """Every figure, in order."""
        return tuple(b for s in self.sections for b in s.blocks if isinstance(b, Figure))


def slug(text: str, used: set[str] | None = None) -> str:
    """A safe anchor from a heading: lower-case ASCII letters, digits and hyphens."""
    base = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "section"
    name, n = base, 2
    while used is not None and name in used:
        name, n = f"{base}-{n}", n + 1
    if used is not None:
        used.add(name)
    return name
