"""Read numeric text without losing digits to a common offset.

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
import os
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from decimal import ROUND_HALF_EVEN, Decimal, Inexact, localcontext
from types import MappingProxyType
from typing import IO

import numpy as np
import pandas as pd

from nestfit.errors import ColumnError, DataError

__all__ = [
    "MISSING_MARKERS",
    "ExactTable",
    "choose_offset",
    "is_decimal_numeral",
    "read_table",
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


@dataclass(frozen=True)
class ExactTable:
    """A table read from text, with each numeric column stored as differences from an offset.

    Shifting the response by a constant changes no sum of squares, F statistic
    or p-value in a model that contains the constant, so the differences in
    :attr:`frame` can be fitted and compared directly. Fitted means and the
    coefficients that carry the level of the data (the intercept, cell means,
    any coefficient of a model without a constant) are shifted too: add the
    offset back to them before reporting. Shifting a covariate changes only
    the intercept.

    Attributes
    ----------
    frame : pandas.DataFrame
        One column per file column, in file order. Numeric columns are float64
        and hold ``value - offsets[column]`` (NaN where missing), each within
        half an ulp of its exact decimal value. Text (factor) columns have
        object dtype and hold the stripped cell strings, NaN where missing.
    offsets : Mapping[str, Decimal]
        The exact offset of every numeric column (``Decimal(0)`` where none
        was needed). Text columns have no entry.
    missing : Mapping[str, int]
        The number of missing cells in every column.
    """

    frame: pd.DataFrame
    offsets: Mapping[str, Decimal]
    missing: Mapping[str, int]

    def _numeric(self, column: str) -> Decimal:
        """Return the offset of ``column``, or raise ColumnError if it is absent or text."""
        if column not in self.frame.columns:
            names = ", ".join(map(str, self.frame.columns))
            raise ColumnError(f"no column named {column!r}; the table has: {names}")
        if column not in self.offsets:
            raise ColumnError(f"column {column!r} is a text column, not a numeric one")
        return self.offsets[column]

    def offset_of(self, column: str) -> float:
        """The offset of a numeric column as float64.

        The float is the offset correctly rounded, so it can itself lose
        digits (``1000000000000.4`` is not a float64); use ``offsets[column]``
        for the exact value.

        Parameters
        ----------
        column : str
            A numeric column.

        Returns
        -------
        float
            ``float(offsets[column])``.

        Raises
        ------
        ColumnError
            If the column does not exist or is a text column.
        """
        return float(self._numeric(column))

    def absolute(self, column: str) -> np.ndarray:
        """The values of a numeric column with the offset added back, as float64.

        This is lossy by nature: values such as ``1000000000000.4`` have no
        float64 representation, and the result is only within about one ulp of
        each exact value. Use it to report or plot data on their own scale,
        never to compute sums of squares (use :attr:`frame`, which keeps the
        digits). The offset is added in two parts (its float64 rounding and
        the rounding error of that) so that little more than the final
        rounding is lost.

        Parameters
        ----------
        column : str
            A numeric column.

        Returns
        -------
        numpy.ndarray
            A new float64 array, NaN where the cell was missing.

        Raises
        ------
        ColumnError
            If the column does not exist or is a text column.
        """
        offset = self._numeric(column)
        high = float(offset)
        with localcontext() as ctx:
            ctx.prec = 800  # enough for any float64 minus a float64-range decimal
            low = float(offset - Decimal(high))
        diffs = self.frame[column].to_numpy(dtype=np.float64)
        return high + (diffs + low)


def _source_name(path_or_buffer: str | os.PathLike[str] | IO[str]) -> str:
    """A name for the input to use in messages: the path, or the buffer's name."""
    if isinstance(path_or_buffer, (str, os.PathLike)):
        return os.fspath(path_or_buffer)
    name = getattr(path_or_buffer, "name", None)
    return str(name) if isinstance(name, str) else "<buffer>"


