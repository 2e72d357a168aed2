"""Demonstration data shipped with nestfit.

The data here are INVENTED: simulated from a made-up scenario by
``tools/make_demo_data.py`` (seeded, so the file can be regenerated exactly).
They describe no real process and no published study; use them to try the
library out, not as evidence about anything.
"""

from __future__ import annotations

import io
from importlib import resources

import pandas as pd

from nestfit.errors import DataError

__all__ = ["HEAD_LEVELS", "SHIFT_LEVELS", "describe_fill_weights", "load_fill_weights"]

#: The filling heads, in level order.
HEAD_LEVELS: tuple[str, ...] = ("H1", "H2", "H3", "H4", "H5", "H6")
#: The shifts, in level order.
SHIFT_LEVELS: tuple[str, ...] = ("early", "late")

_FILL_WEIGHTS = "fill_weights.csv"

_DESCRIPTION = (
    "Fill weights (INVENTED data). A packaging line fills bags to a target of 500 g on six "
    "filling heads, H1 to H6. Packs were pulled at random for check-weighing over an early and "
    "a late shift, so the heads have unequal numbers of packs (18 to 30, 140 in all). In the "
    "invented scenario head H4 was recently serviced and fills about 0.8 g heavier than the "
    "others, which differ from one another by a few tenths of a gram at most; the pack-to-pack "
    "standard deviation is about 1.2 g. The late shift runs the line faster, and a faster line "
    "fills slightly lighter packs. Columns: pack (pull order, 1..140), head (ordered categorical "
    "H1..H6), shift (categorical early/late), line_speed (packs per minute, to 0.1) and weight "
    "(grams, to 0.1 g). The data were simulated by tools/make_demo_data.py and are invented: "
    "they describe no real line."
)


def load_fill_weights() -> pd.DataFrame:
    """Load the invented fill-weight demo data.

    The data are simulated (see :func:`describe_fill_weights`): 140 packs
    from six filling heads of a packaging line, with unequal numbers of packs
    per head, for trying out one-way comparisons of group means ("equal
    means" against "separate means"), contrasts such as "H4 against the
    other heads", and later two-factor (head and shift) and covariate
    (line speed) models.

    Returns
    -------
    pandas.DataFrame
        One row per pack, columns:

        ``pack`` : int64
            Pull order, 1 to 140.
        ``head`` : ordered Categorical
            Filling head, levels ``H1 < H2 < ... < H6``.
        ``shift`` : Categorical
            ``early`` or ``late`` (levels in that order, unordered).
        ``line_speed`` : float64
            Line speed in packs per minute, to 0.1.
        ``weight`` : float64
            Fill weight in grams, to 0.1 g.

        ``frame.attrs`` holds ``units`` (a dict of column units),
        ``target_g`` (500.0) and ``invented`` (True).
    """
    text = resources.files(__name__).joinpath(_FILL_WEIGHTS).read_text(encoding="ascii")
    frame = pd.read_csv(
        io.StringIO(text),
        dtype={"pack": "int64", "head": "str", "shift": "str"},
        keep_default_na=False,
    )
    frame["line_speed"] = frame["line_speed"].astype("float64")
    frame["weight"] = frame["weight"].astype("float64")
    frame["head"] = pd.Categorical(frame["head"], categories=list(HEAD_LEVELS), ordered=True)
    frame["shift"] = pd.Categorical(frame["shift"], categories=list(SHIFT_LEVELS))
    if frame["head"].isna().any() or frame["shift"].isna().any():  # a label outside the levels
        raise DataError(f"{_FILL_WEIGHTS} holds an unexpected head or shift label")
    frame.attrs = {
        "units": {"line_speed": "packs per minute", "weight": "g"},
        "target_g": 500.0,
        "invented": True,
    }
    return frame


def describe_fill_weights() -> str:
    """Describe the invented fill-weight demo data in a short paragraph.

    Returns
    -------
    str
        The scenario, the columns and their units, and the statement that the
        data are invented (simulated by ``tools/make_demo_data.py``).
    """
    return _DESCRIPTION
