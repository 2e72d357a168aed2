"""``nestfit demo``: the worked comparison on the bundled invented data."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, emit

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``demo`` subcommand."""
    p = sub.add_parser("demo", help="run the worked comparison on the bundled invented data")
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Is the serviced head different from the rest, and is anything left after that?"""
    from nestfit import datasets
    from nestfit._groups import groups

    data = datasets.load_fill_weights()
    models = groups(data, "weight", "head")
    comparison = models.chain("H4 | ...")
    text = "\n".join([
        datasets.describe_fill_weights(),
        "",
        "Question: is the serviced head H4 different from the rest, and is anything",
        "left among the other heads once H4 has its own mean?",
        "",
        str(comparison),
        "",
        "Read each step as: does the larger model fit better than the smaller one by more",
        "than chance would explain? Each F test assumes independent, normally distributed",
        "errors with equal variance in every group. The data are invented; decisions about",
        "real products follow the applicable standards and a qualified statistician.",
    ])
    emit(comparison.to_dict(), text, args.format)
    return 0
