"""A contrast of estimated means: estimate, standard error, t test, confidence interval.

For weights ``w`` over means ``mu = M b`` the contrast is the coefficient
function ``c = w' M``:

    estimate = c' b,   se = sqrt(c' Cov(b) c),   t = estimate / se,
    p = 2 P(T_df > |t|),   interval = estimate -/+ t_{1 - alpha/2, df} se,

with ``df`` the model's residual degrees of freedom (Seber & Lee, *Linear
Regression Analysis*, 2nd ed., 2003, sec. 4.3, from memory). Under
independent normal errors of equal variance the t statistic has Student's t
distribution when the contrast is zero. The test and interval are for one
contrast chosen in advance: for several, adjust (Holm, Scheffe, Tukey-Kramer...).

A contrast is refused unless ``c`` is estimable (``c`` in the row space of
``X``); with empty cells the message names the empty cells it would need.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit.errors import ContrastError, DataError

if TYPE_CHECKING:
    from nestfit.tables._means import EstimatedMeans

__all__ = ["MeanContrast", "interaction_weights", "mean_contrast", "parse_weights"]


@dataclass(frozen=True)
class MeanContrast:
    """One contrast of estimated means.

    Attributes
    ----------
    label : str
        What the contrast is (``"a=1 - a=2"`` unless named).
    means : str
        Which means it is a contrast of (``"marginal means of a (equal weights)"``).
    weights : tuple of (str, float)
        The nonzero weights, by mean label.
    coefficient_weights : ndarray
        ``c = w' M``, the same contrast as weights on the model's coefficients.
    estimate, std_error, t, p : float
        ``c' b``, ``sqrt(c' Cov c)``, their ratio, the two-sided p-value.
    df : int
        Residual degrees of freedom.
    lower, upper : float
        The confidence interval at ``level``.
    level : float
        Confidence level.
    """

    label: str
    means: str
    weights: tuple[tuple[str, float], ...]
    coefficient_weights: np.ndarray = field(repr=False)
    estimate: float
    std_error: float
    t: float
    df: int
    p: float
    lower: float
    upper: float
    level: float

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form; NaN becomes None."""
        def num(x: float) -> float | None:
            return float(x) if math.isfinite(x) else None

        return {"label": self.label, "means": self.means,
                "weights": {k: v for k, v in self.weights}, "estimate": num(self.estimate),
                "std_error": num(self.std_error), "t": num(self.t), "df": self.df,
                "p": num(self.p), "lower": num(self.lower), "upper": num(self.upper),
                "level": self.level}

    def to_frame(self) -> pd.DataFrame:
        """One row: estimate, std_error, t, df, p, lower, upper."""
        return pd.DataFrame([{"estimate": self.estimate, "std_error": self.std_error,
                              "t": self.t, "df": self.df, "p": self.p, "lower": self.lower,
                              "upper": self.upper}], index=pd.Index([self.label], name="contrast"))

    def __str__(self) -> str:
        from nestfit.tables._format import format_contrast

        return format_contrast(self)


def _key_index(means: EstimatedMeans) -> dict[str, int]:
    keys = {lab: i for i, lab in enumerate(means.labels)}
    if len(means.factors) == 1:
        keys.update({lv[0]: i for i, lv in enumerate(means.levels)})
    return keys


def parse_weights(means: EstimatedMeans,
                  weights: Mapping[str, float] | Sequence[float]) -> np.ndarray:
    """Weights over the means from a mapping ``label -> weight`` or a sequence in mean order.

    Raises
    ------
    ContrastError
        Unknown labels, a wrong number of weights, non-finite or all-zero weights.
    """
    m = len(means.labels)
    if isinstance(weights, Mapping):
        keys = _key_index(means)
        w = np.zeros(m)
        for k, v in weights.items():
            if str(k) not in keys:
                raise ContrastError(f"no mean labelled {k!r}; the means are: "
                                    f"{'; '.join(means.labels)}")
            w[keys[str(k)]] += _number(v, k)
    else:
        if isinstance(weights, str):
            raise ContrastError("contrast weights must be numbers or a mapping label -> weight, "
                                f"not the text {weights!r}")
        try:
            w = np.asarray([_number(v, i) for i, v in enumerate(weights)], dtype=np.float64)
        except TypeError:
            raise ContrastError(f"contrast weights must be a sequence of {m} numbers or a "
                                "mapping label -> weight") from None
        if w.shape != (m,):
            raise ContrastError(f"{w.size} contrast weights given for {m} means "
                                f"({'; '.join(means.labels)}); give one weight per mean")
    if not np.any(w != 0):
        raise ContrastError("the contrast weights are all zero: nothing to estimate")
    return w


def _number(v: Any, key: Any) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise ContrastError(f"contrast weight for {key!r} is not a number: {v!r}") from None
    if not math.isfinite(x):
        raise ContrastError(f"contrast weight for {key!r} is not finite: {v!r}")
    return x


def _describe(terms: list[tuple[str, float]]) -> str:
    parts = []
    for i, (lab, w) in enumerate(terms):
        sign = "-" if w < 0 else "+"
        size = abs(w)
        coef = "" if size == 1 else f"{size:g}*"
        body = f"{coef}{lab}" if "," not in lab else f"{coef}({lab})"
        parts.append(("-" if sign == "-" else "") + body if i == 0 else f" {sign} {body}")
    return "".join(parts)


