"""Running the command line inside a test: exit status and captured output."""

from __future__ import annotations

from pathlib import Path

import pytest

import nestfit
from nestfit.cli import main


def run_cli(argv: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    """``nestfit.cli.main(argv)`` and what it printed: ``(status, stdout, stderr)``."""
    status = main(argv)
    out, err = capsys.readouterr()
    return status, out, err


def write_fill_csv(directory: Path) -> Path:
    """The bundled invented fill-weight data written as ``fill.csv`` in ``directory``."""
    path = directory / "fill.csv"
    nestfit.datasets.load_fill_weights().to_csv(path, index=False)
    return path