def read_table(
    path_or_buffer: str | os.PathLike[str] | IO[str],
    *,
    numeric_columns: Sequence[str] | None = None,
    text_columns: Sequence[str] | None = None,
) -> ExactTable:
    """Read a CSV table, converting numeric columns to float64 without losing digits.

    Every cell is first read as text (pandas ``dtype=str``, no default NA
    handling); cells in :data:`MISSING_MARKERS` are missing. A column whose
    non-missing cells are all decimal numerals is numeric: an offset is
    chosen by :func:`choose_offset`, subtracted in exact decimal arithmetic,
    and the differences are converted to float64 (see :class:`ExactTable`).
    Every other column stays text and can serve as a factor.

    Parameters
    ----------
    path_or_buffer : str, path-like or text file object
        The CSV file (UTF-8, comma separated, first row the header). Blank
        lines are skipped; a row with fewer fields than the header has the
        rest missing.
    numeric_columns : sequence of str, optional
        Columns that must be numeric; one that is not raises ColumnError
        naming its first bad cell.
    text_columns : sequence of str, optional
        Columns kept as text even if every cell is a numeral, for example
        group codes ``1, 2, 3`` that label a factor, or identifiers with
        leading zeros.

    Returns
    -------
    ExactTable
        The frame of differences and text, the exact offsets and the missing
        counts.

    Raises
    ------
    DataError
        If the file does not exist or cannot be read, is empty, has a header
        but no data rows, or has a row with more fields than the header.
    ColumnError
        If a header name is blank or duplicated, a named column does not
        exist or is named as both numeric and text, or a column in
        ``numeric_columns`` holds a cell that is not a decimal numeral (data
        rows are counted from 1 after the header, blank lines not counted).
    """
    source = _source_name(path_or_buffer)
    try:
        raw = pd.read_csv(
            path_or_buffer,
            header=None,
            dtype=str,
            keep_default_na=False,
            skip_blank_lines=True,
            encoding="utf-8",
        )
    except FileNotFoundError as exc:
        raise DataError(f"cannot read {source!r}: no such file") from exc
    except IsADirectoryError as exc:
        raise DataError(f"cannot read {source!r}: it is a directory, not a file") from exc
    except pd.errors.EmptyDataError as exc:
        raise DataError(f"{source!r} is empty: expected a header row and data rows") from exc
    except pd.errors.ParserError as exc:
        raise DataError(f"{source!r} is not a well-formed CSV table: {exc}") from exc
    except UnicodeDecodeError as exc:
        raise DataError(f"{source!r} is not UTF-8 text: {exc}") from exc
    except OSError as exc:
        raise DataError(f"cannot read {source!r}: {exc}") from exc

    cells = [[_cell_text(v) for v in row] for row in raw.itertuples(index=False, name=None)]
    header, body = [c.strip() for c in cells[0]], cells[1:]
    _check_header(header, source)
    if not body:
        raise DataError(f"{source!r} has a header ({', '.join(header)}) but no data rows")

    wanted_numeric = list(numeric_columns or [])
    wanted_text = list(text_columns or [])
    for name in [*wanted_numeric, *wanted_text]:
        if name not in header:
            raise ColumnError(
                f"{source!r} has no column named {name!r}; its columns are: {', '.join(header)}"
            )
    both = sorted(set(wanted_numeric) & set(wanted_text))
    if both:
        raise ColumnError(f"column {both[0]!r} is named as both numeric and text")

    data: dict[str, pd.Series] = {}
    offsets: dict[str, Decimal] = {}
    missing: dict[str, int] = {}
    for j, name in enumerate(header):
        column = [row[j] for row in body]
        stripped = [c.strip() for c in column]
        present = [c for c in stripped if c not in MISSING_MARKERS]
        numeric = name not in wanted_text and (
            name in wanted_numeric or (bool(present) and all(map(is_decimal_numeral, present)))
        )
        if numeric:
            try:
                values, offset, n_missing = shifted_floats(stripped, column=name)
            except ColumnError as exc:
                raise ColumnError(f"{source!r}: {exc}") from exc
            data[name] = pd.Series(values, dtype=np.float64, name=name)
            offsets[name] = offset
        else:
            text = [np.nan if c in MISSING_MARKERS else c for c in stripped]
            data[name] = pd.Series(text, dtype=object, name=name)
            n_missing = len(stripped) - len(present)
        missing[name] = n_missing
    frame = pd.DataFrame(data, columns=header)
    return ExactTable(frame, MappingProxyType(offsets), MappingProxyType(missing))


def _cell_text(value: object) -> str:
    """The text of one raw cell: pandas gives NaN for fields absent from a short row."""
    return value if isinstance(value, str) else ""


def _check_header(header: Sequence[str], source: str) -> None:
    """Refuse blank and duplicated column names, which pandas would silently rename."""
    for j, name in enumerate(header, start=1):
        if not name:
            raise ColumnError(f"{source!r}: header field {j} is blank; give every column a name")
    seen: set[str] = set()
    for name in header:
        if name in seen:
            raise ColumnError(
                f"{source!r}: column name {name!r} appears more than once in the header"
            )
        seen.add(name)
