"""Print the accuracy of nestfit.linalg.least_squares on the NIST StRD linear-regression sets.

For every dataset in tests/data/nist-strd/linreg/ the design matrix is built
with numpy from the CSV (powers of x per the JSON ``terms``), fitted, and the
log relative error (LRE, digits of agreement with the certified value) is
printed for the coefficients, their standard deviations, the residual SD and
R-squared: the smallest over the parameters for the first two. Columns are
given for plain pivoted QR (``refine=0``) and for the default refinement, with
both extended-precision schemes, plus the "ceiling": the LRE of the *exact*
least-squares solution of the float64 data (``fractions.Fraction`` normal
equations), which no float64 algorithm can beat since the data themselves are
rounded when read.

LRE = -log10(|est - cert| / |cert|); for a certified 0, -log10(|est|) (absolute
error); capped at 15 (NIST certifies 15 digits) and floored at 0 (McCullough
1998, "Assessing the reliability of statistical software: Part I", The
American Statistician 52(4); from memory).

Usage: ``.venv/bin/python tools/nist_lre_regression.py [--markdown]``
"""

from __future__ import annotations

import argparse
import csv
import json
import math
from fractions import Fraction
from pathlib import Path

import numpy as np

from nestfit.linalg import LONGDOUBLE_IS_EXTENDED, least_squares

DATA = Path(__file__).resolve().parents[1] / "tests" / "data" / "nist-strd" / "linreg"
NAMES = ["Norris", "Pontius", "NoInt1", "Filip", "Longley", "Wampler1", "Wampler2", "Wampler3"]
CAP = 15.0


def lre(est: float, cert: float) -> float:
    """Digits of agreement (see the module notes for the rule)."""
    if not math.isfinite(est):
        return 0.0
    err = abs(est - cert) if cert == 0 else abs(est - cert) / abs(cert)
    return CAP if err == 0 else min(CAP, max(0.0, -math.log10(err)))


def load(name: str) -> tuple[np.ndarray, np.ndarray, dict]:
    """Design matrix, response and the parsed JSON of one dataset."""
    meta = json.loads((DATA / f"{name}.certified.json").read_text(encoding="ascii"))
    with (DATA / meta["csv_file"]).open(newline="", encoding="ascii") as fh:
        rows = list(csv.reader(fh))
    header, body = rows[0], np.array([[float(v) for v in r] for r in rows[1:]])
    cols = []
    for term in meta["terms"]:
        if term == "1":
            cols.append(np.ones(body.shape[0]))
        elif term.startswith("x^"):
            cols.append(body[:, header.index("x")] ** int(term[2:]))
        else:
            cols.append(body[:, header.index(term)])
    return np.column_stack(cols), body[:, header.index("y")], meta


def exact_solution(x: np.ndarray, y: np.ndarray) -> tuple[list[Fraction], list[Fraction], Fraction]:
    """Exact ``b``, ``diag((X'X)^-1)`` and RSS over the rationals (float64 data taken as exact).

    Gauss-Jordan elimination of ``[X'X | X'y | I]`` in ``fractions.Fraction``.
    """
    xf = [[Fraction(float(v)) for v in row] for row in x]
    yf = [Fraction(float(v)) for v in y]
    n, p = x.shape
    aug = [
        [sum((xf[k][i] * xf[k][j] for k in range(n)), Fraction(0)) for j in range(p)]
        + [sum((xf[k][i] * yf[k] for k in range(n)), Fraction(0))]
        + [Fraction(int(i == j)) for j in range(p)]
        for i in range(p)
    ]
    for c in range(p):
        piv = next(r for r in range(c, p) if aug[r][c] != 0)
        aug[c], aug[piv] = aug[piv], aug[c]
        aug[c] = [v / aug[c][c] for v in aug[c]]
        for r in range(p):
            if r != c and aug[r][c] != 0:
                f = aug[r][c]
                aug[r] = [a - f * b for a, b in zip(aug[r], aug[c])]
    b = [aug[i][p] for i in range(p)]
    diag = [aug[i][p + 1 + i] for i in range(p)]
    rss = sum(
        ((yf[k] - sum((xf[k][j] * b[j] for j in range(p)), Fraction(0))) ** 2 for k in range(n)),
        Fraction(0),
    )
    return b, diag, rss


def measure(name: str, refine: int, extended: str) -> dict[str, float]:
    """Smallest LREs of one fit."""
    x, y, meta = load(name)
    cert = meta["certified"]
    fit = least_squares(x, y, refine=refine, extended=extended)  # type: ignore[arg-type]
    sigma = fit.sigma
    se = fit.std_errors
    if meta["intercept"]:
        tss = math.fsum(((y - math.fsum(y) / len(y)) ** 2).tolist())
    else:
        tss = math.fsum((y**2).tolist())
    return {
        "coef": min(
            lre(float(b), float(p["estimate"]))
            for b, p in zip(fit.coefficients, cert["parameters"])
        ),
        "sd": min(lre(float(s), float(p["std_dev"])) for s, p in zip(se, cert["parameters"])),
        "rsd": lre(sigma, float(cert["residual_sd"])),
        "r2": lre(1.0 - fit.residual_ss / tss, float(cert["r_squared"])),
    }


def ceiling(name: str) -> dict[str, float]:
    """Smallest LREs of the exact least-squares results for the float64 data."""
    x, y, meta = load(name)
    cert = meta["certified"]
    b, diag, rss = exact_solution(x, y)
    df = x.shape[0] - x.shape[1]
    sigma = math.sqrt(rss / df)
    return {
        "coef": min(lre(float(v), float(p["estimate"])) for v, p in zip(b, cert["parameters"])),
        "sd": min(
            lre(sigma * math.sqrt(d), float(p["std_dev"])) for d, p in zip(diag, cert["parameters"])
        ),
        "rsd": lre(sigma, float(cert["residual_sd"])),
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--markdown", action="store_true", help="print a Markdown table")
    args = parser.parse_args()
    methods = ["compensated"] + (["longdouble"] if LONGDOUBLE_IS_EXTENDED else [])
    head = ["dataset", "ceil coef", "ceil sd", "ceil res SD", "coef r=0"]
    for m in methods:
        head += [f"coef {m}", f"sd {m}", f"res SD {m}", f"R2 {m}"]
    rows = []
    for name in NAMES:
        ceil = ceiling(name)
        row = [name, f"{ceil['coef']:.2f}", f"{ceil['sd']:.2f}", f"{ceil['rsd']:.2f}"]
        row.append(f"{measure(name, 0, 'compensated')['coef']:.2f}")
        for m in methods:
            r = measure(name, 2, m)
            row += [f"{r['coef']:.2f}", f"{r['sd']:.2f}", f"{r['rsd']:.2f}", f"{r['r2']:.2f}"]
        rows.append(row)
    if args.markdown:
        print("| " + " | ".join(head) + " |")
        print("|" + "|".join(" --- " for _ in head) + "|")
        for row in rows:
            print("| " + " | ".join(row) + " |")
    else:
        widths = [max(len(h), *(len(r[i]) for r in rows)) for i, h in enumerate(head)]
        print("  ".join(h.rjust(w) for h, w in zip(head, widths)))
        for row in rows:
            print("  ".join(c.rjust(w) for c, w in zip(row, widths)))


if __name__ == "__main__":
    main()
