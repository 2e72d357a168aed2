"""Plain-text layouts for result objects (``str(fit)``, ``str(comparison)``).

Formatting only: every number shown is an attribute of the result object.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from nestfit._compare import Comparison
    from nestfit._fit import Fit

__all__ = ["format_comparison", "format_fit", "format_number", "text_table"]


def format_number(x: Any, digits: int = 6) -> str:
    """A number in ``digits`` significant digits; integers as integers; NaN as a dash."""
    if x is None:
        return "-"
    if isinstance(x, (int,)) and not isinstance(x, bool):
        return str(x)
    v = float(x)
    if math.isnan(v):
        return "-"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    if v != 0 and (abs(v) < 1e-4 or abs(v) >= 1e9):
        return f"{v:.{digits - 1}e}"
    return f"{v:.{digits}g}"


def format_p(p: float) -> str:
    """A p-value: four decimals, or an upper bound below 0.0001."""
    if p is None or math.isnan(p):
        return "-"
    return "< 0.0001" if p < 1e-4 else f"{p:.4f}"


def text_table(headers: Sequence[str], rows: Sequence[Sequence[str]], *, left: int = 1,
               indent: str = "  ") -> str:
    """Columns padded to width; the first ``left`` columns left-aligned, the rest right-aligned."""
    widths = [len(h) for h in headers]
    for row in rows:
        widths = [max(w, len(c)) for w, c in zip(widths, row)]

    def line(cells: Sequence[str]) -> str:
        parts = [c.ljust(w) if i < left else c.rjust(w)
                 for i, (c, w) in enumerate(zip(cells, widths))]
        return indent + "  ".join(parts).rstrip()

    rule = indent + "  ".join("-" * w for w in widths)
    return "\n".join([line(headers), rule, *(line(r) for r in rows)])


def format_fit(fit: Fit) -> str:
    """The text shown by ``print(fit)``."""
    head = [
        f"Least-squares fit of {fit.response_name!r}: model {fit.name!r} ({fit.method})",
        f"  {fit.n_obs} observations, rank {fit.rank} of {fit.design.n_columns} columns, "
        f"residual df {fit.residual_df}",
        f"  residual SS {format_number(fit.residual_ss)}, sigma {format_number(fit.sigma)}, "
        f"R squared {format_number(fit.r_squared, 4)}",
    ]
    if fit.aliased:
        head.append("  aliased (not estimable): " + ", ".join(fit.aliased))
    if fit.missing is not None and fit.missing.n_dropped:
        head.append(f"  {fit.missing}")
    frame = fit.to_frame()
    rows = [
        [str(name), format_number(r.estimate), format_number(r.std_error), format_number(r.t, 4),
         format_p(r.p)]
        for name, r in frame.iterrows()
    ]
    table = text_table(["column", "estimate", "std error", "t", "p"], rows)
    return "\n".join([*head, "", table])


def format_comparison(comp: Comparison) -> str:
    """The text shown by ``print(comparison)``."""
    lines = [f"Nested models for {comp.response_name!r} (n = {comp.n_obs}), smallest first", ""]
    model_rows = [
        [f"M{i}", m.name, str(m.parameters), str(m.residual_df), format_number(m.residual_ss)]
        for i, m in enumerate(comp.models)
    ]
    lines.append(text_table(["", "model", "parameters", "residual df", "residual SS"],
                            model_rows, left=2))
    lines.append("")
    index = {m.name: f"M{i}" for i, m in enumerate(comp.models)}
    step_rows = [
        [f"{index[s.smaller]} -> {index[s.larger]}", str(s.df), format_number(s.ss),
         format_number(s.mean_square), format_number(s.f, 5), format_p(s.p)]
        for s in comp.steps
    ]
    lines.append(text_table(["step", "df", "extra SS", "mean square", "F", "p"], step_rows))
    last = comp.steps[-1]
    if comp.denominator == "largest":
        lines.append(
            f"  F = (extra SS / df) / {format_number(last.denominator_ms)}, the residual mean "
            f"square of {index[comp.models[-1].name]} on {last.denominator_df} df"
        )
    else:
        lines.append("  each F uses the residual mean square of the step's larger model")
    return "\n".join(lines)