def interaction_weights(means: EstimatedMeans,
                        spec: Mapping[str, Mapping[str, float] | Sequence[float]]
                        ) -> tuple[np.ndarray, str]:
    """Product weights ``w = u_a (x) u_b (x) ...`` over the means, and a label.

    Raises
    ------
    ContrastError
        Fewer than two factors, a factor missing from or unknown to ``spec``,
        weights of the wrong length or that do not sum to zero.
    """
    if not isinstance(spec, Mapping):
        raise ContrastError("an interaction contrast needs a mapping factor -> level weights")
    if len(means.factors) < 2:
        raise ContrastError(f"an interaction contrast needs means over two or more factors; "
                            f"these are over {', '.join(means.factors)}")
    unknown = [k for k in spec if k not in means.factors]
    if unknown:
        raise ContrastError(f"these means are over {', '.join(means.factors)}; there is no "
                            f"factor {unknown[0]!r}")
    missing = [f for f in means.factors if f not in spec]
    if missing:
        raise ContrastError(f"give level weights for every factor of the means; missing: "
                            f"{', '.join(missing)}")
    w = np.ones(len(means.labels))
    labels = []
    for j, factor in enumerate(means.factors):
        levels = list(dict.fromkeys(lv[j] for lv in means.levels))
        given = spec[factor]
        if isinstance(given, Mapping):
            bad = [k for k in given if str(k) not in levels]
            if bad:
                raise ContrastError(f"factor {factor!r} has no level {bad[0]!r}; its levels are "
                                    f"{', '.join(levels)}")
            u = {lv: 0.0 for lv in levels}
            for k, v in given.items():
                u[str(k)] = _number(v, f"{factor}={k}")
        else:
            vals = [_number(v, f"{factor}[{i}]") for i, v in enumerate(given)]
            if len(vals) != len(levels):
                raise ContrastError(f"{len(vals)} weights given for the {len(levels)} levels of "
                                    f"{factor!r} ({', '.join(levels)})")
            u = dict(zip(levels, vals))
        total = math.fsum(u.values())
        if abs(total) > 1e-12 * max(1.0, max(abs(x) for x in u.values())):
            raise ContrastError(f"the weights for {factor!r} sum to {total:g}, not 0: an "
                                "interaction contrast is a contrast of contrasts")
        if not any(u.values()):
            raise ContrastError(f"the weights for {factor!r} are all zero")
        w = w * np.array([u[lv[j]] for lv in means.levels])
        labels.append(_describe([(f"{factor}={lv}", x) for lv, x in u.items() if x != 0]))
    return w, " x ".join(f"({lab})" for lab in labels)


def _means_name(means: EstimatedMeans) -> str:
    if means.kind == "cell":
        return f"cell means of {', '.join(means.factors)}"
    name = f"{'adjusted' if means.at else 'marginal'} means of {', '.join(means.factors)}"
    return name + (f" ({means.weighting} weights)" if means.averaged_over else "")


def mean_contrast(means: EstimatedMeans, w: np.ndarray, *, label: str | None = None,
                  level: float = 0.95) -> MeanContrast:
    """Estimate and test ``sum_i w_i mu_i`` (module notes).

    Raises
    ------
    ContrastError
        The contrast is not estimable (it needs empty cells, named; or aliased columns).
    DataError
        ``level`` outside (0, 1).
    """
    if not 0.0 < level < 1.0:
        raise DataError(f"level must be between 0 and 1 (exclusive). Got {level!r} instead.")
    terms = [(lab, float(x)) for lab, x in zip(means.labels, w) if x != 0]
    name = label or _describe(terms)
    c = w @ means.coefficient_map
    undefined = [lab for lab, x, out in zip(means.labels, w, means._undefined) if x != 0 and out]
    if undefined:
        raise ContrastError(f"contrast {name!r} of the {_means_name(means)} is not estimable: "
                            f"there are no observations at {'; '.join(undefined)}, so "
                            "count-proportional weights are undefined there")
    assert means._null is not None
    if not means._null.is_estimable(c):
        cell_w = np.abs(w) @ np.abs(means.cell_weights)
        empty = [lab for lab, x, n in zip(means.cell_labels, cell_w, means.cell_counts)
                 if x != 0 and n == 0]
        why = (f"it needs cell(s) with no observations: {'; '.join(empty)}" if empty
               else "it depends on aliased columns of the model")
        raise ContrastError(f"contrast {name!r} of the {_means_name(means)} is not estimable in "
                            f"model {means.model!r}: {why}")
    est = float(c @ means._coefficients)
    var = float(c @ means._coef_cov @ c)
    se = math.sqrt(var) if var > 0 else (0.0 if var == 0 else math.nan)
    df = means.df
    if df > 0 and se > 0:
        t = est / se
        p = float(2.0 * stats.t.sf(abs(t), df))
        q = float(stats.t.ppf(0.5 + level / 2.0, df))
    else:
        t = p = q = math.nan
    c = np.array(c)
    c.flags.writeable = False
    return MeanContrast(name, _means_name(means), tuple(terms), c, est, se, t, df, p,
                        est - q * se, est + q * se, level)

