"""Load the vendored published worked examples (tests/data/worked-examples, see its README)."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

FOLDER = Path(__file__).resolve().parents[1] / "data" / "worked-examples"

# SHA-256 of the vendored copies (tests/data/PROVENANCE.md).
SHA256 = {
    "nist_handbook_levene_gear": "38d2eac44402c5a1ea2d52235fe2f124552ad88f96330c52c5d52dac1cb17ce1",
    "nist_handbook_oneway_resistors":
        "a78ded75445a685dd64e706b2c0e1be581c6f7e22296ee4b127fad19f0dd60eb",
    "penguins_flipper_oneway": "679a64c354e8d9e47b4469f5ec633fba0e35b0a57818372bac7b7a9dcaf7f42b",
}


def load(name: str) -> dict[str, Any]:
    """The JSON case ``name`` (without ``.json``), after checking its SHA-256."""
    raw = (FOLDER / f"{name}.json").read_bytes()
    digest = hashlib.sha256(raw).hexdigest()
    assert digest == SHA256[name], f"{name}.json differs from the vendored copy ({digest})"
    return json.loads(raw.decode("utf-8"))


def grouped_frame(case: dict[str, Any], response: str = "y", factor: str = "g") -> pd.DataFrame:
    """A long table from a case whose data are ``{"groups": {level: [strings]}}``."""
    rows = [(level, float(v)) for level, values in case["data"]["groups"].items()
            for v in values]
    return pd.DataFrame({factor: [r[0] for r in rows], response: [r[1] for r in rows]})


def samples(case: dict[str, Any]) -> list[np.ndarray]:
    """The groups as float arrays, in the case's order."""
    return [np.array([float(v) for v in values]) for values in case["data"]["groups"].values()]


def printed_half_unit(text: str) -> float:
    """Half a unit in the last printed digit of a decimal string such as ``"0.032236827"``."""
    mantissa = text.strip().lower().split("e")[0]
    exponent = int(text.lower().split("e")[1]) if "e" in text.lower() else 0
    decimals = len(mantissa.split(".")[1]) if "." in mantissa else 0
    return 0.5 * 10.0 ** (exponent - decimals)


def assert_printed(value: float, text: str, slack: float = 1.0) -> None:
    """``value`` rounds to the printed ``text`` (within ``slack`` half-units of its last digit)."""
    half = printed_half_unit(text)
    assert abs(value - float(text)) <= slack * half * (1 + 1e-9), (value, text)
