"""A worked one-factor analysis on the bundled invented fill-weight data.

Run: .venv/bin/python examples/oneway_walkthrough.py

The data are invented (see nestfit.datasets.describe_fill_weights()). The question: a
packaging line has six filling heads; head H4 was recently serviced. Is H4 different from the
rest, and do the other heads differ among themselves?
"""

from __future__ import annotations

import numpy as np

import nestfit


def main() -> None:
    data = nestfit.datasets.load_fill_weights()
    print(nestfit.datasets.describe_fill_weights(), "\n")

    models = nestfit.groups(data, "weight", "head")
    print("Group sizes:", dict(zip(models.levels, models.factor.counts.tolist())), "\n")

    equal = models.equal_means()
    serviced = models.blocks("H4 | ...")
    separate = models.separate_means()

    # The one-way analysis of variance is the comparison of two regressions.
    oneway = nestfit.compare(equal, separate)
    print(oneway, "\n")

    # The same F from the regression view: the separate-means fit is a regression on
    # indicator columns, the equal-means fit a regression on the constant.
    between = equal.residual_ss - separate.residual_ss
    f = (between / (separate.rank - equal.rank)) / separate.mean_square
    print(f"F from the two residual sums of squares: {f:.6g} (table: {oneway.steps[0].f:.6g})\n")

    # A sharper question: H4 against the rest, then anything left.
    chain = nestfit.compare(equal, serviced, separate)
    print(chain, "\n")

    # Coefficients under another coding describe the same fitted means.
    helmert = models.separate_means("helmert")
    print(helmert, "\n")
    same = np.allclose(helmert.fitted, separate.fitted)
    print("Helmert and indicator codings give the same fitted means:", same)
    print("\nAssumptions: independent errors, normal, equal variance in every head. The data"
          " are invented; real decisions follow the applicable standards and a qualified"
          " statistician.")


if __name__ == "__main__":
    main()
