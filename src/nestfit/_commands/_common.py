"""Helpers shared by the subcommands: output and file reading."""

from __future__ import annotations

import argparse
import json
from typing import Any

__all__ = ["add_format", "emit"]


def add_format(parser: argparse.ArgumentParser) -> None:
    """The ``--format text|json`` option."""
    parser.add_argument("--format", choices=["text", "json"], default="text",
                        help="text for people, json for programs (default: text)")


def emit(payload: dict[str, Any], text: str, fmt: str) -> None:
    """Print ``payload`` as JSON or ``text`` as it is."""
    if fmt == "json":
        print(json.dumps(payload, indent=2, allow_nan=False))
    else:
        print(text)
