"""An estimated family of contrasts: joint test, orthogonality, SS split, adjustments.

For ``q`` = the rank of the family's coefficient rows ``C`` (``m x p``),
the joint test compares the full model with the model restricted by
``C b = 0`` (``X N``, ``N`` a basis of the null space of ``C``) through
:func:`nestfit.compare`: ``F = (SS_extra / q) / MSE`` on ``(q, df)``.

Two contrasts ``w`` and ``v`` are orthogonal under the design when their
estimates are uncorrelated, ``w' V v = 0`` with ``V = M (X'WX)^- M'``; for
the separate-means model ``V = diag(1/n_i)``, i.e. ``sum_i w_i v_i / n_i = 0``.
The single-df sums of squares of ``q`` mutually orthogonal contrasts add up
to the extra sum of squares of their joint test; for ``k - 1`` orthogonal
contrasts of a one-way layout, to the between-groups sum of squares
(Scheffe, *The Analysis of Variance*, 1959, sec. 3.5, from memory).
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import scipy.linalg

from nestfit.contrasts._builtin import ContrastFamily, family
from nestfit.contrasts._estimate import ContrastEstimate, estimate_contrast
from nestfit.errors import ContrastError

if TYPE_CHECKING:
    from nestfit._compare import Comparison
    from nestfit.contrasts._cellmeans import CellMeans
    from nestfit.contrasts._result import FamilyResult

__all__ = ["EstimatedFamily", "estimate_family", "row_rank"]

# Contrasts count as orthogonal when |corr| of their estimates is below this. Common practice.
ORTHOGONAL_TOL = 1e-9


@dataclass(frozen=True, eq=False)
class EstimatedFamily:
    """A family of contrasts estimated from one fit.

    Attributes
    ----------
    name : str
        The family's name.
    kind : str
        Its kind (``"custom"``, ``"pairs"``, ``"control"``, ...).
    estimates : tuple of ContrastEstimate
        One per contrast, two-sided.
    """

    name: str
    kind: str
    estimates: tuple[ContrastEstimate, ...]
    _means: CellMeans = field(repr=False)

    def __len__(self) -> int:
        return len(self.estimates)

    def __iter__(self) -> Iterator[ContrastEstimate]:
        return iter(self.estimates)

    @property
    def means(self) -> CellMeans:
        """The level means the contrasts are functions of."""
        return self._means

    @property
    def labels(self) -> tuple[str, ...]:
        """The contrasts' labels."""
        return tuple(e.label for e in self.estimates)

    @property
    def weights(self) -> np.ndarray:
        """``(m, k)`` weights on the level means."""
        return np.vstack([e.weights for e in self.estimates])

    @property
    def coefficients(self) -> np.ndarray:
        """``(m, p)`` rows ``c_i = w_i' M`` on the model's coefficients."""
        return np.vstack([e.coefficients for e in self.estimates])

    @property
    def df(self) -> int:
        """Residual degrees of freedom."""
        return self._means.df

    @property
    def dfs(self) -> np.ndarray:
        """``(m,)`` degrees of freedom of each contrast (all the residual df unless the level
        means use Welch-type standard errors)."""
        return np.array([e.df for e in self.estimates], dtype=float)

    @property
    def covariance(self) -> np.ndarray:
        """``(m, m)`` covariance of the estimates, ``C V C'`` (``V`` as chosen by the level
        means' ``variance``)."""
        return self._covariance(pooled=False)

    @property
    def correlation(self) -> np.ndarray:
        """``(m, m)`` correlation of the estimates (the max-t methods' matrix)."""
        return _correlation(self.covariance)

    def _covariance(self, *, pooled: bool) -> np.ndarray:
        keep = self._means._retained()
        c = self.coefficients[:, keep]
        cov = self._means.coefficient_covariance(pooled=pooled)[np.ix_(keep, keep)]
        return c @ cov @ c.T

    @property
    def rank(self) -> int:
        """``q``, the number of linearly independent contrasts in the family."""
        return row_rank(self.coefficients, self._means._retained())

    # ----------------------------------------------------------- tests
    def joint_test(self) -> Comparison:
        """F test of all contrasts at once: the model restricted by ``C b = 0`` against the fit.

        This is the nested comparison of two models, so its error term is the
        pooled residual mean square whatever ``variance`` the level means use.
        """
        from nestfit._compare import compare

        fit = self._means.fit
        restricted = self._means.restricted_fit(
            self.coefficients, f"{fit.name} with {self.name} = 0",
            f"{fit.design.description or fit.name}, restricted by every contrast of "
            f"{self.name!r} = 0")
        return compare(restricted, fit)

    def orthogonality(self) -> pd.DataFrame:
        """``w' V v`` for every pair (``sum w_i v_i / n_i`` for separate means).

        Zero off the diagonal means the two estimates are uncorrelated under
        the model's own (pooled) covariance: orthogonality is a property of
        the design and the weights, whatever ``variance`` the means use.
        """
        unscaled = self._covariance(pooled=True) / self._means.fit.mean_square
        return pd.DataFrame(unscaled, index=pd.Index(self.labels, name="contrast"),
                            columns=pd.Index(self.labels, name="contrast"))

    def is_orthogonal(self, tol: float = ORTHOGONAL_TOL) -> bool:
        """Whether every pair of estimates is uncorrelated under the design (pooled
        covariance, |correlation| <= tol)."""
        corr = _correlation(self._covariance(pooled=True))
        return bool(np.all(np.abs(corr - np.eye(len(self))) <= tol))

    def ss_split(self) -> pd.DataFrame:
        """Single-df sums of squares of an orthogonal family (they add up to the joint SS).

        Returns
        -------
        pandas.DataFrame
            Index: contrast labels; columns ``df`` (1), ``ss`` and ``share``
            (fraction of the joint extra sum of squares).

        Raises
        ------
        ContrastError
            The contrasts are not orthogonal under the design (the message
            names the first correlated pair).
        """
        corr = _correlation(self._covariance(pooled=True))
        off = np.abs(corr - np.eye(len(self)))
        if np.any(off > ORTHOGONAL_TOL):
            flat = int(np.argmax(off))
            i, j = divmod(flat, off.shape[1])
            value = float(self.orthogonality().to_numpy()[i, j])
            raise ContrastError(
                f"contrasts {self.labels[i]!r} and {self.labels[j]!r} are not orthogonal under "
                f"these group sizes (w' V v = {value:.4g}, correlation {corr[i, j]:.3g}), so "
                "their sums of squares overlap and do not add up; use contrasts orthogonal "
                "under the design, or the joint test")
        ss = np.array([e.ss for e in self.estimates])
        return pd.DataFrame({"df": np.ones(len(self), dtype=int), "ss": ss,
                             "share": ss / ss.sum()},
                            index=pd.Index(self.labels, name="contrast"))

    def adjust(self, method: str = "holm", *, level: float = 0.95,
               alternative: str = "two-sided", rng: Any = None, span: str = "family",
               points: int | None = None, replicates: int | None = None) -> FamilyResult:
        """Adjusted p-values, decisions and intervals by one multiplicity method.

        Parameters
        ----------
        method : str
            ``"none"``, ``"bonferroni"``, ``"holm"``, ``"sidak"``,
            ``"holm-sidak"``, ``"hochberg"``, ``"hommel"``, ``"bh"``,
            ``"by"``, ``"scheffe"``, ``"tukey"``, ``"dunnett"``, ``"max-t"``
            or ``"step-down-max-t"`` (see :mod:`nestfit.contrasts._simultaneous`).
        level : float
            Confidence level of the intervals; ``1 - level`` is the alpha
            of the decisions shown.
        alternative : {"two-sided", "greater", "less"}
            One-sided alternatives give one-sided p-values and bounds.
        rng : numpy.random.Generator or int, optional
            Seed for the multivariate-t integration (Dunnett, max-t methods);
            the same seed gives the same numbers.
        span : {"family", "all"}
            Scheffe only: protect every contrast in the span of the family
            (``q`` = its rank) or every contrast of the level means
            (``q = k - 1``), which covers contrasts chosen after seeing the data.
        points, replicates : int, optional
            Integration points per replicate and number of replicates of the
            multivariate-t integration (defaults in :mod:`nestfit.contrasts._mvt`).

        Returns
        -------
        FamilyResult

        Raises
        ------
        ContrastError
            A method that does not fit the family (e.g. Tukey for
            non-pairwise contrasts), with the reason.
        """
        from nestfit.contrasts._simultaneous import run_method

        return run_method(self, method, level=level, alternative=alternative, rng=rng,
                          span=span, points=points, replicates=replicates)

    def to_frame(self) -> pd.DataFrame:
        """One row per contrast: estimate, std_error, df, t, p (unadjusted, two-sided)."""
        return pd.DataFrame(
            [{"label": e.label, "estimate": e.estimate, "std_error": e.std_error, "df": e.df,
              "t": e.t, "p": e.p} for e in self.estimates])


