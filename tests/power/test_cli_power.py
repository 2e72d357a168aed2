"""``nestfit power``: power, group size and curve, text and JSON; one-line errors."""

from __future__ import annotations

import json

import pytest

from nestfit.cli import main
from nestfit.power import plan_comparison, plan_contrast, plan_effect_size


def _json(capsys: pytest.CaptureFixture[str], argv: list[str]) -> dict:
    assert main([*argv, "--format", "json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_power_at_n(capsys: pytest.CaptureFixture[str]) -> None:
    out = _json(capsys, ["power", "--means", "500,500,500.8", "--sigma", "1.2", "--n", "20"])
    assert out["power"] == pytest.approx(plan_comparison([500, 500, 500.8], 1.2).power(20).power,
                                         rel=1e-15)
    assert out["sizes"] == [20, 20, 20]
    out = _json(capsys, ["power", "--means", "1,2,4", "--sigma", "2", "--n", "5,6,7",
                         "--levels", "a,b,c", "--smaller", "a b | c", "--alpha", "0.1"])
    ref = plan_comparison({"a": 1, "b": 2, "c": 4}, 2.0, smaller="a b | c", alpha=0.1)
    assert out["power"] == pytest.approx(ref.power([5, 6, 7]).power, rel=1e-15)


def test_target_and_contrast(capsys: pytest.CaptureFixture[str]) -> None:
    out = _json(capsys, ["power", "--means", "500,500,500.8", "--sigma", "1.2",
                         "--contrast=-0.5,-0.5,1", "--target", "0.9"])
    ref = plan_contrast([500, 500, 500.8], [-0.5, -0.5, 1], 1.2).group_size(0.9)
    assert out["n_per_level"] == ref.n and out["power"] >= 0.9 > out["power_at_n_minus_1"]


def test_curve_and_text(capsys: pytest.CaptureFixture[str]) -> None:
    out = _json(capsys, ["power", "--effect-f", "0.25", "--groups", "4", "--curve", "10:60:10"])
    assert [p["n_per_level"] for p in out["points"]] == [10, 20, 30, 40, 50, 60]
    assert out["points"][2]["power"] == pytest.approx(plan_effect_size(0.25, 4).power(30).power)
    assert main(["power", "--effect-f", "0.25", "--groups", "4", "--target", "0.8"]) == 0
    text = capsys.readouterr().out
    assert "45 per level" in text and "qualified statistician" in text


def test_target_with_allocation(capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["power", "--means", "500,500,500.8", "--levels", "control,A,B", "--sigma", "1.2",
            "--target", "0.8", "--allocation", "2,1,1"]
    out = _json(capsys, argv)
    ref = plan_comparison({"control": 500, "A": 500, "B": 500.8}, 1.2).group_size(
        0.8, allocation={"control": 2, "A": 1, "B": 1})
    assert out["sizes"] == {"control": ref.sizes[0], "A": ref.sizes[1], "B": ref.sizes[2]}
    assert out["sizes"]["control"] == 2 * out["sizes"]["A"] == 2 * out["smallest_group"]
    assert out["n_per_level"] is None and out["n_total"] == sum(ref.sizes)
    assert out["allocation"] == {"control": 2.0, "A": 1.0, "B": 1.0}
    assert out["power"] >= 0.8 > out["power_at_n_minus_1"]
    assert out["sizes_at_n_minus_1"] == dict(zip(["control", "A", "B"], ref.sizes_below))
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert "in the ratios 2 : 1 : 1" in text
    assert f"group sizes {ref.sizes[0]}, {ref.sizes[1]}, {ref.sizes[2]}" in text
    out = _json(capsys, ["power", "--means", "0,0.5", "--sigma", "1", "--contrast=-1,1",
                         "--target", "0.9", "--allocation", "1,2.5"])
    ref = plan_contrast([0, 0.5], [-1, 1], 1.0).group_size(0.9, allocation=[1, 2.5])
    assert list(out["sizes"].values()) == list(ref.sizes) and out["power"] == ref.power
    out = _json(capsys, ["power", "--effect-f", "0.25", "--groups", "3", "--target", "0.8",
                         "--allocation", "1,1,1"])
    assert out["n_per_level"] == plan_effect_size(0.25, 3).group_size(0.8).n


@pytest.mark.parametrize(("argv", "message"), [
    (["--means", "1,2", "--sigma", "1", "--n", "5", "--allocation", "2,1"],
     "--allocation goes with --target"),
    (["--means", "1,2", "--sigma", "1", "--curve", "2:9", "--allocation", "2,1"],
     "--allocation goes with --target"),
    (["--means", "1,2", "--sigma", "1", "--target", "0.8", "--allocation", "2,x"],
     "--allocation must be numbers separated by commas"),
    (["--means", "1,2", "--levels", "a,b", "--sigma", "1", "--target", "0.8", "--allocation",
      "2,0"], "the allocation ratio for level 'b' must be a positive finite number"),
    (["--means", "1,2,3", "--sigma", "1", "--target", "0.8", "--allocation", "2,1"],
     "the allocation must give one ratio per level (3: 1, 2, 3)"),
    (["--effect-f", "0.25", "--groups", "3", "--target", "0.8", "--allocation", "2,1,1"],
     "cannot be planned from Cohen's f alone"),
    (["--means", "1,2", "--n", "5"], "give --means and --sigma"),
    (["--means", "1,x", "--sigma", "1", "--n", "5"], "--means must be numbers"),
    (["--means", "1,2", "--sigma", "1", "--n", "5.5"], "--n must be whole numbers"),
    (["--means", "1,2", "--sigma", "1", "--curve", "9:3"], "--curve must be FROM:TO"),
    (["--means", "1,2", "--sigma", "1", "--target", "1.2"], "target power must be between"),
    (["--means", "1,1", "--sigma", "1", "--target", "0.8"], "power never rises above alpha"),
    (["--means", "1,2", "--sigma", "1", "--n", "5", "--alpha", "0"], "alpha must be between"),
    (["--effect-f", "0.2", "--n", "5"], "--effect-f needs --groups"),
    (["--effect-f", "0.2", "--groups", "3", "--sigma", "1", "--n", "5"], "drop --sigma"),
    (["--means", "1,2", "--sigma", "1", "--groups", "3", "--n", "5"], "--groups goes with"),
    (["--means", "1,2", "--sigma", "1", "--contrast=1,1", "--n", "5"], "must sum to zero"),
    (["--means", "1,2,3", "--sigma", "1", "--contrast=1,-1,0", "--larger", "1 | 2 3",
      "--n", "5"], "drop --smaller/--larger"),
])
def test_bad_input_exits_1_with_one_line(argv: list[str], message: str,
                                         capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["power", *argv]) == 1
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and err.startswith("nestfit power: error:")
    assert message in err
