"""Shared fixtures: the demo analysis (invented data) and a data set with hostile level names."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
import pytest

import nestfit
from nestfit import contrasts as nc
from nestfit.checks import check_assumptions, residual_diagnostics
from nestfit.power import plan_comparison
from nestfit.report import Report, worked_report

#: Level names that would act as markup if any renderer failed to escape them.
HOSTILE_LEVELS = (
    "<script>document.title='PWNED'</script>",
    "<img src=x onerror=\"document.title='PWNED'\">",
    "<b id=\"pwned\">bold</b>",
    "a&b|c",
    "$x_1$ {#} back\\slash ~^%",
)


@dataclass(frozen=True)
class Case:
    """A worked report and the result objects it was built from."""

    report: Report
    models: Any
    comparison: Any
    contrasts: Any
    checks: Any
    diagnostics: Any
    power: Any


def _demo(figures: bool) -> Case:
    data = nestfit.datasets.load_fill_weights()
    models = nestfit.groups(data, "weight", "head")
    comparison = models.chain("H4 | ...")
    separate = models.separate_means()
    contrasts = nc.cell_means(separate).family(nc.versus_rest()).adjust("holm")
    checks = check_assumptions(models)
    diagnostics = residual_diagnostics(separate)
    power = plan_comparison([500, 500, 500, 500.8, 500, 500], 1.2, larger="H4 | ...",
                            levels=list(models.levels)).curve(range(5, 45, 5))
    report = worked_report(comparison, models=models, contrasts=contrasts, checks=checks,
                           diagnostics=diagnostics, power=power, units="g", figures=figures,
                           question="Is H4 different from the rest?",
                           data_note=nestfit.datasets.describe_fill_weights())
    return Case(report, models, comparison, contrasts, checks, diagnostics, power)


@pytest.fixture(scope="session")
def demo() -> Case:
    """The demo analysis with every section and figure."""
    return _demo(figures=True)


@pytest.fixture(scope="session")
def demo_text_only() -> Case:
    """The demo analysis without figures (fast)."""
    return _demo(figures=False)


def hostile_frame() -> pd.DataFrame:
    """Invented data: 6 observations in each of five levels with hostile names."""
    rng = np.random.default_rng(7)
    return pd.DataFrame({"grp<b>&": np.repeat(HOSTILE_LEVELS, 6),
                         "y_%$|": rng.normal(10.0, 1.0, 6 * len(HOSTILE_LEVELS))})


@pytest.fixture(scope="session")
def hostile() -> Case:
    """A full report whose level, factor and response names are all hostile user data."""
    models = nestfit.groups(hostile_frame(), "y_%$|", "grp<b>&")
    part = nestfit.Partition.from_blocks([[models.levels[0]], list(models.levels[1:])],
                                         models.levels)
    comparison = models.chain(part)
    separate = models.separate_means()
    contrasts = nc.cell_means(separate).family(nc.all_pairs()).adjust("tukey")
    checks = check_assumptions(models)
    diagnostics = residual_diagnostics(separate)
    report = worked_report(comparison, models=models, contrasts=contrasts, checks=checks,
                           diagnostics=diagnostics, units="<u>&")
    return Case(report, models, comparison, contrasts, checks, diagnostics, None)
