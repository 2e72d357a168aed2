"""Report sections on the models: each model, each nested comparison, the regression view."""

from __future__ import annotations

from typing import TYPE_CHECKING

from nestfit.report._document import (
    Block,
    Code,
    Figure,
    Formula,
    Inline,
    Note,
    Paragraph,
    Section,
    Table,
)
from nestfit.report._format import decimals_for, fixed, math, num, pval

if TYPE_CHECKING:
    from nestfit._compare import Step
    from nestfit._summary import ModelWork, WorkedAnalysis
    from nestfit.report._build import Options

__all__ = ["comparison_sections", "model_sections", "regression_section"]

_MAX_SUM_TERMS = 8  # levels written out term by term in a residual-SS sum


def _ss_decimals(a: WorkedAnalysis) -> int:
    return decimals_for([m.fit.residual_ss for m in a.models])


def _design_excerpt(a: WorkedAnalysis, work: ModelWork, rows: int) -> Table:
    fit = work.fit
    n = min(rows, fit.n_obs)
    head = fit.design.head(n)
    labels = fit.row_labels if fit.row_labels is not None else range(fit.n_obs)
    body = tuple(
        (str(labels[i]), a.levels[int(a.codes[i])], num(a.observations[i]),
         *(num(float(v), 4) for v in head[i]))
        for i in range(n))
    return Table(("row", a.factor, a.response, *fit.design.column_names), body,
                 align="lll" + "r" * fit.design.n_columns,
                 caption=f"The first {n} of {fit.n_obs} rows of the design matrix of "
                         f"{work.label}, beside the data they belong to.")


def _rss_blocks(a: WorkedAnalysis, work: ModelWork) -> list[Block]:
    d = _ss_decimals(a)
    fit = work.fit
    rows = tuple(
        (lv, str(int(n)), num(m), fixed(float(s), d))
        for lv, n, m, s in zip(a.levels, a.groups.counts, work.fitted_means, work.level_rss))
    rows += (("all levels", str(fit.n_obs), "", fixed(fit.residual_ss, d)),)
    table = Table((a.factor, "n", "fitted mean", "sum of squared residuals"), rows,
                  caption=f"Fitted means of {work.label} and each level's share of its "
                          "residual sum of squares.")
    label = work.label
    line1: tuple[Inline, ...] = (
        math((f"RSS({label}) = sum_g sum_(i in g) (y_i - m_g)^2",
              rf"\mathrm{{RSS}}({label[0]}_{{{label[1:]}}}) = \sum_g \sum_{{i \in g}}"
              r" (y_i - \hat m_g)^2")),)
    if len(a.levels) <= _MAX_SUM_TERMS:
        terms = " + ".join(fixed(float(s), d) for s in work.level_rss)
        line2: tuple[Inline, ...] = (math(("= " + terms, "= " + terms)), math(" = ",
                                     fixed(fit.residual_ss, d)))
    else:
        line2 = (math(("= (one term per level, in the table)",
                       r"= \text{(one term per level, in the table)}")),
                 math(" = ", fixed(fit.residual_ss, d)))
    where = Paragraph((
        "Here y is ", Code(a.response), ", g runs over the levels of ", Code(a.factor),
        " and m_g is the model's fitted mean of level g. The residual sum of squares is the "
        "sum, over every observation, of its squared distance to its fitted mean:"))
    return [table, where, Formula((line1, line2))]


def model_sections(a: WorkedAnalysis, opts: Options) -> list[Section]:
    """One subsection per model: its claim, design excerpt, fitted means, residual SS."""
    intro = Section("The models", (
        Paragraph((
            "Each model is a claim about the level means, written as a design matrix: one row "
            "per observation and one column per parameter. Least squares chooses the "
            "parameters that make the residual sum of squares as small as possible. For "
            "models like these, whose rows depend only on an observation's level, the fitted "
            "value of every observation is a fitted level mean.",)),
    ))
    out = [intro]
    for work in a.models:
        fit = work.fit
        claim = fit.design.description or "(no description given)"
        blocks: list[Block] = [
            Paragraph(("Claim: ", claim, ". Parameters (rank): ", str(fit.rank),
                       "; residual degrees of freedom: n - rank = ", str(fit.n_obs), " - ",
                       str(fit.rank), " = ", str(fit.residual_df), ".")),
            _design_excerpt(a, work, opts.design_rows),
            *_rss_blocks(a, work),
        ]
        if fit.aliased:
            blocks.append(Note(("Columns not estimable (aliased): ", ", ".join(fit.aliased),
                                "; their coefficients are reported as missing.")))
        out.append(Section(f"{work.label}: {fit.name}", tuple(blocks), level=3))
    return out


