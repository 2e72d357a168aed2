"""``nestfit contrasts FILE --response COL --factor COL [--contrast EXPR]... [--family F]``."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, emit

__all__ = ["register", "run"]

_FAMILIES = "pairs, control=LEVEL, others, consecutive, trend, trend=SCORES"


def register(sub: Any) -> None:
    """Add the ``contrasts`` subcommand."""
    p = sub.add_parser(
        "contrasts",
        help="estimate contrasts of level means, with multiplicity adjustment",
        description=(
            "Estimate contrasts of the level means of one factor (separate-means model, pooled "
            "residual mean square) and adjust their p-values and intervals for multiplicity. "
            "Give contrasts with --contrast, or a built-in family with --family."
        ),
    )
    p.add_argument("file", help="CSV file with a header row")
    p.add_argument("--response", required=True, metavar="COL", help="numeric response column")
    p.add_argument("--factor", required=True, metavar="COL", help="grouping column")
    p.add_argument(
        "--contrast", action="append", default=[], metavar='"[LABEL =] EXPR"',
        help='a contrast such as "serviced = H4 - mean(...)" or "A - mean(B, C)"; repeatable')
    p.add_argument("--family", metavar="FAMILY",
                   help=f"a built-in family: {_FAMILIES} (SCORES: comma-separated level scores)")
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
    p.add_argument("--missing", choices=["drop", "raise"], default="drop",
                   help="drop rows with missing values (reported) or stop")
    add_format(p)
    p.set_defaults(run=run)


def _family(args: argparse.Namespace) -> Any:
    from nestfit import contrasts as nc
    from nestfit.errors import ContrastError

    if args.family and args.contrast:
        raise ContrastError("give --contrast options or one --family, not both")
    if args.contrast:
        return nc.family(*args.contrast, name="contrasts given")
    if not args.family:
        raise ContrastError(f"give at least one --contrast, or a --family ({_FAMILIES})")
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
    raise ContrastError(f"unknown family {args.family!r}; valid families are {_FAMILIES}")


def run(args: argparse.Namespace) -> int:
    """Read the file exactly, estimate the contrasts, adjust, print."""
    from nestfit import contrasts as nc
    from nestfit._decimal import read_table
    from nestfit._groups import groups

    spec = _family(args)
    table = read_table(args.file, numeric_columns=[args.response], text_columns=[args.factor])
    offset = table.offset_of(args.response)
    levels = [x.strip() for x in args.levels.split(",")] if args.levels else None
    models = groups(table.frame, args.response, args.factor, missing=args.missing,
                    offset=offset, levels=levels)
    means = nc.cell_means(models.separate_means())
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
