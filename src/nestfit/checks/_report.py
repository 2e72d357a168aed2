"""All the checks of a one-factor layout at once (what ``nestfit check`` prints)."""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from nestfit._groups import GroupModels
from nestfit._text import format_number, format_p, text_table
from nestfit.checks._input import (
    GroupSummary,
    as_group_models,
    require_group_size,
    require_unweighted,
    summarize_groups,
)
from nestfit.checks._normality import shapiro_wilk
from nestfit.checks._result import CheckResult, check_alpha
from nestfit.checks._variance import bartlett, brown_forsythe, levene
from nestfit.checks._welch import welch_anova
from nestfit.errors import DataError

__all__ = ["AssumptionChecks", "check_assumptions"]


@dataclass(frozen=True, eq=False)
class AssumptionChecks:
    """The assumption tests and Welch's test for one response and one factor.

    Attributes
    ----------
    groups : GroupSummary
        Count, mean and variance of each level.
    tests : tuple of CheckResult
        Levene, Brown-Forsythe, Bartlett, Shapiro-Wilk (residuals of the
        separate-means model) and Welch, in that order. A test that cannot be
        computed on these data has NaN statistic and p and says why in its verdict.
    """

    groups: GroupSummary
    tests: tuple[CheckResult, ...] = field(repr=False)

    def test(self, name: str) -> CheckResult:
        """The test with this name (``"Levene"``, ``"Brown-Forsythe"``, ...)."""
        for t in self.tests:
            if t.name == name:
                return t
        raise KeyError(f"no test named {name!r}; the tests are "
                       + ", ".join(t.name for t in self.tests))

    def to_frame(self) -> pd.DataFrame:
        """One row per test: name, statistic, df, p, reading."""
        return pd.concat([t.to_frame() for t in self.tests], ignore_index=True)

    def to_dict(self) -> dict[str, Any]:
        """``{"tests": [{"name", "statistic", "df", "p", "reading", ...}], "groups": [...]}``."""
        return {"tests": [t.to_dict() for t in self.tests],
                "groups": self.groups.to_dict()["groups"]}

    def __str__(self) -> str:
        g = self.groups
        rows = [[t.name, t.distribution, format_number(t.statistic, 5), t.df_text(),
                 format_p(t.p)] for t in self.tests]
        lines = [
            f"Checks for {g.response_name!r} by {g.factor_name!r} (n = {g.n_obs}, "
            f"{len(g.levels)} levels)",
            "",
            str(g),
            "",
            text_table(["test", "distribution", "statistic", "df", "p"], rows),
            "",
        ]
        for t in self.tests:
            lines.append(f"  {t.name}: {t.reading}")
        lines += [
            "",
            "  Each p-value is for its test alone; several tests on the same data raise the",
            "  chance that one of them flags something by accident. If the variances look",
            "  unequal, compare means with Welch's test, Games-Howell pairs or HC standard",
            "  errors. Decisions touching health, safety or regulation follow the applicable",
            "  standards and a qualified statistician.",
        ]
        return "\n".join(lines)


def check_assumptions(source: Any, response: str | None = None, factor: str | None = None,
                      *, alpha: float = 0.05) -> AssumptionChecks:
    """Run the tests of equal variances and normality, and Welch's test of means.

    Parameters
    ----------
    source : GroupModels or pandas.DataFrame
        Group models, or a table with ``response`` and ``factor`` named.
    response, factor : str, optional
        Column names, with a table.
    alpha : float
        Level for the plain-words verdicts.

    Returns
    -------
    AssumptionChecks

    Raises
    ------
    DataError
        Case weights, a level with fewer than 2 observations, ``alpha`` outside
        (0, 1). A test that fails only on its own terms (Bartlett or Welch with
        a level of zero variance) is reported as not computed instead.
    """
    models = as_group_models(source, response, factor, who="check_assumptions")
    alpha = check_alpha(alpha)
    require_unweighted(models, "check_assumptions")
    require_group_size(models, 2, "check_assumptions", "a single value has no spread")
    runs: list[tuple[str, str, Callable[..., CheckResult]]] = [
        ("Levene", "F", levene), ("Brown-Forsythe", "F", brown_forsythe),
        ("Bartlett", "chi-square", bartlett), ("Shapiro-Wilk", "W", shapiro_wilk),
        ("Welch", "F", welch_anova),
    ]
    return AssumptionChecks(summarize_groups(models),
                            tuple(_run(models, name, dist, f, alpha) for name, dist, f in runs))


def _run(models: GroupModels, name: str, distribution: str, test: Callable[..., CheckResult],
         alpha: float) -> CheckResult:
    try:
        return test(models, alpha=alpha)
    except DataError as exc:
        return CheckResult(name=name, statistic=math.nan, df=(), p=math.nan,
                           distribution=distribution, null_hypothesis="-",
                           verdict=f"Not computed: {exc}.", caveat="", alpha=alpha)