def _reading(a: WorkedAnalysis, s: Step, small: str, large: str) -> Paragraph:
    p = pval(s.p)
    if s.p < a.alpha:
        return Paragraph((
            f"Reading: at the level {a.alpha:g} the data speak against ", Code(small),
            " in favour of ", Code(large), ": if ", Code(small), " were true, an F this large "
            f"or larger would arise with probability {p}. This is evidence that the level "
            "means differ in the way the larger model allows; how large the differences are is "
            "read from the fitted means, not from the p-value."))
    return Paragraph((
        f"Reading: at the level {a.alpha:g}, ", Code(large), " does not fit clearly better "
        "than ", Code(small), ": if ", Code(small), " were true, an F this large or larger "
        f"would arise with probability {p}. This does not show that ", Code(small),
        " is true: the data are also consistent with differences too small for this study "
        "to detect."))


def _step_formula(a: WorkedAnalysis, s: Step, i: int) -> Formula:
    d = _ss_decimals(a)
    m0, m1 = a.models[i], a.models[i + 1]
    den = a.models[-1] if a.comparison.denominator == "largest" else m1
    l0, l1, ld = m0.label, m1.label, den.label

    def t(label: str) -> str:
        return f"{label[0]}_{{{label[1:]}}}"

    return Formula((
        (math((f"extra SS = RSS({l0}) - RSS({l1}) = ",
               rf"\text{{extra SS}} = \mathrm{{RSS}}({t(l0)}) - \mathrm{{RSS}}({t(l1)}) = "),
              fixed(m0.fit.residual_ss, d), " - ", fixed(m1.fit.residual_ss, d), " = ",
              fixed(s.ss, d)),),
        (math((f"df = rank({l1}) - rank({l0}) = ",
               rf"\mathit{{df}} = \mathrm{{rank}}({t(l1)}) - \mathrm{{rank}}({t(l0)}) = "),
              str(m1.fit.rank), " - ", str(m0.fit.rank), " = ", str(s.df)),),
        (math((f"s^2 = RSS({ld}) / df_res({ld}) = ",
               rf"s^2 = \mathrm{{RSS}}({t(ld)}) / \mathit{{df}}_\mathrm{{res}}({t(ld)}) = "),
              fixed(den.fit.residual_ss, d), " / ", str(s.denominator_df), " = ",
              num(s.denominator_ms)),),
        (math(("F = (extra SS / df) / s^2 = (", r"F = (\text{extra SS} / \mathit{df}) / s^2 = ("),
              fixed(s.ss, d), " / ", str(s.df), ") / ", num(s.denominator_ms), " = ",
              num(s.mean_square), " / ", num(s.denominator_ms), " = ", num(s.f, 5)),),
        (math((f"p = P(F({s.df}, {s.denominator_df}) >= ",
               rf"p = P(F_{{{s.df},\,{s.denominator_df}}} \geq "), num(s.f, 5), ") = ",
              pval(s.p)),),
    ))


def comparison_sections(a: WorkedAnalysis, figures: dict[str, Figure]) -> list[Section]:
    """The comparison table, then each step worked out with its F formula and reading."""
    comp = a.comparison
    d = _ss_decimals(a)
    label = {m.fit.name: m.label for m in a.models}
    model_rows = tuple((m.label, m.fit.name, str(m.fit.rank), str(m.fit.residual_df),
                        fixed(m.fit.residual_ss, d)) for m in a.models)
    step_rows = tuple((f"{label[s.smaller]} -> {label[s.larger]}", str(s.df), fixed(s.ss, d),
                       num(s.mean_square), num(s.f, 5), pval(s.p)) for s in comp.steps)
    den = ("the residual mean square of the largest model, "
           f"{a.models[-1].label}, which is valid under every model in the chain"
           if comp.denominator == "largest" else
           "the residual mean square of each step's larger model")
    out = [Section("Comparing the models", (
        Paragraph((
            "Each model is a special case of the next (the models are nested), so the larger "
            "model always fits at least as well. The question at each step is whether it fits "
            "better by more than chance alone would explain. The extra sum of squares of a "
            "step is the drop in residual SS; dividing it by its degrees of freedom and by the "
            f"error mean square s^2 gives F. Here s^2 is {den}.",)),
        Table(("", "model", "rank", "residual df", "residual SS"), model_rows,
              align="llrrr", caption="The models, smallest first."),
        Table(("step", "df", "extra SS", "mean square", "F", "p"), step_rows,
              caption="The F test of each step."),
    ))]
    for i, s in enumerate(comp.steps):
        blocks: list[Block] = [
            Paragraph((f"{a.models[i].label} (", Code(s.smaller), f") against "
                       f"{a.models[i + 1].label} (", Code(s.larger), "):")),
            _step_formula(a, s, i),
            _reading(a, s, s.smaller, s.larger),
        ]
        fig = figures.get(f"step-{i + 1}-models")
        if fig is not None:
            blocks.append(fig)
        out.append(Section(f"Step {a.models[i].label} -> {a.models[i + 1].label}",
                           tuple(blocks), level=3))
    return out


