"""Results of power planning: one power, a solved group size, a power curve."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from nestfit._text import format_number, text_table

__all__ = ["GroupSize", "PowerCurve", "PowerResult"]

CAUTION = (
    "  Power holds only if the errors are independent and normal with the stated sigma in\n"
    "  every group and the means (or effect size) are as assumed; plan with a range of\n"
    "  plausible values. Studies touching health, safety or regulation follow the\n"
    "  applicable standards and a qualified statistician."
)


@dataclass(frozen=True)
class PowerResult:
    """Power of one test at one set of group sizes.

    Attributes
    ----------
    test : str
        What is tested, in words.
    sizes : tuple of int
        Observations per level.
    df : tuple of float
        Degrees of freedom of the test (two for F, one for t).
    noncentrality : float
        ``lambda`` (F) or ``delta`` (t).
    critical_value : float
        Rejection threshold of the statistic (``|t|`` threshold for two-sided t).
    alpha : float
    power : float
    effect_name : str
        ``"Cohen's f"`` or ``"standardized difference"``.
    effect : float
        Cohen's ``f = sqrt(lambda / N)`` or ``d = psi* / sigma``.
    """

    test: str
    sizes: tuple[int, ...]
    df: tuple[float, ...]
    noncentrality: float
    critical_value: float
    alpha: float
    power: float
    effect_name: str
    effect: float

    @property
    def n_total(self) -> int:
        """``N = sum n_i``."""
        return int(sum(self.sizes))

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"test": self.test, "sizes": list(self.sizes), "n_total": self.n_total,
                "df": [float(d) for d in self.df], "noncentrality": self.noncentrality,
                "critical_value": self.critical_value, "alpha": self.alpha,
                "power": self.power, "effect_name": self.effect_name, "effect": self.effect}

    def to_frame(self) -> pd.DataFrame:
        """One row: n_total, noncentrality, critical_value, alpha, power, effect."""
        row = self.to_dict()
        row["sizes"] = ",".join(str(s) for s in self.sizes)
        row["df"] = ",".join(format_number(d) for d in self.df)
        return pd.DataFrame([row])

    def sizes_text(self) -> str:
        """``"20 per level"`` or ``"12, 15, 20"``."""
        if len(set(self.sizes)) == 1:
            return f"{self.sizes[0]} per level"
        return ", ".join(str(s) for s in self.sizes)

    def __str__(self) -> str:
        df = ", ".join(format_number(d, 5) for d in self.df)
        return "\n".join([
            f"Power of the {self.test}, level alpha = {self.alpha:g}",
            f"  group sizes {self.sizes_text()} (N = {self.n_total}); df {df}",
            f"  noncentrality {format_number(self.noncentrality, 5)}, critical value "
            f"{format_number(self.critical_value, 5)}; {self.effect_name} "
            f"{format_number(self.effect, 4)}",
            f"  power {format_number(self.power, 4)}",
            CAUTION,
        ])


@dataclass(frozen=True)
class GroupSize:
    """The smallest equal group size whose power reaches a target.

    Attributes
    ----------
    n : int
        Observations per level.
    target : float
        The power asked for.
    result : PowerResult
        Power at ``n`` (at least ``target``).
    power_below : float or None
        Power at ``n - 1`` (below ``target``); None when ``n - 1 < 2``.
    """

    n: int
    target: float
    result: PowerResult
    power_below: float | None

    @property
    def power(self) -> float:
        """Power at ``n``."""
        return self.result.power

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"n_per_level": self.n, "target": self.target, "power": self.power,
                "power_at_n_minus_1": self.power_below, "result": self.result.to_dict()}

    def to_frame(self) -> pd.DataFrame:
        """One row: n_per_level, n_total, target, power, power_at_n_minus_1."""
        return pd.DataFrame([{"n_per_level": self.n, "n_total": self.result.n_total,
                              "target": self.target, "power": self.power,
                              "power_at_n_minus_1": self.power_below}])

    def __str__(self) -> str:
        below = ("" if self.power_below is None
                 else f"; with {self.n - 1} per level it is {format_number(self.power_below, 4)}")
        return "\n".join([
            f"Group size for power {self.target:g}: {self.n} per level "
            f"(N = {self.result.n_total})",
            f"  power {format_number(self.power, 4)} with {self.n} per level{below}",
            str(self.result),
        ])


@dataclass(frozen=True)
class PowerCurve:
    """Power at a range of equal group sizes (data for a plot or a table).

    Attributes
    ----------
    test : str
    alpha : float
    points : tuple of PowerResult
        One per group size, in the order given.
    """

    test: str
    alpha: float
    points: tuple[PowerResult, ...] = field(repr=False)

    def to_frame(self) -> pd.DataFrame:
        """One row per group size: n_per_level, n_total, df, noncentrality, power."""
        return pd.DataFrame([
            {"n_per_level": p.sizes[0], "n_total": p.n_total,
             "df_denominator": p.df[-1], "noncentrality": p.noncentrality, "power": p.power}
            for p in self.points
        ])

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form."""
        return {"test": self.test, "alpha": self.alpha,
                "points": [{"n_per_level": p.sizes[0], "n_total": p.n_total,
                            "power": p.power, "noncentrality": p.noncentrality}
                           for p in self.points]}

    def __str__(self) -> str:
        rows = [[str(p.sizes[0]), str(p.n_total), format_number(p.noncentrality, 5),
                 format_number(p.power, 4)] for p in self.points]
        return "\n".join([
            f"Power curve of the {self.test}, level alpha = {self.alpha:g}",
            text_table(["n per level", "N", "noncentrality", "power"], rows, left=0),
            CAUTION,
        ])
