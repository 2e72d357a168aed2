"""Comparing laboratories whose measurements do not share one spread (invented data).

Run: .venv/bin/python examples/unequal_variances.py

The scenario is invented: five laboratories measure the same reference material. The
reference laboratory (REF) runs many replicates with a tight method; two small field
laboratories are much noisier. The question: does each laboratory agree with REF? With
unequal spreads and unequal group sizes, the pooled residual mean square understates the
noise of the small noisy laboratories, so this walk-through checks the assumption first and
then compares each laboratory with REF using Welch-type standard errors (each laboratory's
own variance, Satterthwaite degrees of freedom per comparison).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

import nestfit
from nestfit import checks
from nestfit import contrasts as nc

LABS = ("REF", "L1", "L2", "F1", "F2")
SIZES = (30, 20, 20, 6, 6)
SPREAD = (0.10, 0.15, 0.15, 0.60, 0.80)  # mg/L; the field labs are noisy
BIAS = (0.00, 0.02, -0.05, 0.25, 0.10)  # mg/L, relative to the reference value


def invented_lab_data(seed: int = 20261202) -> pd.DataFrame:
    """Invented readings (mg/L) around a reference value of 12.50, seeded."""
    rng = np.random.default_rng(seed)
    frames = [pd.DataFrame({"lab": lab, "reading": np.round(12.5 + bias + sd * rng.normal(size=n),
                                                              3)})
              for lab, n, sd, bias in zip(LABS, SIZES, SPREAD, BIAS)]
    data = pd.concat(frames, ignore_index=True)
    data["lab"] = pd.Categorical(data["lab"], categories=list(LABS))
    return data


def main() -> None:
    data = invented_lab_data()
    print("Invented data: five laboratories measure one reference material "
          f"({len(data)} readings). No real laboratory is described.\n")
    models = nestfit.groups(data, "reading", "lab")

    # 1. Do the spreads differ? Brown-Forsythe's test (deviations from the medians).
    print(checks.check_assumptions(models), "\n")

    # 2. The pooled one-way F and Welch's F for "all laboratories agree".
    print(models.oneway(), "\n")
    print(checks.welch_anova(models), "\n")

    # 3. Each laboratory against REF: pooled and Welch-type standard errors side by side.
    separate = models.separate_means()
    family = nc.versus_control("REF")
    pooled = nc.cell_means(separate).family(family).adjust("holm")
    welch = nc.cell_means(separate, variance="welch").family(family).adjust("holm")
    print(welch, "\n")
    print("Standard errors of each comparison with REF, pooled vs Welch-type:")
    for p_row, w_row in zip(pooled.rows, welch.rows):
        print(f"  {w_row.label:10s} pooled {p_row.std_error:.4f} on {p_row.df:g} df, "
              f"Welch-type {w_row.std_error:.4f} on {w_row.df:.1f} df; "
              f"Holm-adjusted p {p_row.p_adjusted:.4f} vs {w_row.p_adjusted:.4f}")
    print("\nThe pooled standard error borrows the precision of the large, tight laboratories"
          " for the small, noisy ones, so their comparisons look more certain than they are.\n")

    # 4. The same question with simultaneous intervals (many-to-one max-t, Welch-type df).
    print(nc.cell_means(separate, variance="welch").family(family).adjust("dunnett", rng=1))
    print("\nAssumptions: independent readings, roughly normal within each laboratory. Welch-"
          "type methods are approximations that work well unless groups are very small."
          " Choosing the analysis by the result of a variance test has error rates of its own;"
          " where unequal spreads are plausible from the start (as with labs of different"
          " methods), plan the Welch-type analysis in advance. The data are invented;"
          " decisions about real measurements follow the applicable standards and a"
          " qualified statistician.")


if __name__ == "__main__":
    main()
