"""The contrast expression parser: valid and invalid expressions, and a property test."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from nestfit import contrasts as nc
from nestfit.errors import ContrastError, FactorError, NestfitError, ParseError

LEVELS = ["A", "B", "C", "lot 1", "4"]


@pytest.mark.parametrize(
    ("text", "weights", "label"),
    [
        ("A - mean(B, C)", [1, -0.5, -0.5, 0, 0], "A - mean(B, C)"),
        ("(A + B)/2 - C", [0.5, 0.5, -1, 0, 0], "(A + B)/2 - C"),
        ("2*A - B - C", [2, -1, -1, 0, 0], "2*A - B - C"),
        ("A - B/2 - C/2", [1, -0.5, -0.5, 0, 0], "A - B/2 - C/2"),
        ("-A + B", [-1, 1, 0, 0, 0], "-A + B"),
        ("+A - +B", [1, -1, 0, 0, 0], "+A - +B"),
        ("1e-1*A - 0.1*B", [0.1, -0.1, 0, 0, 0], "1e-1*A - 0.1*B"),
        (".5*A-.5*B", [0.5, -0.5, 0, 0, 0], ".5*A-.5*B"),
        ("'lot 1' - A", [-1, 0, 0, 1, 0], "'lot 1' - A"),
        ('"4" - A', [-1, 0, 0, 0, 1], '"4" - A'),
        ("serviced = A - mean(...)", [1, -0.25, -0.25, -0.25, -0.25], "serviced"),
        ("'a = b' = A - B", [1, -1, 0, 0, 0], "a = b"),
        ("A - mean(B, ...)", [1, -0.25, -0.25, -0.25, -0.25], "A - mean(B, ...)"),
        ("3*(A - B)/3", [1, -1, 0, 0, 0], "3*(A - B)/3"),
        ("A*2 - B*2", [2, -2, 0, 0, 0], "A*2 - B*2"),
        ("mean(A, B) - mean(C, 'lot 1')", [0.5, 0.5, -0.5, -0.5, 0], None),
        ("A   -\tB", [1, -1, 0, 0, 0], "A - B"),
    ],
)
def test_valid_expressions(text: str, weights: list[float], label: str | None) -> None:
    c = nc.contrast(text)
    np.testing.assert_allclose(c.weights_for(LEVELS), weights, rtol=0, atol=1e-15)
    assert c.label == (label if label is not None else text)


@pytest.mark.parametrize(
    ("text", "message", "position"),
    [
        ("A*B", "a product of two level expressions is not linear", 1),
        ("A/B", "division by a level expression is not linear", 1),
        ("(A - B)/(A + B)", "division by a level expression", 7),
        ("A/0", "division by zero", 1),
        ("A + 1", "a number cannot be added to level means", 4),
        ("2 - A", "a number cannot be added to level means", 0),
        ("A - ", "ends too early", 4),
        ("(A - B", r"expected '\)' to close the '\(' at character 1", 6),
        ("A - B)", r"unmatched '\)'", 5),
        ("mean(A,", "ends too early", 7),
        ("A - mean()", r"mean\(\.\.\.\) needs a level", 9),
        ("...", r"'\.\.\.' \(the remaining levels\) is allowed only inside mean", 0),
        ("2", "the expression names no level; quote level labels", 0),
        ("", "the contrast is empty", 0),
        ("   ", "the contrast is empty", 3),
        ("A = B = C", "at most one '='", 6),
        ("= A - B", "the label before '=' is empty", 0),
        ("A 'B'", r"expected an operator \(\+ - \* /\) before level 'B'", 2),
        ("mean(1, A) - B", r"mean\(\.\.\.\) mixes numbers and levels", 5),
        ('"lot 1', 'unclosed quote "', 0),
        ("A - ''", "empty quoted level label", 4),
        ("A - ()", "empty parentheses", 4),
        ("A - mean(B C)", r"expected ',' or '\)' in mean", 11),
        ("A - , B", "expected a level or a number, found ','", 4),
    ],
)
def test_invalid_expressions(text: str, message: str, position: int) -> None:
    with pytest.raises(ParseError, match=message) as info:
        nc.contrast(text)
    assert info.value.position == position
    assert info.value.text == text
    if text:
        assert str(info.value).endswith(" " * position + "^")  # the caret points at it


@pytest.mark.parametrize(
    ("text", "error", "message"),
    [
        ("A - Z", FactorError, r"names level 'Z', which the factor does not have; its levels "
                               r"are A, B, C, lot 1, 4"),
        ("A - 2B", FactorError, r"level '2B'.*\(for a multiple write 2\*B\)"),
        ("A - B - C", ContrastError, "weights summing to -1, not 0.*general=True"),
        ("0*A", ContrastError, "all weights zero"),
        ("A - mean(A, B, C, 'lot 1', \"4\", ...)", ContrastError, r"'\.\.\.' stands for no level"),
    ],
)
def test_errors_at_resolution(text: str, error: type, message: str) -> None:
    c = nc.contrast(text)
    with pytest.raises(error, match=message):
        c.weights_for(LEVELS)


def test_general_functions_and_other_forms() -> None:
    assert nc.contrast("A", general=True).weights_for(LEVELS).tolist() == [1, 0, 0, 0, 0]
    mapping = nc.contrast({"A": 1, "B": -0.5, "C": -0.5})
    assert mapping.label == "A - 0.5*B - 0.5*C"
    np.testing.assert_array_equal(mapping.weights_for(LEVELS), [1, -0.5, -0.5, 0, 0])
    assert nc.contrast([1, -1, 0, 0, 0], label="first").weights_for(LEVELS).tolist() == \
        [1, -1, 0, 0, 0]
    with pytest.raises(ContrastError, match="has 2 weights but the factor has 5 levels"):
        nc.contrast([1, -1]).weights_for(LEVELS)
    with pytest.raises(FactorError, match="names level 'Q'"):
        nc.contrast({"Q": 1, "A": -1}).weights_for(LEVELS)
    with pytest.raises(ContrastError, match="labelled in its text"):
        nc.contrast("x = A - B", label="y")
    with pytest.raises(ContrastError, match="mapping of weights is empty"):
        nc.contrast({})
    with pytest.raises(ContrastError, match="is not a number"):
        nc.contrast({"A": "one"})
    with pytest.raises(ContrastError, match="not finite"):
        nc.contrast([1.0, float("nan")])
    with pytest.raises(ContrastError, match="a contrast is an expression"):
        nc.contrast(3.5)
    with pytest.raises(ParseError, match="must be text"):
        from nestfit.contrasts._parse import parse_contrast
        parse_contrast(12)  # type: ignore[arg-type]


def test_written_weights_parse_back() -> None:
    """format_weights writes our own syntax: parsing it gives the same weights back."""
    from nestfit.contrasts._contrast import format_weights

    rng = np.random.default_rng(4)
    for _ in range(50):
        w = np.round(rng.normal(size=len(LEVELS)), 3)
        w[rng.random(len(LEVELS)) < 0.3] = 0.0
        if not np.any(w):
            continue
        text = format_weights(LEVELS, w)
        np.testing.assert_allclose(nc.contrast(text, general=True).weights_for(LEVELS), w,
                                   atol=1e-12)


_ALPHABET = st.sampled_from([*"AB C()*/+-,=.'\"0123456789e", "mean(", "...", "lot 1"])


@settings(max_examples=400, deadline=None)
@given(st.lists(_ALPHABET, max_size=14).map("".join))
def test_random_text_raises_only_nestfit_errors(text: str) -> None:
    """Any string either gives weights or raises one of nestfit's own errors."""
    try:
        c = nc.contrast(text)
        w = c.weights_for(LEVELS)
    except NestfitError:
        return
    assert w.shape == (len(LEVELS),) and np.all(np.isfinite(w))


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=20))
def test_arbitrary_unicode_raises_only_nestfit_errors(text: str) -> None:
    try:
        nc.contrast(text, general=True).weights_for(LEVELS)
    except NestfitError:
        pass
