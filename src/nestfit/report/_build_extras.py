"""Report sections on level-mean intervals, contrasts, assumption checks and power."""

from __future__ import annotations

from math import isfinite
from typing import TYPE_CHECKING

import numpy as np

from nestfit.report._document import (
    Block,
    BulletList,
    Code,
    Figure,
    Formula,
    Inline,
    Note,
    Paragraph,
    Section,
    Table,
)
from nestfit.report._format import math, num, pval, weight_text

if TYPE_CHECKING:
    from nestfit._stepwise import AdjustmentTrace
    from nestfit._summary import WorkedAnalysis
    from nestfit.contrasts import FamilyResult

__all__ = ["checks_section", "contrasts_section", "means_section", "power_section"]

_WORKED_CONTRASTS = 6   # contrasts whose estimate is written out term by term
_MAX_TERMS = 8          # terms of a weighted sum written out before it is abbreviated
_FLAGGED_ROWS = 10      # flagged observations listed


def _limit(x: float) -> str:
    return num(x)


def means_section(a: WorkedAnalysis, figures: dict[str, Figure]) -> Section:
    """Each level mean with its own interval and with simultaneous ones."""
    o, sim = a.mean_intervals, a.simultaneous_means
    fit = a.regression.fit
    headers = ["level", "n", "mean", "std error", "lower", "upper"]
    rows = []
    for j, r in enumerate(o.rows):
        row = [r.label, str(int(a.groups.counts[j])), num(r.estimate), num(r.std_error),
               _limit(r.lower), _limit(r.upper)]
        if sim is not None:
            row += [_limit(sim.rows[j].lower), _limit(sim.rows[j].upper)]
        rows.append(tuple(row))
    if sim is not None:
        headers += ["simultaneous lower", "upper"]
    text: list[Inline] = [
        "The intervals use the pooled residual standard deviation of the separate-means model, "
        f"s = {num(fit.sigma)} on {fit.residual_df} df, so each level's standard error is "
        f"s / sqrt(n). Each {o.level:.0%} interval, mean -/+ {num(o.critical_value, 4)} x std "
        "error (a t quantile), covers its own level mean with that probability."]
    if sim is not None:
        text.append(
            f" The simultaneous intervals ({sim.method_name}), mean -/+ "
            f"{num(sim.critical_value, 4)} x std error, cover all {len(sim.rows)} level means at "
            f"once with probability at least {sim.level:.0%}; use them when several means are "
            "read together.")
    blocks: list[Block] = [Paragraph(tuple(text)),
                           Table(tuple(headers), tuple(rows),
                                 align="lrrrrr" + ("rr" if sim is not None else ""),
                                 caption=f"Level means of {a.response} with intervals.")]
    if "level-means" in figures:
        blocks.append(figures["level-means"])
    return Section("Level means with intervals", tuple(blocks))


def _estimate_lines(r: FamilyResult, row_index: int) -> list[tuple[Inline, ...]]:
    row = r.rows[row_index]
    means = dict(zip(r.levels, r.level_means))
    terms = [(w, means[lv]) for lv, w in row.weights if lv in means]
    lines: list[tuple[Inline, ...]] = [
        (Code(row.label), ": ", math(("estimate = sum_i w_i m_i",
                                      r"\hat\psi = \sum_i w_i \bar y_i")))]
    if terms and len(terms) == len(row.weights) and len(terms) <= _MAX_TERMS:
        body = " + ".join(f"({num(w, 4)})({num(m)})" for w, m in terms)
        lines.append((math(("= " + body, "= " + body), " = ", num(row.estimate)),))
    else:
        lines.append((math("= ", num(row.estimate)),))
    lines.append((math(("t = estimate / SE = ", r"t = \hat\psi / SE = "), num(row.estimate),
                       " / ", num(row.std_error), " = ", num(row.t, 4)),))
    return lines