def _mean_lines(a: WorkedAnalysis, j: int) -> list[tuple[Inline, ...]]:
    reg = a.regression
    coding = reg.fit.design.groups.coding if reg.fit.design.groups is not None else None
    assert coding is not None
    sym, sub = [], []
    for c, (k, b) in zip(coding[j], enumerate(reg.fit.coefficients)):
        if c == 0:
            continue
        sign = "-" if c < 0 else "+"
        scale = "" if abs(c) == 1 else f"{num(abs(float(c)), 4)} x "
        tex_scale = "" if abs(c) == 1 else rf"{num(abs(float(c)), 4)} \times "
        sym.append((f" {sign} {scale}b{k}", f" {sign} {tex_scale}b_{{{k}}}"))
        value = num(float(b))
        shown = f"({value})" if float(b) < 0 else value
        sub.append((f" {sign} {scale}{shown}", f" {sign} {tex_scale}{shown}"))
    first_sym = (sym[0][0].replace(" + ", "", 1), sym[0][1].replace(" + ", "", 1))
    first_sub = (sub[0][0].replace(" + ", "", 1), sub[0][1].replace(" + ", "", 1))
    symbolic: list[str | tuple[str, str]] = [first_sym, *sym[1:]]
    substituted: list[str | tuple[str, str]] = ["= ", first_sub, *sub[1:], " = ",
                                                num(float(reg.fitted_means[j]))]
    if len(sym) <= 3:
        return [(Code(a.levels[j]), ": ", math(*symbolic, " ", *substituted))]
    return [(Code(a.levels[j]), ": ", math(*symbolic)), (math(*substituted),)]


def regression_section(a: WorkedAnalysis) -> Section:
    """The separate-means model under a contrast coding, and why it is the same model."""
    reg = a.regression
    fit = reg.fit
    groups = fit.design.groups
    assert groups is not None
    names = fit.design.column_names
    coding_rows = tuple((lv, *(num(float(v), 4) for v in groups.coding[j]))
                        for j, lv in enumerate(a.levels))
    frame = fit.to_frame()
    coef_rows = tuple((f"b{k}", str(name), num(r.estimate), num(r.std_error), num(r.t, 4),
                       pval(r.p)) for k, (name, r) in enumerate(frame.iterrows()))
    blocks: list[Block] = [
        Paragraph((
            f"The separate-means model can be written with any coding of the levels. Here it "
            f"is written with {a.coding} coding, as a regression with an intercept: the "
            "columns change, and with them what each coefficient means, but the fitted means, "
            "the residuals and the residual sum of squares stay the same.",)),
        Table((a.factor, *names), coding_rows, align="l" + "r" * len(names),
              caption=f"The design row of each level under {a.coding} coding: every "
                      "observation at that level gets this row."),
        Table(("symbol", "column", "estimate", "std error", "t", "p"), coef_rows, align="llrrrr",
              caption="The regression coefficients (each t tests that coefficient = 0)."),
    ]
    if reg.hypothesis is not None:
        hyp_rows = tuple((f"b{k}", *(num(float(w), 4) for w in reg.hypothesis[k]))
                         for k in range(len(names)))
        blocks.append(Table(("coefficient", *a.levels), hyp_rows,
                            caption="What each coefficient estimates: its weights on the level "
                                    "means (the hypothesis matrix, the inverse of the coding)."))
    blocks.append(Paragraph((
        "Going the other way, each level's fitted mean is its design row times the "
        "coefficients:",)))
    blocks.append(Formula(tuple(line for j in range(len(a.levels)) for line in _mean_lines(a, j))))
    separate = next((m for m in a.models if m.fit.rank == len(a.levels)), None)
    same = ("" if separate is None else
            f", the residual SS of {separate.label} ({separate.fit.name}) above")
    overall = a.regression_test.steps[0]
    claim = ("that every coefficient except the intercept is zero, compares it with the "
             "intercept-only model" if "Intercept" in names else
             "that all its coefficients are equal, compares it with the equal-means model")
    blocks.append(Paragraph((
        f"Residual SS of the regression: {num(fit.residual_ss)}{same}. Its overall F test, "
        f"{claim}: F = {num(overall.f, 5)} on {overall.df} and "
        f"{overall.denominator_df} df, p = {pval(overall.p)}. That is the one-way analysis of "
        "variance, equal means against separate means: one computation, two names.",)))
    return Section("The same model as a regression", tuple(blocks))
