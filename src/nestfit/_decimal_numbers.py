"""Numeric text to float64 without losing digits to a common offset: numerals and offsets.

The table reader built on this is :mod:`nestfit._decimal`.

Data such as ``1000000000000.4`` (the NIST StRD ANOVA sets SmLs07-SmLs09)
cannot be stored in binary double precision: the spacing of float64 numbers
near ``1e12`` is about ``1.2e-4``, so converting each value to float64 first
destroys the digits in which the observations actually differ, and no
algorithm applied afterwards can recover them.

This module removes a common offset *in exact decimal arithmetic* before the
conversion to float64. For every numeric column it chooses an offset ``c``
with few significant digits near the middle of the data (see
:func:`choose_offset`), forms ``value - c`` exactly with :mod:`decimal`, and
only then converts the (small) difference to float64. The conversion is
correctly rounded, so every difference is within half a unit in the last
place (ulp) of its exact value: the float64 data keep all the digits that
matter for sums of squares.

Why this is safe: shifting the response by a constant changes no sum of
squares, F statistic or p-value of a model that contains the constant (every
group-mean model does), because residuals and differences between fitted
values do not depend on the shift. Shifting a covariate by a constant changes
only the intercept, not the slope. What *does* change are fitted means and
coefficients that carry the level of the data: the intercept and the group
means must have the offset added back (``fitted + float(offset)``, or exactly
with :class:`decimal.Decimal`).

Missing cells
-------------
After surrounding whitespace is stripped, a cell is missing when it is one of
:data:`MISSING_MARKERS`: the empty string, ``NA``, ``NaN``, ``nan`` and
``null`` (case-sensitive). A missing cell does not stop a column from being
numeric; it becomes NaN there.

Numerals
--------
A cell is a decimal numeral when it matches ``[+-]digits[.digits][e[+-]digits]``
with ASCII digits (``12``, ``-0.5``, ``.5``, ``3.``, ``1.5E-03``). Infinity,
NaN spelt in any other way, hexadecimal, digit-group underscores and non-ASCII
digits are not numerals, although :class:`decimal.Decimal` would accept some of
them.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Sequence
from decimal import ROUND_HALF_EVEN, Decimal, Inexact, localcontext

import numpy as np

from nestfit.errors import ColumnError

__all__ = [
    "MISSING_MARKERS",
    "choose_offset",
    "is_decimal_numeral",
    "shifted_floats",
]

#: Cell texts (after stripping surrounding whitespace) that mean "missing".
MISSING_MARKERS: frozenset[str] = frozenset({"", "NA", "NaN", "nan", "null"})

_NUMERAL = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?", re.ASCII)

# The decimal exponent of the leading digit of a nonzero numeral must lie in
# [-324, 308]: above, float64 overflows; below, float64 could only read the
# value as 0. The bounds also keep the decimal precision that the exact
# subtraction needs to a few hundred digits plus the numerals' own length.
_MAX_ADJUSTED_EXPONENT = 308
_MIN_ADJUSTED_EXPONENT = -324


def is_decimal_numeral(text: str) -> bool:
    """Tell whether ``text`` is a plain decimal numeral.

    The test is stricter than :class:`decimal.Decimal`, which also accepts
    ``Infinity``, ``NaN``, ``1_000`` and non-ASCII digits: those are not data
    a CSV column of measurements should contain.

    Parameters
    ----------
    text : str
        The cell text, already stripped of surrounding whitespace.

    Returns
    -------
    bool
        True when ``text`` is an optional sign, ASCII digits with at most one
        decimal point (at least one digit), and an optional exponent.
    """
    return _NUMERAL.fullmatch(text) is not None


def choose_offset(values: Iterable[Decimal]) -> Decimal:
    """Choose the offset that is subtracted from a numeric column.

    The rule: let ``lo`` and ``hi`` be the smallest and largest value,
    ``r = hi - lo`` the range and ``m = (lo + hi) / 2`` the midrange, all exact.

    * ``r == 0`` (a constant column): the offset is the value itself, so every
      difference is exactly zero.
    * ``|m| <= r`` (the data lie near zero compared with their spread): the
      offset is 0. Converting such values directly loses less than one bit
      compared with any offset, and integer codes, counts and data that
      straddle zero keep their own values.
    * otherwise: ``m`` rounded (half-even) to the decimal place of the leading
      digit of ``r``, i.e. to a multiple of ``10**k`` with ``10**k <= r <
      10**(k+1)``. The offset then consists of the leading digits the data
      share plus about one more, and ``|value - offset| <= r`` for every value.

    The offset has no digit finer than ``10**k``, and ``10**k`` is not finer
    than the last digit of the data (the range is a difference of two data
    values), so ``value - offset`` has no digit finer than the data and is
    computed exactly. Its float64 conversion keeps about 16 significant digits
    *of the difference*, which is what sums of squares about any mean depend
    on.

    Parameters
    ----------
    values : iterable of Decimal
        The finite, non-missing values of the column.

    Returns
    -------
    Decimal
        The offset (``Decimal(0)`` for an empty column).
    """
    vals = list(values)
    if not vals:
        return Decimal(0)
    with localcontext() as ctx:
        ctx.prec = _exact_precision(vals)
        ctx.traps[Inexact] = True
        lo, hi = min(vals), max(vals)
        span = hi - lo
        if span == 0:
            return lo if lo != 0 else Decimal(0)
        mid = (lo + hi) / 2
        if abs(mid) <= span:
            return Decimal(0)
        k = span.adjusted()
        ctx.traps[Inexact] = False  # rounding the midrange is the point here
        offset = mid.quantize(Decimal(1).scaleb(k), rounding=ROUND_HALF_EVEN)
        ctx.traps[Inexact] = True
        if k > 0:  # write 5E+2 as 500: same value, plain digits
            offset = offset.quantize(Decimal(1))
        return offset


def _exact_precision(values: Sequence[Decimal]) -> int:
    """Decimal digits needed to add or subtract any two of ``values`` exactly.

    The sum of two decimals needs the digits from the highest leading digit
    down to the lowest last digit, plus one for a carry; one more covers the
    halving of the midrange.
    """
    top = max(v.adjusted() for v in values)
    bottom = min(int(v.as_tuple().exponent) for v in values)
    return max(top - bottom + 3, 28)


def shifted_floats(
    texts: Sequence[str], *, column: str = "values"
) -> tuple[np.ndarray, Decimal, int]:
    """Convert decimal numerals to float64 differences from an exact offset.

    Each text is parsed as an exact :class:`decimal.Decimal`, the offset of
    :func:`choose_offset` is subtracted exactly, and the difference is
    converted to float64 with a single correct rounding. Missing cells (see
    :data:`MISSING_MARKERS`) become NaN.

    Parameters
    ----------
    texts : sequence of str
        The cells of one column, in row order. Surrounding whitespace is
        ignored.
    column : str, optional
        The column name used in error messages.

    Returns
    -------
    differences : numpy.ndarray
        float64 array of ``value - offset`` (NaN where missing).
    offset : Decimal
        The exact offset that was subtracted.
    n_missing : int
        The number of missing cells.

    Raises
    ------
    ColumnError
        If a non-missing cell is not a decimal numeral, or lies outside the
        float64 range; the message names the column, the data row (counted
        from 1 after the header) and the cell text.
    """
    parsed: list[Decimal | None] = []
    for row, raw in enumerate(texts, start=1):
        text = raw.strip()
        if text in MISSING_MARKERS:
            parsed.append(None)
            continue
        parsed.append(_parse_cell(text, column, row))
    present = [v for v in parsed if v is not None]
    offset = choose_offset(present)
    out = np.full(len(parsed), np.nan, dtype=np.float64)
    if present:
        with localcontext() as ctx:
            ctx.prec = _exact_precision([*present, offset])
            ctx.traps[Inexact] = True
            for i, value in enumerate(parsed):
                if value is not None:
                    # Decimal -> float goes through the shortest repr and is
                    # correctly rounded (round half to even).
                    out[i] = float(value - offset)
    return out, offset, len(parsed) - len(present)


def _parse_cell(text: str, column: str, row: int) -> Decimal:
    """Parse one stripped, non-missing cell as an exact decimal, or raise ColumnError."""
    if not is_decimal_numeral(text):
        raise ColumnError(
            f"column {column!r} must be numeric, but data row {row} holds {text!r}, "
            "which is not a plain decimal numeral (digits with an optional sign, "
            "decimal point and exponent)"
        )
    try:
        value = Decimal(text)
    except ArithmeticError as exc:  # an exponent too long for decimal itself
        raise ColumnError(
            f"column {column!r}: data row {row} holds {text!r}, whose exponent is out of range"
        ) from exc
    if value == 0:
        return Decimal(0)  # drop the sign and exponent of zeros such as -0.000e-9
    adjusted = value.adjusted()
    too_large = adjusted > _MAX_ADJUSTED_EXPONENT or (
        adjusted == _MAX_ADJUSTED_EXPONENT and math.isinf(float(value))
    )
    if too_large or adjusted < _MIN_ADJUSTED_EXPONENT:
        raise ColumnError(
            f"column {column!r}: data row {row} holds {text!r}, which is outside the "
            "range of float64 numbers (about 1e-324 to 1.8e308 in magnitude)"
        )
    return value