def _threshold_text(tr: AdjustmentTrace, i: int, value: float) -> str:
    m, alpha = tr.m, f"{tr.alpha:g}"
    symbolic = {
        "none": alpha, "bonferroni": f"{alpha}/{m}", "holm": f"{alpha}/{m - i + 1}",
        "hochberg": f"{alpha}/{m - i + 1}", "bh": f"{i} x {alpha}/{m}",
        "sidak": f"1 - (1 - {alpha})^(1/{m})",
        "holm-sidak": f"1 - (1 - {alpha})^(1/{m - i + 1})",
    }.get(tr.method)
    return f"{symbolic} = {num(value, 4)}" if symbolic else num(value, 4)


def _yes(flag: bool | None) -> str:
    return "-" if flag is None else "yes" if flag else "no"


def _trace_blocks(tr: AdjustmentTrace) -> list[Block]:
    blocks: list[Block] = [Paragraph((
        f"The adjustment, step by step ({tr.method_name}, m = {tr.m} hypotheses, alpha = "
        f"{tr.alpha:g}): {tr.rule}.",))]
    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    if tr.kind == "critical-value":
        headers = ("order", "contrast", "t", "critical value", "beyond it", "adjusted p",
                   "rejected")
        rows = tuple((str(t.rank), t.label, num(t.statistic, 4),
                      num(t.threshold, 4) if t.threshold is not None else "-", _yes(t.passes),
                      pval(t.p_adjusted), _yes(t.rejected)) for t in tr.rows)
    elif tr.kind == "adjusted-only":
        headers = ("order", "contrast", "p", "adjusted p", "rejected")
        rows = tuple((str(t.rank), t.label, pval(t.p), pval(t.p_adjusted), _yes(t.rejected))
                     for t in tr.rows)
    else:
        headers = ("step i", "contrast", "p", "threshold", "p <= threshold", "adjusted p",
                   "rejected")
        rows = tuple((str(t.rank), t.label, pval(t.p),
                      _threshold_text(tr, t.rank, t.threshold) if t.threshold is not None
                      else "-", _yes(t.passes), pval(t.p_adjusted), _yes(t.rejected))
                     for t in tr.rows)
    blocks.append(Table(headers, rows, align="ll" + "r" * (len(headers) - 2),
                        caption="The hypotheses in the order the procedure takes them."))
    outcome = _outcome(tr)
    if outcome:
        blocks.append(Paragraph((outcome,)))
    blocks.append(Paragraph((
        "A contrast is rejected exactly when its adjusted p-value is at most alpha; the "
        "adjusted p-value is the smallest family level at which the procedure would reject "
        "it.",)))
    return blocks


def _outcome(tr: AdjustmentTrace) -> str:
    passes = [t.passes for t in tr.rows]
    if tr.kind == "step-down":
        first = next((t for t in tr.rows if t.passes is False), None)
        if first is None:
            return "Every p-value passes its threshold, so every hypothesis is rejected."
        return (f"The first p-value above its threshold is at step {first.rank} "
                f"({first.label}): the procedure stops there, so only the hypotheses before "
                "it are rejected, whatever the later comparisons show.")
    if tr.kind == "step-up":
        last = max((t.rank for t in tr.rows if t.passes), default=0)
        if last == 0:
            return "No p-value passes its threshold, so no hypothesis is rejected."
        which = ("the hypothesis at step 1 is rejected" if last == 1
                 else f"the hypotheses at steps 1 to {last} are rejected")
        early_fail = any(t.passes is False for t in tr.rows if t.rank < last)
        also = (", including those whose own p-value is above its threshold" if early_fail
                else "")
        return (f"The last step whose p-value passes its threshold is step {last}: "
                f"{which}{also}.")
    if tr.kind in ("single", "critical-value") and any(p is not None for p in passes):
        same = len({t.threshold for t in tr.rows}) == 1
        return ("Each hypothesis is decided on its own against the same threshold." if same
                else "Each hypothesis is decided on its own against its own threshold (its "
                     "critical value depends on its df).")
    return ""


