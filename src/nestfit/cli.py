"""The ``nestfit`` command line: parse arguments, read files, call the public API, print.

No statistics here: every number printed comes from a result object.
Bad input ends with a one-line message on stderr and exit status 2
(usage) or 1 (data or model problems), never a traceback.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from typing import Any

from nestfit import __version__
from nestfit.errors import NestfitError, ParseError

__all__ = ["main"]


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="nestfit",
        description="Build group-mean models and compare them as nested least-squares fits.",
    )
    parser.add_argument("--version", action="version", version=f"nestfit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    demo = sub.add_parser("demo", help="run the worked comparison on the bundled invented data")
    demo.add_argument("--format", choices=["text", "json"], default="text")

    cmp_ = sub.add_parser(
        "compare",
        help="compare equal means, optional partitions, and separate means",
        description=(
            "Compare nested group models of one response and one factor. With no --blocks "
            "the comparison is equal means -> separate means (the one-way analysis of "
            "variance); each --blocks adds a partition model between them, in refinement order."
        ),
    )
    cmp_.add_argument("file", help="CSV file with a header row")
    cmp_.add_argument("--response", required=True, metavar="COL", help="numeric response column")
    cmp_.add_argument("--factor", required=True, metavar="COL", help="grouping column")
    cmp_.add_argument(
        "--blocks", action="append", default=[], metavar="SPEC",
        help='a partition of the levels, e.g. "A | B C" ("..." = the remaining levels); repeatable',
    )
    cmp_.add_argument("--denominator", choices=["largest", "each"], default="largest",
                      help="error mean square for every F: the largest model's, or each step's")
    cmp_.add_argument("--missing", choices=["drop", "raise"], default="drop")
    cmp_.add_argument("--format", choices=["text", "json"], default="text")
    return parser


def _emit(payload: dict[str, Any], text: str, fmt: str) -> None:
    if fmt == "json":
        print(json.dumps(payload, indent=2, allow_nan=False))
    else:
        print(text)


def _run_compare(args: argparse.Namespace) -> int:
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
    _emit(payload, "\n".join(notes), args.format)
    return 0


def _run_demo(args: argparse.Namespace) -> int:
    from nestfit import datasets
    from nestfit._groups import groups

    data = datasets.load_fill_weights()
    models = groups(data, "weight", "head")
    comparison = models.chain("H4 | ...")
    if args.format == "json":
        _emit(comparison.to_dict(), "", "json")
        return 0
    print(datasets.describe_fill_weights())
    print()
    print("Question: is the serviced head H4 different from the rest, and is anything")
    print("left among the other heads once H4 has its own mean?")
    print()
    print(comparison)
    print()
    print("Read each step as: does the larger model fit better than the smaller one by more")
    print("than chance would explain? The tests assume independent, normally distributed")
    print("errors with equal variance in every group. These are invented data; decisions")
    print("about real products follow the applicable standards and a qualified statistician.")
    return 0


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``nestfit`` command; returns the exit status."""
    parser = _parser()
    args = parser.parse_args(argv)
    runners = {"compare": _run_compare, "demo": _run_demo}
    try:
        return runners[args.command](args)
    except NestfitError as exc:
        message = exc.one_line() if isinstance(exc, ParseError) else " ".join(str(exc).split())
        print(f"nestfit {args.command}: error: {message}", file=sys.stderr)
        return 1
    except OSError as exc:
        print(f"nestfit {args.command}: error: {exc.strerror or exc}: "
              f"{getattr(exc, 'filename', '')}", file=sys.stderr)
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
