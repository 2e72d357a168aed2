"""Nested comparisons: the extra-sum-of-squares F test along a chain of models.

For nested least-squares models ``M0 ⊂ M1`` (column spaces) on the same rows
and response, the extra sum of squares is

    SS = RSS0 - RSS1 = || yhat1 - yhat0 ||^2_W,

the second form by Pythagoras since ``yhat1 - yhat0`` is orthogonal to the
residual of ``M1``; nestfit computes it that way, which cannot come out
negative and loses no digits to cancellation. With ``df = rank1 - rank0`` and
a denominator mean square ``s^2`` (by default the residual mean square of the
largest model in the chain),

    F = (SS / df) / s^2,    p = P(F_{df, df_den} > F).

Under the larger model with independent normal errors of equal variance and
the smaller model true, F has the F distribution (Seber & Lee, *Linear
Regression Analysis*, 2nd ed., 2003, sec. 4.3, theorem 4.1, from memory).
The one-way ANOVA table is this comparison for equal means -> separate means.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
import pandas as pd
from scipy import stats

from nestfit._display import html_for
from nestfit._fit import Fit
from nestfit.errors import NotNestedError
from nestfit.linalg import is_nested

__all__ = ["Comparison", "ModelSummary", "Step", "compare"]

Denominator = Literal["largest", "each"]

# Column-space containment tolerance: relative residual norm of each column of
# the smaller design after projection on the larger one. Common practice, no source.
NESTING_TOL = 1e-8


@dataclass(frozen=True)
class ModelSummary:
    """One model of a comparison chain."""

    name: str
    parameters: int
    residual_df: int
    residual_ss: float
    description: str = ""


@dataclass(frozen=True)
class Step:
    """One step ``smaller -> larger`` of a comparison chain.

    Attributes
    ----------
    smaller, larger : str
        The two models compared.
    df : int
        ``rank(larger) - rank(smaller)``.
    ss : float
        Extra sum of squares ``RSS(smaller) - RSS(larger)``.
    mean_square : float
        ``ss / df``.
    f : float
        ``mean_square / denominator_ms``.
    p : float
        Upper tail probability of ``F(df, denominator_df)``.
    denominator_df : int
        Degrees of freedom of the denominator mean square.
    denominator_ms : float
        The denominator mean square.
    """

    smaller: str
    larger: str
    df: int
    ss: float
    mean_square: float
    f: float
    p: float
    denominator_df: int
    denominator_ms: float


@dataclass(frozen=True, eq=False)
class Comparison:
    """A chain of nested models and the F test of each step.

    Attributes
    ----------
    response_name : str
        The response.
    n_obs : int
        Observations shared by every model.
    models : tuple of ModelSummary
        Models from smallest to largest.
    steps : tuple of Step
        ``models[i] -> models[i + 1]`` for each ``i``.
    denominator : {"largest", "each"}
        Whether every F uses the largest model's residual mean square (the
        default) or the residual mean square of each step's larger model.
    fits : tuple of Fit
        The fits compared, when available.
    """

    response_name: str
    n_obs: int
    models: tuple[ModelSummary, ...]
    steps: tuple[Step, ...]
    denominator: str = "largest"
    fits: tuple[Fit, ...] = field(default=(), repr=False)

    @property
    def residual(self) -> ModelSummary:
        """The largest model (whose residual is the error term by default)."""
        return self.models[-1]

    def step(self, smaller: str, larger: str) -> Step:
        """The step between two named models."""
        for s in self.steps:
            if s.smaller == smaller and s.larger == larger:
                return s
        raise KeyError(f"no step {smaller!r} -> {larger!r} in this comparison")

    def to_frame(self) -> pd.DataFrame:
        """One row per step: smaller, larger, df, ss, mean_square, f, p."""
        return pd.DataFrame(
            [
                {"smaller": s.smaller, "larger": s.larger, "df": s.df, "ss": s.ss,
                 "mean_square": s.mean_square, "f": s.f, "p": s.p}
                for s in self.steps
            ]
        )

    def models_frame(self) -> pd.DataFrame:
        """One row per model: name, parameters, residual_df, residual_ss."""
        return pd.DataFrame(
            [{"name": m.name, "parameters": m.parameters, "residual_df": m.residual_df,
              "residual_ss": m.residual_ss} for m in self.models]
        ).set_index("name")

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form: ``{"models": [...], "steps": [...]}``."""
        return {
            "response": self.response_name,
            "n_obs": self.n_obs,
            "denominator": self.denominator,
            "models": [
                {"name": m.name, "parameters": m.parameters, "residual_df": m.residual_df,
                 "residual_ss": m.residual_ss}
                for m in self.models
            ],
            "steps": [
                {"from": s.smaller, "to": s.larger, "df": s.df, "ss": s.ss,
                 "mean_square": _finite_or_none(s.mean_square), "f": _finite_or_none(s.f),
                 "p": _finite_or_none(s.p)}
                for s in self.steps
            ],
        }

    def __str__(self) -> str:
        from nestfit._text import format_comparison

        return format_comparison(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))

    def _repr_html_(self) -> str | None:  # Jupyter (renderer registered by nestfit.report)
        return html_for("comparison", self)


