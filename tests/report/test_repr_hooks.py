"""Jupyter: Fit, Comparison and contrast results render as HTML through the report package."""

from __future__ import annotations

import nestfit


def test_repr_html_hooks_escape_and_show_numbers() -> None:
    y = [1.0, 2.0, 3.0, 4.0, 6.0, 7.0]
    models = nestfit.groups(y=y, factor=["<b>x</b>", "<b>x</b>", "b", "b", "c", "c"])
    comp = models.oneway()
    fit = models.separate_means()
    result = nestfit.cell_means(fit).family(nestfit.all_pairs()).adjust("holm")
    for obj in (fit, comp, result):
        html = obj._repr_html_()
        assert "<b>x</b>" not in html and "<script" not in html
    # the level label appears (escaped) where the result names levels
    for obj in (fit, result):
        assert "&lt;b&gt;x&lt;/b&gt;" in obj._repr_html_()
    comp_html = comp._repr_html_()
    assert "equal means" in comp_html and "separate means" in comp_html
    assert f"<td class=\"num\">{comp.steps[0].df}</td>" in comp_html
