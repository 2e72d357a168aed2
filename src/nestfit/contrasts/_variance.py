"""Where a contrast's standard error comes from: pooled, Welch-type, or sandwich (HC0-HC3).

Every contrast of level means is ``psi = c b`` with ``c = w' M`` (see
:mod:`nestfit.contrasts._cellmeans`); its variance is ``c' V c`` for a
covariance ``V`` of the coefficients, and its t statistic is referred to t on
``nu`` degrees of freedom. The three choices:

* ``"pooled"`` (default): ``V = s^2 (X'WX)^-``, the model's own covariance
  from the residual mean square; ``nu`` = residual df. Exact under normal
  errors with one variance in every group.
* ``"welch"``: each level keeps its own variance. For the separate-means
  model, ``Var(psi_hat) = sum_i w_i^2 s_i^2 / n_i`` with ``s_i^2`` the sample
  variance of level ``i``, and ``nu`` is Satterthwaite's approximation
  ``(sum_i v_i)^2 / sum_i v_i^2 / (n_i - 1)``, ``v_i = w_i^2 s_i^2 / n_i``
  (Satterthwaite 1946, Biometrics Bulletin 2, 110-114; Welch 1947,
  Biometrika 34, 28-35), different for every contrast. On the coefficients,
  ``V = C^-1 diag(s_i^2 / n_i) C^-T`` for the (invertible, on the estimable
  columns) coding matrix ``C``.
* ``"HC0"`` ... ``"HC3"``: the heteroscedasticity-consistent sandwich
  covariance of :func:`nestfit.checks.hc_covariance`, on any fit (grouped or
  formula, with covariates); ``nu`` = residual df (common practice, no
  source). With max-t methods this is the procedure of Herberich, Sikorski &
  Hothorn (2010, PLoS ONE 5, e9788; from memory), who recommend HC3.

The multiplicity methods then use each contrast's own ``nu``: for Welch-type
errors, Tukey-Kramer becomes the Games-Howell procedure (Games & Howell 1976,
J. Educ. Statist. 1, 113-125), Scheffe's multiplier uses ``F_{q, nu_i}``
(Brown & Forsythe 1974, Technometrics 16, 129-132; from memory), and the
max-t methods refer contrast ``i`` to the multivariate t with the estimates'
correlation and ``nu_i`` df (Hasler & Hothorn 2008, Biometrical Journal 50,
793-800; from memory). All of these are approximations; their error rates
are close to nominal when every group has a few observations or more.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg

from nestfit._fit import Fit
from nestfit.checks import hc_covariance, welch_contrast_se
from nestfit.errors import ContrastError, NestfitError
from nestfit.linalg._groups import group_sums

__all__ = ["VARIANCES", "VarianceSource", "check_variance", "retained_covariance",
           "variance_source"]

#: The accepted values of ``variance=``.
VARIANCES: tuple[str, ...] = ("pooled", "welch", "HC0", "HC1", "HC2", "HC3")

_NAMES = {
    "pooled": "pooled residual mean square",
    "welch": "Welch-type: each level's own variance, Satterthwaite df per contrast",
    **{f"HC{j}": f"HC{j} sandwich (heteroscedasticity-consistent), residual df"
       for j in range(4)},
}
_ASSUMPTIONS = {
    "pooled": ("independent observations and normally distributed errors with the same "
               "variance in every group (the pooled residual mean square is the error term)"),
    "welch": ("independent, normally distributed observations within each group; the groups "
              "may have different variances (each level's standard error uses its own sample "
              "variance; the df are Satterthwaite's approximation)"),
}
_HC_ASSUMPTION = ("independent observations; the error variance may differ between "
                  "observations ({kind} sandwich covariance); the reference t distribution on the "
                  "residual df is a large-sample approximation, rough with few observations per "
                  "group")


def check_variance(variance: object) -> str:
    """The canonical key of ``variance`` (case-insensitive for the HC kinds)."""
    text = variance.strip().lower() if isinstance(variance, str) else ""
    key = next((k for k in VARIANCES if k.lower() == text), "")
    if not key:
        raise ContrastError(f"variance must be one of {', '.join(VARIANCES)}. Got "
                            f"{variance!r} instead.")
    return key


@dataclass(frozen=True, eq=False)
class VarianceSource:
    """The covariance used for the contrasts of one set of level means.

    Attributes
    ----------
    key : str
        One of :data:`VARIANCES`.
    name : str
        What it is, in words.
    assumptions : str
        The assumptions behind the tests that use it.
    coefficient_covariance : ndarray, shape (p, p)
        ``V`` on the model's coefficients (zero rows and columns on aliased ones).
    residual_df : int
        The model's residual df (the df of every contrast unless Welch-type).
    group_variances, counts : ndarray, optional
        ``s_i^2`` and ``n_i`` per level (Welch-type only).
    """

    key: str
    name: str
    assumptions: str
    coefficient_covariance: np.ndarray = field(repr=False)
    residual_df: int
    group_variances: np.ndarray | None = field(default=None, repr=False)
    counts: np.ndarray | None = field(default=None, repr=False)

    @property
    def per_contrast_df(self) -> bool:
        """Whether every contrast has its own df (Welch-type)."""
        return self.group_variances is not None

    def df_for(self, weights: np.ndarray) -> float:
        """The df of the contrast with these level weights."""
        if self.group_variances is None or self.counts is None:
            return self.residual_df
        try:
            return welch_contrast_se(weights, self.group_variances, self.counts)[1]
        except NestfitError as exc:
            raise ContrastError(str(exc)) from None


def retained_covariance(cov: np.ndarray, keep: np.ndarray) -> np.ndarray:
    """``cov`` with the rows and columns of aliased coefficients (``~keep``) set to zero."""
    out = np.where(np.outer(keep, keep), np.nan_to_num(np.asarray(cov, dtype=float)), 0.0)
    out.flags.writeable = False
    return out


def variance_source(fit: Fit, variance: str, keep: np.ndarray) -> VarianceSource:
    """Build the covariance ``V`` for ``variance`` (module notes) on fit ``fit``.

    Raises
    ------
    ContrastError
        Welch-type errors on anything but an unweighted separate-means grouped
        fit, or with a level of fewer than 2 observations; HC2/HC3 with an
        observation of leverage 1; an unknown ``variance``.
    """
    key = check_variance(variance)
    df = fit.residual_df
    if key == "pooled":
        return VarianceSource(key, _NAMES[key], _ASSUMPTIONS[key],
                              retained_covariance(fit.covariance, keep), df)
    if key != "welch":
        try:
            cov = hc_covariance(fit, key)  # type: ignore[arg-type]
        except NestfitError as exc:
            raise ContrastError(str(exc)) from None
        return VarianceSource(key, _NAMES[key], _HC_ASSUMPTION.format(kind=key),
                              retained_covariance(cov, keep), df)
    return _welch_source(fit, keep)


def _welch_source(fit: Fit, keep: np.ndarray) -> VarianceSource:
    groups = fit.design.groups
    if groups is None:
        raise ContrastError(
            f"variance='welch' needs a grouped fit of separate means (nestfit.groups(...)"
            f".separate_means()); model {fit.name!r} is a formula fit, whose adjusted means "
            "have no per-level variance: use variance='HC3' for a heteroscedasticity-"
            "consistent standard error instead")
    if fit.weights is not None:
        raise ContrastError(
            f"variance='welch' uses each level's unweighted sample variance, and model "
            f"{fit.name!r} is weighted; use variance='HC3', which allows for the weights")
    k = groups.factor.n_levels
    coding = np.asarray(groups.coding, dtype=float)[:, keep]
    if coding.shape[1] != k or fit.rank != k:
        raise ContrastError(
            f"variance='welch' estimates each level's mean by its own sample mean, but model "
            f"{fit.name!r} has {fit.rank} parameters for {k} levels (levels share means); use "
            "the separate-means model, or variance='HC3' for this model")
    counts = groups.factor.counts.astype(float)
    small = np.flatnonzero(counts < 2)
    if small.size:
        level = groups.factor.levels[int(small[0])]
        raise ContrastError(
            f"variance='welch' needs at least 2 observations in every level to estimate its "
            f"variance; level {level!r} of {groups.factor.name!r} has {int(counts[small[0]])}; "
            "use the pooled variance, or collect more data for that level")
    sums = group_sums(groups.factor.codes, np.asarray(fit.y, dtype=float), k)
    s2 = sums.within_ss / (counts - 1.0)
    if not float(s2.max()) > 0:
        raise ContrastError(
            f"every level of {groups.factor.name!r} has all its values equal: there is no "
            "variance to estimate")
    inv = scipy.linalg.solve(coding, np.eye(k))  # C^-1 on the estimable columns
    sub = inv @ np.diag(s2 / counts) @ inv.T
    cov = np.zeros((keep.size, keep.size))
    cov[np.ix_(keep, keep)] = (sub + sub.T) / 2.0
    cov.flags.writeable = False
    for arr in (s2, counts):
        arr.flags.writeable = False
    return VarianceSource("welch", _NAMES["welch"], _ASSUMPTIONS["welch"], cov, fit.residual_df,
                          s2, counts)
