"""The benchmark cases. Every data set is synthetic (invented): random normal
responses around group means that differ a little, drawn with a fixed seed."""

from __future__ import annotations

import traceback
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from _reference import bare_numpy_f, pandas_groupby_f, statsmodels_fit
from _rows import Row
from _timing import Timing, best_of, peak_traced_bytes

import nestfit

__all__ = ["Settings", "formula_case", "large_oneway_case", "statsmodels_oneway_case", "warm_up"]

F_TOL = 1e-10  # agreement of nestfit's F with the bare two-pass F (task target)
SM_TOL = 1e-8  # agreement with statsmodels (pinv solver); common practice, no source


@dataclass(frozen=True)
class Settings:
    """Sizes and repetitions of one benchmark run."""

    runs: int = 3
    budget: float = 10.0  # seconds per measurement after which no further run starts
    slow: float = 60.0  # a first run longer than this is the only one
    reference_memory: bool = False  # also trace statsmodels' peak memory (one more slow run)
    n_large: int = 10**7
    k_large: int = 1000
    n_sm: int = 10**6
    k_sm: int = 100
    n_formula: int = 10**5
    k_formula: int = 50
    seed: int = 20240611


def _invented_groups(n: int, k: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Codes uniform over ``k`` groups; y around 250 with group shifts of size 0.01."""
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, k, size=n)
    shifts = rng.normal(scale=0.01, size=k)
    y = 250.0 + shifts[codes] + rng.normal(size=n)
    return y, codes


def warm_up() -> None:
    """Run every timed route once on tiny data, so that no timing pays for first imports."""
    y, codes = _invented_groups(200, 4, 0)
    frame = pd.DataFrame({"y": y, "g": codes, "x": np.arange(200.0)})
    nestfit.groups(y=y, factor=pd.Categorical(codes)).oneway()
    nestfit.groups(frame, "y", "g").oneway()
    nestfit.fit("y ~ C(g) + x", frame)
    pandas_groupby_f(frame, "y", "g")
    from statsmodels.stats.anova import anova_lm

    anova_lm(statsmodels_fit("y ~ C(g) + x", frame))


def _rel(a: float, b: float) -> float:
    return abs(a - b) / abs(b)


def _timed(name: str, fn: Callable[[], Any], settings: Settings) -> Timing | str:
    """Best-of timing, or the error text when ``fn`` raises."""
    try:
        return best_of(fn, settings.runs, settings.budget, slow=settings.slow)
    except Exception as exc:  # report the failure as a table line, keep going
        tb = traceback.extract_tb(exc.__traceback__)[-1]
        return f"{name}: {type(exc).__name__}: {exc} ({tb.filename}:{tb.lineno})"


def _time_row(case: str, timing: Timing | str, against: Timing, limit: float | None,
              target: str) -> Row:
    if isinstance(timing, str):
        return Row(case, 0.0, against.best, "s", limit, target, error=timing)
    return Row(case, timing.best, against.best, "s", limit, target, runs=timing.runs)


def _check_row(case: str, value: float | str, reference: float, tol: float) -> Row:
    if isinstance(value, str):
        return Row(case, 0.0, tol, "", 1.0, f"rel. diff <= {tol:g}", error=value)
    return Row(case, _rel(value, reference), tol, "", 1.0, f"rel. diff <= {tol:g}")


def large_oneway_case(settings: Settings, log: Callable[[str], None]) -> list[Row]:
    """Case 1: equal vs separate means through ``groups(y=, factor=)``, n x k large."""
    n, k = settings.n_large, settings.k_large
    y, codes = _invented_groups(n, k, settings.seed)
    labels = [f"L{j:04d}" for j in range(k)]
    categorical = pd.Categorical.from_codes(codes, categories=labels)
    tag = f"1. n={n:.0e} k={k}"
    rows: list[Row] = []

    log(f"{tag}: bare numpy reference")
    bare = best_of(lambda: bare_numpy_f(y, codes, k), max(settings.runs, 5), settings.budget)
    f_bare = float(bare.result)

    def oneway(factor: Any) -> Callable[[], float]:
        return lambda: nestfit.groups(y=y, factor=factor).oneway().steps[0].f

    def via_compare(factor: Any) -> Callable[[], float]:
        def run() -> float:
            models = nestfit.groups(y=y, factor=factor)
            return nestfit.compare(models.equal_means(), models.separate_means()).steps[0].f
        return run

    routes = [
        ("integer factor, groups().oneway()", oneway(codes)),
        ("integer factor, compare(equal, separate)", via_compare(codes)),
        ("Categorical factor, groups().oneway()", oneway(categorical)),
        ("Categorical factor, compare(equal, separate)", via_compare(categorical)),
    ]
    checks = []
    for label, fn in routes:
        log(f"{tag}: {label}")
        timing = _timed(label, fn, settings)
        rows.append(_time_row(f"{tag} {label} / bare numpy", timing, bare, 2.5, "<= 2.5"))
        checks.append(_check_row(f"{tag} {label}: F vs bare numpy F",
                                 timing if isinstance(timing, str) else float(timing.result),
                                 f_bare, F_TOL))

    log(f"{tag}: pandas groupby reference")
    grouped = _pandas_timing(y, codes, settings)
    rows.append(Row(f"{tag} pandas groupby route / bare numpy", grouped.best, bare.best, "s",
                    None, "about 2 (said)", runs=grouped.runs))
    checks.append(_check_row(f"{tag} pandas groupby F vs bare numpy F", float(grouped.result),
                             f_bare, F_TOL))

    log(f"{tag}: peak memory (tracemalloc)")
    for label, factor, code_bytes in [("integer factor", codes, codes.nbytes),
                                      ("Categorical factor", categorical,
                                       categorical.codes.nbytes)]:
        inputs = y.nbytes + code_bytes
        try:
            peak = peak_traced_bytes(oneway(factor))
            rows.append(Row(f"{tag} {label}, oneway peak memory / input arrays", peak, inputs,
                            "B", 4.0, "<= 4"))
        except Exception as exc:
            rows.append(Row(f"{tag} {label}, oneway peak memory / input arrays", 0.0, inputs,
                            "B", 4.0, "<= 4", error=f"{type(exc).__name__}: {exc}"))
    peak = peak_traced_bytes(lambda: bare_numpy_f(y, codes, k))
    rows.append(Row(f"{tag} bare numpy peak memory / input arrays", peak,
                    y.nbytes + codes.nbytes, "B", None, "for information"))
    return rows + checks


def _pandas_timing(y: np.ndarray, codes: np.ndarray, settings: Settings) -> Timing:
    """The groupby route on a frame built outside the clock (and freed on return)."""
    frame = pd.DataFrame({"y": y, "g": codes})
    return best_of(lambda: pandas_groupby_f(frame, "y", "g"), settings.runs, settings.budget)


def statsmodels_oneway_case(settings: Settings, log: Callable[[str], None]) -> list[Row]:
    """Case 2: the grouped route against statsmodels ``ols("y ~ C(g)")`` + ``anova_lm``."""
    from statsmodels.stats.anova import anova_lm

    n, k = settings.n_sm, settings.k_sm
    y, codes = _invented_groups(n, k, settings.seed + 1)
    frame = pd.DataFrame({"y": y, "g": codes})
    tag = f"2. n={n:.0e} k={k}"

    def ours() -> float:
        return nestfit.groups(frame, "y", "g").oneway().steps[0].f

    def theirs() -> float:
        return float(anova_lm(statsmodels_fit("y ~ C(g)", frame))["F"].iloc[0])

    log(f"{tag}: statsmodels ols + anova_lm (dense n x k design)")
    reference = _timed("statsmodels", theirs, settings)
    if isinstance(reference, str):
        return [Row(f"{tag} statsmodels reference", 0.0, 0.0, "s", None, "-", error=reference)]
    log(f"{tag}: nestfit groups(data).oneway()")
    timing = _timed("groups().oneway()", ours, settings)
    rows = [
        _time_row(f"{tag} groups(data).oneway() / statsmodels ols+anova_lm", timing, reference,
                  0.01, "<= 0.01 (100x faster)"),
        _check_row(f"{tag} F vs statsmodels anova_lm F",
                   timing if isinstance(timing, str) else float(timing.result),
                   float(reference.result), SM_TOL),
    ]
    inputs = y.nbytes + codes.nbytes
    if not isinstance(timing, str):
        rows.append(Row(f"{tag} groups(data).oneway() peak memory / input arrays",
                        peak_traced_bytes(ours), inputs, "B", None, "for information"))
    if settings.reference_memory:
        log(f"{tag}: statsmodels peak memory (tracemalloc, one more run)")
        rows.append(Row(f"{tag} statsmodels peak memory / input arrays",
                        peak_traced_bytes(theirs), inputs, "B", None, "for information"))
    return rows


def formula_case(settings: Settings, log: Callable[[str], None]) -> list[Row]:
    """Case 3: the dense formula route ``fit("y ~ C(g) + x")`` against statsmodels ``ols``."""
    n, k = settings.n_formula, settings.k_formula
    y, codes = _invented_groups(n, k, settings.seed + 2)
    x = np.random.default_rng(settings.seed + 3).normal(size=n)
    frame = pd.DataFrame({"y": y + 0.5 * x, "g": codes, "x": x})
    formula = "y ~ C(g) + x"
    tag = f"3. n={n:.0e} k={k}"

    log(f"{tag}: statsmodels ols(...).fit()")
    reference = _timed("statsmodels", lambda: statsmodels_fit(formula, frame), settings)
    if isinstance(reference, str):
        return [Row(f"{tag} statsmodels reference", 0.0, 0.0, "s", None, "-", error=reference)]
    log(f"{tag}: nestfit fit(formula)")
    timing = _timed("fit()", lambda: nestfit.fit(formula, frame), settings)
    return [
        _time_row(f"{tag} fit('{formula}') / statsmodels ols().fit()", timing, reference, 1.0,
                  "<= 1"),
        _check_row(f"{tag} residual SS vs statsmodels ssr",
                   timing if isinstance(timing, str) else float(timing.result.residual_ss),
                   float(reference.result.ssr), SM_TOL),
    ]
