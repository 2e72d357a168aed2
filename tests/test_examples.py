"""Every script in examples/ runs to the end and prints its analysis."""

from __future__ import annotations

import runpy
from pathlib import Path

import pytest

EXAMPLES = sorted((Path(__file__).resolve().parents[1] / "examples").glob("*.py"))


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_example_runs(path: Path, capsys: pytest.CaptureFixture) -> None:
    runpy.run_path(str(path), run_name="__main__")
    out = capsys.readouterr().out
    assert "invented" in out.lower()
    assert len(out.splitlines()) > 5
