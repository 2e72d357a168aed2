"""``nestfit contrasts FILE --response COL --factor COL [--contrast EXPR]... [--family F]``."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import (
    FAMILIES,
    add_format,
    add_group_input,
    add_variance,
    emit,
    family_from_args,
    read_groups,
)

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``contrasts`` subcommand."""
    p = sub.add_parser(
        "contrasts",
        help="estimate contrasts of level means, with multiplicity adjustment",
        description=(
            "Estimate contrasts of the level means of one factor (separate-means model; pooled "
            "residual mean square unless --variance says otherwise) and adjust their p-values "
            "and intervals for multiplicity. "
            "Give contrasts with --contrast, or a built-in family with --family."
        ),
    )
    add_group_input(p)
    p.add_argument(
        "--contrast", action="append", default=[], metavar='"[LABEL =] EXPR"',
        help='a contrast such as "serviced = H4 - mean(...)" or "A - mean(B, C)"; repeatable')
    p.add_argument("--family", metavar="FAMILY",
                   help=f"a built-in family: {FAMILIES} (SCORES: comma-separated level scores)")
    p.add_argument("--adjust", default="holm", metavar="METHOD",
                   help="none, bonferroni, holm, sidak, holm-sidak, hochberg, hommel, bh, by, "
                        "scheffe, tukey, dunnett, max-t or step-down-max-t (default: holm)")
    p.add_argument("--level", type=float, default=0.95,
                   help="confidence level of the intervals; 1 - level is the alpha of the "
                        "decisions shown (default: 0.95)")
    p.add_argument("--alternative", choices=["two-sided", "greater", "less"],
                   default="two-sided", help="alternative hypothesis (default: two-sided)")
    p.add_argument("--span", choices=["family", "all"], default="family",
                   help="scheffe only: protect the span of the family, or every contrast of the "
                        "level means (for contrasts chosen after seeing the data)")
    p.add_argument("--levels", metavar="A,B,C",
                   help="level order, comma-separated (matters for consecutive and trend)")
    p.add_argument("--seed", type=int, default=0,
                   help="seed of the multivariate-t integration (dunnett, max-t; default: 0)")
    add_variance(p)
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read the file exactly, estimate the contrasts, adjust, print."""
    from nestfit import contrasts as nc

    spec = family_from_args(args)
    models = read_groups(args)
    means = nc.cell_means(models.separate_means(), variance=args.variance)
    result = means.family(spec).adjust(args.adjust, level=args.level,
                                       alternative=args.alternative, rng=args.seed,
                                       span=args.span)
    payload = result.to_dict()
    payload["missing"] = models.missing.to_dict()
    text = [str(result)]
    if result.kind == "pairs":
        grouping = result.grouping()
        payload["grouping"] = grouping.to_dict()
        text += ["", "  " + grouping.sentence()]
    if models.missing.n_dropped:
        text.append(f"  {models.missing}")
    emit(payload, "\n".join(text), args.format)
    return 0
