"""``nestfit report FILE --response COL --factor COL --out report.html|.md|.tex|.txt``."""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

from nestfit._commands._common import (
    add_group_input,
    add_variance,
    family_from_args,
    read_groups,
)

__all__ = ["progress_printer", "register", "run"]


def register(sub: Any) -> None:
    """Add the ``report`` subcommand."""
    p = sub.add_parser(
        "report",
        help="write a worked analysis (models, comparisons, contrasts, checks) as a document",
        description=(
            "Write a worked analysis of one response by one factor, step by step: the data, "
            "each model with its design matrix and residual sum of squares, each nested "
            "comparison with its F formula worked out, the same model as a regression, level "
            "means with intervals, contrasts with their adjustment (with --contrast or "
            "--family), the assumption checks and the cautions. The format follows the "
            "extension of --out: .html (one self-contained page), .md or .tex (figures as PNG "
            "files beside it), .txt."
        ),
    )
    add_group_input(p)
    p.add_argument("--out", required=True, metavar="PATH",
                   help="output file: report.html, report.md, report.tex or report.txt")
    p.add_argument("--blocks", action="append", default=[], metavar="SPEC",
                   help='a partition between equal and separate means, e.g. "A | B C"; '
                        "repeatable, in refinement order")
    p.add_argument("--denominator", choices=["largest", "each"], default="largest",
                   help="error mean square of every F: the largest model's, or each step's")
    p.add_argument("--coding", default="deviation",
                   help="coding of the regression view: deviation, reference, helmert, "
                        "successive, polynomial or indicator (default: deviation)")
    p.add_argument("--contrast", action="append", default=[], metavar='"[LABEL =] EXPR"',
                   help='a contrast such as "serviced = H4 - mean(...)"; repeatable')
    p.add_argument("--family", metavar="FAMILY",
                   help="a built-in contrast family: pairs, control=LEVEL, others, "
                        "consecutive, trend, trend=SCORES")
    p.add_argument("--adjust", default="holm", metavar="METHOD",
                   help="multiplicity method of the contrasts (default: holm; see "
                        "'nestfit contrasts --help')")
    p.add_argument("--level", type=float, default=0.95,
                   help="confidence level of the intervals (default: 0.95)")
    p.add_argument("--alternative", choices=["two-sided", "greater", "less"],
                   default="two-sided", help="alternative of the contrast tests")
    p.add_argument("--alpha", type=float, default=0.05,
                   help="level of the plain-words readings (default: 0.05)")
    p.add_argument("--levels", metavar="A,B,C", help="level order, comma-separated")
    p.add_argument("--seed", type=int, default=0,
                   help="seed of the multivariate-t integration (dunnett, max-t; default: 0)")
    add_variance(p)
    p.add_argument("--title", default="", help="title of the report")
    p.add_argument("--question", default="", help="the question the analysis answers")
    p.add_argument("--units", default="", help="units of the response, e.g. g")
    p.add_argument("--no-figures", action="store_true", help="leave the figures out")
    p.add_argument("--progress", action="store_true",
                   help="print the stages on stderr (default: only when stderr is a terminal)")
    p.set_defaults(run=run)


def progress_printer(args: argparse.Namespace, command: str) -> Callable[[str], None] | None:
    """Print stage names on stderr with ``--progress`` or when stderr is a terminal."""
    if not (getattr(args, "progress", False) or sys.stderr.isatty()):
        return None

    def say(stage: str) -> None:
        print(f"nestfit {command}: {stage}", file=sys.stderr, flush=True)

    return say


def run(args: argparse.Namespace) -> int:
    """Read the file exactly, fit and compare the models, write the report."""
    from nestfit.checks import check_assumptions, residual_diagnostics
    from nestfit.errors import DataError
    from nestfit.report import format_of, worked_report

    format_of(args.out)  # a bad extension fails before any work
    say = progress_printer(args, "report")
    if say:
        say(f"reading {args.file}")
    models = read_groups(args)
    if say:
        say("fitting and comparing the models")
    comparison = models.chain(*args.blocks, denominator=args.denominator)
    contrasts = None
    if args.contrast or args.family:
        from nestfit import contrasts as nc
        if say:
            say("estimating the contrasts")
        means = nc.cell_means(models.separate_means(), variance=args.variance)
        contrasts = means.family(family_from_args(args)).adjust(
            args.adjust, level=args.level, alternative=args.alternative, rng=args.seed)
    checks = diagnostics = None
    skipped = []
    try:
        checks = check_assumptions(models, alpha=args.alpha)
    except DataError as exc:
        skipped.append(f"assumption tests: {exc}")
    try:
        diagnostics = residual_diagnostics(models.separate_means(), alpha=args.alpha)
    except DataError as exc:
        skipped.append(f"residual diagnostics: {exc}")
    report = worked_report(comparison, models=models, contrasts=contrasts, checks=checks,
                           diagnostics=diagnostics, coding=args.coding, alpha=args.alpha,
                           level=args.level, title=args.title, question=args.question,
                           units=args.units, figures=not args.no_figures, progress=say)
    if say:
        say(f"writing {args.out}")
    written = report.save(Path(args.out))
    extra = f" and {len(written) - 1} figure file(s) beside it" if len(written) > 1 else ""
    print(f"wrote {written[0]}{extra}")
    for note in skipped:
        print(f"  left out {note}")
    return 0
