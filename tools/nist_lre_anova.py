"""Print the log relative error (LRE) of every NIST StRD ANOVA certified value.

Usage: .venv/bin/python tools/nist_lre_anova.py

Three columns per quantity: through the command line (exact decimal reading),
through the Python API on float64, and what exact rational arithmetic on the
same float64 inputs achieves (the best any float64 method can do). The table
goes into docs/accuracy.md.
"""

from __future__ import annotations

import contextlib
import io
import json
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from tests.nist import ANOVA_DIR, anova_names, load_anova, lre  # noqa: E402
from tests.test_nist_anova import QUANTITIES, _exact_on_floats, _ours  # noqa: E402

import nestfit  # noqa: E402
from nestfit.cli import main  # noqa: E402

SHORT = {"between_df": "b.df", "between_ss": "b.SS", "between_ms": "b.MS", "f_statistic": "F",
         "within_df": "w.df", "within_ss": "w.SS", "within_ms": "w.MS", "r_squared": "R2",
         "residual_sd": "sd"}


def cli_values(name: str) -> dict[str, float]:
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        main(["compare", str(ANOVA_DIR / f"{name}.csv"), "--response", "response",
              "--factor", "treatment", "--format", "json"])
    out = json.loads(buf.getvalue())
    step, largest = out["steps"][0], out["models"][-1]
    wms = largest["residual_ss"] / largest["residual_df"]
    return {"between_df": step["df"], "between_ss": step["ss"], "between_ms": step["mean_square"],
            "f_statistic": step["f"], "within_df": largest["residual_df"],
            "within_ss": largest["residual_ss"], "within_ms": wms,
            "r_squared": step["ss"] / out["models"][0]["residual_ss"], "residual_sd": wms ** 0.5}


def main_table() -> None:
    print("| dataset | path | " + " | ".join(SHORT[q] for q in QUANTITIES) + " |")
    print("|---|---|" + "---|" * len(QUANTITIES))
    for name in anova_names():
        labels, responses, cert = load_anova(name)
        y = np.array([float(s) for s in responses])
        models = nestfit.groups(y=y, factor=labels)
        sep = models.separate_means()
        api = _ours(nestfit.compare(models.equal_means(), sep), sep)
        rows = {"CLI (decimal text)": cli_values(name), "API (float64)": api,
                "exact on float64": _exact_on_floats(labels, y)}
        for path, vals in rows.items():
            cells = " | ".join(f"{lre(vals[q], cert[q]):.1f}" for q in QUANTITIES)
            print(f"| {name} | {path} | {cells} |")


if __name__ == "__main__":
    main_table()
