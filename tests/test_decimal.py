"""Tests of nestfit._decimal: exact removal of a common offset before float64 conversion."""

from __future__ import annotations

import io
import math
from decimal import Decimal
from fractions import Fraction
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from nestfit._decimal import (
    MISSING_MARKERS,
    ExactTable,
    choose_offset,
    is_decimal_numeral,
    read_table,
    shifted_floats,
)
from nestfit.errors import ColumnError, DataError
from tests.nist import ANOVA_DIR, load_anova, lre


def half_ulp(x: float) -> Fraction:
    """Half the spacing of float64 numbers at ``x``, exactly."""
    return Fraction(float(np.spacing(abs(x)))) / 2


def exact_ss(groups: dict[str, list[Fraction]]) -> tuple[Fraction, Fraction]:
    """Between- and within-group sums of squares in exact rational arithmetic."""
    n = sum(len(v) for v in groups.values())
    grand = Fraction(sum((sum(v, Fraction(0)) for v in groups.values()), Fraction(0)), n)
    between = Fraction(0)
    within = Fraction(0)
    for v in groups.values():
        m = Fraction(sum(v, Fraction(0)), len(v))
        between += len(v) * (m - grand) * (m - grand)
        within += sum(((y - m) * (y - m) for y in v), Fraction(0))
    return between, within


def float_ss(labels: list[str], values: np.ndarray) -> tuple[float, float]:
    """Between- and within-group sums of squares in float64, two-pass and centred."""
    lab = np.asarray(labels)
    grand = values.mean()
    between = 0.0
    within = 0.0
    for g in dict.fromkeys(labels):
        v = values[lab == g]
        m = v.mean()
        between += v.size * (m - grand) ** 2
        within += float(np.sum((v - m) ** 2))
    return between, within


# ---------------------------------------------------------------- NIST SmLs07 / SmLs08


@pytest.mark.parametrize("name", ["SmLs07", "SmLs08"])
def test_nist_differences_are_exact_to_half_an_ulp(name: str) -> None:
    treatments, responses, _ = load_anova(name)
    table = read_table(ANOVA_DIR / f"{name}.csv")

    assert table.offsets["response"] == Decimal("1000000000000.4")
    assert table.offset_of("response") == float(Decimal("1000000000000.4"))
    # Treatment codes 1..9 lie near zero compared with their range: no offset.
    assert table.offsets["treatment"] == 0
    assert table.frame["treatment"].tolist() == [float(t) for t in treatments]
    assert table.missing == {"treatment": 0, "response": 0}
    assert table.frame["response"].dtype == np.float64

    offset = Fraction(table.offsets["response"])
    diffs = table.frame["response"].to_numpy()
    assert len(diffs) == len(responses)
    for text, d in zip(responses, diffs, strict=True):
        exact = Fraction(text) - offset
        assert abs(Fraction(float(d)) - exact) <= half_ulp(float(d)), text
        assert abs(d) <= 0.2 + 1e-15  # the data span 1000000000000.2 .. .6


@pytest.mark.parametrize("name", ["SmLs07", "SmLs08"])
def test_nist_sums_of_squares_from_offset_floats(name: str) -> None:
    treatments, responses, certified = load_anova(name)
    table = read_table(ANOVA_DIR / f"{name}.csv", numeric_columns=["response"])
    between, within = float_ss(treatments, table.frame["response"].to_numpy())
    assert lre(between, certified["between_ss"]) >= 13
    assert lre(within, certified["within_ss"]) >= 13
    dfb, dfw = certified["between_df"], certified["within_df"]
    assert lre((between / dfb) / (within / dfw), certified["f_statistic"]) >= 13

    # The same computation on the values converted directly to float64 keeps
    # only a few digits: this is what the offset is for.
    _, naive_within = float_ss(treatments, np.array([float(r) for r in responses]))
    assert lre(naive_within, certified["within_ss"]) < 6


def test_absolute_adds_the_offset_back() -> None:
    _, responses, _ = load_anova("SmLs07")
    table = read_table(ANOVA_DIR / "SmLs07.csv")
    back = table.absolute("response")
    assert back.dtype == np.float64
    for text, b in zip(responses, back, strict=True):
        # float64 cannot hold 1000000000000.4; the result is the correctly
        # rounded value, or a neighbour of it.
        assert abs(Fraction(float(b)) - Fraction(text)) <= 2 * half_ulp(float(b))
    np.testing.assert_array_equal(table.absolute("treatment"), table.frame["treatment"])
    # absolute() returns a new array, the frame keeps the differences
    back[:] = 0.0
    assert table.frame["response"].abs().max() > 0