def _finite_or_none(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def compare(*fits: Fit, denominator: str = "largest", tol: float = NESTING_TOL) -> Comparison:
    """Compare nested fits with the extra-sum-of-squares F test.

    Parameters
    ----------
    *fits : Fit
        Two or more fits of the same response on the same rows. They are
        put in order of rank (smallest first); each model's column space must
        lie inside the next one's.
    denominator : {"largest", "each"}
        ``"largest"`` (default): every step's F uses the residual mean square
        of the largest model, the usual choice for an analysis-of-variance
        table, since that model's error estimate is valid under every model in
        the chain. ``"each"``: each step uses its own larger model.
    tol : float
        Nesting tolerance on the relative residual of projecting each column
        of the smaller design on the larger design's column space.

    Returns
    -------
    Comparison

    Raises
    ------
    NotNestedError
        Different rows, response or weights; equal column spaces; or a model
        whose columns are not in the next model's column space (both named).

    Notes
    -----
    ``SS = || yhat_large - yhat_small ||^2_W``, ``F = (SS/df) / s^2``,
    ``p = P(F_{df, df_den} > F)``. Reference: Seber & Lee (2003), sec. 4.3.

    Examples
    --------
    >>> import nestfit
    >>> models = nestfit.groups(nestfit.datasets.load_fill_weights(), "weight", "head")
    >>> table = nestfit.compare(models.equal_means(), models.separate_means())
    >>> table.steps[0].df
    5
    """
    if len(fits) < 2:
        raise NotNestedError(f"compare needs at least two fits, got {len(fits)}")
    if denominator not in ("largest", "each"):
        raise NotNestedError(
            f"denominator must be 'largest' or 'each'. Got {denominator!r} instead."
        )
    for f in fits:
        if not isinstance(f, Fit):
            raise NotNestedError(f"compare takes Fit objects, got {type(f).__name__}")
    first = fits[0]
    for other in fits[1:]:
        _check_same_data(first, other)
    chain = sorted(fits, key=lambda f: f.rank)
    for small, large in zip(chain, chain[1:]):
        _check_nested(small, large, tol)
    last = chain[-1]
    steps = []
    for small, large in zip(chain, chain[1:]):
        den = last if denominator == "largest" else large
        steps.append(_step(small, large, den))
    models = tuple(
        ModelSummary(f.name, f.rank, f.residual_df, f.residual_ss, f.design.description)
        for f in chain
    )
    return Comparison(first.response_name, first.n_obs, models, tuple(steps), denominator,
                      tuple(chain))


def _step(small: Fit, large: Fit, den: Fit) -> Step:
    df = large.rank - small.rank
    ss = extra_ss(small, large)
    ms = ss / df
    den_df = den.residual_df
    den_ms = den.residual_ss / den_df if den_df > 0 else math.nan
    if den_df > 0 and den_ms > 0:
        f_value = ms / den_ms
        p = float(stats.f.sf(f_value, df, den_df))
    elif den_df > 0:  # a perfect fit of the larger model: any extra SS is infinitely significant
        f_value, p = (math.inf, 0.0) if ss > 0 else (math.nan, math.nan)
    else:
        f_value, p = math.nan, math.nan
    return Step(small.name, large.name, df, ss, ms, f_value, p, den_df, den_ms)


def extra_ss(small: Fit, large: Fit) -> float:
    """``|| yhat_large - yhat_small ||^2_W`` for nested fits on the same data."""
    sg, lg = small.design.groups, large.design.groups
    if (sg is not None and lg is not None and small._group_fitted is not None
            and large._group_fitted is not None and sg.factor is lg.factor
            and small.offset == large.offset and small._shift == large._shift):
        diff = large._group_fitted - small._group_fitted
        totals = (np.bincount(sg.factor.codes, weights=small.weights)
                  if small.weights is not None else sg.factor.counts.astype(float))
        return math.fsum((totals * diff * diff).tolist())
    # yhat_large - yhat_small = r_small - r_large: the residuals carry no offset.
    diff = small.residuals - large.residuals
    sq = diff * diff if small.weights is None else small.weights * diff * diff
    return math.fsum(sq.tolist())


def _check_same_data(a: Fit, b: Fit) -> None:
    pair = f"models {a.name!r} and {b.name!r}"
    if a.n_obs != b.n_obs:
        raise NotNestedError(
            f"{pair} use different numbers of rows ({a.n_obs} and {b.n_obs}); "
            "fit both on the same rows (check the missing-value reports)"
        )
    if a.response_name != b.response_name:
        raise NotNestedError(
            f"{pair} have different responses ({a.response_name!r} and {b.response_name!r})"
        )
    same_y = a.y is b.y or (
        a.offset == b.offset and np.array_equal(a.y, b.y)
    ) or np.array_equal(a.y + a.offset, b.y + b.offset)
    if not same_y:
        raise NotNestedError(f"{pair} were fitted to different response values")
    if (a.weights is None) != (b.weights is None) or (
        a.weights is not None and b.weights is not None
        and not np.array_equal(a.weights, b.weights)
    ):
        raise NotNestedError(f"{pair} use different weights")
    if a.row_labels is not None and b.row_labels is not None and (
        a.row_labels is not b.row_labels
    ) and not np.array_equal(np.asarray(a.row_labels), np.asarray(b.row_labels)):
        raise NotNestedError(f"{pair} use different rows; fit both on the same rows")


def _check_nested(small: Fit, large: Fit, tol: float) -> None:
    sg, lg = small.design.groups, large.design.groups
    same_factor = sg is not None and lg is not None and (
        sg.factor is lg.factor or np.array_equal(sg.factor.codes, lg.factor.codes))
    if (same_factor and sg is not None and lg is not None and sg.partition is not None
            and lg.partition is not None):
        # Partition models: the column spaces are nested exactly when the larger
        # partition refines the smaller one; no factorisation needed.
        if not sg.partition.is_nested_in(lg.partition):
            raise NotNestedError(
                f"model {small.name!r} is not nested in model {large.name!r}: a block of the "
                "larger partition spans two blocks of the smaller one; compare only models "
                "where the smaller is a special case of the larger"
            )
        nested, worst, resid = True, None, 0.0
        columns = small.design.column_names
    elif same_factor and sg is not None and lg is not None:
        # Both are functions of the same level codes: containment of the
        # column spaces reduces to the k-row coding matrices.
        nested, worst, resid = is_nested(sg.coding, lg.coding, tol=tol)
        columns = small.design.column_names
    else:
        nested, worst, resid = is_nested(small.design.to_dense(), large.design.to_dense(),
                                         tol=tol, weights=small.weights)
        columns = small.design.column_names
    if not nested:
        col = columns[worst] if worst is not None else "?"
        raise NotNestedError(
            f"model {small.name!r} is not nested in model {large.name!r}: its column {col!r} "
            f"is not in the larger model's column space (relative residual {resid:.2g}); "
            "compare only models where the smaller is a special case of the larger"
        )
    if small.rank == large.rank:
        raise NotNestedError(
            f"models {small.name!r} and {large.name!r} span the same column space: "
            "there is nothing to test between them; drop one"
        )
