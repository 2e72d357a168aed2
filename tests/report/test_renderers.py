"""The escapers and the text renderer, on a small hand-made document."""

from __future__ import annotations

import pytest

from nestfit.report import (
    BulletList,
    Code,
    Document,
    Formula,
    Math,
    Note,
    Paragraph,
    Section,
    Table,
    render_html,
    render_latex,
    render_markdown,
    render_text,
)
from nestfit.report._escape import (
    html_text,
    latex_text,
    markdown_code,
    markdown_text,
    terminal_text,
)
from tests.report.conftest import Case

DOC = Document("T <1> & $2$", (
    Section("A | b", (
        Paragraph(("x ", Code("na`me"), " ", Math("a^2", r"a^{2}"))),
        Table(("lvl", "n"), (("a|b", "1"), ("<i>", "2")), caption="cap_1"),
        Formula(((Math("F = 1", "F = 1"), " with ", Code("g&h")),)),
        Note(("careful",)),
        BulletList((("one",), ("two",))),
    )),
    Section("Sub", (Paragraph(("y",)),), level=3),
))


def test_escapers() -> None:
    assert html_text("<a href='x'>&</a>") == "&lt;a href=&#x27;x&#x27;&gt;&amp;&lt;/a&gt;"
    assert latex_text(r"\&%$#_{}~^") == (r"\textbackslash{}\&\%\$\#\_\{\}\textasciitilde{}"
                                          r"\textasciicircum{}")
    assert markdown_text("a|b *c* <d> [e](f) `g`") == r"a\|b \*c\* &lt;d&gt; \[e\](f) \`g\`"
    assert markdown_code("a`b") == "``a`b``" and markdown_code("`x") == "`` `x ``"
    assert terminal_text("red\x1b[31m") == "red\\x1b[31m"


def test_all_renderers_on_a_small_document() -> None:
    text = render_text(DOC)
    assert "1. A | b" in text and "1.1 Sub" in text and "Table 1. cap_1" in text
    assert "'na`me'" in text and "Note: careful" in text and "  - one" in text
    md = render_markdown(DOC)
    assert r"## A \| b" in md and "| a\\|b | 1 |" in md and "| &lt;i&gt; | 2 |" in md
    assert "```text\nF = 1 with g&h\n```" in md and "``na`me``" in md
    html = render_html(DOC)
    assert "<h2>A | b</h2>" in html and "<td>&lt;i&gt;</td>" in html
    assert "<title>T &lt;1&gt; &amp; $2$</title>" in html
    tex = render_latex(DOC)
    assert r"\section{A \textbar{} b}" in tex and r"\subsection{Sub}" in tex
    assert r"F = 1\text{ with }\text{\texttt{g\&h}}" in tex and "$a^{2}$" in tex
    assert r"\title{T \textless{}1\textgreater{} \& \$2\$}" in tex


def test_table_shape_is_checked() -> None:
    with pytest.raises(ValueError, match="2 cells for 3 columns"):
        Table(("a", "b", "c"), (("1", "2"),))


def test_text_report_of_the_demo(demo_text_only: Case) -> None:
    text = str(demo_text_only.report)
    assert text.startswith("Worked analysis: weight by head\n=====")
    assert "3. Comparing the models" in text and "9. Cautions" in text
    cautions = text.split("9. Cautions", 1)[1]
    assert all(len(line) <= 88 for line in cautions.splitlines())  # paragraphs are wrapped
