"""Cell means and marginal (adjusted) means of a fitted factorial model.

Every mean here is a linear function of the coefficients, ``mu = M b``. Row
``i`` of the *coefficient map* ``M`` is the design row of cell ``i`` (its
factor levels, covariates at fixed values ``at``, built with the model's own
coding), and a marginal mean averages cell rows with weights ``A``:
``M_marginal = A M_cells``. So

    estimates = M b,     covariance = M Cov(b) M',

and a contrast ``w`` of the means is the coefficient function ``c = w' M``
with standard error ``sqrt(c' Cov(b) c)``. Means that need an empty cell
(``c`` outside the row space of ``X``) are not estimable: reported as such,
never computed (Searle, *Linear Models*, 1971, sec. 5.4, from memory).

Weights of marginal means
-------------------------
``"equal"``
    Each cell of the other factors counts the same: the marginal mean of
    ``a = i`` is the unweighted average of the cell means ``mu_ij`` over ``j``.
    This is the population-average answer for a designed experiment whose
    imbalance is accidental, and the quantity the each-last table tests.
``"proportional"``
    Cells weigh by their observation counts ``n_ij``: ``sum_j n_ij mu_ij / n_i.``
    In the full interaction model this is the raw mean of level ``i``;
    use it when the cell counts reflect the population's make-up.

Covariates are held at ``at`` (default: the mean of each covariate over the
rows used), which makes the means the *adjusted means* of an analysis of
covariance. ``at`` names data columns: a transformed covariate such as
``np.log(x)`` or ``center(x)`` is evaluated at that value of ``x`` (the
transform of the mean, not the mean of the transform).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
from scipy import stats

from nestfit.errors import DataError
from nestfit.linalg._nullspace import NullSpace

if TYPE_CHECKING:
    from nestfit._fit import Fit
    from nestfit.contrasts import CellMeans
    from nestfit.tables._mean_contrast import MeanContrast

__all__ = ["WEIGHTINGS", "EstimatedMeans"]

#: The two weightings of cells in a marginal mean.
WEIGHTINGS = ("equal", "proportional")


@dataclass(frozen=True, eq=False)
class EstimatedMeans:
    """Means estimated from a fitted model, with everything a contrast or a plot needs.

    Attributes
    ----------
    kind : {"cell", "marginal"}
        Cell means (every combination of every factor) or marginal means.
    model : str
        The fitted model's name.
    response_name : str
        The response.
    factors : tuple of str
        The factors the means are over (their display names, e.g. ``("a", "b")``).
    levels : tuple of tuple of str
        For each mean, its level of each factor (the x positions and traces of
        an interaction plot).
    labels : tuple of str
        ``"a=1, b=2"`` for each mean.
    estimates : ndarray, shape (m,)
        ``M b`` (NaN where not estimable).
    std_errors : ndarray, shape (m,)
        ``sqrt(diag(covariance))``.
    covariance : ndarray, shape (m, m)
        ``M Cov(b) M'`` (NaN rows and columns where not estimable).
    coefficient_map : ndarray, shape (m, p)
        ``M``: the mean of row ``i`` is ``M[i] @ b``; a contrast ``w`` of the
        means is the coefficient function ``w @ M``.
    cell_weights : ndarray, shape (m, c)
        ``A``: each mean as weights on the cells (rows of ``cell_labels``).
    cell_labels : tuple of str
        Every cell of every factor of the model.
    cell_counts : ndarray of int, shape (c,)
        Observations per cell.
    counts : ndarray of int, shape (m,)
        Observations in the cells each mean uses.
    estimable : ndarray of bool, shape (m,)
        Whether each mean is estimable.
    df : int
        Residual degrees of freedom of the model (for t intervals and tests).
    weighting : {"cell", "equal", "proportional"}
        How cells were averaged.
    at : Mapping[str, float]
        Covariate values the means are computed at.
    cell_factors : tuple of str
        Every factor of the model (the factors of ``cell_labels``).
    """

    kind: str
    model: str
    response_name: str
    factors: tuple[str, ...]
    levels: tuple[tuple[str, ...], ...]
    labels: tuple[str, ...]
    estimates: np.ndarray = field(repr=False)
    std_errors: np.ndarray = field(repr=False)
    covariance: np.ndarray = field(repr=False)
    coefficient_map: np.ndarray = field(repr=False)
    cell_weights: np.ndarray = field(repr=False)
    cell_labels: tuple[str, ...] = field(repr=False)
    cell_counts: np.ndarray = field(repr=False)
    counts: np.ndarray = field(repr=False)
    estimable: np.ndarray = field(repr=False)
    df: int
    weighting: str
    at: Mapping[str, float]
    cell_factors: tuple[str, ...] = ()
    _coefficients: np.ndarray = field(repr=False, default_factory=lambda: np.empty(0))
    _coef_cov: np.ndarray = field(repr=False, default_factory=lambda: np.empty((0, 0)))
    _null: NullSpace | None = field(repr=False, default=None)
    _undefined: np.ndarray = field(repr=False, default_factory=lambda: np.zeros(0, dtype=bool))
    _fit: Fit | None = field(repr=False, default=None)

    @property
    def averaged_over(self) -> tuple[str, ...]:
        """The factors these means average over (empty for cell means)."""
        return tuple(f for f in self.cell_factors if f not in self.factors)

    # ------------------------------------------------------------ contrasts
    def weights_vector(self, weights: Mapping[str, float] | Sequence[float]) -> np.ndarray:
        """Contrast weights over the means (from a mapping label -> weight, or a list)."""
        from nestfit.tables._mean_contrast import parse_weights

        return parse_weights(self, weights)

    def coefficient_weights(self, weights: Mapping[str, float] | Sequence[float]) -> np.ndarray:
        """``c = w' M``: the coefficient function equal to the contrast ``w`` of the means."""
        return self.weights_vector(weights) @ self.coefficient_map

    def contrast(self, weights: Mapping[str, float] | Sequence[float], *,
                 label: str | None = None, level: float = 0.95) -> MeanContrast:
        """Estimate, standard error, t test and interval of ``sum_i w_i mu_i``.

        Parameters
        ----------
        weights : mapping or sequence
            ``{label: weight}`` (labels as in :attr:`labels`; for means of one
            factor the bare level also works) or one weight per mean in order.
        label : str, optional
            A name for the contrast (default: the weights written out).
        level : float
            Confidence level of the interval.

        Returns
        -------
        MeanContrast
            ``c = w' M``; estimate ``c' b``, ``se = sqrt(c' Cov(b) c)``,
            ``t = estimate / se`` on the residual df, two-sided p, interval
            ``estimate -/+ t_{1-a/2, df} se`` (Seber & Lee 2003, sec. 4.3,
            from memory). For one contrast chosen in advance.

        Raises
        ------
        ContrastError
            Malformed weights, or a contrast that is not estimable (the message
            names the empty cells it would need).
        """
        from nestfit.tables._mean_contrast import mean_contrast

        return mean_contrast(self, self.weights_vector(weights), label=label, level=level)

    def interaction_contrast(self, spec: Mapping[str, Mapping[str, float] | Sequence[float]], *,
                             label: str | None = None, level: float = 0.95) -> MeanContrast:
        """A contrast of contrasts: product weights ``w_ij = u_i v_j`` over two or more factors.

        Parameters
        ----------
        spec : mapping
            One entry per factor of the means: weights on its levels (a
            mapping level -> weight, or a list in level order), each summing
            to zero. ``{"a": {"1": 1, "2": -1}, "b": {"1": 1, "2": -1}}`` is
            ``(a1 - a2 at b1) - (a1 - a2 at b2)``.
        """
        from nestfit.tables._mean_contrast import interaction_weights, mean_contrast

        w, auto = interaction_weights(self, spec)
        return mean_contrast(self, w, label=label or auto, level=level)

    def level_means(self, *, variance: str = "pooled") -> CellMeans:
        """These means as the level means of :mod:`nestfit.contrasts`, for contrast families.

        ``models.marginal_means("a").level_means().family(nc.all_pairs())
        .adjust("holm")`` gives every multiplicity method of the contrasts
        package on factorial (or covariate-adjusted) means; each contrast ``w``
        is the coefficient function ``c = w' M`` of the full model, as in
        :meth:`contrast`. Means of one factor are named by their level, cell
        means by their labels (``"a=1, b=2"``; quote such names inside
        contrast expressions, or use the built-in families).

        Parameters
        ----------
        variance : {"pooled", "HC0", "HC1", "HC2", "HC3"}
            Standard errors from the residual mean square (default) or a
            heteroscedasticity-consistent sandwich covariance
            (:mod:`nestfit.contrasts._variance`). Welch-type errors need a
            one-factor group model and are refused here.

        Returns
        -------
        nestfit.contrasts.CellMeans

        Raises
        ------
        ContrastError
            A mean that is not estimable (it needs empty cells, named), or a
            ``variance`` this fit does not allow.
        """
        from nestfit.contrasts._cellmeans import assemble_means
        from nestfit.errors import ContrastError

        if self._fit is None:  # pragma: no cover - every EstimatedMeans is built with its fit
            raise ContrastError("these means do not record their fit")
        bad = [lab for lab, ok in zip(self.labels, self.estimable) if not ok]
        if bad:
            raise ContrastError(
                f"the {self.kind} means {', '.join(map(repr, bad[:5]))} of model {self.model!r} "
                "are not estimable (they need cells with no observations), so a contrast family "
                "over all the means cannot be formed; use marginal means of fewer factors, or "
                "estimate the estimable contrasts one at a time with .contrast()")
        names = tuple(lv[0] for lv in self.levels) if len(self.factors) == 1 else self.labels
        what = ("cell means of " if self.kind == "cell" else
                "adjusted means of " if self.at else "marginal means of ") + ", ".join(
                    map(repr, self.factors))
        if self.averaged_over:
            what += f" ({self.weighting} weights over {', '.join(self.averaged_over)})"
        if self.at:
            what += " at " + ", ".join(f"{k} = {v:.6g}" for k, v in self.at.items())
        return assemble_means(self._fit, ", ".join(self.factors), names, self.counts,
                              np.asarray(self.coefficient_map), rows=self._fit.design.to_dense(),
                              adjusted=bool(self.at) or bool(self.averaged_over),
                              variance=variance, what=what)

    # ------------------------------------------------------------ conversion
    def conf_int(self, level: float = 0.95) -> pd.DataFrame:
        """One-at-a-time intervals ``estimate -/+ t_{1-a/2, df} se`` (no multiplicity control)."""
        if not 0.0 < level < 1.0:
            raise DataError(f"level must be between 0 and 1 (exclusive). Got {level!r} instead.")
        q = stats.t.ppf(0.5 + level / 2.0, self.df) if self.df > 0 else math.nan
        return pd.DataFrame({"lower": self.estimates - q * self.std_errors,
                             "upper": self.estimates + q * self.std_errors},
                            index=pd.Index(self.labels, name="mean"))

    def to_frame(self) -> pd.DataFrame:
        """One row per mean: a column per factor (its level), n, estimate, std_error, estimable."""
        data: dict[str, Any] = {f: [lv[j] for lv in self.levels]
                                for j, f in enumerate(self.factors)}
        data.update({"n": self.counts, "estimate": self.estimates, "std_error": self.std_errors,
                     "estimable": self.estimable})
        return pd.DataFrame(data, index=pd.Index(self.labels, name="mean"))

    def to_dict(self) -> dict[str, Any]:
        """Plain-dict (JSON-ready) form; NaN becomes None."""
        def num(x: float) -> float | None:
            return float(x) if math.isfinite(x) else None

        return {
            "kind": self.kind, "model": self.model, "response": self.response_name,
            "factors": list(self.factors), "weighting": self.weighting, "at": dict(self.at),
            "df": self.df,
            "means": [{"label": lab, "levels": list(lv), "n": int(n), "estimate": num(e),
                       "std_error": num(s), "estimable": bool(ok)}
                      for lab, lv, n, e, s, ok in zip(self.labels, self.levels, self.counts,
                                                      self.estimates, self.std_errors,
                                                      self.estimable)],
        }

    def missing_cells(self, i: int) -> tuple[str, ...]:
        """Empty cells that mean ``i`` puts weight on."""
        w = self.cell_weights[i]
        return tuple(lab for lab, wj, n in zip(self.cell_labels, w, self.cell_counts)
                     if wj != 0 and n == 0)

    def __str__(self) -> str:
        from nestfit.tables._format import format_means

        return format_means(self)

    def _repr_pretty_(self, p: Any, cycle: bool) -> None:  # IPython
        p.text(str(self))
