"""Multiplicity methods: adjusted p-values and the intervals that go with them.

With ``t_i`` the contrasts' t statistics on ``df`` residual degrees of
freedom and ``alpha = 1 - level``:

* p-value adjustments (:mod:`nestfit.contrasts._adjust`): none, bonferroni,
  sidak, holm, holm-sidak, hochberg, hommel (family-wise error), bh, by
  (false discovery rate);
* scheffe: ``p~ = P(F_{q,df} >= t^2 / q)``, intervals ``estimate -/+
  sqrt(q F_{q,df}(level)) se``, valid simultaneously for every contrast in a
  space of dimension ``q`` -- including contrasts chosen after seeing the
  data (Scheffe 1953, Biometrika 40, 87-104);
* tukey (Tukey-Kramer): ``p~ = P(Q_{k,df} >= sqrt(2) |t|)`` with ``Q`` the
  studentized range of ``k`` means (``scipy.stats.studentized_range``),
  intervals ``estimate -/+ q_{k,df}(level) / sqrt(2) se``; exact for equal
  sizes, conservative otherwise (Hayter 1984, Ann. Statist. 12, 61-75);
* dunnett and max-t (single step): ``p~_i = P(max_j |T_j| >= |t_i|)``
  under the multivariate t with the estimates' own correlation
  (:mod:`nestfit.contrasts._mvt`); intervals ``estimate -/+ c se`` with
  ``P(max |T_j| <= c) = level``; Dunnett (1955) is the many-to-one case;
* step-down-max-t: hypotheses in decreasing order of ``|t|``; step ``j``
  uses the max over the hypotheses not yet passed,
  ``p~_(j) = max_{l <= j} P(max_{i in S_l} |T_i| >= |t_(l)|)`` (Westfall &
  Young 1993, *Resampling-Based Multiple Testing*, Wiley, sec. 2.6; from
  memory), never larger than Holm's adjusted p-value; its intervals are the
  single-step max-t intervals.

One-sided alternatives use ``T_i`` (greater) or ``-T_i`` (less) in place of
``|T_i|`` and give one-sided bounds. Each tail probability of the max-t
methods is kept within its exact bounds ``[p_i, min(1, |S| p_i)]``
(Bonferroni), so integration noise can never make the step-down procedure
reject less than Holm.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np
from scipy import stats

from nestfit.contrasts._adjust import P_METHODS, adjust_pvalues, error_rate
from nestfit.contrasts._estimate import check_alternative, check_level, p_value
from nestfit.contrasts._mvt import REPLICATES, MaxT
from nestfit.contrasts._result import ContrastRow, FamilyResult
from nestfit.errors import ContrastError

if TYPE_CHECKING:
    from nestfit.contrasts._family import EstimatedFamily

__all__ = ["METHODS", "run_method"]

#: Every method, by name.
METHODS: tuple[str, ...] = ("none", "bonferroni", "holm", "sidak", "holm-sidak", "hochberg",
                            "hommel", "bh", "by", "scheffe", "tukey", "dunnett", "max-t",
                            "step-down-max-t")

NAMES = {
    "none": "no adjustment", "bonferroni": "Bonferroni", "holm": "Holm (step-down Bonferroni)",
    "sidak": "Sidak", "holm-sidak": "Holm-Sidak (step-down Sidak)",
    "hochberg": "Hochberg (step-up)", "hommel": "Hommel (closed Simes tests)",
    "bh": "Benjamini-Hochberg", "by": "Benjamini-Yekutieli", "scheffe": "Scheffe",
    "tukey": "Tukey-Kramer", "dunnett": "Dunnett (many-to-one)",
    "max-t": "single-step max-t", "step-down-max-t": "step-down max-t",
}
# Which simultaneous intervals each method shows (step-wise methods have none of their own).
_INTERVALS = {
    "none": "per-contrast", "bonferroni": "bonferroni", "holm": "bonferroni",
    "hochberg": "bonferroni", "hommel": "bonferroni", "sidak": "sidak", "holm-sidak": "sidak",
    "bh": "per-contrast", "by": "per-contrast", "scheffe": "scheffe", "tukey": "tukey",
    "dunnett": "max-t", "max-t": "max-t", "step-down-max-t": "max-t",
}
_KIND_NAMES = {"bonferroni": "Bonferroni", "sidak": "Sidak", "scheffe": "Scheffe",
               "tukey": "Tukey-Kramer", "max-t": "max-t"}
_STEPWISE_NOTE = ("{name} has no intervals of its own: the intervals shown are simultaneous "
                  "{kind} intervals, so a contrast the step-wise test rejects can still have an "
                  "interval that contains 0")
_NOTES = {
    "none": "no multiplicity adjustment: each p-value and interval is valid for one contrast "
            "chosen before seeing the data, not for the family",
    "sidak": "Sidak's adjustment is exact for independent tests and conservative for two-sided "
             "t tests that share one variance estimate",
    "hochberg": "Hochberg's procedure rests on the Simes inequality: valid for independent or "
                "positively dependent tests",
    "hommel": "Hommel's procedure rests on the Simes inequality: valid for independent or "
              "positively dependent tests",
    "bh": "controls the false discovery rate (the expected share of false rejections among the "
          "rejections), not the chance of any false rejection; valid for independent or "
          "positively dependent tests; intervals are per-contrast, not adjusted",
    "by": "controls the false discovery rate under any dependence, not the chance of any false "
          "rejection; intervals are per-contrast, not adjusted",
    "tukey": "Tukey-Kramer intervals are exact for equal group sizes and conservative otherwise",
}


def _method_key(method: str) -> str:
    key = method.strip().lower().replace("_", "-") if isinstance(method, str) else ""
    if key not in METHODS:
        raise ContrastError(f"unknown adjustment method {method!r}; valid methods are "
                            f"{', '.join(METHODS)}")
    return key


def _interval_multiplier(kind: str, m: int, level: float, dfs: np.ndarray,
                         two_sided: bool) -> np.ndarray:
    alpha = 1.0 - level
    if kind == "bonferroni":
        tail = alpha / m
    elif kind == "sidak":
        tail = -math.expm1(math.log1p(-alpha) / m)
    else:
        tail = alpha
    return np.asarray(stats.t.ppf(1.0 - tail / 2.0 if two_sided else 1.0 - tail, dfs),
                      dtype=float)


def _per_df(values: np.ndarray, fn: Any) -> np.ndarray:
    """``fn(df)`` for each distinct df of ``values``, spread back to every contrast."""
    unique, inverse = np.unique(values, return_inverse=True)
    return np.array([fn(float(d)) for d in unique], dtype=float)[inverse]


def _pair(weights: np.ndarray) -> tuple[int, int] | None:
    """``(plus, minus)`` level indices when the weights are a pairwise difference, else None."""
    nz = np.flatnonzero(weights)
    if nz.size != 2 or sorted(weights[nz].tolist()) != [-1.0, 1.0]:
        return None
    plus = int(nz[weights[nz] > 0][0])
    return plus, int(nz[weights[nz] < 0][0])


def _check_tukey(fam: EstimatedFamily) -> int:
    involved: set[int] = set()
    for e in fam.estimates:
        pair = _pair(np.asarray(e.weights))
        if pair is None:
            raise ContrastError(
                f"tukey needs pairwise differences of level means (weights +1 and -1 on two "
                f"levels), but contrast {e.label!r} is not one; use scheffe or max-t for this "
                "family")
        involved.update(pair)
    cov = fam.means.covariance[np.ix_(sorted(involved), sorted(involved))]
    d = np.sqrt(np.diag(cov))
    off = np.abs(cov / np.outer(d, d) - np.eye(d.size)).max()
    if off > 1e-9:
        raise ContrastError(
            f"tukey assumes independent level means, but the means of model {fam.means.fit.name!r}"
            f" are correlated (correlation up to {off:.2g}: adjusted or restricted means); use "
            "max-t, which uses their actual correlation")
    return len(involved)


def _check_dunnett(fam: EstimatedFamily) -> str:
    pairs = [_pair(np.asarray(e.weights)) for e in fam.estimates]
    reason = ("dunnett needs a many-to-one family: every contrast the difference between one "
              "level and a common control, each other level once (e.g. versus_control(...)); ")
    bad = [e.label for e, p in zip(fam.estimates, pairs) if p is None]
    if bad:
        raise ContrastError(reason + f"contrast {bad[0]!r} is not a difference of two levels")
    sets = [set(p) for p in pairs if p is not None]
    common = set.intersection(*sets)
    if len(pairs) == 1:
        common = {pairs[0][1]} if pairs[0] is not None else common
    if len(common) != 1:
        raise ContrastError(reason + "these contrasts share no single common level")
    control = next(iter(common))
    others = [next(iter(s - {control})) for s in sets]
    if len(set(others)) != len(others):
        raise ContrastError(reason + "a level is compared with the control more than once")
    return fam.means.levels[control]


def _scheffe_rank(fam: EstimatedFamily, span: str) -> int:
    if span == "family":
        return fam.rank
    if span != "all":
        raise ContrastError(f"span must be 'family' or 'all'. Got {span!r} instead.")
    from nestfit.contrasts._family import row_rank

    k = len(fam.means.levels)
    general = any(e.general for e in fam.estimates)
    basis = np.eye(k) if general else np.eye(k)[1:] - np.eye(k)[0]
    return row_rank(basis @ fam.means.mapping, fam.means._retained())


def _step_down(fam: EstimatedFamily, stat: np.ndarray, p: np.ndarray, dfs: np.ndarray,
               two_sided: bool, gen: np.random.Generator, points: int | None,
               replicates: int) -> tuple[np.ndarray, float]:
    corr = fam.correlation
    order = np.argsort(-stat, kind="stable")
    out = np.empty_like(p)
    running, worst = 0.0, 0.0
    for j, idx in enumerate(order):
        rest = order[j:]
        dist = MaxT(corr[np.ix_(rest, rest)], float(dfs[idx]), two_sided=two_sided, rng=gen,
                    points=points, replicates=replicates)
        tail, err = dist.sf(stat[idx])
        bounded = min(max(float(tail[0]), float(p[idx])), min(1.0, rest.size * float(p[idx])))
        running = max(running, bounded)
        out[idx] = running
        worst = max(worst, float(err[0]))
    return out, worst


def run_method(fam: EstimatedFamily, method: str, *, level: float = 0.95,
               alternative: str = "two-sided", rng: Any = None, span: str = "family",
               points: int | None = None, replicates: int | None = None) -> FamilyResult:
    """Apply one multiplicity method to an estimated family (see the module notes).

    Each contrast is referred to its own df (``fam.dfs``): all the residual
    df for pooled and sandwich standard errors, Satterthwaite's per contrast
    for Welch-type ones (:mod:`nestfit.contrasts._variance`).
    """
    key = _method_key(method)
    level = check_level(level)
    check_alternative(alternative)
    two_sided = alternative == "two-sided"
    est = np.array([e.estimate for e in fam.estimates])
    se = np.array([e.std_error for e in fam.estimates])
    t = est / se
    dfs, m = fam.dfs, len(fam)
    p = np.asarray(p_value(t, dfs, alternative), dtype=float)
    name = NAMES[key]
    source = fam.means.source
    notes = [_NOTES[key]] if key in _NOTES else []
    kind = _INTERVALS[key]
    integration: float | None = None
    if key in ("scheffe", "tukey") and not two_sided:
        raise ContrastError(f"{key} gives two-sided intervals only; use max-t (or dunnett for a "
                            f"many-to-one family) with alternative={alternative!r}")
    if key in P_METHODS:
        p_adj = adjust_pvalues(p, key)
        crit = _interval_multiplier(kind, m, level, dfs, two_sided)
        if key in ("holm", "hochberg", "hommel", "holm-sidak"):
            notes.append(_STEPWISE_NOTE.format(name=name, kind=_KIND_NAMES[kind]))
    elif key == "scheffe":
        q = _scheffe_rank(fam, span)
        p_adj = stats.f.sf(t * t / q, q, dfs)
        crit = np.sqrt(q * np.asarray(stats.f.ppf(level, q, dfs), dtype=float))
        what = ("every contrast of the level means" if span == "all"
                else "every contrast in the span of the family")
        notes.append(f"Scheffe's intervals hold simultaneously for {what} (q = {q}), including "
                     "contrasts chosen after looking at the data")
    elif key == "tukey":
        k = _check_tukey(fam)
        p_adj = stats.studentized_range.sf(np.abs(t) * math.sqrt(2.0), k, dfs)
        crit = _per_df(dfs, lambda d: stats.studentized_range.ppf(level, k, d) / math.sqrt(2.0))
        if source.per_contrast_df:
            name = f"Games-Howell ({k} means; Tukey-Kramer with Welch-type standard errors and df)"
            notes = []  # the Tukey-Kramer note does not apply; the variance note below does
        else:
            name = f"{name} ({k} means)"
    else:
        if key == "dunnett":
            name = f"{name}, control {_check_dunnett(fam)}"
        p_adj, crit, integration, dist = _max_t(fam, key, level, alternative, t, p, dfs,
                                                np.random.default_rng(rng), points, replicates)
        if key == "step-down-max-t":
            notes.append("step-down max-t has no intervals of its own: the intervals shown are "
                         "the single-step max-t intervals, so the step-down test can reject a "
                         "contrast whose interval contains 0")
        notes.append(f"multivariate t integration by {dist.backend} ({dist.points} points x "
                     f"{len(dist.seeds)} replicates); adjusted p-values and the coverage are "
                     f"accurate to about {integration:.1g}")
    if source.key != "pooled":
        notes.append(_variance_note(source.key, key))
    half = crit * se
    lower = est - half if alternative != "less" else np.full(m, -math.inf)
    upper = est + half if alternative != "greater" else np.full(m, math.inf)
    what = ("per-contrast (not simultaneous)" if kind == "per-contrast"
            else "simultaneous (Games-Howell)" if kind == "tukey" and source.per_contrast_df
            else f"simultaneous ({_KIND_NAMES[kind]})")
    rows = tuple(
        ContrastRow(e.label, tuple(e.weight_map.items()), float(est[i]), float(se[i]),
                    e.df, float(t[i]), float(p[i]), float(p_adj[i]), float(lower[i]),
                    float(upper[i]), float(crit[i]))
        for i, e in enumerate(fam.estimates))
    means = fam.means
    common = float(crit[0]) if np.all(crit == crit[0]) else math.nan
    return FamilyResult(
        fam.name, fam.kind, key, name, error_rate(key), level, alternative,
        means.fit.response_name, means.factor, means.fit.name, means.fit.n_obs, fam.df, fam.rank,
        rows, what, common, integration, tuple(notes), means.levels,
        tuple(float(x) for x in means.estimates), means.adjusted, source.key, source.name,
        source.assumptions)


def _max_t(fam: EstimatedFamily, key: str, level: float, alternative: str, t: np.ndarray,
           p: np.ndarray, dfs: np.ndarray, gen: np.random.Generator, points: int | None,
           replicates: int | None) -> tuple[np.ndarray, np.ndarray, float, MaxT]:
    """Adjusted p-values, critical values and integration error of the max-t methods.

    With one df for every contrast there is one multivariate t; with
    per-contrast df (Welch-type errors), contrast ``i`` is referred to the
    multivariate t with the family's correlation and ``dfs[i]`` df.
    """
    two_sided = alternative == "two-sided"
    m = len(t)
    reps = REPLICATES if replicates is None else int(replicates)
    stat = np.abs(t) if two_sided else (t if alternative == "greater" else -t)
    corr = fam.correlation
    common = bool(np.all(dfs == dfs[0]))
    dists = [MaxT(corr, float(d), two_sided=two_sided, rng=gen, points=points,
                  replicates=reps) for d in (dfs[:1] if common else dfs)]
    crit = np.empty(m)
    errors = []
    for i, dist in enumerate(dists):
        c, err = dist.quantile(level, also=stat if common else stat[i:i + 1])
        errors.append(err)
        if common:
            crit[:] = c
        else:
            crit[i] = c
    if key == "step-down-max-t":
        p_adj, err = _step_down(fam, stat, p, dfs, two_sided, gen, points, reps)
        errors.append(err)
    else:
        if common:
            tail, errs = dists[0].sf(stat)
        else:
            pairs = [dist.sf(stat[i]) for i, dist in enumerate(dists)]
            tail = np.array([float(a[0]) for a, _ in pairs])
            errs = np.array([float(b[0]) for _, b in pairs])
        p_adj = np.clip(tail, p, np.minimum(1.0, m * p))
        errors.append(float(np.max(errs)))
    return p_adj, crit, float(max(errors)), dists[0]


def _variance_note(variance: str, method: str) -> str:
    if variance == "welch":
        return ("standard errors use each level's own variance and every contrast has its own "
                "Satterthwaite df, so the multiplier of the standard error differs between "
                "rows; the error rate is approximate, close to nominal unless groups are very "
                "small")
    return (f"standard errors are {variance} sandwich (heteroscedasticity-consistent) estimates "
            "referred to t on the residual df, a large-sample approximation: with few "
            "observations per group the error rate can exceed the nominal level"
            + (" (HC3 is the safest choice)" if variance != "HC3" else ""))
