"""One line of the benchmark table: a measurement, what it is compared with, the target."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

__all__ = ["Row", "format_amount"]


@dataclass(frozen=True)
class Row:
    """``ratio = measured / against``; the target is met when ``ratio <= limit``.

    Attributes
    ----------
    case : str
        What is measured, and against what.
    measured, against : float
        Seconds (``unit="s"``), bytes (``"B"``) or a plain number (``""``).
    unit : str
    limit : float or None
        Largest acceptable ratio; ``None`` for a line shown for information.
    target : str
        The target in words.
    runs : int
        Runs behind a timing (the best is shown); 1 for memory and checks.
    error : str
        Set instead of figures when the measured code raised.
    """

    case: str
    measured: float
    against: float
    unit: str
    limit: float | None
    target: str
    runs: int = 1
    error: str = ""

    @property
    def ratio(self) -> float:
        if self.error or not self.against:
            return math.nan
        return self.measured / self.against

    @property
    def met(self) -> bool | None:
        if self.error:
            return False
        if self.limit is None:
            return None
        return bool(self.ratio <= self.limit)

    def cells(self) -> list[str]:
        if self.error:
            return [self.case, "error", "-", "-", self.target, "no"]
        met = {True: "yes", False: "no", None: "-"}[self.met]
        return [self.case, format_amount(self.measured, self.unit),
                format_amount(self.against, self.unit), f"{self.ratio:.3g}", self.target, met]

    def to_dict(self) -> dict[str, Any]:
        ratio = self.ratio
        return {
            "case": self.case, "unit": self.unit, "measured": self.measured,
            "against": self.against, "ratio": ratio if math.isfinite(ratio) else None,
            "limit": self.limit, "target": self.target, "met": self.met, "runs": self.runs,
            "error": self.error or None,
        }


def format_amount(value: float, unit: str) -> str:
    if unit == "s":
        return f"{value * 1e3:.1f} ms" if value < 1.0 else f"{value:.2f} s"
    if unit == "B":
        return f"{value / 2**20:.0f} MiB" if value >= 2**20 else f"{value / 2**10:.0f} KiB"
    return f"{value:.3g}"
