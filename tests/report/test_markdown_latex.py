"""Golden-structure tests of the Markdown and LaTeX reports: sections, numbers, escaping."""

from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

import nestfit
from nestfit.report import worked_report
from tests.checks.worked_examples import grouped_frame
from tests.checks.worked_examples import load as load_example
from tests.report.conftest import HOSTILE_LEVELS, Case
from tests.report.helpers import close_to_printed, headings, markdown_table

SECTIONS = ["The question and the data", "The models", "Comparing the models",
            "The same model as a regression", "Level means with intervals", "Contrasts",
            "Checking the assumptions", "Power for a planned study", "Cautions"]


def test_markdown_sections_in_order(demo_text_only: Case) -> None:
    md = demo_text_only.report.to_markdown()
    assert headings(md) == [
        "# Worked analysis: weight by head", "## The question and the data", "## The models",
        "### M0: equal means", r"### M1: H4 \| H1 H2 H3 H5 H6", "### M2: separate means",
        "## Comparing the models", "### Step M0 -&gt; M1", "### Step M1 -&gt; M2",
        "## The same model as a regression", "## Level means with intervals", "## Contrasts",
        "## Checking the assumptions", "## Power for a planned study", "## Cautions"]


def test_markdown_numbers_are_the_result_objects(demo_text_only: Case) -> None:
    case = demo_text_only
    md = case.report.to_markdown()
    groups = markdown_table(md, "Observations, mean and standard deviation")
    summary = case.checks.groups
    for row, level, n, mean, sd in zip(groups, summary.levels, summary.counts, summary.means,
                                       summary.std_devs):
        assert row[0] == level and row[1] == str(n)
        assert close_to_printed(mean, row[2]) and close_to_printed(sd, row[3])
    models = markdown_table(md, "The models, smallest first")
    for row, fit in zip(models, case.comparison.fits):
        assert close_to_printed(fit.residual_ss, row[4]) and row[3] == str(fit.residual_df)
    steps = markdown_table(md, "The F test of each step")
    for row, step in zip(steps, case.comparison.steps):
        assert row[1] == str(step.df)
        assert close_to_printed(step.ss, row[2]) and close_to_printed(step.f, row[4])
        assert close_to_printed(step.p, row[5])
    # the F formula with the numbers substituted
    first = case.comparison.steps[0]
    assert re.search(rf"F = \(extra SS / df\) / s\^2 = \(8\.1173 / 1\) / 1\.36929 = "
                     rf"8\.1173 / 1\.36929 = {first.f:.4f}", md)
    contrasts = markdown_table(md, "Each contrast: its weights")
    for row, r in zip(contrasts, case.contrasts.rows):
        assert row[0] == r.label
        for cell, value in zip(row[2:], (r.estimate, r.std_error, r.t, r.p, r.p_adjusted,
                                          r.lower, r.upper)):
            assert close_to_printed(value, cell), (cell, value)
    trace = markdown_table(md, "The hypotheses in the order the procedure takes them")
    assert trace[0][1] == "H4 - mean(others)"  # smallest p first
    assert trace[0][3] == "0.05/6 = 0.008333"
    tests = markdown_table(md, "Tests of the assumptions")
    for row, t in zip(tests, case.checks.tests):
        assert row[0] == t.name and close_to_printed(t.statistic, row[3])
    power = markdown_table(md, "Power at each group size")
    for row, p in zip(power, case.power.points):
        assert row[0] == str(p.sizes[0]) and close_to_printed(p.power, row[3])


def test_reference_oneway_table_reproduced_in_the_report() -> None:
    """NIST/SEMATECH e-Handbook 7.4.3 one-way example (nist_handbook_oneway_resistors.json):
    the report's extra SS, residual SS, mean squares and F round to the published values."""
    case = load_example("nist_handbook_oneway_resistors")
    published = case["published_results"]
    models = nestfit.groups(grouped_frame(case), "y", "g")
    md = worked_report(models.oneway(), models=models, figures=False).to_markdown()
    (step,) = markdown_table(md, "The F test of each step")
    for cell, key in ((step[2], "ss_treatments"), (step[3], "ms_treatments"), (step[4], "f")):
        assert round(float(cell), len(published[key].split(".")[1])) == float(published[key])
    models_rows = markdown_table(md, "The models, smallest first")
    assert round(float(models_rows[1][4]), 3) == float(published["ss_error"])
    assert round(float(models_rows[0][4]), 3) == float(published["ss_total_corrected"])


