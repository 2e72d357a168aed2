"""The result of one test of an assumption (or of means under unequal variances)."""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from nestfit._text import format_number, format_p
from nestfit.errors import DataError

__all__ = ["CheckResult", "check_alpha", "is_real", "verdict"]


@dataclass(frozen=True)
class CheckResult:
    """One test: its statistic, degrees of freedom, p-value and a reading in plain words.

    Attributes
    ----------
    name : str
        The published name of the test, e.g. ``"Brown-Forsythe"``.
    statistic : float
        The test statistic (F, chi-square or W).
    df : tuple of float
        Degrees of freedom of the reference distribution: two for an F
        statistic (the second may be fractional, as in Welch's test), one for
        chi-square, none for Shapiro-Wilk.
    p : float
        Upper-tail probability of the statistic under the null hypothesis
        (lower tail for Shapiro-Wilk's W, as scipy computes it).
    distribution : str
        ``"F"``, ``"chi-square"`` or ``"W"``.
    null_hypothesis : str
        What the test assumes when computing ``p``, in words.
    verdict : str
        The result in words at level ``alpha``.
    caveat : str
        When this test misleads.
    alpha : float
        The level used for the verdict.
    """

    name: str
    statistic: float
    df: tuple[float, ...]
    p: float
    distribution: str
    null_hypothesis: str
    verdict: str
    caveat: str
    alpha: float = 0.05

    @property
    def reading(self) -> str:
        """The verdict followed by the caveat."""
        return f"{self.verdict} {self.caveat}".strip()

    def df_value(self) -> float | int | list[float | int] | None:
        """``df`` as JSON wants it: None, one number, or a list of two."""
        vals = [int(d) if float(d).is_integer() else float(d) for d in self.df]
        if not vals:
            return None
        return vals[0] if len(vals) == 1 else vals

    def to_dict(self) -> dict[str, Any]:
        """``{"name", "statistic", "df", "p", "reading", ...}``; NaN becomes None.

        ``df`` is a number for a chi-square statistic, a list of two numbers
        for an F statistic and None for Shapiro-Wilk.
        """
        return {
            "name": self.name,
            "statistic": _finite(self.statistic),
            "df": self.df_value(),
            "p": _finite(self.p),
            "reading": self.reading,
            "distribution": self.distribution,
            "null_hypothesis": self.null_hypothesis,
            "alpha": self.alpha,
        }

    def to_frame(self) -> pd.DataFrame:
        """One row: name, statistic, df, p, reading."""
        return pd.DataFrame([{"name": self.name, "statistic": self.statistic,
                              "df": self.df_value(), "p": self.p, "reading": self.reading}])

    def df_text(self) -> str:
        """Degrees of freedom for display, e.g. ``"3, 20.41"``."""
        return ", ".join(format_number(d, 4) if not float(d).is_integer() else str(int(d))
                         for d in self.df) or "-"

    def __str__(self) -> str:
        df = f" (df {self.df_text()})" if self.df else ""
        return (f"{self.name}: {self.distribution} = {format_number(self.statistic, 5)}"
                f"{df}, p {_p_phrase(self.p)}\n"
                f"  null hypothesis: {self.null_hypothesis}\n"
                f"  {self.verdict}\n  {self.caveat}")


def verdict(p: float, alpha: float, rejected: str, kept: str, kept_note: str = "") -> str:
    """``rejected`` or ``kept`` (then ``kept_note``) with the p-value and level spelled out."""
    if not math.isfinite(p):
        return "No p-value could be computed."
    if p < alpha:
        return f"{rejected} (p {_p_phrase(p)}, below the level {alpha:g})."
    return f"{kept} (p {_p_phrase(p)}, not below the level {alpha:g}). {kept_note}".strip()


def is_real(value: object) -> bool:
    """A real number (Python or numpy), not a bool."""
    return isinstance(value, numbers.Real) and not isinstance(value, (bool, np.bool_))


def check_alpha(alpha: float, name: str = "alpha") -> float:
    """``0 < alpha < 1`` or DataError (also used for confidence levels and target powers)."""
    if not (is_real(alpha) and 0.0 < float(alpha) < 1.0):
        raise DataError(f"{name} must be between 0 and 1 (exclusive). Got {alpha!r} instead.")
    return float(alpha)


def _p_phrase(p: float) -> str:
    text = format_p(p)
    return text if text.startswith("<") else f"= {text}"


def _finite(x: float) -> float | None:
    return float(x) if math.isfinite(float(x)) else None
