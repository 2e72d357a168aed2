"""The HTML page, checked statically: self-contained, nothing to load or run, escaped."""

from __future__ import annotations

import base64
import re

from tests.report.conftest import HOSTILE_LEVELS, Case


def test_page_is_self_contained(demo: Case) -> None:
    html = demo.report.to_html()
    assert html.startswith("<!DOCTYPE html>")
    assert "<script" not in html.lower() and "<link" not in html.lower()
    assert "@import" not in html and "url(" not in html  # no CSS that fetches anything
    assert not re.search(r"(src|href)\s*=\s*[\"']?\s*(https?:|//|ftp:|file:)", html, re.I)
    assert "http://" not in html and "https://" not in html
    assert re.search(r'http-equiv="Content-Security-Policy" content="default-src \'none\'', html)
    sources = re.findall(r'<img src="([^"]*)"', html)
    assert len(sources) == len(demo.report.document.figures) == 6
    for src in sources:
        assert src.startswith("data:image/png;base64,")
        assert base64.b64decode(src.split(",", 1)[1])[:8] == b"\x89PNG\r\n\x1a\n"
    hrefs = re.findall(r'href="([^"]*)"', html)
    assert hrefs and all(h.startswith("#") for h in hrefs)
    ids = set(re.findall(r'id="([^"]*)"', html))
    assert all(h[1:] in ids for h in hrefs)


def test_page_escapes_user_data(hostile: Case) -> None:
    html = hostile.report.to_html()
    assert "<script" not in html.lower()
    assert "<img src=x" not in html and '<b id="pwned">' not in html
    assert "&lt;script&gt;document.title=&#x27;PWNED&#x27;&lt;/script&gt;" in html
    assert "&lt;b id=&quot;pwned&quot;&gt;bold&lt;/b&gt;" in html
    # every tag in the page is one the renderer writes
    tags = set(re.findall(r"<([a-zA-Z][a-zA-Z0-9]*)", html))
    assert tags <= {"html", "head", "meta", "title", "style", "body", "main", "header", "h1",
                    "h2", "h3", "h4", "p", "nav", "ol", "ul", "li", "a", "section", "div",
                    "table", "thead", "tbody", "tr", "th", "td", "code", "span", "strong",
                    "aside", "figure", "img", "figcaption"}
    # alt texts are attribute-escaped
    for alt in re.findall(r'alt="([^"]*)"', html):
        assert "<" not in alt and '"' not in alt
    assert all(level not in html for level in HOSTILE_LEVELS[:3])


def test_title_and_sections_present(demo: Case) -> None:
    html = demo.report.to_html()
    assert "<title>Worked analysis: weight by head</title>" in html
    for title in ("The question and the data", "The models", "Comparing the models",
                  "The same model as a regression", "Level means with intervals", "Contrasts",
                  "Checking the assumptions", "Power for a planned study", "Cautions"):
        assert f"<h2>{title}</h2>" in html
