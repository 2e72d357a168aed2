"""``nestfit contrasts``: output forms and one-line errors (exit status 1)."""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest

import nestfit
from nestfit import contrasts as nc
from tests.cli import run_cli, write_fill_csv


@pytest.fixture
def fill_csv(tmp_path: Path) -> str:
    """The invented fill-weight demo data as a CSV file."""
    return str(write_fill_csv(tmp_path))


def run(capsys: pytest.CaptureFixture[str], *args: str) -> tuple[int, str, str]:
    return run_cli(["contrasts", *args], capsys)


def test_text_output(capsys: pytest.CaptureFixture[str], fill_csv: str) -> None:
    status, out, err = run(capsys, fill_csv, "--response", "weight", "--factor", "head",
                           "--contrast", "serviced = H4 - mean(...)", "--contrast", "H1 - H2")
    assert status == 0 and err == ""
    assert "serviced" in out and "H1 - H2" in out
    assert "Holm (step-down Bonferroni)" in out and "qualified statistician" in out


def test_json_output_matches_the_api(capsys: pytest.CaptureFixture[str], fill_csv: str) -> None:
    status, out, _ = run(capsys, fill_csv, "--response", "weight", "--factor", "head",
                         "--contrast", "serviced = H4 - mean(...)", "--adjust", "scheffe",
                         "--level", "0.9", "--format", "json")
    assert status == 0
    payload = json.loads(out)
    assert payload["method"] == "scheffe" and payload["level"] == 0.9
    row = payload["contrasts"][0]
    assert set(row) == {"label", "weights", "estimate", "std_error", "df", "t", "p",
                        "p_adjusted", "lower", "upper"}
    assert row["label"] == "serviced" and row["weights"]["H4"] == 1.0
    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    ref = nc.cell_means(models.separate_means()).estimate("H4 - mean(...)")
    assert row["estimate"] == pytest.approx(ref.estimate, rel=1e-12)
    assert row["std_error"] == pytest.approx(ref.std_error, rel=1e-12)
    assert row["p_adjusted"] == pytest.approx(ref.p, rel=1e-9)  # Scheffe with q = 1 is t


def test_families(capsys: pytest.CaptureFixture[str], fill_csv: str) -> None:
    base = [fill_csv, "--response", "weight", "--factor", "head", "--format", "json"]
    status, out, _ = run(capsys, *base, "--family", "pairs", "--adjust", "tukey")
    payload = json.loads(out)
    assert status == 0 and len(payload["contrasts"]) == 15
    assert payload["grouping"]["sets"]
    first = run(capsys, *base, "--family", "control=H1", "--adjust", "dunnett", "--seed", "3")
    again = run(capsys, *base, "--family", "control=H1", "--adjust", "dunnett", "--seed", "3")
    assert first == again and first[0] == 0
    assert json.loads(first[1])["integration_error"] < 1e-3
    status, out, _ = run(capsys, *base, "--family", "trend=0,1,2,4,8,16", "--adjust", "none")
    assert status == 0
    assert [c["label"] for c in json.loads(out)["contrasts"]][:2] == ["linear", "quadratic"]
    for family in ("others", "consecutive", "trend"):
        assert run(capsys, *base, "--family", family)[0] == 0
    status, out, _ = run(capsys, *base, "--family", "control=H4", "--alternative", "less",
                         "--adjust", "step-down-max-t")
    assert status == 0 and all(c["lower"] is None for c in json.loads(out)["contrasts"])


