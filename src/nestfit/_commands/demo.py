"""``nestfit demo``: the worked comparison on the bundled invented data."""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, emit

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``demo`` subcommand."""
    p = sub.add_parser(
        "demo", help="run the worked comparison on the bundled invented data",
        description=("Run the worked comparison on the bundled invented data. With --out DIR, "
                     "also write the full worked-analysis report to DIR/report.html (one "
                     "self-contained page) and DIR/report.md (figures as PNG files beside it)."))
    add_format(p)
    p.add_argument("--out", metavar="DIR",
                   help="write the full report to DIR/report.html and DIR/report.md")
    p.add_argument("--progress", action="store_true",
                   help="print the report's stages on stderr (default: only on a terminal)")
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
    if args.out:
        _write_report(args, models, comparison)
    return 0


def _write_report(args: argparse.Namespace, models: Any, comparison: Any) -> None:
    """The demo's full worked analysis, as HTML and Markdown in ``args.out``."""
    import sys
    from pathlib import Path

    from nestfit import contrasts as nc
    from nestfit import datasets
    from nestfit._commands.report import progress_printer
    from nestfit.checks import check_assumptions, residual_diagnostics
    from nestfit.power import plan_comparison
    from nestfit.report import worked_report

    say = progress_printer(args, "demo")
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    separate = models.separate_means()
    if say:
        say("estimating the contrasts and running the checks")
    contrasts = nc.cell_means(separate).family(nc.versus_rest()).adjust("holm")
    # A planned follow-up study (planning values of the invented scenario, not estimates from
    # these data): H4 0.8 g above the other heads, pack-to-pack standard deviation 1.2 g.
    planned = [0.8 if lv == "H4" else 0.0 for lv in models.levels]
    power = plan_comparison([500.0 + d for d in planned], 1.2, larger="H4 | ...",
                            levels=list(models.levels)).curve(range(5, 45, 5))
    report = worked_report(
        comparison, models=models, contrasts=contrasts, checks=check_assumptions(models),
        diagnostics=residual_diagnostics(separate), power=power, units="g",
        title="Worked analysis: fill weight by filling head (invented data)",
        question=("Is the serviced head H4 different from the rest, and is anything left among "
                  "the other heads once H4 has its own mean?"),
        data_note=datasets.describe_fill_weights(), progress=say)
    html = report.save(out / "report.html")
    markdown = report.save(out / "report.md")
    stream = sys.stderr if args.format == "json" else sys.stdout
    print(f"\nThe full worked analysis is in {html[0]} (one self-contained page) and "
          f"{markdown[0]} (with {len(markdown) - 1} figure files beside it).", file=stream)