def test_reading_never_accepts_the_null(demo_text_only: Case) -> None:
    for text in (demo_text_only.report.to_markdown(), demo_text_only.report.to_text()):
        lowered = text.lower()
        assert "accept the null" not in lowered and "accepted" not in lowered
        assert "does not show that" in lowered
        assert "qualified statistician" in lowered


def test_markdown_escapes_user_data(hostile: Case) -> None:
    md = hostile.report.to_markdown()
    # Outside code spans and fenced blocks (whose text Markdown shows literally), no markup
    # from the data survives; inside them it is shown as text by every CommonMark renderer.
    outside = re.sub(r"^(`{3,})text\n.*?^\1$", "", md, flags=re.S | re.M)
    outside = re.sub(r"(`+)(?!`).*?(?<!`)\1(?!`)", "", outside, flags=re.S)
    assert "<script" not in outside and "<img" not in outside and "<b " not in outside
    assert re.search(r"\n<script>document\.title='PWNED'</script>: b0 \+ b\d = ", md)  # fenced
    assert "&lt;script&gt;document.title='PWNED'&lt;/script&gt;" in md
    # pipes in level names cannot split a table row: every row has as many cells as headers
    rows = markdown_table(md, "Observations, mean and standard deviation")
    assert [len(r) for r in rows] == [4] * len(HOSTILE_LEVELS)
    assert any(r[0] == r"a&amp;b\|c" for r in rows)


def test_latex_structure_and_numbers(demo_text_only: Case) -> None:
    tex = demo_text_only.report.to_latex()
    assert tex.startswith(r"\documentclass") and tex.rstrip().endswith(r"\end{document}")
    assert re.findall(r"\\section\{([^}]*)\}", tex) == SECTIONS
    assert tex.count(r"\begin{tabular}") == tex.count(r"\end{tabular}") >= 15
    for fit in demo_text_only.comparison.fits:
        assert f"{fit.residual_ss:.4f}" in tex
    step = demo_text_only.comparison.steps[0]
    assert r"p = P(F_{1,\,134} \geq 5.9281) = 0.0162" in tex and f"{step.p:.4f}" == "0.0162"
    assert r"\usepackage{graphicx}" in tex and "http" not in tex


def test_latex_escapes_user_data(hostile: Case) -> None:
    tex = hostile.report.to_latex()
    body = tex.split(r"\begin{document}", 1)[1]
    assert (r"\textless{}script\textgreater{}document.title='PWNED'\textless{}/script"
            r"\textgreater{}") in body
    assert r"a\&b\textbar{}c" in body
    assert r"\$x\_1\$ \{\#\} back\textbackslash{}slash \textasciitilde{}\textasciicircum{}\%" \
        in body
    # no user character reaches LaTeX unescaped: strip every escape we write, then look
    plain = re.sub(r"\\[a-zA-Z]+(\{\})?|\\[&%$#_{}]", "", body)
    for level in HOSTILE_LEVELS:
        assert level not in plain


def _tex_engine() -> str | None:
    return next((e for e in ("pdflatex", "lualatex", "xelatex") if shutil.which(e)), None)


@pytest.mark.parametrize("which", ["demo", "hostile"])
def test_latex_compiles(which: str, request: pytest.FixtureRequest, tmp_path: Path) -> None:
    engine = _tex_engine()
    if engine is None:
        pytest.skip("no TeX engine (pdflatex, lualatex or xelatex) on this machine; the LaTeX "
                    "compile check runs where one is installed")
    case: Case = request.getfixturevalue(which)
    paths = case.report.save(tmp_path / "report.tex")
    assert len(paths) == 1 + len(case.report.document.figures)
    run = subprocess.run([engine, "-interaction=nonstopmode", "-halt-on-error", "report.tex"],
                         cwd=tmp_path, capture_output=True, text=True, timeout=240)
    assert run.returncode == 0, run.stdout[-3000:]
    assert (tmp_path / "report.pdf").stat().st_size > 10_000
