"""The distribution of the largest of m correlated t statistics.

For contrasts estimated from one fit, ``T_i = psi_hat_i / se_i`` share the
residual mean square, so under the null hypotheses ``T = Z / S`` with
``Z ~ N(0, R)`` (``R`` the correlation matrix of the estimates) and
``S^2 ~ chi^2_df / df`` independent: ``T`` is multivariate t. The
single-step max-t method needs

    P(max_i |T_i| <= x)   (two-sided)   or   P(max_i T_i <= x)   (one-sided),

a box probability of that multivariate t (Hothorn, Bretz & Westfall 2008,
Biometrical Journal 50, 346-363; Genz & Bretz 2009, *Computation of
Multivariate Normal and t Probabilities*, Springer; both from memory).

Two integrators, both randomised quasi-Monte Carlo:

* ``R`` of full rank: ``scipy.stats.multivariate_t.cdf`` (Genz-Bretz
  lattice rules), called once per replicate with its own seeded Generator;
* ``R`` singular (more contrasts than their rank, e.g. all pairs of k
  levels, m = k(k-1)/2 statistics of rank k - 1): scipy 1.17's
  ``multivariate_t.cdf`` gives wrong values for a singular shape matrix
  (0.888 instead of 0.950 for the three pairwise differences of three
  balanced groups at the Tukey critical value), so this module integrates
  by sequential conditioning on a pivoted Cholesky factor ``R = L L'`` of
  rank ``r`` (LAPACK ``dpstrf``): variable ``z_j`` is drawn from the
  standard normal truncated to the intersection of the bounds of every row
  whose last non-zero entry of ``L`` is in column ``j``, and the weight is
  the product of the truncation probabilities (Genz 1992, J. Comput. Graph.
  Statist. 1, 141-149; singular case as in Genz & Bretz 2009, sec. 5; from
  memory). The ``r`` normal variables and the chi scale come from scrambled
  Sobol points (``scipy.stats.qmc.Sobol``).

Each estimate is the mean of ``replicates`` independent randomised
replicates; the reported error is a 99.7% bound on its integration error:
the standard error of the mean times the 0.9985 quantile of t on
``replicates - 1`` df (three standard errors if the spread of the replicates
were known; the t quantile allows for estimating it from few replicates).
Every replicate's seed is drawn once from the caller's Generator when the
distribution is built, so the same Generator state gives the same numbers,
and a critical value is the root of a fixed (deterministic) function.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.linalg.lapack
import scipy.optimize
import scipy.special
from scipy import stats

from nestfit.errors import ContrastError

__all__ = ["MaxT"]

# Relative eigenvalue below which the correlation matrix counts as singular. Common practice.
SINGULAR_TOL = 1e-10
# Entries of the Cholesky factor below this are structural zeros (rows have unit norm).
FACTOR_TOL = 1e-12
#: Default lattice points per replicate for scipy's integrator, and Sobol points (log2).
SCIPY_POINTS = 4000
SOBOL_LOG2 = 12
REPLICATES = 6


class MaxT:
    """``max_i |T_i|`` (two-sided) or ``max_i T_i`` of a multivariate t with correlation ``corr``.

    Parameters
    ----------
    corr : ndarray, shape (m, m)
        Correlation matrix of the t statistics (positive semi-definite).
    df : float
        Degrees of freedom of the shared variance estimate (need not be whole:
        Satterthwaite df for Welch-type standard errors).
    two_sided : bool
        Distribution of ``max |T_i|`` (True) or of ``max T_i`` (False).
    rng : numpy.random.Generator
        Source of the replicate seeds.
    points : int, optional
        Integration points per replicate (scipy's lattice; for the Sobol
        integrator the next power of two).
    replicates : int
        Independent randomised replicates (>= 2), for the error estimate.
    backend : {"auto", "scipy", "conditioning"}
        ``"auto"`` picks scipy for a full-rank ``corr`` and sequential
        conditioning otherwise; the others force one (scipy only for full rank).
    """

    def __init__(self, corr: np.ndarray, df: float, *, two_sided: bool,
                 rng: np.random.Generator, points: int | None = None,
                 replicates: int = REPLICATES, backend: str = "auto") -> None:
        corr = np.array(corr, dtype=float)
        m = corr.shape[0]
        if corr.shape != (m, m) or m == 0 or not np.allclose(corr, corr.T, atol=1e-12):
            raise ContrastError("the correlation matrix of the contrasts must be square and "
                                "symmetric")
        if df < 1:
            raise ContrastError(f"max-t needs at least one residual df, got {df}")
        if replicates < 2:
            raise ContrastError(f"replicates must be at least 2 (for the error estimate), "
                                f"got {replicates}")
        np.fill_diagonal(corr, 1.0)
        self.corr, self.df, self.two_sided, self.m = corr, float(df), bool(two_sided), m
        eig = np.linalg.eigvalsh(corr)
        self.rank = int(np.sum(eig > SINGULAR_TOL * m))
        self.seeds = [int(s) for s in rng.integers(0, 2**63 - 1, size=replicates)]
        self._memo: dict[float, tuple[float, float]] = {}
        if backend not in ("auto", "scipy", "conditioning"):
            raise ContrastError(f"backend must be 'auto', 'scipy' or 'conditioning', got "
                                f"{backend!r}")
        if backend == "scipy" and self.rank < m:
            raise ContrastError("scipy's multivariate t is used for full-rank correlation only")
        self._use_scipy = self.rank == m and backend != "conditioning"
        if self._use_scipy:
            self.backend = "scipy.stats.multivariate_t"
            self.points = int(points or SCIPY_POINTS)
        else:
            self.backend = "sequential conditioning"
            log2 = SOBOL_LOG2 if points is None else max(4, math.ceil(math.log2(points)))
            self.points = 2 ** log2
            self._setup_singular(log2)

    # ------------------------------------------------------------------ public
    def cdf(self, x: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """``(P(max <= x), error)`` for each threshold in ``x``.

        The estimate is a fixed function of ``x`` (the replicate seeds are drawn
        once), so values already computed are remembered and thresholds not yet
        seen are integrated together in one pass.
        """
        xs = np.atleast_1d(np.asarray(x, dtype=float))
        new = np.array(sorted({float(v) for v in xs} - self._memo.keys()))
        if new.size:
            reps = (self._scipy_replicates(new) if self._use_scipy
                    else self._singular_replicates(new))
            value = np.clip(reps.mean(axis=0), 0.0, 1.0)
            r = reps.shape[0]
            error = float(stats.t.ppf(0.9985, r - 1)) * reps.std(axis=0, ddof=1) / math.sqrt(r)
            for v, p, e in zip(new.tolist(), value.tolist(), error.tolist()):
                self._memo[v] = (p, e)
        pairs = [self._memo[float(v)] for v in xs]
        return np.array([p for p, _ in pairs]), np.array([e for _, e in pairs])

    def sf(self, x: np.ndarray | float) -> tuple[np.ndarray, np.ndarray]:
        """``(P(max > x), error)``."""
        value, error = self.cdf(x)
        return 1.0 - value, error

    def quantile(self, prob: float, *, also: np.ndarray | None = None) -> tuple[float, float]:
        """The critical value ``c`` with ``P(max <= c) = prob``, and the error of P at ``c``.

        Bracketed by the single-test and Bonferroni critical values, which
        bound it exactly; solved by Brent's method on the fixed-seed estimate.
        Thresholds in ``also`` (e.g. the observed statistics, for their tail
        probabilities) are integrated in the same pass as the two brackets.
        """
        tail = 1.0 - prob
        if self.two_sided:
            lo = float(stats.t.ppf(1.0 - tail / 2.0, self.df))
            hi = float(stats.t.ppf(1.0 - tail / (2.0 * self.m), self.df))
        else:
            lo = float(stats.t.ppf(prob, self.df))
            hi = float(stats.t.ppf(1.0 - tail / self.m, self.df))
        if self.m == 1:
            return lo, 0.0
        self.cdf(np.concatenate([[lo, hi], [] if also is None else np.ravel(also)]))

        def gap(c: float) -> float:
            return float(self.cdf(c)[0][0]) - prob

        if gap(lo) >= 0.0:
            c = lo
        elif gap(hi) <= 0.0:
            c = hi
        else:
            c = float(scipy.optimize.brentq(gap, lo, hi, xtol=1e-7, rtol=1e-10))
        return c, float(self.cdf(c)[1][0])

    # --------------------------------------------------------------- scipy path
    def _scipy_replicates(self, xs: np.ndarray) -> np.ndarray:
        out = np.empty((len(self.seeds), xs.size))
        ones = np.ones(self.m)
        for r, seed in enumerate(self.seeds):
            for i, x in enumerate(xs):
                lower = -x * ones if self.two_sided else np.full(self.m, -np.inf)
                out[r, i] = stats.multivariate_t.cdf(
                    x * ones, shape=self.corr, df=self.df, lower_limit=lower,
                    maxpts=self.points, random_state=np.random.default_rng(seed))
        return out

    # ------------------------------------------------------------ singular path
    def _setup_singular(self, log2: int) -> None:
        c, _piv, rank, info = scipy.linalg.lapack.dpstrf(self.corr, tol=SINGULAR_TOL, lower=1)
        if info < 0:  # pragma: no cover - LAPACK argument error
            raise ContrastError("pivoted Cholesky factorisation of the correlation matrix failed")
        rank = int(rank)
        # P' R P = L L' for the pivot order P; every statistic has the same bounds
        # (-x s, x s), so the order of the rows does not matter and P is not needed.
        factor = np.tril(c)[:, :rank]
        factor[np.abs(factor) < FACTOR_TOL] = 0.0
        last = np.array([int(np.flatnonzero(row)[-1]) for row in factor])
        self._factor = factor
        self._groups = [np.flatnonzero(last == j) for j in range(rank)]
        self._uniform = []
        for seed in self.seeds:
            sobol = stats.qmc.Sobol(rank + 1, scramble=True, rng=np.random.default_rng(seed))
            u = np.clip(sobol.random_base2(log2), 1e-15, 1.0 - 1e-15)
            scale = np.sqrt(stats.chi2.ppf(u[:, 0], self.df) / self.df)
            self._uniform.append((scale, u[:, 1:]))

    def _singular_replicates(self, xs: np.ndarray) -> np.ndarray:
        L = self._factor
        rank = L.shape[1]
        out = np.empty((len(self._uniform), xs.size))
        for r, (scale, u) in enumerate(self._uniform):
            bound = xs[:, None] * scale[None, :]  # (K, N)
            weight = np.ones_like(bound)
            z = np.zeros((*bound.shape, rank))
            for j in range(rank):
                rows = self._groups[j]
                shift = z[:, :, :j] @ L[rows, :j].T  # (K, N, rows)
                coef = L[rows, j]
                upper = (bound[:, :, None] - shift) / coef
                lower = ((-bound[:, :, None] if self.two_sided else -np.inf) - shift) / coef
                lo = np.where(coef > 0, lower, upper).max(axis=2)
                hi = np.where(coef > 0, upper, lower).min(axis=2)
                mass, draw = _truncated(lo, hi, u[None, :, j])
                weight *= mass
                z[:, :, j] = draw
            out[r] = weight.mean(axis=1)
        return out


def _truncated(lo: np.ndarray, hi: np.ndarray, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mass of N(0, 1) on [lo, hi] and the draw ``Phi^-1(Phi(lo) + u mass)``.

    In the upper tail (``lo > 0``) both are computed by reflection so that
    no digits are lost to ``1 - Phi``.
    """
    hi = np.maximum(hi, lo)
    upper_tail = lo > 0
    a = np.where(upper_tail, scipy.special.ndtr(-hi), scipy.special.ndtr(lo))
    b = np.where(upper_tail, scipy.special.ndtr(-lo), scipy.special.ndtr(hi))
    mass = np.maximum(b - a, 0.0)
    p = np.clip(a + u * mass, 1e-300, 1.0 - 1e-16)
    draw = scipy.special.ndtri(p)
    return mass, np.where(upper_tail, -draw, draw)