# ---------------------------------------------------------------- property: exact SS


@st.composite
def prefixed_groups(draw: st.DrawFn) -> tuple[list[str], list[str]]:
    """Random decimal strings that share a large common prefix, in 2-5 groups."""
    prefix = draw(st.integers(10**6, 10**13)) * draw(st.sampled_from([1, -1]))
    places = draw(st.integers(0, 4))
    tail_digits = draw(st.integers(1, 6))
    n_groups = draw(st.integers(2, 5))
    labels: list[str] = []
    texts: list[str] = []
    for g in range(n_groups):
        tails = draw(st.lists(st.integers(0, 10**tail_digits - 1), min_size=2, max_size=8))
        for tail in tails:
            value = Decimal(prefix) + Decimal(tail).scaleb(-places)
            labels.append(f"g{g}")
            texts.append(f"{value:.{places}f}")
    return labels, texts


@settings(max_examples=300, deadline=None)
@given(prefixed_groups())
def test_sums_of_squares_match_exact_arithmetic(data: tuple[list[str], list[str]]) -> None:
    """Offset floats give the between/within SS of the exact decimals to 1e-13 relative.

    The bound is stated for data whose two components are each at least 1% of
    the total sum of squares. A component much smaller than that is computed
    from differences that float64 itself holds only to ~1e-16 of the data's
    range, so its relative accuracy degrades in proportion, whatever the
    offset; that is a property of float64, not of the conversion tested here.
    """
    labels, texts = data
    groups: dict[str, list[Fraction]] = {}
    for g, t in zip(labels, texts, strict=True):
        groups.setdefault(g, []).append(Fraction(t))
    between_exact, within_exact = exact_ss(groups)
    total = between_exact + within_exact
    assume(total > 0)
    assume(between_exact >= total / 100 and within_exact >= total / 100)

    csv_text = "group,y\n" + "".join(f"{g},{t}\n" for g, t in zip(labels, texts, strict=True))
    table = read_table(io.StringIO(csv_text), numeric_columns=["y"])
    assert table.frame["group"].dtype == object
    between, within = float_ss(labels, table.frame["y"].to_numpy())
    assert abs(Fraction(between) - between_exact) <= Fraction(1, 10**13) * between_exact
    assert abs(Fraction(within) - within_exact) <= Fraction(1, 10**13) * within_exact


@settings(max_examples=200, deadline=None)
@given(prefixed_groups())
def test_differences_exact_and_bounded_by_the_range(data: tuple[list[str], list[str]]) -> None:
    _, texts = data
    diffs, offset, n_missing = shifted_floats(texts)
    assert n_missing == 0
    exact = [Fraction(t) for t in texts]
    span = max(exact) - min(exact)
    for e, d in zip(exact, diffs, strict=True):
        assert abs(Fraction(float(d)) - (e - Fraction(offset))) <= half_ulp(float(d))
        assert abs(e - Fraction(offset)) <= max(span, abs(e))


# ---------------------------------------------------------------- the offset rule


@pytest.mark.parametrize(
    ("values", "expected"),
    [
        (["1000000000000.2", "1000000000000.6"], "1000000000000.4"),
        (["495.3", "504.9"], "500"),  # range 9.6: midrange 500.1 rounded to units
        (["100", "120"], "110"),  # range 20: midrange rounded to tens
        (["123456", "123999"], "123700"),  # range 543: rounded to hundreds
        (["0.001", "0.00123"], "0.0011"),
        (["-2000.5", "-2000.1"], "-2000.3"),
        (["1", "9"], "0"),  # near zero compared with the range: no offset
        (["-3", "4"], "0"),  # straddles zero
        (["5", "5"], "5"),  # constant: offset is the value, differences are 0
        (["0", "0.000"], "0"),
        ([], "0"),
    ],
)
def test_choose_offset_examples(values: list[str], expected: str) -> None:
    offset = choose_offset(Decimal(v) for v in values)
    assert offset == Decimal(expected)
    assert str(offset) == expected  # plain digits, no exponent form


def test_offset_never_adds_digits_beyond_the_data() -> None:
    values = [Decimal(v) for v in ["731.25", "731.75", "732.5"]]
    offset = choose_offset(values)
    assert offset == Decimal("732")
    assert min(int(v.as_tuple().exponent) for v in values) <= int(offset.as_tuple().exponent)


