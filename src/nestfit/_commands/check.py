"""``nestfit check FILE --response COL --factor COL``: assumption tests and Welch's test."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, add_group_input, emit, read_groups

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``check`` subcommand."""
    p = sub.add_parser(
        "check",
        help="test equal variances and normal errors; compare means by Welch's test",
        description=(
            "Run Levene's and the Brown-Forsythe tests and Bartlett's test of equal variances, "
            "the Shapiro-Wilk test on the residuals of the separate-means model, and Welch's "
            "test of equal means without assuming equal variances. JSON output: "
            '{"tests": [{"name", "statistic", "df", "p", "reading", ...}], "groups": [...]}; '
            "df is a list of two numbers for F statistics, one number for chi-square, null "
            "for Shapiro-Wilk."
        ),
    )
    add_group_input(p)
    p.add_argument("--alpha", type=float, default=0.05,
                   help="level used for the plain-words readings (default 0.05)")
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read the file exactly, run the checks, print them."""
    from nestfit.checks import check_assumptions

    models = read_groups(args)
    result = check_assumptions(models, alpha=args.alpha)
    payload = result.to_dict()
    payload["missing"] = models.missing.to_dict()
    text = [str(result)]
    if models.missing.n_dropped:
        text.append(f"  {models.missing}")
    emit(payload, "\n".join(text), args.format)
    return 0
