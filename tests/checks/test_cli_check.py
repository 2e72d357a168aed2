"""``nestfit check``: text and JSON output, and one-line errors."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from scipy import stats

from nestfit.cli import main
from tests.checks.worked_examples import grouped_frame, load, samples


@pytest.fixture
def gear_csv(tmp_path: Path) -> Path:
    # The NIST e-Handbook gear data (vendored worked example), written as CSV text.
    case = load("nist_handbook_levene_gear")
    lines = ["batch,diameter"] + [f"{level},{v}" for level, values in
                                  case["data"]["groups"].items() for v in values]
    path = tmp_path / "gear.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_json_output(gear_csv: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(gear_csv), "--response", "diameter", "--factor", "batch",
                 "--format", "json"]) == 0
    payload = json.loads(capsys.readouterr().out)
    names = [t["name"] for t in payload["tests"]]
    assert names == ["Levene", "Brown-Forsythe", "Bartlett", "Shapiro-Wilk", "Welch"]
    bf = payload["tests"][1]
    case = load("nist_handbook_levene_gear")
    ref = stats.levene(*samples(case), center="median")  # scipy, reference implementation
    assert bf["statistic"] == pytest.approx(ref.statistic, rel=1e-10)
    assert bf["df"] == [9, 90] and bf["p"] == pytest.approx(ref.pvalue, rel=1e-9)
    assert isinstance(payload["tests"][4]["df"][1], float)
    assert payload["missing"]["n_dropped"] == 0 and len(payload["groups"]) == 10
    assert grouped_frame(case).shape[0] == 100


def test_text_output(gear_csv: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(gear_csv), "--response", "diameter", "--factor", "batch"]) == 0
    out = capsys.readouterr().out
    assert "Brown-Forsythe" in out and "9, 90" in out and "qualified statistician" in out


def test_bad_input_exits_1_with_one_line(tmp_path: Path,
                                         capsys: pytest.CaptureFixture[str]) -> None:
    path = tmp_path / "small.csv"
    path.write_text("g,y\na,1\na,2\na,3\nb,4\n", encoding="utf-8")
    assert main(["check", str(path), "--response", "y", "--factor", "g"]) == 1
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0
    assert err.startswith("nestfit check: error:") and "level 'b'" in err
    assert main(["check", str(path), "--response", "weight", "--factor", "g"]) == 1
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "no column named 'weight'" in err
    assert main(["check", str(path), "--response", "y", "--factor", "g", "--alpha", "2"]) == 1
    assert "alpha must be between 0 and 1" in capsys.readouterr().err
