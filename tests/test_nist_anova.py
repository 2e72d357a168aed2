"""NIST StRD one-way ANOVA: every certified value, through the API and through the CLI.

Source: NIST Statistical Reference Datasets, Analysis of Variance
(https://www.itl.nist.gov/div898/strd/anova/anova.html); vendored copies and
provenance in tests/data/nist-strd and tests/data/PROVENANCE.md.

Two targets (docs/accuracy.md):

* through the command line, which reads the CSV text as exact decimals less a
  common offset: log relative error (LRE) >= 13 for every certified value;
* through the Python API on float64 (where 1000000000000.4 is already rounded
  before nestfit sees it): within 0.3 digits of the LRE that exact rational
  arithmetic on the same float64 inputs achieves.
"""

from __future__ import annotations

import json
import math
from fractions import Fraction

import numpy as np
import pytest

import nestfit
from nestfit.cli import main
from tests.nist import ANOVA_DIR, anova_names, load_anova, lre

QUANTITIES = ["between_df", "between_ss", "between_ms", "f_statistic", "within_df",
              "within_ss", "within_ms", "r_squared", "residual_sd"]


def _ours(comp: nestfit.Comparison, sep: nestfit.Fit) -> dict[str, float]:
    step = comp.steps[0]
    return {
        "between_df": step.df, "between_ss": step.ss, "between_ms": step.mean_square,
        "f_statistic": step.f, "within_df": sep.residual_df, "within_ss": sep.residual_ss,
        "within_ms": sep.mean_square, "r_squared": sep.r_squared, "residual_sd": sep.sigma,
    }


def _exact_on_floats(labels: list[str], y: np.ndarray) -> dict[str, float]:
    """The certified quantities by exact rational arithmetic on the float64 inputs."""
    vals = [Fraction(float(v)) for v in y]
    groups: dict[str, list[Fraction]] = {}
    for lab, v in zip(labels, vals):
        groups.setdefault(lab, []).append(v)
    n, k = len(vals), len(groups)
    grand = sum(vals, Fraction(0)) / n
    within = Fraction(0)
    between = Fraction(0)
    for g in groups.values():
        m = sum(g, Fraction(0)) / len(g)
        within += sum(((v - m) ** 2 for v in g), Fraction(0))
        between += len(g) * (m - grand) ** 2
    bms, wms = between / (k - 1), within / (n - k)
    return {
        "between_df": k - 1, "between_ss": float(between), "between_ms": float(bms),
        "f_statistic": float(bms / wms), "within_df": n - k, "within_ss": float(within),
        "within_ms": float(wms), "r_squared": float(between / (between + within)),
        "residual_sd": math.sqrt(float(wms)),
    }


@pytest.mark.parametrize("name", anova_names())
def test_api_on_float64_matches_exact_arithmetic(name: str) -> None:
    labels, responses, certified = load_anova(name)
    y = np.array([float(s) for s in responses])
    models = nestfit.groups(y=y, factor=labels)
    sep = models.separate_means()
    comp = nestfit.compare(models.equal_means(), sep)
    ours = _ours(comp, sep)
    exact = _exact_on_floats(labels, y)
    for q in QUANTITIES:
        achievable = lre(exact[q], certified[q])
        assert lre(ours[q], certified[q]) >= achievable - 0.3, (name, q)


@pytest.mark.parametrize("name", anova_names())
def test_cli_on_csv_text_reaches_13_digits(name: str, capsys: pytest.CaptureFixture) -> None:
    _, _, certified = load_anova(name)
    status = main(["compare", str(ANOVA_DIR / f"{name}.csv"), "--response", "response",
                   "--factor", "treatment", "--format", "json"])
    assert status == 0
    out = json.loads(capsys.readouterr().out)
    step = out["steps"][0]
    largest = out["models"][-1]
    ours = {
        "between_df": step["df"], "between_ss": step["ss"], "between_ms": step["mean_square"],
        "f_statistic": step["f"], "within_df": largest["residual_df"],
        "within_ss": largest["residual_ss"],
        "within_ms": largest["residual_ss"] / largest["residual_df"],
        "r_squared": step["ss"] / out["models"][0]["residual_ss"],
        "residual_sd": math.sqrt(largest["residual_ss"] / largest["residual_df"]),
    }
    for q in QUANTITIES:
        assert lre(ours[q], certified[q]) >= 13.0, (name, q, ours[q], certified[q])
