"""``nestfit table``: rows that name their models, JSON shape, exact input, one-line errors."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import nestfit.tables as tables
from nestfit.cli import main
from tests.cli import run_cli as run
from tests.tables.helpers import rel, unbalanced


@pytest.fixture
def frame() -> pd.DataFrame:
    data = unbalanced(6, n=40, levels=(3, 2), covariate=True)
    # numeric level codes: must become factor labels because they sit inside C(...)
    data["a"] = data["a"].str[1:]
    return data.round(6)


@pytest.fixture
def csv(tmp_path: Path, frame: pd.DataFrame) -> Path:
    p = tmp_path / "trial.csv"
    frame.to_csv(p, index=False)
    return p


@pytest.mark.parametrize("kind", tables.KINDS)
def test_json_rows_match_the_library(csv: Path, frame: pd.DataFrame, kind: str,
                                     capsys: pytest.CaptureFixture) -> None:
    code, out, err = run(["table", str(csv), "--formula", "y ~ C(a) * C(b)", "--kind", kind,
                          "--format", "json"], capsys)
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["kind"] == kind
    assert set(d["residual"]) == {"df", "ss"}
    want = tables.factorial("y ~ C(a) * C(b)", pd.read_csv(csv, dtype={"a": str})).table(kind)
    assert [r["term"] for r in d["rows"]] == [r.term for r in want.rows]
    for got, r in zip(d["rows"], want.rows):
        assert {"term", "smaller_model", "larger_model", "df", "ss", "mean_square", "f",
                "p"} <= set(got)
        assert got["smaller_model"] == r.smaller_model and got["larger_model"] == r.larger_model
        assert got["df"] == r.df
        assert rel(got["ss"], r.ss) < 1e-12 and rel(got["p"], r.p) < 1e-10
    assert rel(d["residual"]["ss"], want.residual_ss) < 1e-12


def test_text_rows_name_both_models(csv: Path, capsys: pytest.CaptureFixture) -> None:
    code, out, _ = run(["table", str(csv), "--formula", "y ~ C(a) * C(b)", "--kind",
                        "sequential"], capsys)
    assert code == 0
    line = next(ln for ln in out.splitlines() if ln.strip().startswith("C(b) "))
    assert "1 + C(a)" in line and "1 + C(a) + C(b)" in line
    assert "independent, normally distributed" in " ".join(out.split())


def test_default_kind_is_marginal(csv: Path, capsys: pytest.CaptureFixture) -> None:
    code, out, _ = run(["table", str(csv), "--formula", "y ~ C(a) * C(b)", "--format", "json"],
                       capsys)
    assert code == 0 and json.loads(out)["kind"] == "marginal"


def test_covariates_keep_their_own_origin(tmp_path: Path, capsys: pytest.CaptureFixture) -> None:
    # x around 1000: read_table removes an offset, but the each-last row of C(g) in
    # y ~ C(g) * x tests the groups at x = 0, so the command must use x's own values.
    rng = np.random.default_rng(2)
    g = np.repeat(["p", "q", "r"], [6, 8, 7])
    x = np.round(1000 + rng.normal(0, 3, g.size), 2)
    y = np.round(5 + 0.02 * (x - 1000) * (1 + (g == "q")) + rng.normal(0, 0.1, g.size), 3)
    data = pd.DataFrame({"g": g, "x": x, "y": y})
    path = tmp_path / "cov.csv"
    data.to_csv(path, index=False)
    code, out, _ = run(["table", str(path), "--formula", "y ~ C(g) * x", "--kind", "each-last",
                        "--format", "json"], capsys)
    assert code == 0
    got = {r["term"]: r for r in json.loads(out)["rows"]}
    own = tables.factorial("y ~ C(g) * x", data).table("each-last")
    moved = tables.factorial("y ~ C(g) * x", data.assign(x=data["x"] - 1000)).table("each-last")
    # the absolute values agree to the precision of x near 1000 (~1e-13 relative)
    assert rel(got["C(g)"]["ss"], own.row("C(g)").ss) < 1e-6
    assert rel(own.row("C(g)").ss, moved.row("C(g)").ss) > 1e-3  # the origin matters here
    assert rel(got["C(g):x"]["ss"], own.row("C(g):x").ss) < 1e-6


def test_response_far_from_zero_is_read_exactly(tmp_path: Path,
                                                capsys: pytest.CaptureFixture) -> None:
    # Values like 1000000000000.4 have no float64 representation; the command reads them
    # as exact differences from an offset, which changes no sum of squares.
    a = ["1", "1", "1", "2", "2", "2", "1", "2"]
    b = ["u", "v", "u", "v", "u", "v", "v", "u"]
    tail = ["0.4", "0.3", "0.5", "0.9", "0.7", "0.8", "0.2", "0.1"]
    lines = ["a,b,y"] + [f"{i},{j},100000000000{t}" for i, j, t in zip(a, b, tail)]
    path = tmp_path / "big.csv"
    path.write_text("\n".join(lines) + "\n")
    code, out, _ = run(["table", str(path), "--formula", "y ~ C(a) + C(b)", "--format", "json",
                        "--kind", "sequential"], capsys)
    assert code == 0
    small = pd.DataFrame({"a": a, "b": b, "y": [float(t) for t in tail]})
    want = tables.factorial("y ~ C(a) + C(b)", small).table("sequential")
    for got, r in zip(json.loads(out)["rows"], want.rows):
        assert rel(got["ss"], r.ss) < 1e-12
    code, out, _ = run(["table", str(path), "--formula", "y ~ C(a) + C(b)"], capsys)
    assert "read as exact decimals less" in out


def test_missing_values_are_dropped_and_reported(tmp_path: Path, frame: pd.DataFrame,
                                                 capsys: pytest.CaptureFixture) -> None:
    frame = frame.astype({"y": object})
    frame.loc[3, "y"] = ""
    path = tmp_path / "gaps.csv"
    frame.to_csv(path, index=False)
    code, out, _ = run(["table", str(path), "--formula", "y ~ C(a) * C(b)", "--format", "json"],
                       capsys)
    assert code == 0
    d = json.loads(out)
    assert d["missing"]["n_dropped"] == 1 and d["n_obs"] == len(frame) - 1
    code, _, err = run(["table", str(path), "--formula", "y ~ C(a) * C(b)", "--missing",
                        "raise"], capsys)
    assert code == 1 and "missing values" in err


@pytest.mark.parametrize(("argv", "message"), [
    (["--formula", "y ~ C(q) * C(b)"], "no column named 'q'"),
    (["--formula", "y ~ 0 + C(a) + C(b)"], "no intercept"),
    (["--formula", "b ~ C(a)"], "column 'b'"),
    (["--formula", "y ~ C(a) +"], "could not be read"),
    (["--formula", "y ~ C(a, Blocks('1 | 2 3')) * C(b)", "--kind", "each-last"],
     "restricts the means"),
])
def test_bad_input_exits_1_with_one_line(csv: Path, argv: list[str], message: str,
                                         capsys: pytest.CaptureFixture) -> None:
    code, out, err = run(["table", str(csv), *argv], capsys)
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith("nestfit table: error: ")
    assert message in err


def test_missing_file_exits_1(tmp_path: Path, capsys: pytest.CaptureFixture) -> None:
    code, _, err = run(["table", str(tmp_path / "none.csv"), "--formula", "y ~ C(a)"], capsys)
    assert code == 1 and "no such file" in err and err.count("\n") == 1


def test_unknown_kind_is_a_usage_error(csv: Path, capsys: pytest.CaptureFixture) -> None:
    with pytest.raises(SystemExit) as exc:
        main(["table", str(csv), "--formula", "y ~ C(a)", "--kind", "typeIII"])
    assert exc.value.code == 2
    assert "invalid choice" in capsys.readouterr().err
