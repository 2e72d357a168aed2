"""least_squares against the NIST StRD linear-regression reference data.

Datasets: tests/data/nist-strd/linreg/ (Norris, Pontius, NoInt1, Filip,
Longley, Wampler1-3; see tests/data/nist-strd/README.md). The design matrix is
built here with numpy from the CSV, one column per JSON ``terms`` entry
("1", "x^k" as ``x ** k``, or a predictor column), and fitted with the defaults.

Accuracy is the log relative error, LRE = -log10(|est - cert| / |cert|), or
-log10(|est|) when the certified value is 0 (Wampler1/2 residual SD and
standard deviations: exact fits), capped at 15 and floored at 0
(``tests.nist.lre``; McCullough 1998, The American Statistician 52(4), from memory).

Thresholds, per quantity:

* coefficients: >= 10, Filip >= 7.5 (the project's target). Filip's limit is
  the data: the exact least-squares solution of the float64-rounded data agrees
  with the certified values to only 7.61 digits (tools/nist_lre_regression.py),
  because the scaled design has condition ~5e9. The refined solution must also
  come within 0.5 digits of that ceiling on every set.
* standard deviations: >= 11, Filip >= 7. They come from R^-1 (no refinement),
  which loses about log10(cond) digits of the 16: Longley (cond 5e4) measures
  12.6, Filip (cond 5e9) 7.9.
* residual SD: >= 13, Filip >= 9 (exact-data ceiling 9.57).
* R squared: >= 13, Filip >= 11 (R^2 = 1 - RSS/TSS carries RSS's relative error
  times RSS/TSS = 0.003).
"""

from __future__ import annotations

import csv
import hashlib
import json
import math
from fractions import Fraction
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from nestfit.linalg import LONGDOUBLE_IS_EXTENDED, least_squares
from tests.nist import lre

LINREG_DIR = Path(__file__).resolve().parent / "data" / "nist-strd" / "linreg"
NAMES = ["Norris", "Pontius", "NoInt1", "Filip", "Longley", "Wampler1", "Wampler2", "Wampler3"]

COEF_MIN = {"Filip": 7.5}  # default 10
SD_MIN = {"Filip": 7.0}  # default 11
RSD_MIN = {"Filip": 9.0}  # default 13
R2_MIN = {"Filip": 11.0}  # default 13


def load_linreg(name: str) -> tuple[np.ndarray, np.ndarray, dict[str, Any]]:
    """Design matrix, response and metadata of one dataset (CSV checked against its SHA-256)."""
    meta = json.loads((LINREG_DIR / f"{name}.certified.json").read_text(encoding="ascii"))
    csv_path = LINREG_DIR / meta["csv_file"]
    digest = hashlib.sha256(csv_path.read_bytes()).hexdigest()
    assert digest == meta["csv_sha256"], f"{csv_path} does not match its recorded SHA-256"
    with csv_path.open(newline="", encoding="ascii") as fh:
        rows = list(csv.reader(fh))
    header = rows[0]
    assert header == meta["csv_columns"]
    data = np.array([[float(v) for v in r] for r in rows[1:]])
    assert data.shape[0] == meta["n_observations"]
    cols = []
    for term in meta["terms"]:
        if term == "1":
            cols.append(np.ones(data.shape[0]))
        elif term.startswith("x^"):
            cols.append(data[:, header.index("x")] ** int(term[2:]))
        else:  # "x" or "xj": a predictor column
            cols.append(data[:, header.index(term)])
    x = np.column_stack(cols)
    assert x.shape[1] == meta["n_parameters"]
    return x, data[:, header.index("y")], meta


def certified(meta: dict[str, Any]) -> dict[str, Any]:
    """Certified strings parsed with float() (NIST prints 15 significant digits)."""
    cert = meta["certified"]
    return {
        "estimate": [float(p["estimate"]) for p in cert["parameters"]],
        "std_dev": [float(p["std_dev"]) for p in cert["parameters"]],
        "residual_sd": float(cert["residual_sd"]),
        "r_squared": float(cert["r_squared"]),
    }


def r_squared(y: np.ndarray, rss: float, intercept: bool) -> float:
    """1 - RSS/TSS; TSS centred with an intercept, uncentred without (NoInt1: README)."""
    if intercept:
        mean = math.fsum(y.tolist()) / y.size
        tss = math.fsum(((y - mean) ** 2).tolist())
    else:
        tss = math.fsum((y**2).tolist())
    return 1.0 - rss / tss


