"""nestfit benchmarks: ``make bench`` (or ``.venv/bin/python benchmarks/run.py``).

Every figure is a ratio against a reference measured in the same run, on the
same data, because absolute times on a shared machine mean little. Times are
the best of N runs (``time.perf_counter``); peak memory is what tracemalloc
sees allocated during one call, beyond the input arrays.

    python benchmarks/run.py                 # full run (a few minutes on 2 cores)
    python benchmarks/run.py --quick         # smoke run on small data (seconds)
    python benchmarks/run.py --runs 5 --json results.json
    python benchmarks/run.py --cases 1 3     # only some cases
"""

from __future__ import annotations

import argparse
import dataclasses
import datetime as dt
import json
import sys
import time
from collections.abc import Callable, Sequence
from pathlib import Path

from _cases import Settings, formula_case, large_oneway_case, statsmodels_oneway_case
from _machine import machine_facts
from _rows import Row

from nestfit._text import text_table

CASES: dict[str, Callable[[Settings, Callable[[str], None]], list[Row]]] = {
    "1": large_oneway_case,
    "2": statsmodels_oneway_case,
    "3": formula_case,
}

QUICK = dict(runs=1, n_large=2 * 10**5, k_large=1000, n_sm=2 * 10**4, k_sm=100,
             n_formula=10**4, k_formula=50)


def _parse(argv: Sequence[str] | None) -> argparse.Namespace:
    p = argparse.ArgumentParser(description="Time nestfit against references in one run.")
    p.add_argument("--runs", type=int, default=None,
                   help="timed runs per measurement, best kept (default 3; 1 with --quick)")
    p.add_argument("--quick", action="store_true", help="small data, one run: a smoke test")
    p.add_argument("--cases", nargs="+", choices=sorted(CASES), default=sorted(CASES),
                   help="which cases to run (default all)")
    p.add_argument("--json", type=Path, default=None, help="also write the results here")
    return p.parse_args(argv)


def main(argv: Sequence[str] | None = None) -> int:
    args = _parse(argv)
    settings = Settings(**QUICK) if args.quick else Settings()
    if args.runs is not None:
        settings = dataclasses.replace(settings, runs=max(1, args.runs))
    facts = machine_facts()
    started = time.perf_counter()

    def log(message: str) -> None:
        print(f"  [{time.perf_counter() - started:6.1f} s] {message}", file=sys.stderr,
              flush=True)

    rows: list[Row] = []
    for key in args.cases:
        rows.extend(CASES[key](settings, log))
    elapsed = time.perf_counter() - started

    print(f"nestfit benchmarks, {dt.date.today().isoformat()}, best of {settings.runs} runs"
          f"{' (quick)' if args.quick else ''}; ratio = measured / against")
    print("  " + ", ".join(f"{k} {v}" for k, v in facts.items()))
    print(text_table(["case", "measured", "against", "ratio", "target", "met"],
                     [r.cells() for r in rows], left=1))
    missed = [r for r in rows if r.met is False]
    print(f"\n  {len(rows) - len(missed)} of {len(rows)} lines without a missed target; "
          f"run took {elapsed:.0f} s")
    for r in rows:
        if r.error:
            print(f"  error in {r.case}: {r.error}")
    if args.json is not None:
        payload = {"date": dt.date.today().isoformat(), "quick": args.quick,
                   "settings": dataclasses.asdict(settings), "machine": facts,
                   "seconds": elapsed, "rows": [r.to_dict() for r in rows]}
        args.json.write_text(json.dumps(payload, indent=2) + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
