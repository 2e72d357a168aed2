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
    """The smallest group sizes, equal or in fixed ratios, whose power reaches a target.

    Sizes are indexed by a whole number ``m``: ``m`` per level for equal sizes, or
    ``n_i = ceil(m * r_i / min(r))`` for an allocation ``r`` (the smallest group gets
    ``m``; see :meth:`PowerPlan.group_size`).

    Attributes
    ----------
    n : int
        ``m``: observations per level (equal sizes) or in the smallest group.
    target : float
        The power asked for.
    result : PowerResult
        Power at the sizes for ``m`` (at least ``target``).
    power_below : float or None
        Power at the sizes for ``m - 1`` (below ``target``); None when ``m`` is the
        smallest value searched.
    allocation : tuple of float or None
        Ratios in level order divided by the smallest; None when equal sizes were asked.
    levels : tuple of str
        Level names (empty when not given).
    sizes_below : tuple of int or None
        The sizes for ``m - 1`` (None with ``power_below``).
    """

    n: int
    target: float
    result: PowerResult
    power_below: float | None
    allocation: tuple[float, ...] | None = None
    levels: tuple[str, ...] = ()
    sizes_below: tuple[int, ...] | None = None

    @property
    def power(self) -> float:
        """Power at the returned sizes."""
        return self.result.power

    @property
    def sizes(self) -> tuple[int, ...]:
        """Observations per level, in level order."""
        return self.result.sizes

    @property
    def n_total(self) -> int:
        """``N = sum n_i``."""
        return self.result.n_total

    @property
    def equal(self) -> bool:
        """Whether every level gets the same size."""
        return len(set(self.sizes)) == 1

    def _names(self) -> tuple[str, ...]:
        return self.levels or tuple(str(j + 1) for j in range(len(self.sizes)))

    def _by_level(self, values: tuple[Any, ...] | None) -> dict[str, Any] | None:
        return None if values is None else dict(zip(self._names(), values))

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form; ``n_per_level`` is None for unequal sizes."""
        return {"n_per_level": self.n if self.equal else None, "smallest_group": self.n,
                "sizes": self._by_level(self.sizes), "n_total": self.n_total,
                "allocation": self._by_level(self.allocation), "target": self.target,
                "power": self.power, "power_at_n_minus_1": self.power_below,
                "sizes_at_n_minus_1": self._by_level(self.sizes_below),
                "result": self.result.to_dict()}

    def to_frame(self) -> pd.DataFrame:
        """One row: n_per_level, smallest_group, sizes (in level order), n_total, target,
        power, power_at_n_minus_1."""
        return pd.DataFrame([{"n_per_level": self.n if self.equal else None,
                              "smallest_group": self.n,
                              "sizes": ",".join(str(s) for s in self.sizes),
                              "n_total": self.n_total, "target": self.target,
                              "power": self.power, "power_at_n_minus_1": self.power_below}])

    def sizes_frame(self) -> pd.DataFrame:
        """One row per level: level, ratio, n, n_at_n_minus_1."""
        ratios = self.allocation or (1.0,) * len(self.sizes)
        below = self.sizes_below or (None,) * len(self.sizes)
        return pd.DataFrame({"level": list(self._names()), "ratio": list(ratios),
                             "n": list(self.sizes), "n_at_n_minus_1": list(below)})

    def __str__(self) -> str:
        if self.equal:
            below = ("" if self.power_below is None
                     else f"; with {self.n - 1} per level it is "
                          f"{format_number(self.power_below, 4)}")
            return "\n".join([
                f"Group size for power {self.target:g}: {self.n} per level (N = {self.n_total})",
                f"  power {format_number(self.power, 4)} with {self.n} per level{below}",
                str(self.result),
            ])
        ratios = self.allocation or (1.0,) * len(self.sizes)
        below_sizes = self.sizes_below or (None,) * len(self.sizes)
        rows = [[name, format_number(q, 4), str(n), format_number(b)]
                for name, q, n, b in zip(self._names(), ratios, self.sizes, below_sizes)]
        below = ("" if self.power_below is None or self.sizes_below is None
                 else f"; one step down (smallest group {self.n - 1}, N = "
                      f"{sum(self.sizes_below)}) it is {format_number(self.power_below, 4)}")
        return "\n".join([
            f"Group sizes for power {self.target:g} in the ratios "
            f"{' : '.join(format_number(q, 4) for q in ratios)}: smallest group {self.n} "
            f"(N = {self.n_total})",
            text_table(["level", "ratio", "n", "n one step down"], rows),
            f"  power {format_number(self.power, 4)} at these sizes{below}",
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