def test_level_order_option(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    """Numeric-looking labels sort as text (10 before 2); --levels sets the order."""
    rng = np.random.default_rng(0)
    dose = np.repeat(["0", "2", "10"], 5)
    y = np.repeat([1.0, 2.0, 3.0], 5) + rng.normal(0, 0.1, 15)
    path = tmp_path / "dose.csv"
    path.write_text("dose,y\n" + "".join(f"{d},{v:.4f}\n" for d, v in zip(dose, y)))
    status, out, _ = run(capsys, str(path), "--response", "y", "--factor", "dose",
                         "--family", "consecutive", "--levels", "0,2,10", "--format", "json")
    assert status == 0
    assert [c["label"] for c in json.loads(out)["contrasts"]] == ["2 - 0", "10 - 2"]


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--contrast", "H4 - mean(H1, H9)"], "names level 'H9', which the factor does not have"),
        (["--contrast", "H4 - mean(H1"], r"expected ',' or '\)' .* \(at character 13 of"),
        (["--contrast", "H4 * H1"], "a product of two level expressions is not linear"),
        (["--contrast", "H4 - H1 - H2"], "weights summing to -1, not 0"),
        (["--contrast", "H4 - mean(H1, H2)", "--adjust", "tukey"], "tukey needs pairwise"),
        (["--family", "pairs", "--adjust", "dunnett"], "dunnett needs a many-to-one family"),
        (["--family", "pairs", "--contrast", "H1 - H2"], "not both"),
        ([], "give at least one --contrast"),
        (["--family", "all"], "unknown family 'all'"),
        (["--family", "trend=0,1,x"], "trend scores must be comma-separated numbers"),
        (["--family", "trend=0,1,2"], "spacing has 3 values but the factor has 6 levels"),
        (["--family", "control=H9"], "control level 'H9' is not a level"),
        (["--family", "pairs", "--adjust", "fdr"], "unknown adjustment method 'fdr'"),
        (["--family", "pairs", "--level", "1.5"], "level must be between 0 and 1"),
        (["--family", "pairs", "--adjust", "tukey", "--alternative", "greater"],
         "two-sided intervals only"),
    ],
)
def test_bad_input_exits_1_with_one_line(capsys: pytest.CaptureFixture[str], fill_csv: str,
                                         extra: list[str], message: str) -> None:
    status, out, err = run(capsys, fill_csv, "--response", "weight", "--factor", "head", *extra)
    assert status == 1 and out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("nestfit contrasts: error: ")
    assert re.search(message, lines[0]), lines[0]


def test_bad_files(capsys: pytest.CaptureFixture[str], fill_csv: str, tmp_path: Path) -> None:
    status, _, err = run(capsys, str(tmp_path / "none.csv"), "--response", "y", "--factor", "g",
                         "--family", "pairs")
    assert status == 1 and "no such file" in err and len(err.strip().splitlines()) == 1
    status, _, err = run(capsys, fill_csv, "--response", "mass", "--factor", "head",
                         "--family", "pairs")
    assert status == 1 and "no column named 'mass'" in err


def test_variance_option_gives_games_howell(capsys: pytest.CaptureFixture[str],
                                            fill_csv: str) -> None:
    status, out, _ = run(capsys, fill_csv, "--response", "weight", "--factor", "head",
                         "--family", "pairs", "--adjust", "tukey", "--variance", "welch",
                         "--format", "json")
    assert status == 0
    payload = json.loads(out)
    models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    ref = nc.cell_means(models.separate_means(), variance="welch").family(
        nc.all_pairs()).adjust("tukey")
    assert payload["variance"] == "welch" and "Games-Howell" in payload["method_name"]
    np.testing.assert_allclose([r["p_adjusted"] for r in payload["contrasts"]],
                               ref.p_adjusted, rtol=1e-12)
    assert [r["df"] for r in payload["contrasts"]] == pytest.approx([r.df for r in ref.rows])
    status, out, _ = run(capsys, fill_csv, "--response", "weight", "--factor", "head",
                         "--contrast", "H4 - mean(...)", "--variance", "hc3")
    assert status == 0 and "HC3 sandwich" in out


def test_bad_variance_option(capsys: pytest.CaptureFixture[str], fill_csv: str) -> None:
    with pytest.raises(SystemExit) as info:
        run(capsys, fill_csv, "--response", "weight", "--factor", "head", "--contrast",
            "H1 - H2", "--variance", "robust")
    assert info.value.code == 2
    assert "invalid choice: 'robust'" in capsys.readouterr().err


def test_welch_with_a_single_observation_level_is_one_line(capsys: pytest.CaptureFixture[str],
                                                            tmp_path: Path) -> None:
    path = tmp_path / "one.csv"
    path.write_text("g,y\nA,1\nA,2\nA,3\nB,4\nB,6\nC,5\n", encoding="utf-8")
    status, out, err = run(capsys, str(path), "--response", "y", "--factor", "g", "--family",
                           "pairs", "--variance", "welch")
    assert status == 1 and out == ""
    assert err.count("\n") == 1 and "level 'C' of 'g' has 1" in err
