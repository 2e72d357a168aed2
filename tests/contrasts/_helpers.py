"""Shared helpers for the contrast tests: reference files, printed precision, random data."""

from __future__ import annotations

import hashlib
import json
from decimal import Decimal
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

import nestfit

DATA = Path(__file__).resolve().parents[1] / "data" / "worked-examples"
SHA256 = {  # as recorded in tests/data/PROVENANCE.md (section "worked-examples: contrasts")
    "nist_handbook_planned_contrast.json":
        "3ac44c14324b698efdd1530aeadf96cc08b8a1cb9b4aa98d595f1a2325cc7862",
    "nist_handbook_tukey_4group.json":
        "585fdaecec150c6768766f5480571bb6bf628c45e04cea7ad5c9416635d3967b",
    "nist_handbook_scheffe.json":
        "da137e01fbc7644c90a46b9354bb14e5559371eff56078511db8ff7a06ee66c2",
    "nist_handbook_bonferroni.json":
        "18d3b30f6a94316721ab43ef03f8ead89e6a9e57f8ad60e3a3b0c96f723284af",
    "holm_four_hypotheses.json":
        "63b68ea21c3753a25ad873810d8030a81749c9b93397b1679b348fc37dff31cf",
    "dunnett_critical_values.json":
        "1a465b8df0b8309df74db9243d235ecb1af31712b7f4c21a28f968b25e9c7e28",
    "harter_studentized_range_q_0.05.json":
        "c8c8e340edd201544731bdd6e1f06439b84c0d3072b5bfadf0ad459839feb336",
}


def load(name: str) -> dict[str, Any]:
    """A vendored reference file, after checking its SHA-256."""
    raw = (DATA / name).read_bytes()
    assert hashlib.sha256(raw).hexdigest() == SHA256[name], f"{name} differs from the vendored copy"
    return json.loads(raw)


def printed(value: float, text: str, slack: float = 1.0) -> None:
    """``value`` rounds to the printed ``text``: within half a unit of its last place (x slack)."""
    digits = Decimal(text.strip())
    half = Decimal(1).scaleb(digits.as_tuple().exponent) / 2
    assert abs(Decimal(repr(float(value))) - digits) <= half * Decimal(repr(slack)) * \
        Decimal("1.000001"), (value, text)


def groups_frame(groups: dict[str, list[str]]) -> pd.DataFrame:
    """A long table (y, g) from the reference files' ``{"level": [values...]}``."""
    rows = [(float(v), level) for level, values in groups.items() for v in values]
    return pd.DataFrame(rows, columns=["y", "g"])


def random_groups(seed: int, sizes: list[int], spread: float = 1.0) -> pd.DataFrame:
    """Invented one-way data: level means N(0, spread), errors N(0, 1)."""
    rng = np.random.default_rng(seed)
    labels = np.repeat([f"L{j}" for j in range(len(sizes))], sizes)
    means = rng.normal(0.0, spread, size=len(sizes))
    y = np.repeat(means, sizes) + rng.normal(0.0, 1.0, size=labels.size)
    order = rng.permutation(labels.size)
    return pd.DataFrame({"y": y[order], "g": labels[order]})


def separate(data: pd.DataFrame) -> nestfit.Fit:
    return nestfit.groups(data, "y", "g").separate_means()


def samples(data: pd.DataFrame) -> list[np.ndarray]:
    """The response of each level, in level (sorted) order, for scipy's multi-sample tests."""
    return [data.loc[data.g == lv, "y"].to_numpy() for lv in sorted(data.g.unique())]
