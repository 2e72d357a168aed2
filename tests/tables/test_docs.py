"""The numbers shown in docs/choosing-a-table.md come from its own seeded snippet."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

DOC = Path(__file__).resolve().parents[2] / "docs" / "choosing-a-table.md"


@pytest.fixture(scope="module")
def namespace() -> dict:
    text = DOC.read_text(encoding="utf-8")
    code = re.findall(r"```python\n(.*?)```", text, flags=re.S)[0]
    ns: dict = {}
    exec(code.replace("print(models.cells)", ""), ns)  # the first block builds the data
    return ns


def test_tables_in_the_guide(namespace: dict) -> None:
    text = DOC.read_text(encoding="utf-8")
    models, tables, trial = namespace["models"], namespace["tables"], namespace["trial"]
    seq = models.table("sequential")
    marg = models.table("marginal")
    last = models.table("each-last")
    shown = {
        "1.86476": seq.row("C(variety)").ss, "2.51743": seq.row("C(fertiliser)").ss,
        "0.904959": seq.row("C(variety):C(fertiliser)").ss, "1.83137": seq.residual_ss,
        "7.11852": seq.total_ss, "0.866136": marg.row("C(variety)").ss,
        "0.7787": last.row("C(variety)").ss, "2.45889": last.row("C(fertiliser)").ss,
        "0.0735": marg.row("C(variety):C(fertiliser)").p,
    }
    other = tables.factorial("yield_t_ha ~ C(fertiliser) * C(variety)", trial).table("sequential")
    shown["3.51605"] = other.row("C(fertiliser)").ss
    cells = models.cell_means()
    ic = cells.interaction_contrast({"variety": {"Amber": 1, "Corvin": -1},
                                     "fertiliser": {"nitrogen": 1, "none": -1}})
    shown["-0.519167"] = ic.estimate
    shown["5.64542"] = models.marginal_means("variety").estimates[0]
    shown["5.58857"] = models.marginal_means("variety", weights="proportional").estimates[0]
    anc = tables.factorial("yield_t_ha ~ C(variety) + C(fertiliser) + moisture", trial)
    shown["0.80855"] = anc.equal_slopes(factor="variety").steps[0].f
    shown["0.70111"] = anc.marginal_means("fertiliser").contrast({"nitrogen": 1,
                                                                  "none": -1}).estimate
    for printed, value in shown.items():
        assert printed in text
        digits = len(printed.split(".")[1])
        assert abs(value - float(printed)) <= 0.51 * 10.0**-digits, (printed, value)


def test_level_means_claims_in_the_guide(namespace: dict) -> None:
    # The guide says: equal.level_means() feeds the contrast families, and the joint test of
    # all pairs of equally weighted marginal means is the each-last F of that factor.
    from nestfit import contrasts as nc

    models = namespace["models"]
    text = DOC.read_text(encoding="utf-8")
    assert 'equal.level_means().family(nc.all_pairs()).adjust("holm")' in text
    equal = models.marginal_means("variety")
    family = equal.level_means().family(nc.all_pairs())
    result = family.adjust("holm")
    assert len(result.rows) == len(equal.labels) * (len(equal.labels) - 1) // 2
    each_last = models.table("each-last").row("C(variety)")
    assert abs(family.joint_test().steps[0].f - each_last.f) <= 1e-9 * each_last.f
