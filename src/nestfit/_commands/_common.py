"""Helpers shared by the subcommands: output and file reading."""

from __future__ import annotations

import argparse
import json
from typing import Any

__all__ = ["FAMILIES", "add_format", "add_group_input", "emit", "family_from_args",
           "read_groups"]

FAMILIES = "pairs, control=LEVEL, others, consecutive, trend, trend=SCORES"


def add_group_input(parser: argparse.ArgumentParser) -> None:
    """FILE, ``--response``, ``--factor`` and ``--missing``: one response, one factor."""
    parser.add_argument("file", help="CSV file with a header row")
    parser.add_argument("--response", required=True, metavar="COL",
                        help="numeric response column")
    parser.add_argument("--factor", required=True, metavar="COL", help="grouping column")
    parser.add_argument("--missing", choices=["drop", "raise"], default="drop",
                        help="drop rows with missing values (reported) or stop")


def read_groups(args: argparse.Namespace) -> Any:
    """Read ``args.file`` as exact decimals and return ``nestfit.groups(...)`` on it.

    The response keeps the common offset removed by the reader (it changes no sum of
    squares of a group model); ``args.levels`` (comma-separated), if present, fixes the
    level order.
    """
    from nestfit._decimal import read_table
    from nestfit._groups import groups

    table = read_table(args.file, numeric_columns=[args.response], text_columns=[args.factor])
    raw_levels = getattr(args, "levels", None)
    levels = [x.strip() for x in raw_levels.split(",")] if raw_levels else None
    return groups(table.frame, args.response, args.factor, missing=args.missing,
                  offset=table.offset_of(args.response), levels=levels)


def family_from_args(args: argparse.Namespace) -> Any:
    """The contrast family named by ``--contrast`` options or one ``--family``."""
    from nestfit import contrasts as nc
    from nestfit.errors import ContrastError

    if args.family and args.contrast:
        raise ContrastError("give --contrast options or one --family, not both")
    if args.contrast:
        return nc.family(*args.contrast, name="contrasts given")
    if not args.family:
        raise ContrastError(f"give at least one --contrast, or a --family ({FAMILIES})")
    name, _, value = args.family.partition("=")
    name = name.strip().lower()
    if name == "pairs" and not value:
        return nc.all_pairs()
    if name == "control" and value.strip():
        return nc.versus_control(value.strip())
    if name == "others" and not value:
        return nc.versus_rest()
    if name == "consecutive" and not value:
        return nc.consecutive()
    if name == "trend":
        if not value:
            return nc.trends()
        try:
            scores = [float(x) for x in value.split(",")]
        except ValueError:
            raise ContrastError(f"trend scores must be comma-separated numbers, got "
                                f"{value!r}") from None
        return nc.trends(spacing=scores)
    raise ContrastError(f"unknown family {args.family!r}; valid families are {FAMILIES}")


def add_variance(parser: argparse.ArgumentParser) -> None:
    """The ``--variance pooled|welch|HC0|HC1|HC2|HC3`` option of the contrast commands."""
    from nestfit.contrasts import VARIANCES

    parser.add_argument(
        "--variance", default="pooled", choices=VARIANCES,
        type=lambda v: next((k for k in VARIANCES if k.lower() == v.lower()), v),
        help="standard errors of the contrasts: pooled residual mean square (default), welch "
             "(each level's own variance, Satterthwaite df per contrast; with --adjust tukey "
             "this is Games-Howell), or a heteroscedasticity-consistent sandwich HC0-HC3")


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
