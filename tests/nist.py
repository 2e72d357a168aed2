"""Helpers for tests against the NIST StRD reference data in tests/data/nist-strd/.

Not a test module: test files import it (``from tests.nist import load_anova, lre``).
See tests/data/PROVENANCE.md for where the data come from.
"""

from __future__ import annotations

import csv
import hashlib
import json
import math
from pathlib import Path

__all__ = ["ANOVA_DIR", "LRE_CAP", "anova_names", "load_anova", "lre"]

ANOVA_DIR = Path(__file__).resolve().parent / "data" / "nist-strd" / "anova"

#: NIST certifies its values to 15 significant digits, so agreement beyond
#: 15 digits cannot be measured: :func:`lre` never reports more.
LRE_CAP = 15.0


def anova_names() -> list[str]:
    """Names of the vendored NIST ANOVA datasets (for ``pytest.mark.parametrize``).

    Returns
    -------
    list of str
        Dataset names such as ``"SmLs07"``, sorted.
    """
    return sorted(
        p.name.removesuffix(".certified.json") for p in ANOVA_DIR.glob("*.certified.json")
    )


def load_anova(name: str) -> tuple[list[str], list[str], dict[str, float]]:
    """Load one NIST StRD one-way ANOVA dataset with its certified values.

    The CSV bytes are checked against the SHA-256 recorded in the JSON
    metadata first, so a damaged copy fails loudly instead of giving a
    misleading test result.

    Parameters
    ----------
    name : str
        The NIST dataset name, e.g. ``"SiRstv"`` or ``"SmLs07"``.

    Returns
    -------
    treatments : list of str
        The treatment label of each observation, as printed by NIST (``"1"``..).
    responses : list of str
        The response of each observation, the exact decimal string NIST
        printed; parse it with ``decimal.Decimal`` or ``fractions.Fraction``
        for exact values.
    certified : dict of str to float
        The certified values as float64: ``between_df``, ``between_ss``,
        ``between_ms``, ``f_statistic``, ``within_df``, ``within_ss``,
        ``within_ms``, ``r_squared`` and ``residual_sd``. The row labels
        (``between_label``...) are left out. The exact strings are in the
        JSON file.

    Raises
    ------
    FileNotFoundError
        If the dataset is not vendored.
    ValueError
        If the CSV does not match its recorded SHA-256 or header.
    """
    meta = json.loads((ANOVA_DIR / f"{name}.certified.json").read_text(encoding="ascii"))
    csv_path = ANOVA_DIR / meta["csv_file"]
    digest = hashlib.sha256(csv_path.read_bytes()).hexdigest()
    if digest != meta["csv_sha256"]:
        raise ValueError(f"{csv_path} does not match its recorded SHA-256 (got {digest})")
    with csv_path.open(newline="", encoding="ascii") as fh:
        rows = list(csv.reader(fh))
    if rows[0] != ["treatment", "response"]:
        raise ValueError(f"{csv_path}: unexpected header {rows[0]}")
    treatments = [r[0] for r in rows[1:]]
    responses = [r[1] for r in rows[1:]]
    certified = {k: float(v) for k, v in meta["certified"].items() if not k.endswith("_label")}
    return treatments, responses, certified


def lre(estimate: float, certified: float) -> float:
    """Log relative error: the number of significant digits in agreement.

    ``-log10(|estimate - certified| / |certified|)``, or ``-log10(|estimate|)``
    (log absolute error) when the certified value is 0, as in the StRD
    literature.

    The result is capped at :data:`LRE_CAP` (15), the precision to which NIST
    certifies its values: an exact match returns 15, and so does any closer
    agreement, since digits beyond the 15th of a certified value are not
    known. It is floored at 0 (an error as large as the value itself, or
    larger, has no correct digits), and a NaN or infinite estimate of a finite
    value also gives 0, so ``assert lre(...) >= k`` fails for it.

    Parameters
    ----------
    estimate : float
        The computed value.
    certified : float
        The certified value.

    Returns
    -------
    float
        The digits of agreement, between 0 and 15.
    """
    if math.isnan(estimate) or math.isnan(certified):
        return 0.0
    if math.isinf(certified) or math.isinf(estimate):
        return LRE_CAP if estimate == certified else 0.0
    err = abs(estimate - certified)
    if certified != 0:
        err /= abs(certified)
    if err == 0:
        return LRE_CAP
    return min(LRE_CAP, max(0.0, -math.log10(err)))