def _correlation(cov: np.ndarray) -> np.ndarray:
    d = np.sqrt(np.diag(cov))
    corr = cov / np.outer(d, d)
    np.fill_diagonal(corr, 1.0)
    return corr


def row_rank(rows: np.ndarray, keep: np.ndarray) -> int:
    """Rank of coefficient rows on the estimable columns (rows scaled to unit length first)."""
    c = np.atleast_2d(rows)[:, keep]
    norms = np.linalg.norm(c, axis=1, keepdims=True)
    c = c[norms[:, 0] > 0] / norms[norms[:, 0] > 0]
    if c.shape[0] == 0:
        return 0
    return int(c.shape[1] - scipy.linalg.null_space(c).shape[1])


def estimate_family(means: CellMeans, spec: ContrastFamily | Sequence[Any], *,
                    name: str | None = None) -> EstimatedFamily:
    """Estimate every contrast of ``spec`` on ``means``."""
    if isinstance(spec, str):
        spec = family(spec)
    elif not isinstance(spec, ContrastFamily):
        if not isinstance(spec, Sequence):
            raise ContrastError(f"a family is a ContrastFamily or a sequence of contrasts, got "
                                f"{type(spec).__name__}")
        spec = family(*spec)
    contrasts = spec.resolve(means.levels)
    labels = [c.label for c in contrasts]
    twice = sorted({x for x in labels if labels.count(x) > 1})
    if twice:
        raise ContrastError(f"contrast label(s) {', '.join(map(repr, twice))} appear twice in "
                            "the family; give each contrast its own label")
    estimates = tuple(estimate_contrast(means, c) for c in contrasts)
    return EstimatedFamily(name or spec.name, spec.kind, estimates, means)
