"""``nestfit table FILE --formula "y ~ C(a) * C(b)" [--kind ...]``: a sums-of-squares table."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, emit

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``table`` subcommand."""
    p = sub.add_parser(
        "table",
        help="sums-of-squares table of a model with several factors and covariates",
        description=(
            "Test each term of a formula model by comparing two nested models; every row names "
            "both. Kinds: sequential (each term after the terms before it), marginal (each term "
            "after every term that does not contain it), each-last (each term removed from the "
            "full model, with sum-to-zero coding of every factor)."
        ),
    )
    p.add_argument("file", help="CSV file with a header row")
    p.add_argument("--formula", required=True, metavar="FORMULA",
                   help='model formula with an intercept, e.g. "y ~ C(a) * C(b)" or '
                        '"y ~ C(g) + x"; columns inside C(...) are read as factor labels')
    p.add_argument("--kind", choices=["sequential", "marginal", "each-last"], default="marginal",
                   help="which comparison each row makes (default: marginal)")
    p.add_argument("--missing", choices=["drop", "raise"], default="drop",
                   help="drop rows with missing values (reported) or stop")
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read the file, build the model set, print the table."""
    from nestfit._decimal import read_table
    from nestfit.tables import factorial
    from nestfit.tables._terms import formula_factor_columns

    response, factor_columns = formula_factor_columns(args.formula)
    table = read_table(args.file, numeric_columns=[response] if response else None,
                       text_columns=list(factor_columns))
    frame = table.frame.copy()
    # The response keeps its exact offset (the model has an intercept, so no sum of
    # squares changes); every other numeric column gets its own values back, because
    # a covariate's origin changes the meaning of some rows (each-last with C(g):x).
    for column in table.offsets:
        if column != response:
            frame[column] = table.absolute(column)
    models = factorial(args.formula, frame, missing=args.missing)
    result = models.table(args.kind)
    payload = result.to_dict()
    text = [str(result)]
    if response and table.offsets[response] != 0:
        text.append(f"  {response} was read as exact decimals less {table.offsets[response]} "
                    "(a common offset changes no sum of squares of models with an intercept)")
    if models.missing.n_dropped:
        text.append(f"  {models.missing}")
    payload["missing"] = models.missing.to_dict()
    emit(payload, "\n".join(text), args.format)
    return 0