@pytest.mark.parametrize(
    "text", ["12", "-0.5", "+3", ".5", "3.", "1.5E-03", "1e5", "0000.10", "1000000000000.4"]
)
def test_numerals_accepted(text: str) -> None:
    assert is_decimal_numeral(text)


@pytest.mark.parametrize(
    "text",
    [
        "inf",
        "Infinity",
        "-inf",
        "nan",
        "NaN",
        "sNaN",
        "0x1A",
        "1_000",
        "1,5",
        "1.2.3",
        ".",
        "e5",
        "1e",
        "--1",
        "\u0661\u0662",
        "12 3",
        "abc",
    ],
)
def test_non_numerals_rejected(text: str) -> None:
    assert not is_decimal_numeral(text)


# ---------------------------------------------------------------- reading


def write(tmp_path: Path, text: str, name: str = "data.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_text_and_numeric_columns(tmp_path: Path) -> None:
    path = write(tmp_path, "head, fill ,code\nH1, 500.3 ,007\nH2,499.1,012\n H1 ,501.0,003\n")
    table = read_table(path)
    assert isinstance(table, ExactTable)
    assert list(table.frame.columns) == ["head", "fill", "code"]
    assert table.frame["head"].dtype == object
    assert table.frame["head"].tolist() == ["H1", "H2", "H1"]  # whitespace stripped
    assert table.offsets == {"fill": Decimal("500"), "code": Decimal("0")}
    np.testing.assert_array_equal(table.frame["fill"], [0.3, -0.9, 1.0])
    np.testing.assert_allclose(table.absolute("fill"), [500.3, 499.1, 501.0], rtol=0, atol=1e-13)
    assert table.offset_of("fill") == 500.0

    kept = read_table(path, text_columns=["code"])
    assert kept.frame["code"].tolist() == ["007", "012", "003"]
    assert "code" not in kept.offsets


def test_missing_markers(tmp_path: Path) -> None:
    assert frozenset({"", "NA", "NaN", "nan", "null"}) == MISSING_MARKERS
    path = write(tmp_path, "g,y,z\na,1.5,NA\nNA,NaN,\nb,nan,null\n,2.5,x\nc,  ,x\n")
    table = read_table(path)
    assert table.missing == {"g": 2, "y": 3, "z": 3}
    assert table.frame["y"].isna().tolist() == [False, True, True, False, True]
    assert table.frame["g"].isna().tolist() == [False, True, False, True, False]
    assert table.frame["z"].dtype == object  # "x" is not a numeral
    # markers are case-sensitive: "NULL" and "None" are text
    other = read_table(io.StringIO("y\n1\nNULL\n"))
    assert other.frame["y"].tolist() == ["1", "NULL"]


def test_short_row_is_missing_and_blank_lines_skipped() -> None:
    table = read_table(io.StringIO("g,y\na,1\n\nb\nc,3\n"))
    assert table.frame["g"].tolist() == ["a", "b", "c"]
    assert table.missing["y"] == 1


def test_all_missing_column() -> None:
    text = "g,y\na,NA\nb,\n"
    assert read_table(io.StringIO(text)).frame["y"].isna().all()
    assert "y" not in read_table(io.StringIO(text)).offsets  # nothing says it is numeric
    forced = read_table(io.StringIO(text), numeric_columns=["y"])
    assert forced.frame["y"].dtype == np.float64
    assert forced.offsets["y"] == 0


def test_non_numeric_cells_make_a_text_column() -> None:
    for bad in ["inf", "nan1", "0x10", "1_000", "Infinity"]:
        table = read_table(io.StringIO(f"y\n1.5\n{bad}\n"))
        assert table.frame["y"].tolist() == ["1.5", bad]
        assert table.offsets == {}


def test_numeric_column_with_bad_cell_names_row_and_text(tmp_path: Path) -> None:
    path = write(tmp_path, "g,y\na,1.5\nb,NA\nc,inf\nd,abc\n")
    with pytest.raises(ColumnError) as info:
        read_table(path, numeric_columns=["y"])
    message = str(info.value)
    assert "'y'" in message
    assert "data row 3" in message
    assert "'inf'" in message
    assert str(path) in message


def test_numeric_column_out_of_float_range() -> None:
    with pytest.raises(ColumnError, match=r"data row 2 holds '2e308'.*range of float64"):
        read_table(io.StringIO("y\n1\n2e308\n"))
    with pytest.raises(ColumnError, match=r"data row 1 holds '1e-400'"):
        read_table(io.StringIO("y\n1e-400\n1\n"))
    # the largest float64 itself is fine
    table = read_table(io.StringIO("y\n1.7976931348623157e308\n0\n"))
    assert table.absolute("y")[0] == np.finfo(np.float64).max


def test_unknown_and_conflicting_columns(tmp_path: Path) -> None:
    path = write(tmp_path, "g,y\na,1\n")
    with pytest.raises(ColumnError, match=r"has no column named 'x'; its columns are: g, y"):
        read_table(path, numeric_columns=["x"])
    with pytest.raises(ColumnError, match="'y' is named as both numeric and text"):
        read_table(path, numeric_columns=["y"], text_columns=["y"])
    table = read_table(path)
    with pytest.raises(ColumnError, match="'g' is a text column"):
        table.absolute("g")
    with pytest.raises(ColumnError, match="no column named 'x'"):
        table.offset_of("x")


def test_missing_file(tmp_path: Path) -> None:
    path = tmp_path / "nope.csv"
    with pytest.raises(DataError, match=r"cannot read '.*nope\.csv': no such file"):
        read_table(path)
    with pytest.raises(DataError, match="it is a directory"):
        read_table(tmp_path)


def test_empty_file(tmp_path: Path) -> None:
    for text in ["", "\n\n"]:
        path = write(tmp_path, text, "empty.csv")
        with pytest.raises(DataError, match=r"'.*empty\.csv' is empty"):
            read_table(path)


def test_header_only(tmp_path: Path) -> None:
    path = write(tmp_path, "group,y\n", "header.csv")
    with pytest.raises(DataError, match=r"'.*header\.csv' has a header \(group, y\) but no data"):
        read_table(path)


def test_duplicated_and_blank_column_names(tmp_path: Path) -> None:
    path = write(tmp_path, "g,y,y\na,1,2\n", "dup.csv")
    with pytest.raises(ColumnError, match=r"'.*dup\.csv': column name 'y' appears more than once"):
        read_table(path)
    path = write(tmp_path, "g, ,y\na,1,2\n", "blank.csv")
    with pytest.raises(ColumnError, match=r"header field 2 is blank"):
        read_table(path)


def test_byte_order_mark_and_crlf(tmp_path: Path) -> None:
    path = tmp_path / "excel.csv"
    path.write_bytes(b"\xef\xbb\xbfg,y\r\na,1000.5\r\nb,1001.5\r\n")
    table = read_table(path)
    assert list(table.frame.columns) == ["g", "y"]
    assert table.frame["g"].tolist() == ["a", "b"]
    assert table.offsets["y"] == Decimal("1001")
    assert table.frame["y"].tolist() == [-0.5, 0.5]


def test_too_many_fields_in_a_row(tmp_path: Path) -> None:
    path = write(tmp_path, "g,y\na,1\nb,2,3\n", "ragged.csv")
    with pytest.raises(DataError, match=r"'.*ragged\.csv' is not a well-formed CSV"):
        read_table(path)


def test_errors_are_value_and_key_errors() -> None:
    with pytest.raises(ValueError):
        read_table(io.StringIO(""))
    with pytest.raises(KeyError):
        read_table(io.StringIO("y\n1\n"), numeric_columns=["x"])


def test_mappings_are_read_only() -> None:
    table = read_table(io.StringIO("y\n1\n"))
    with pytest.raises(TypeError):
        table.offsets["y"] = Decimal(1)  # type: ignore[index]
    with pytest.raises(AttributeError):
        table.frame = pd.DataFrame()  # type: ignore[misc]


def test_large_offset_keeps_digits_that_float_cannot() -> None:
    # 0.1 steps on top of 2**60: float64 spacing there is 256
    base = 2**60
    texts = [f"{base}.{k}" for k in range(10)]
    diffs, offset, _ = shifted_floats(texts)
    assert offset == Decimal(f"{base}.4") or offset == Decimal(f"{base}.5")
    steps = np.diff(diffs)
    np.testing.assert_allclose(steps, 0.1, rtol=1e-14)
    assert math.isclose(float(np.var(diffs) * 10 / 9), float(np.var(np.arange(10) / 10) * 10 / 9))