def exact_coefficients(x: np.ndarray, y: np.ndarray) -> list[float]:
    """Exact least squares for the float64 data: X'X b = X'y solved over the rationals."""
    xf = [[Fraction(float(v)) for v in row] for row in x]
    yf = [Fraction(float(v)) for v in y]
    n, p = x.shape
    aug = [
        [sum((xf[k][i] * xf[k][j] for k in range(n)), Fraction(0)) for j in range(p)]
        + [sum((xf[k][i] * yf[k] for k in range(n)), Fraction(0))]
        for i in range(p)
    ]
    for c in range(p):
        piv = next(r for r in range(c, p) if aug[r][c] != 0)
        aug[c], aug[piv] = aug[piv], aug[c]
        for r in range(p):
            if r != c and aug[r][c] != 0:
                f = aug[r][c] / aug[c][c]
                aug[r] = [a - f * b for a, b in zip(aug[r], aug[c])]
    return [float(aug[i][p] / aug[i][i]) for i in range(p)]


@pytest.mark.parametrize("name", NAMES)
def test_coefficients(name: str) -> None:
    x, y, meta = load_linreg(name)
    fit = least_squares(x, y)
    cert = certified(meta)
    assert fit.rank == x.shape[1]
    assert not fit.aliased.any()
    floor = COEF_MIN.get(name, 10.0)
    for j, (est, ref) in enumerate(zip(fit.coefficients, cert["estimate"])):
        assert lre(float(est), ref) >= floor, f"{name} B{j}: {est!r} vs certified {ref!r}"


@pytest.mark.parametrize("name", NAMES)
def test_coefficients_reach_the_float64_data_ceiling(name: str) -> None:
    # No float64 algorithm can beat the exact solution of the rounded data.
    x, y, meta = load_linreg(name)
    cert = certified(meta)["estimate"]
    exact = exact_coefficients(x, y)
    ceiling = min(lre(b, c) for b, c in zip(exact, cert))
    got = min(lre(float(b), c) for b, c in zip(least_squares(x, y).coefficients, cert))
    assert got >= ceiling - 0.5, f"{name}: {got:.2f} digits, ceiling {ceiling:.2f}"


@pytest.mark.parametrize("name", NAMES)
def test_standard_deviations(name: str) -> None:
    x, y, meta = load_linreg(name)
    fit = least_squares(x, y)
    cert = certified(meta)
    # std error of b_j = sigma * sqrt([(X'X)^-1]_jj)
    se = fit.sigma * np.sqrt(np.diag(fit.cov_unscaled))
    np.testing.assert_array_equal(se, fit.std_errors)
    floor = SD_MIN.get(name, 11.0)
    for j, (est, ref) in enumerate(zip(se, cert["std_dev"])):
        assert lre(float(est), ref) >= floor, f"{name} sd(B{j}): {est!r} vs {ref!r}"


@pytest.mark.parametrize("name", NAMES)
def test_residual_sd_and_r_squared(name: str) -> None:
    x, y, meta = load_linreg(name)
    fit = least_squares(x, y)
    cert = certified(meta)
    n_res = int(meta["certified"]["anova"]["residual"]["df"])
    assert fit.df_residual == n_res
    sigma = math.sqrt(fit.residual_ss / fit.df_residual)
    assert lre(sigma, cert["residual_sd"]) >= RSD_MIN.get(name, 13.0)
    r2 = r_squared(y, fit.residual_ss, bool(meta["intercept"]))
    assert lre(r2, cert["r_squared"]) >= R2_MIN.get(name, 13.0)


@pytest.mark.parametrize("name", ["Wampler1", "Wampler2", "Wampler3"])
def test_plain_qr_is_no_better_than_refined(name: str) -> None:
    # Why refinement is on by default: without it Wampler1/3 keep about 9.5
    # digits of the smallest coefficient, against 15 refined
    # (tools/nist_lre_regression.py). Wampler2 is at its float64-data ceiling
    # (13.2 digits) either way, where the last tenth of a digit is rounding luck.
    x, y, meta = load_linreg(name)
    cert = certified(meta)["estimate"]
    plain = least_squares(x, y, refine=0)
    refined = least_squares(x, y)
    assert plain.refinement_steps == 0
    assert refined.refinement_steps >= 1
    lre_plain = min(lre(float(b), c) for b, c in zip(plain.coefficients, cert))
    lre_refined = min(lre(float(b), c) for b, c in zip(refined.coefficients, cert))
    assert lre_plain <= lre_refined + 0.1
    if name != "Wampler2":
        assert lre_refined - lre_plain >= 2.0


@pytest.mark.skipif(not LONGDOUBLE_IS_EXTENDED, reason="long double is float64 here")
@pytest.mark.parametrize("name", NAMES)
def test_coefficients_with_long_double_residuals(name: str) -> None:
    x, y, meta = load_linreg(name)
    fit = least_squares(x, y, extended="longdouble")
    floor = COEF_MIN.get(name, 10.0)
    for est, ref in zip(fit.coefficients, certified(meta)["estimate"]):
        assert lre(float(est), ref) >= floor


def test_all_vendored_sets_are_covered() -> None:
    vendored = sorted(p.name.removesuffix(".certified.json") for p in LINREG_DIR.glob("*.json"))
    assert vendored == sorted(NAMES)
