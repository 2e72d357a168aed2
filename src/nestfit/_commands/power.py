"""``nestfit power``: power, group size or power curve for a planned test of group means.

Examples (invented numbers)::

    nestfit power --means 500,500,500.8 --sigma 1.2 --n 20
    nestfit power --means 500,500,500.8 --sigma 1.2 --target 0.8
    nestfit power --means 500,500,500.8 --sigma 1.2 --contrast=-0.5,-0.5,1 --target 0.9
    nestfit power --means 500,500,500.8 --sigma 1.2 --target 0.8 --allocation 2,1,1
    nestfit power --effect-f 0.25 --groups 4 --curve 10:60:10

Weights starting with a minus sign need the ``--contrast=...`` form.
"""

from __future__ import annotations

import argparse
from typing import Any

from nestfit._commands._common import add_format, emit
from nestfit.errors import DataError

__all__ = ["register", "run"]


def register(sub: Any) -> None:
    """Add the ``power`` subcommand."""
    p = sub.add_parser(
        "power",
        help="power, group size or power curve for a planned comparison or contrast",
        description=(
            "Plan a test of group means from assumed means and sigma (or Cohen's f): the "
            "power at a group size (--n), the smallest group sizes reaching a power "
            "(--target; equal, or in the ratios of --allocation), or the power over a range "
            "of group sizes (--curve FROM:TO[:STEP])."
        ),
    )
    p.add_argument("--means", metavar="M1,M2,...", help="assumed mean of each level")
    p.add_argument("--levels", metavar="A,B,...", help="level names for --means (default 1,2,...)")
    p.add_argument("--sigma", type=float, help="assumed error standard deviation")
    p.add_argument("--effect-f", type=float, metavar="F",
                   help="Cohen's f instead of --means/--sigma (equal means vs separate means)")
    p.add_argument("--groups", type=int, metavar="K", help="number of levels, with --effect-f")
    p.add_argument("--smaller", metavar="SPEC",
                   help='the smaller model as a partition, e.g. "A B | C" (default: equal means)')
    p.add_argument("--larger", metavar="SPEC",
                   help="the larger model as a partition (default: separate means)")
    p.add_argument("--contrast", metavar="W1,W2,...",
                   help="plan the t test of this contrast instead (write --contrast=-1,...)")
    p.add_argument("--alternative", choices=["two-sided", "greater", "less"],
                   default="two-sided", help="rejection region of the contrast's t test")
    p.add_argument("--alpha", type=float, default=0.05, help="level of the test (default 0.05)")
    p.add_argument("--allocation", metavar="R1,R2,...",
                   help="with --target: ratios of the group sizes in level order, e.g. 2,1,1 "
                        "for a first group twice each of the others (smallest group gets n, "
                        "the others n * ratio / smallest ratio, rounded up)")
    what = p.add_mutually_exclusive_group(required=True)
    what.add_argument("--n", metavar="N[,N2,...]",
                      help="observations per level (one number, or one per level)")
    what.add_argument("--target", type=float, metavar="POWER",
                      help="solve for the smallest group sizes reaching this power (equal "
                           "sizes unless --allocation is given)")
    what.add_argument("--curve", metavar="FROM:TO[:STEP]",
                      help="power at equal group sizes FROM, FROM+STEP, ..., TO")
    add_format(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Build the plan from the options and print the answer asked for."""
    plan = _plan(args)
    result: Any
    if args.allocation is not None and args.target is None:
        raise DataError("--allocation goes with --target; for the power at unequal sizes give "
                        "--n one size per level")
    if args.n is not None:
        sizes = _ints(args.n, "--n")
        result = plan.power(sizes[0] if len(sizes) == 1 else sizes)
    elif args.target is not None:
        allocation = (None if args.allocation is None
                      else _floats(args.allocation, "--allocation"))
        result = plan.group_size(args.target, allocation=allocation)
    else:
        result = plan.curve(_range(args.curve))
    emit(result.to_dict(), str(result), args.format)
    return 0


def _plan(args: argparse.Namespace) -> Any:
    from nestfit.power import plan_comparison, plan_contrast, plan_effect_size

    if args.effect_f is not None:
        extra = [opt for opt, val in (("--means", args.means), ("--sigma", args.sigma),
                                      ("--contrast", args.contrast), ("--smaller", args.smaller),
                                      ("--larger", args.larger), ("--levels", args.levels))
                 if val is not None]
        if extra:
            raise DataError(f"--effect-f plans equal vs separate means alone; drop {extra[0]}")
        if args.groups is None:
            raise DataError("--effect-f needs --groups K, the number of levels")
        return plan_effect_size(args.effect_f, args.groups, alpha=args.alpha)
    if args.means is None or args.sigma is None:
        raise DataError("give --means and --sigma (or --effect-f with --groups)")
    if args.groups is not None:
        raise DataError("--groups goes with --effect-f; with --means the levels are counted")
    means = _floats(args.means, "--means")
    levels = [s.strip() for s in args.levels.split(",")] if args.levels else None
    if args.contrast is not None:
        if args.smaller is not None or args.larger is not None:
            raise DataError("--contrast plans one contrast; drop --smaller/--larger")
        return plan_contrast(means, _floats(args.contrast, "--contrast"), args.sigma,
                             levels=levels, alpha=args.alpha, alternative=args.alternative)
    return plan_comparison(means, args.sigma, smaller=args.smaller, larger=args.larger,
                           levels=levels, alpha=args.alpha)


def _floats(text: str, option: str) -> list[float]:
    try:
        return [float(x) for x in text.split(",")]
    except ValueError as exc:
        raise DataError(f"{option} must be numbers separated by commas. Got {text!r}.") from exc


def _ints(text: str, option: str) -> list[int]:
    try:
        return [int(x) for x in text.split(",")]
    except ValueError as exc:
        raise DataError(
            f"{option} must be whole numbers separated by commas. Got {text!r}."
        ) from exc


def _range(text: str) -> range:
    parts = text.split(":")
    try:
        nums = [int(x) for x in parts]
    except ValueError:
        nums = []
    if len(nums) not in (2, 3) or nums[0] < 1 or nums[1] < nums[0] or (
            len(nums) == 3 and nums[2] < 1):
        raise DataError(
            f"--curve must be FROM:TO or FROM:TO:STEP with whole numbers, 1 <= FROM <= TO and "
            f"STEP >= 1. Got {text!r}."
        )
    return range(nums[0], nums[1] + 1, nums[2] if len(nums) == 3 else 1)
