"""The command line: demo, compare, exact decimal input, one-line errors."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from nestfit.cli import main
from tests.cli import run_cli as run


@pytest.fixture
def csv(tmp_path: Path) -> Path:
    p = tmp_path / "lab.csv"
    rows = ["site,value"] + [f"{s},{v}" for s, v in [
        ("north", "10.1"), ("north", "10.3"), ("north", "9.9"), ("south", "11.2"),
        ("south", "11.0"), ("south", "11.5"), ("east", "10.0"), ("east", "10.4"),
        ("east", ""), ("west", "10.2"), ("west", "10.6")]]
    p.write_text("\n".join(rows) + "\n")
    return p


def test_demo_prints_the_comparison(capsys: pytest.CaptureFixture) -> None:
    code, out, _ = run(["demo"], capsys)
    assert code == 0
    assert "INVENTED" in out and "M0 -> M1" in out and "H4 | H1 H2 H3 H5 H6" in out


def test_compare_json_shape(csv: Path, capsys: pytest.CaptureFixture) -> None:
    code, out, _ = run(["compare", str(csv), "--response", "value", "--factor", "site",
                        "--blocks", "south | ...", "--format", "json"], capsys)
    assert code == 0
    d = json.loads(out)
    assert [m["name"] for m in d["models"]] == ["equal means", "south | east north west",
                                               "separate means"]
    assert [m["parameters"] for m in d["models"]] == [1, 2, 4]
    assert [s["df"] for s in d["steps"]] == [1, 2]
    assert d["missing"]["n_dropped"] == 1
    assert set(d["steps"][0]) == {"from", "to", "df", "ss", "mean_square", "f", "p"}


def test_compare_text_reports_missing_and_offset(csv: Path, capsys: pytest.CaptureFixture) -> None:
    code, out, _ = run(["compare", str(csv), "--response", "value", "--factor", "site"], capsys)
    assert code == 0
    assert "1 of 11 rows dropped" in out
    assert "read as exact decimals less 11" in out  # midrange 10.7 rounded to the range's digit


@pytest.mark.parametrize(
    ("extra", "match"),
    [
        (["--response", "nope", "--factor", "site"], "'nope'"),
        (["--response", "site", "--factor", "value"], "site"),
        (["--response", "value", "--factor", "site", "--blocks", "south || east"],
         "empty block before '|' (at character"),
        (["--response", "value", "--factor", "site", "--blocks", "south | mars"],
         "'mars', which is not a level"),
        (["--response", "value", "--factor", "site", "--blocks", "north south | east west",
          "--blocks", "south | ..."], "is not nested in model"),
    ],
)
def test_bad_input_one_line(csv: Path, capsys: pytest.CaptureFixture, extra: list[str],
                            match: str) -> None:
    code, out, err = run(["compare", str(csv), *extra], capsys)
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith("nestfit compare: error:")
    assert match in err


def test_missing_file(tmp_path: Path, capsys: pytest.CaptureFixture) -> None:
    code, _, err = run(["compare", str(tmp_path / "none.csv"), "--response", "a",
                        "--factor", "b"], capsys)
    assert code == 1 and "none.csv" in err and err.count("\n") == 1


def test_single_level_factor(tmp_path: Path, capsys: pytest.CaptureFixture) -> None:
    p = tmp_path / "one.csv"
    p.write_text("g,y\na,1\na,2\na,3\n")
    code, _, err = run(["compare", str(p), "--response", "y", "--factor", "g"], capsys)
    assert code == 1 and "single level 'a'" in err


def test_usage_error_exit_2(capsys: pytest.CaptureFixture) -> None:
    with pytest.raises(SystemExit) as info:
        main(["compare"])
    assert info.value.code == 2
