"""Published two-way worked examples, checked at the precision printed there.

Sources (vendored unchanged in tests/data/worked-examples, see tests/data/PROVENANCE.md):
- montgomery_battery_twoway.json: D. C. Montgomery, Design and Analysis of Experiments,
  Section 5.3.2, Tables 5.4-5.5 (balanced 3 x 3 with interaction). SS_total and
  SS_material were seen in print; the rest of Table 5.5 is marked "from memory" in the file.
- nwk_growth_unbalanced_twoway.json: Neter, Wasserman & Kutner, Applied Linear Statistical
  Models, Table 20.4 (unbalanced 2 x 3), as analysed in the Stanford ED257 course log.
"""

from __future__ import annotations

import hashlib
import json
from decimal import Decimal
from pathlib import Path

import pandas as pd
import pytest

import nestfit.tables as tables

DATA = Path(__file__).resolve().parents[1] / "data" / "worked-examples"
SHA256 = {  # as recorded in tests/data/PROVENANCE.md
    "montgomery_battery_twoway.json":
        "65ff2bac9c8257e860e0f2e26edec3f27f27582eb075734d68b2d77e7ff706f0",
    "nwk_growth_unbalanced_twoway.json":
        "4cd845cbecd31f43f2bbf61dbb232ca7900340cc12d580225607314c1db3ac27",
}


def load(name: str) -> dict:
    raw = (DATA / name).read_bytes()
    assert hashlib.sha256(raw).hexdigest() == SHA256[name], f"{name} differs from the vendored copy"
    return json.loads(raw)


def printed(value: float, text: str) -> None:
    """``value`` rounds to the printed ``text`` (half a unit in its last printed place)."""
    digits = Decimal(text.replace(",", ""))
    half = Decimal(1).scaleb(digits.as_tuple().exponent) / 2
    assert abs(Decimal(repr(float(value))) - digits) <= half * Decimal("1.000001"), (value, text)


@pytest.fixture(scope="module")
def battery() -> tuple[tables.FactorialModels, dict]:
    case = load("montgomery_battery_twoway.json")
    rows = []
    for cell, values in case["data"]["cells"].items():
        material, temp = cell.replace("material ", "").split(", ")
        rows += [{"material": material, "temperature": temp.rstrip("F"), "life": float(v)}
                 for v in values]
    data = pd.DataFrame(rows)
    return tables.factorial("life ~ C(material) * C(temperature)", data), case


def test_battery_table_at_printed_precision(battery: tuple[tables.FactorialModels, dict]) -> None:
    models, case = battery
    pub = case["published_results"]
    memory = pub["from_memory_table_5_5"]  # Table 5.5 beyond SS_material: "from memory"
    for kind in tables.KINDS:  # balanced: the three kinds agree
        t = models.table(kind)
        printed(t.total_ss, pub["SS_total"])
        printed(t.row("C(material)").ss, pub["SS_material"])
        printed(t.row("C(temperature)").ss, memory["SS_temperature"])
        printed(t.row("C(material):C(temperature)").ss, memory["SS_interaction"])
        printed(t.residual_ss, memory["SS_error"])
        dfs = [int(x) for x in memory["df"].split(", ")]
        assert [r.df for r in t.rows] + [t.residual_df, models.n_obs - 1] == dfs
        ms = memory["ms"].split("; ")
        for r, m in zip(t.rows, ms):
            printed(r.mean_square, m)
        printed(t.residual_ms, ms[-1])
        for r, f in zip(t.rows, memory["F0"].split("; ")):
            printed(r.f, f)
        p = memory["P"].split("; ")
        printed(t.row("C(material)").p, p[0])
        assert t.row("C(temperature)").p < 0.0001  # printed "<0.0001"
        printed(t.row("C(material):C(temperature)").p, p[2])


def test_battery_cell_totals(battery: tuple[tables.FactorialModels, dict]) -> None:
    models, case = battery
    means = models.cell_means()
    totals = case["published_results"]["cell_totals"]
    temps = case["data"]["factors"]["temperature_F"]
    for material, row in totals.items():
        for temp, total in zip(temps, row):
            i = means.labels.index(f"material={material}, temperature={temp}")
            printed(means.estimates[i] * means.counts[i], total)
    printed(float((means.estimates * means.counts).sum()), case["published_results"]["grand_total"])


@pytest.fixture(scope="module")
def growth() -> tuple[pd.DataFrame, dict]:
    case = load("nwk_growth_unbalanced_twoway.json")
    cols = case["data"]["columns"]
    data = pd.DataFrame(case["data"]["rows"], columns=cols)
    data["growth"] = data["growth"].astype(float)
    return data, case


def test_growth_sequential_both_orders(growth: tuple[pd.DataFrame, dict]) -> None:
    data, case = growth
    pub = case["published_results"]
    first = tables.factorial("growth ~ C(sex) * C(development)", data).table("sequential")
    order = pub["order_sex_then_devpt"]
    printed(first.row("C(sex)").ss, order["sex"]["sequential_ss"])
    printed(first.row("C(development)").ss, order["devpt"]["sequential_ss"])
    printed(first.row("C(sex):C(development)").ss, order["sex*devpt"]["sequential_ss"])
    assert first.row("C(sex)").smaller_model == "1"
    assert first.row("C(development)").smaller_model == "1 + C(sex)"
    printed(first.residual_ss, order["residual"]["ss"])
    assert first.residual_df == int(order["residual"]["df"])
    printed(first.total_ss, order["total"]["ss"])
    assert first.n_obs - 1 == int(order["total"]["df"])
    printed(first.residual_ms, order["residual"]["ms"])
    second = tables.factorial("growth ~ C(development) * C(sex)", data).table("sequential")
    other = pub["order_devpt_then_sex"]
    printed(second.row("C(development)").ss, other["devpt"]["sequential_ss"])
    printed(second.row("C(sex)").ss, other["sex"]["sequential_ss"])
    assert second.row("C(sex)").smaller_model == "1 + C(development)"


def test_growth_adjusted_is_each_last(growth: tuple[pd.DataFrame, dict]) -> None:
    data, case = growth
    order = case["published_results"]["order_sex_then_devpt"]
    t = tables.factorial("growth ~ C(sex) * C(development)", data).table("each-last")
    for term, key in [("C(sex)", "sex"), ("C(development)", "devpt"),
                      ("C(sex):C(development)", "sex*devpt")]:
        r = t.row(term)
        assert r.df == int(order[key]["df"])
        printed(r.ss, order[key]["adjusted_ss"])
        printed(r.mean_square, order[key]["adjusted_ms"])
        printed(r.f, order[key]["f"])


def test_growth_marginal_equals_the_printed_sequential_rows(growth: tuple[pd.DataFrame, dict]
                                                            ) -> None:
    # Type II of a main effect = its sequential SS when entered after the other factor,
    # which the source prints for both orders.
    data, case = growth
    pub = case["published_results"]
    t = tables.factorial("growth ~ C(sex) * C(development)", data).table("marginal")
    printed(t.row("C(sex)").ss, pub["order_devpt_then_sex"]["sex"]["sequential_ss"])
    printed(t.row("C(development)").ss, pub["order_sex_then_devpt"]["devpt"]["sequential_ss"])
    printed(t.row("C(sex):C(development)").ss,
            pub["order_sex_then_devpt"]["sex*devpt"]["sequential_ss"])