def _se_rule(variance: str, separate: bool) -> tuple[str, str]:
    """The standard-error formula in words and in LaTeX, for the variance choice."""
    if variance == "welch":
        return ("SE = sqrt(sum_i w_i^2 s_i^2 / n_i), s_i each level's own standard deviation, "
                "with Satterthwaite's df (sum_i v_i)^2 / sum_i v_i^2 / (n_i - 1), "
                "v_i = w_i^2 s_i^2 / n_i",
                r"SE = \sqrt{\textstyle\sum_i w_i^2 s_i^2 / n_i}")
    if variance != "pooled":
        return (f"SE = sqrt(c' V c), V the {variance} sandwich covariance of the coefficients "
                "and c the contrast written on them",
                rf"SE = \sqrt{{c^\top V_{{\mathrm{{{variance}}}}}\, c}}")
    if separate:
        return ("SE = s sqrt(sum_i w_i^2 / n_i), s the pooled residual standard deviation",
                r"SE = s\sqrt{\textstyle\sum_i w_i^2 / n_i}")
    return ("SE = sqrt(c' Cov(b) c), c the contrast written on the coefficients",
            r"SE = \sqrt{c^\top \widehat{\mathrm{Cov}}(b)\, c}")


def contrasts_section(a: WorkedAnalysis, figures: dict[str, Figure]) -> Section | None:
    """The contrast family: weights, estimates, intervals and the adjustment step by step."""
    r = a.contrasts
    if r is None:
        return None
    side = {"two-sided": "two-sided", "greater": "one-sided (greater than 0)",
            "less": "one-sided (less than 0)"}.get(r.alternative, r.alternative)
    own = not isfinite(r.critical_value)
    multiplier = ("a multiplier of its own (from its df, column 'multiplier')" if own
                  else num(r.critical_value, 4))
    blocks: list[Block] = [Paragraph((
        "Contrast family ", Code(r.family), f": {len(r.rows)} contrasts (rank {r.rank}) of the "
        "level means in model ", Code(r.model), f", residual df {r.df}. Method: "
        f"{r.method_name}, controlling the {r.error_rate}; tests are {side}. Standard errors: "
        f"{r.variance_name}. Intervals: {r.interval} at {r.level:.0%}, estimate -/+ "
        f"{multiplier} x std error.",))]
    rows = tuple((row.label, weight_text(row.weights), num(row.estimate), num(row.std_error))
                 + ((num(row.df, 4), num(row.critical_value, 4)) if own else ())
                 + (num(row.t, 4), pval(row.p), pval(row.p_adjusted), _limit(row.lower),
                    _limit(row.upper)) for row in r.rows)
    blocks.append(Table(("contrast", "weights", "estimate", "std error")
                        + (("df", "multiplier") if own else ())
                        + ("t", "p", "adjusted p", "lower", "upper"), rows,
                        align="llrr" + ("rr" if own else "") + "rrrrr",
                        caption="Each contrast: its weights on the level means, estimate and "
                                "test, and its interval."))
    separate = r.model in {m.fit.name for m in a.models if m.fit.rank == len(a.levels)}
    se_rule = _se_rule(r.variance, separate and not r.adjusted_means)
    worked = min(len(r.rows), _WORKED_CONTRASTS)
    lines = [line for i in range(worked) for line in _estimate_lines(r, i)]
    blocks.append(Paragraph((
        "Each estimate is the weighted sum of the level means; its standard error is ",
        math(se_rule), f". Worked out for the first {worked}:" if worked < len(r.rows)
        else ". Worked out:")))
    blocks.append(Formula(tuple(lines)))
    if a.adjustment is not None:
        blocks.extend(_trace_blocks(a.adjustment))
    blocks.extend(Note((n[0].upper() + n[1:] + ".",)) for n in r.notes if n)
    if "contrasts" in figures:
        blocks.append(figures["contrasts"])
    return Section("Contrasts", tuple(blocks))


