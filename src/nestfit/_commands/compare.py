"""``nestfit compare FILE --response COL --factor COL [--blocks SPEC]...``."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, add_group_input, emit

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``compare`` subcommand."""
    p = sub.add_parser(
        "compare",
        help="compare equal means, optional partitions, and separate means",
        description=(
            "Compare nested group models of one response and one factor. With no --blocks "
            "the comparison is equal means -> separate means (the one-way analysis of "
            "variance); each --blocks adds a partition model between them, in refinement order."
        ),
    )
    add_group_input(p)
    p.add_argument(
        "--blocks", action="append", default=[], metavar="SPEC",
        help='a partition of the levels, e.g. "A | B C" ("..." = the remaining levels); repeatable',
    )
    p.add_argument("--denominator", choices=["largest", "each"], default="largest",
                   help="error mean square for every F: the largest model's, or each step's")
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read the file exactly, build the chain, print it."""
    from nestfit._decimal import read_table
    from nestfit._groups import groups

    table = read_table(args.file, numeric_columns=[args.response], text_columns=[args.factor])
    offset = table.offset_of(args.response)
    models = groups(table.frame, args.response, args.factor, missing=args.missing, offset=offset)
    comparison = models.chain(*args.blocks, denominator=args.denominator)
    payload = comparison.to_dict()
    payload["offset"] = str(table.offsets[args.response])
    payload["missing"] = models.missing.to_dict()
    notes = [str(comparison)]
    if offset:
        notes.append(
            f"  {args.response} was read as exact decimals less {table.offsets[args.response]} "
            "(a common offset changes no sum of squares)"
        )
    if models.missing.n_dropped:
        notes.append(f"  {models.missing}")
    emit(payload, "\n".join(notes), args.format)
    return 0
