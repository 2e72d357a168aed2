"""Read a CSV table exactly: numeric columns as float64 differences from an exact offset.

The numerals, the offset rule and the exact subtraction are in
:mod:`nestfit._decimal_numbers` (whose notes say why a common offset is removed
in decimal arithmetic and why that is safe for sums of squares); this module
reads the text of a table, decides which columns are numeric and keeps each
column's offset (:class:`ExactTable`).
"""

from __future__ import annotations

import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from decimal import Decimal, localcontext
from types import MappingProxyType
from typing import IO

import numpy as np
import pandas as pd

from nestfit._decimal_numbers import (
    MISSING_MARKERS,
    choose_offset,
    is_decimal_numeral,
    shifted_floats,
)
from nestfit.errors import ColumnError, DataError

__all__ = [
    "MISSING_MARKERS",
    "ExactTable",
    "choose_offset",
    "is_decimal_numeral",
    "read_table",
    "shifted_floats",
]


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