def checks_section(a: WorkedAnalysis, figures: dict[str, Figure]) -> Section | None:
    """The assumption tests with their readings, and the residual diagnostics."""
    if a.checks is None and a.diagnostics is None:
        return None
    blocks: list[Block] = [Paragraph((
        "The F tests and contrasts above assume independent observations and normally "
        "distributed errors with the same variance in every level. Independence comes from how "
        "the data were collected and no test here can check it. The tests below look for "
        "evidence against equal variances and normal errors; none can show that an assumption "
        "holds.",))]
    if a.checks is not None:
        rows: tuple[tuple[str, ...], ...] = tuple(
            (t.name, t.null_hypothesis, t.distribution, num(t.statistic, 5), t.df_text(),
             pval(t.p)) for t in a.checks.tests)
        blocks.append(Table(("test", "null hypothesis", "distribution", "statistic", "df", "p"),
                            rows, align="lllrrr", caption="Tests of the assumptions, and "
                            "Welch's test of equal means without equal variances."))
        blocks.append(BulletList(tuple((f"{t.name}: ", t.reading) for t in a.checks.tests)))
        blocks.append(Note((
            "Each p-value here is for its own test; several tests on the same data raise the "
            "chance that one flags something by accident.",)))
    d = a.diagnostics
    if d is not None:
        blocks.append(Paragraph((
            "Residual diagnostics of model ", Code(d.model), f": n = {d.n_obs}, rank "
            f"{d.rank}, residual df {d.residual_df}, s = {num(d.sigma)}. Flag rules:",)))
        blocks.append(BulletList(tuple((f"{k.replace('_', ' ')}: ", v)
                                       for k, v in d.rules().items())))
        counts = (f"{int(d.outlier.sum())} outlier, {int(d.high_leverage.sum())} high leverage, "
                  f"{int(d.influential.sum())} influential")
        blocks.append(Paragraph((
            f"Flagged: {counts}. A flag points to an observation worth checking against its "
            "record, not to one to delete.",)))
        flagged = d.flagged
        if flagged.size:
            order = flagged[np.argsort(-np.nan_to_num(np.abs(d.studentized[flagged]),
                                                      nan=np.inf), kind="stable")]
            rows = tuple((str(d.row_labels[i]), num(d.residuals[i]), num(d.studentized[i], 4),
                          num(d.leverages[i], 4), num(d.cooks_distance[i], 4))
                         for i in order[:_FLAGGED_ROWS])
            blocks.append(Table(("row", "residual", "studentized", "leverage", "Cook's D"), rows,
                                caption=f"Flagged observations ({min(flagged.size, _FLAGGED_ROWS)}"
                                        f" of {flagged.size} shown)."))
        if "residuals" in figures:
            blocks.append(figures["residuals"])
    return Section("Checking the assumptions", tuple(blocks))


def power_section(a: WorkedAnalysis, figures: dict[str, Figure]) -> Section | None:
    """Power of a planned test over a range of group sizes."""
    c = a.power
    if c is None:
        return None
    rows = tuple((str(p.sizes[0]), str(p.n_total), num(p.noncentrality, 5), num(p.power, 4))
                 for p in c.points)
    blocks: list[Block] = [
        Paragraph((f"Power of the {c.test} at alpha = {c.alpha:g}, for equal numbers of "
                   "observations per level. Power rests on the assumed means and error standard "
                   "deviation: plan with values that matter in practice and a range of "
                   "plausible ones.",)),
        Table(("n per level", "N", "noncentrality", "power"), rows, align="rrrr",
              caption="Power at each group size."),
        Note(("Power computed from the effect observed in the same data (so-called observed "
              "power) adds nothing to the p-value and is not shown here.",)),
    ]
    if "power" in figures:
        blocks.append(figures["power"])
    return Section("Power for a planned study", tuple(blocks))
