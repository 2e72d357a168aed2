"""Escaping of plain text (user data included) for each output format.

Level, column and model names come from the user's data: a level named
``<script>alert(1)</script>`` must show as those characters and never act as
markup, in every format.
"""

from __future__ import annotations

import html
import re

__all__ = ["html_text", "latex_text", "markdown_cell", "markdown_code", "markdown_text",
           "terminal_text"]

_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]")


def terminal_text(text: str) -> str:
    """Plain text for a terminal: control characters (e.g. ANSI escapes) shown as ``\\xNN``."""
    return _CONTROL.sub(lambda m: f"\\x{ord(m.group()):02x}", str(text))


def html_text(text: str) -> str:
    """HTML text or attribute value: ``& < > " '`` as character references."""
    return html.escape(terminal_text(text), quote=True)


_MD_SPECIAL = re.compile(r"([\\`*_\[\]#|~$])")


def markdown_text(text: str) -> str:
    """Markdown running text: punctuation with a meaning backslash-escaped, ``& < >`` as
    character references (Markdown passes raw HTML through, so they must not stay literal)."""
    out = _MD_SPECIAL.sub(r"\\\1", terminal_text(text).replace("\n", " "))
    return out.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def markdown_cell(text: str) -> str:
    """A Markdown table cell: as running text (so ``|`` is escaped and cannot end the cell)."""
    return markdown_text(text)


def markdown_code(text: str) -> str:
    """A Markdown code span whose fence is longer than any run of backticks in ``text``."""
    body = terminal_text(text).replace("\n", " ")
    runs = [len(r) for r in re.findall(r"`+", body)]
    fence = "`" * (max(runs, default=0) + 1)
    pad = " " if body.startswith("`") or body.endswith("`") or not body.strip() else ""
    return f"{fence}{pad}{body}{pad}{fence}"


_LATEX = {
    "\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
    "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}",
    "<": r"\textless{}", ">": r"\textgreater{}", "|": r"\textbar{}", '"': r"\textquotedbl{}",
}
_LATEX_RE = re.compile("|".join(re.escape(k) for k in _LATEX))


def latex_text(text: str) -> str:
    """LaTeX text: the special characters ``\\ & % $ # _ { } ~ ^`` (and ``< > | "``) escaped."""
    return _LATEX_RE.sub(lambda m: _LATEX[m.group()], terminal_text(text).replace("\n", " "))
