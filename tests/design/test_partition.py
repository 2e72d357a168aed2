"""Partition: the spec parser, mappings, refinement order; bad input."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from nestfit import Partition
from nestfit.errors import FactorError, NestfitError, ParseError

LEVELS = ("A", "B", "C", "D")


@pytest.mark.parametrize(
    ("spec", "blocks"),
    [
        ("A | B C D", (("A",), ("B", "C", "D"))),
        ("A,B | C, D", (("A", "B"), ("C", "D"))),
        ("C | ...", (("C",), ("A", "B", "D"))),  # blocks keep the order given
        ("A | B | C | D", (("A",), ("B",), ("C",), ("D",))),
        ("A B C D", (("A", "B", "C", "D"),)),
        ("...", (("A", "B", "C", "D"),)),
    ],
)
def test_parse_valid(spec: str, blocks: tuple) -> None:
    assert Partition.parse(spec, LEVELS).blocks == blocks


def test_quoted_labels_with_spaces() -> None:
    p = Partition.parse('"lot 1" | \'lot 2\' lot3', ["lot 1", "lot 2", "lot3"])
    assert p.blocks == (("lot 1",), ("lot 2", "lot3"))
    assert p.to_spec() == '"lot 1" | "lot 2" lot3'


@pytest.mark.parametrize(
    ("spec", "error", "match"),
    [
        ("", ParseError, "empty"),
        ("A || B C D", ParseError, "empty block before"),
        ("A | B C D |", ParseError, "empty block after"),
        ('"A | B', ParseError, "unclosed quote"),
        ('"" | A B C D', ParseError, "empty quoted label"),
        ("A | ... | ...", ParseError, "one block only"),
        ("A | B C", FactorError, r"\['D'\] are in no block"),
        ("A | A B C D", FactorError, "more than one block"),
        ("A | B C E D", FactorError, "'E', which is not a level"),
        ("A B C D | ...", FactorError, "stands for no level"),
    ],
)
def test_parse_invalid(spec: str, error: type, match: str) -> None:
    with pytest.raises(error, match=match):
        Partition.parse(spec, LEVELS)


def test_parse_error_points_at_position() -> None:
    with pytest.raises(ParseError) as info:
        Partition.parse("A || B C D", LEVELS)
    assert info.value.position == 3
    assert "^" in str(info.value)
    assert "character 4" in info.value.one_line()


def test_mapping_and_labels() -> None:
    p = Partition.from_mapping({"serviced": ["C"], "rest": ["A", "B", "D"]}, LEVELS)
    assert p.blocks == (("C",), ("A", "B", "D"))
    assert p.block_labels == ("serviced", "rest")


def test_refinement_order() -> None:
    eq, sep = Partition.equal(LEVELS), Partition.separate(LEVELS)
    two = Partition.parse("A | ...", LEVELS)
    three = Partition.parse("A | B | C D", LEVELS)
    other = Partition.parse("A B | C D", LEVELS)
    assert eq.is_nested_in(two) and two.is_nested_in(three) and three.is_nested_in(sep)
    assert eq.is_nested_in(sep) and not sep.is_nested_in(eq)
    assert not two.is_nested_in(other) and not other.is_nested_in(two)
    assert Partition.parse("B C D | A", LEVELS) == two


@given(st.text(alphabet='AB CD|,"\'.x', max_size=20))
def test_random_text_raises_only_our_errors(text: str) -> None:
    try:
        p = Partition.parse(text, LEVELS)
    except NestfitError:
        return
    assert sorted(lv for b in p.blocks for lv in b) == sorted(LEVELS)
