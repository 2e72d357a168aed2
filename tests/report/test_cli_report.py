"""``nestfit report`` and ``nestfit demo --out`` through nestfit.cli.main."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import nestfit
from tests.cli import run_cli as run
from tests.cli import write_fill_csv
from tests.report.helpers import close_to_printed, headings, markdown_table


@pytest.fixture
def csv(tmp_path: Path) -> Path:
    """The bundled invented fill-weight data as a CSV file."""
    return write_fill_csv(tmp_path)


def test_report_markdown_with_contrasts(csv: Path, tmp_path: Path,
                                        capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "r.md"
    code, stdout, err = run(["report", str(csv), "--response", "weight", "--factor", "head",
                             "--blocks", "H4 | ...", "--contrast", "serviced = H4 - mean(...)",
                             "--adjust", "bonferroni", "--units", "g", "--out", str(out)],
                            capsys)
    assert code == 0 and err == ""
    assert stdout.startswith(f"wrote {out} and 5 figure file(s) beside it")
    md = out.read_text(encoding="utf-8")
    assert "## Contrasts" in md and "## Checking the assumptions" in md
    assert len(list(tmp_path.glob("r-*.png"))) == 5  # 2 steps, means, contrast, residuals
    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    comparison = models.chain("H4 | ...")
    for row, step in zip(markdown_table(md, "The F test of each step"), comparison.steps):
        assert close_to_printed(step.f, row[4]) and close_to_printed(step.p, row[5])
    (row,) = markdown_table(md, "Each contrast: its weights")
    assert row[0] == "serviced"
    for name in (p.name for p in tmp_path.glob("r-*.png")):
        assert f"]({name})" in md


def test_report_with_welch_type_contrasts(csv: Path, tmp_path: Path,
                                          capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "w.md"
    code, _, err = run(["report", str(csv), "--response", "weight", "--factor", "head",
                        "--family", "pairs", "--adjust", "tukey", "--variance", "welch",
                        "--no-figures", "--out", str(out)], capsys)
    assert code == 0 and err == ""
    md = out.read_text(encoding="utf-8")
    assert "Games-Howell" in md and "Satterthwaite" in md
    from nestfit import contrasts as nc

    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    ref = nc.cell_means(models.separate_means(), variance="welch").family(
        nc.all_pairs()).adjust("tukey")
    rows = markdown_table(md, "Each contrast: its weights")
    assert len(rows) == len(ref.rows)
    for row, expected in zip(rows, ref.rows):  # columns: ..., std error, df, multiplier, t
        assert row[0] == expected.label
        assert close_to_printed(expected.df, row[4])
        assert close_to_printed(expected.critical_value, row[5])


@pytest.mark.parametrize("suffix", [".html", ".tex", ".txt"])
def test_report_formats(suffix: str, csv: Path, tmp_path: Path,
                        capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / f"r{suffix}"
    code, stdout, _ = run(["report", str(csv), "--response", "weight", "--factor", "head",
                           "--family", "pairs", "--adjust", "tukey", "--no-figures",
                           "--out", str(out)], capsys)
    assert code == 0 and stdout.strip() == f"wrote {out}"
    text = out.read_text(encoding="utf-8")
    assert "Tukey-Kramer" in text
    if suffix == ".html":
        assert "<script" not in text
    if suffix == ".tex":
        assert text.startswith(r"\documentclass")


def test_progress_on_request_and_quiet_otherwise(csv: Path, tmp_path: Path,
                                                 capsys: pytest.CaptureFixture[str]) -> None:
    base = ["report", str(csv), "--response", "weight", "--factor", "head", "--no-figures",
            "--out", str(tmp_path / "r.html")]
    _, _, err = run(base, capsys)
    assert err == ""  # stderr is not a terminal under pytest
    _, _, err = run([*base, "--progress"], capsys)
    assert "nestfit report: reading" in err and "nestfit report: writing" in err


def test_demo_out_writes_the_full_report(tmp_path: Path,
                                         capsys: pytest.CaptureFixture[str]) -> None:
    code, out, err = run(["demo", "--out", str(tmp_path / "demo-report")], capsys)
    assert code == 0 and err == ""
    html, md = tmp_path / "demo-report" / "report.html", tmp_path / "demo-report" / "report.md"
    assert f"The full worked analysis is in {html}" in out and str(md) in out
    assert "M0 -> M1" in out and "INVENTED" in out  # the demo's own text is still printed
    page = html.read_text(encoding="utf-8")
    assert page.count('<img src="data:image/png;base64,') == 6
    text = md.read_text(encoding="utf-8")
    assert headings(text)[0] == "# Worked analysis: fill weight by filling head (invented data)"
    for section in ("## Contrasts", "## Checking the assumptions", "## Power for a planned study",
                    "## Cautions"):
        assert section in text
    pngs = sorted(p.name for p in (tmp_path / "demo-report").glob("*.png"))
    assert len(pngs) == 6 and all(f"]({name})" in text for name in pngs)


def test_demo_without_out_is_unchanged(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, err = run(["demo"], capsys)
    assert code == 0 and "full worked analysis" not in out and err == ""
    assert out.rstrip().endswith("real products follow the applicable standards and a qualified "
                                 "statistician.")


def test_demo_out_with_json_keeps_stdout_json(tmp_path: Path,
                                              capsys: pytest.CaptureFixture[str]) -> None:
    code, out, err = run(["demo", "--format", "json", "--out", str(tmp_path / "d")], capsys)
    assert code == 0
    assert json.loads(out)["steps"][0]["df"] == 1
    assert "The full worked analysis is in" in err


@pytest.mark.parametrize(
    ("extra", "match"),
    [
        (["--response", "weight", "--factor", "head", "--out", "r.pdf"],
         "cannot tell the report format from 'r.pdf'"),
        (["--response", "nope", "--factor", "head", "--out", "r.md"], "'nope'"),
        (["--response", "weight", "--factor", "head", "--contrast", "H9 - H1",
          "--out", "r.md"], "H9"),
        (["--response", "weight", "--factor", "head", "--blocks", "H4 | H4",
          "--out", "r.md"], "H4"),
        (["--response", "weight", "--factor", "head", "--coding", "wavelet",
          "--out", "r.md"], "unknown coding 'wavelet'"),
        (["--response", "weight", "--factor", "head", "--family", "pairs", "--adjust", "dunnett",
          "--out", "r.md"], "dunnett"),
    ],
)
def test_bad_input_exits_1_with_one_line(extra: list[str], match: str, csv: Path,
                                         tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                         capsys: pytest.CaptureFixture[str]) -> None:
    monkeypatch.chdir(tmp_path)
    code, out, err = run(["report", str(csv), *extra, "--no-figures"], capsys)
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith("nestfit report: error: ")
    assert match in err
    assert not list(tmp_path.glob("r.*"))


def test_missing_file_exits_1(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code, _, err = run(["report", str(tmp_path / "none.csv"), "--response", "y", "--factor",
                        "g", "--out", str(tmp_path / "r.md")], capsys)
    assert code == 1 and err.count("\n") == 1 and "none.csv" in err
