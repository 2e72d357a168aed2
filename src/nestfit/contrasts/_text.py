"""Plain-text layouts for contrast results (formatting only; every number is an attribute)."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from nestfit._text import format_number, format_p, text_table

if TYPE_CHECKING:
    from nestfit.contrasts._cellmeans import CellMeans
    from nestfit.contrasts._estimate import ContrastEstimate
    from nestfit.contrasts._result import FamilyResult

__all__ = ["ASSUMPTIONS", "CAUTION", "format_cell_means", "format_estimate", "format_result"]

ASSUMPTIONS = ("Assumptions: independent observations and normally distributed errors with the "
               "same variance in every group (the pooled residual mean square is the error "
               "term).")
CAUTION = ("Decisions touching health, safety or regulation defer to the applicable standards "
           "and a qualified statistician.")


def _limit(x: float) -> str:
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    return format_number(x)


def _control(rate: str) -> str:
    return f"controls the {rate}" if rate.endswith("rate") and " no " not in f" {rate}" \
        else "no multiplicity control"


def format_cell_means(means: CellMeans) -> str:
    """The text shown by ``print(cell_means(...))``."""
    rows = [[lv, str(int(n)), format_number(m), format_number(s)]
            for lv, n, m, s in zip(means.levels, means.counts, means.estimates,
                                   means.std_errors)]
    head = f"Level means: {means.description}; residual df {means.df}"
    return "\n".join([head, "", text_table([means.factor, "n", "mean", "std error"], rows)])


def format_estimate(e: ContrastEstimate, level: float = 0.95) -> str:
    """The text shown by ``print(estimate)``."""
    lower, upper = e.conf_int(level)
    side = {"two-sided": "two-sided", "greater": "one-sided, greater than 0",
            "less": "one-sided, less than 0"}[e.alternative]
    from nestfit.contrasts._contrast import format_weights

    lines = [
        f"Contrast {e.label!r} in model {e.model!r}",
        f"  weights: {format_weights(e.levels, e.weights)}",
        "",
        text_table(["estimate", "std error", "df", "t", "p", f"{level:.0%} lower", "upper"],
                   [[format_number(e.estimate), format_number(e.std_error), _df(e.df),
                     format_number(e.t, 4), format_p(e.p), _limit(lower), _limit(upper)]],
                   left=0),
        f"  p is {side}; single-df sum of squares {format_number(e.ss)} (pooled)",
        "  " + _assumptions(e),
    ]
    return "\n".join(lines)


def format_result(r: FamilyResult) -> str:
    """The text shown by ``print(result)``: header, table, reading guide, cautions."""
    side = {"two-sided": "two-sided", "greater": "one-sided (greater than 0)",
            "less": "one-sided (less than 0)"}[r.alternative]
    means = "adjusted level means" if r.adjusted_means else "level means"
    lines = [
        f"Contrast family {r.family!r}: {len(r.rows)} contrast(s) of rank {r.rank} on the "
        f"{means} of {r.factor!r}",
        f"  response {r.response!r}, model {r.model!r}, {r.n_obs} observations, residual df "
        f"{r.df}",
        f"  method: {r.method_name}; {_control(r.error_rate)}; tests {side}",
        f"  standard errors: {r.variance_name}",
        f"  intervals: {r.interval} at {r.level:.4g}, estimate -/+ "
        + (f"{format_number(r.critical_value, 4)} x std error" if math.isfinite(r.critical_value)
           else "multiplier x std error (each row's own, from its df)"),
        "",
    ]
    rejected = r.rejected()
    own = not math.isfinite(r.critical_value)
    rows = [
        [row.label, format_number(row.estimate), format_number(row.std_error)]
        + ([_df(row.df), format_number(row.critical_value, 4)] if own else [])
        + [format_number(row.t, 4), format_p(row.p), format_p(row.p_adjusted), _limit(row.lower),
           _limit(row.upper), "yes" if rej else "no"]
        for row, rej in zip(r.rows, rejected)]
    lines.append(text_table(
        ["contrast", "estimate", "std error"] + (["df", "multiplier"] if own else [])
        + ["t", "p", "adjusted p", "lower", "upper", f"reject at {r.alpha:.3g}"], rows))
    lines.append("")
    lines.append("  Read each row: reject 'contrast = 0' when the adjusted p is at most alpha. "
                 "An adjusted p is the smallest alpha at which the method rejects that row.")
    lines.extend(f"  Note: {n}." for n in r.notes)
    lines.append("  Choosing contrasts after seeing the data needs a method that covers them "
                 "(Scheffe over all contrasts); otherwise the stated error rate does not hold.")
    lines.append("  Assumptions: " + r.assumptions + "." if r.assumptions else "  " + ASSUMPTIONS)
    lines.append("  " + CAUTION)
    return "\n".join(lines)


def _df(df: float) -> str:
    return str(int(df)) if float(df).is_integer() else format_number(df, 4)


def _assumptions(e: ContrastEstimate) -> str:
    if e._means is None or e.variance == "pooled":
        return ASSUMPTIONS
    return "Assumptions: " + e._means.source.assumptions + "."
