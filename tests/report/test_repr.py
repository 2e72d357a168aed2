"""Notebook HTML of fits, comparisons and contrast results (the _repr_html_ hooks)."""

from __future__ import annotations

import re

from nestfit.report import comparison_html, family_html, fit_html
from nestfit.report._format import num
from tests.report.conftest import Case


def _cells(html: str) -> list[str]:
    return re.findall(r"<td[^>]*>([^<]*)</td>", html)


def test_fit_html(demo: Case) -> None:
    fit = demo.models.separate_means("deviation")
    html = fit_html(fit)
    assert html.startswith('<div class="nestfit-result">') and "<script" not in html
    cells = _cells(html)
    for name, estimate in zip(fit.design.column_names, fit.coefficients):
        assert name in cells and num(estimate) in cells
    assert f"residual SS {num(fit.residual_ss)}" in html


def test_comparison_html(demo: Case) -> None:
    html = comparison_html(demo.comparison)
    cells = _cells(html)
    for step in demo.comparison.steps:
        assert num(step.ss) in cells and num(step.f, 5) in cells
    assert "M0 -&gt; M1" in cells


def test_family_html(demo: Case) -> None:
    html = family_html(demo.contrasts)
    cells = _cells(html)
    for row in demo.contrasts.rows:
        assert row.label in cells and num(row.estimate) in cells
    assert "Holm" in html


def test_fragments_escape_user_data(hostile: Case) -> None:
    for html in (fit_html(hostile.models.separate_means()), comparison_html(hostile.comparison),
                 family_html(hostile.contrasts), hostile.report._repr_html_()):
        assert "<script" not in html.lower() and "<img src=x" not in html
        assert "&lt;script&gt;" in html
