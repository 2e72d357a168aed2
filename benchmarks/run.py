"""nestfit benchmarks: ``make bench`` (or ``.venv/bin/python benchmarks/run.py``).

Every figure is a ratio against a reference measured in the same run, on the
same data, because absolute times on a shared machine mean little. Times are
the best of N runs (``time.perf_counter``); peak memory is what tracemalloc
sees allocated during one call, beyond the input arrays. See docs/benchmarks.md.

    python benchmarks/run.py                   # full run (about 3 minutes on 2 cores)
    python benchmarks/run.py --quick           # smoke run on small data (seconds)
    python benchmarks/run.py --runs 5 --json results.json
    python benchmarks/run.py --cases 1 3       # only some cases
    python benchmarks/run.py --blas-threads 1  # pin BLAS threads (set before numpy loads)
"""

from __future__ import annotations

import argparse
import dataclasses
import datetime as dt
import json
import os
import sys
import time
from collections.abc import Sequence
from pathlib import Path

CASE_KEYS = ("1", "2", "3")
CASE_NAMES = {
    "1": "large one-way: groups(y=, factor=) vs bare numpy (n = 1e7, k = 1000)",
    "2": "grouped route vs statsmodels ols + anova_lm (n = 1e6, k = 100)",
    "3": "formula route vs statsmodels ols (n = 1e5, k = 50)",
}
QUICK = {"runs": 1, "n_large": 10**5, "k_large": 20, "n_sm": 5000, "k_sm": 20,
         "n_formula": 2000, "k_formula": 10}
BLAS_VARIABLES = ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS")


def _parse(argv: Sequence[str] | None) -> argparse.Namespace:
    p = argparse.ArgumentParser(
        description="Time nestfit against references measured in the same run.",
        epilog="cases: " + "; ".join(f"{k}: {v}" for k, v in CASE_NAMES.items()),
    )
    p.add_argument("--runs", type=int, default=None,
                   help="timed runs per measurement, best kept (default 3; 1 with --quick)")
    p.add_argument("--budget", type=float, default=None,
                   help="seconds per measurement after which no further run starts (default 10)")
    p.add_argument("--quick", action="store_true", help="small data, one run: a smoke test")
    p.add_argument("--cases", nargs="+", choices=CASE_KEYS, default=list(CASE_KEYS),
                   help="which cases to run (default all)")
    p.add_argument("--reference-memory", action="store_true",
                   help="also trace statsmodels' peak memory in case 2 (one more slow run)")
    p.add_argument("--blas-threads", type=int, default=None,
                   help="set the BLAS/OpenMP thread count before numpy is loaded")
    p.add_argument("--json", type=Path, default=None, help="also write the results here")
    return p.parse_args(argv)


def main(argv: Sequence[str] | None = None) -> int:
    args = _parse(argv)
    if args.blas_threads is not None:
        if "numpy" in sys.modules:
            print("--blas-threads has no effect: numpy is already loaded", file=sys.stderr)
        for var in BLAS_VARIABLES:
            os.environ[var] = str(args.blas_threads)

    # numpy, pandas and nestfit load only now, after the thread variables are set
    from _cases import Settings, formula_case, large_oneway_case, statsmodels_oneway_case, warm_up
    from _machine import machine_facts

    from nestfit._text import text_table

    cases = {"1": large_oneway_case, "2": statsmodels_oneway_case, "3": formula_case}
    settings = Settings(**QUICK) if args.quick else Settings()
    changes = {"reference_memory": args.reference_memory}
    if args.runs is not None:
        changes["runs"] = max(1, args.runs)
    if args.budget is not None:
        changes["budget"] = max(0.0, args.budget)
    settings = dataclasses.replace(settings, **changes)
    facts = machine_facts()
    warm_up()
    started = time.perf_counter()

    def log(message: str) -> None:
        print(f"  [{time.perf_counter() - started:6.1f} s] {message}", file=sys.stderr,
              flush=True)

    rows = []
    for key in args.cases:
        rows.extend(cases[key](settings, log))
    elapsed = time.perf_counter() - started

    print(f"nestfit benchmarks, {dt.date.today().isoformat()}{' (quick)' if args.quick else ''}:"
          f" best of up to {settings.runs} runs ({settings.budget:g} s budget per line,"
          f" one run past {settings.slow:g} s);"
          " ratio = measured / against; peak memory by tracemalloc")
    print("  " + ", ".join(f"{k} {v}" for k, v in facts.items()))
    print(text_table(["case", "measured", "against", "ratio", "target", "met"],
                     [r.cells() for r in rows], left=1))
    judged = [r for r in rows if r.met is not None]
    met = [r for r in judged if r.met]
    print(f"\n  targets met: {len(met)} of {len(judged)}; run took {elapsed:.0f} s")
    for r in rows:
        if r.error:
            print(f"  error in {r.case}: {r.error}")
    if args.json is not None:
        payload = {"date": dt.date.today().isoformat(), "quick": args.quick,
                   "settings": dataclasses.asdict(settings), "machine": facts,
                   "seconds": elapsed, "rows": [r.to_dict() for r in rows]}
        args.json.write_text(json.dumps(payload, indent=2) + "\n")
        print(f"  results written to {args.json}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
