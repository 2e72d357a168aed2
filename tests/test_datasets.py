"""Tests of the packaged demo data (nestfit.datasets) and of their generator."""

from __future__ import annotations

import importlib.util
import sys
from importlib import resources
from pathlib import Path
from types import ModuleType

import numpy as np
import pandas as pd
import pytest

from nestfit.datasets import (
    HEAD_LEVELS,
    SHIFT_LEVELS,
    describe_fill_weights,
    load_fill_weights,
)

GENERATOR = Path(__file__).resolve().parents[1] / "tools" / "make_demo_data.py"


@pytest.fixture(scope="module")
def generator() -> ModuleType:
    """tools/make_demo_data.py, loaded from its path (tools/ is not a package)."""
    spec = importlib.util.spec_from_file_location("make_demo_data", GENERATOR)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules.setdefault(spec.name, module)
    spec.loader.exec_module(module)
    return module


def test_shape_columns_and_dtypes() -> None:
    frame = load_fill_weights()
    assert frame.shape == (140, 5)
    assert list(frame.columns) == ["pack", "head", "shift", "line_speed", "weight"]
    assert frame["pack"].dtype == np.int64
    assert frame["line_speed"].dtype == np.float64
    assert frame["weight"].dtype == np.float64
    assert isinstance(frame["head"].dtype, pd.CategoricalDtype)
    assert isinstance(frame["shift"].dtype, pd.CategoricalDtype)
    assert frame["pack"].tolist() == list(range(1, 141))
    assert not frame.isna().any().any()


def test_level_order() -> None:
    frame = load_fill_weights()
    head = frame["head"].dtype
    assert isinstance(head, pd.CategoricalDtype)
    assert head.ordered
    assert list(head.categories) == ["H1", "H2", "H3", "H4", "H5", "H6"] == list(HEAD_LEVELS)
    shift = frame["shift"].dtype
    assert isinstance(shift, pd.CategoricalDtype)
    assert list(shift.categories) == ["early", "late"] == list(SHIFT_LEVELS)
    assert not shift.ordered
    assert frame["head"].min() == "H1" and frame["head"].max() == "H6"  # ordered comparisons


def test_design_of_the_invented_data() -> None:
    frame = load_fill_weights()
    counts = frame["head"].value_counts(sort=False)
    assert counts.to_dict() == {"H1": 24, "H2": 19, "H3": 27, "H4": 22, "H5": 30, "H6": 18}
    assert set(frame["shift"]) == {"early", "late"}
    # every head appears in both shifts (needed for two-factor models)
    assert (pd.crosstab(frame["head"], frame["shift"]) > 0).all().all()
    # recorded to 0.1: ten times the value is an integer
    for column in ("weight", "line_speed"):
        tenths = frame[column].to_numpy() * 10
        np.testing.assert_allclose(tenths, np.round(tenths), rtol=0, atol=1e-9)
    means = frame.groupby("head", observed=True)["weight"].mean()
    assert means.idxmax() == "H4"
    assert 490 < frame["weight"].min() and frame["weight"].max() < 510
    assert 0.8 < frame["weight"].std() < 1.6
    assert frame.attrs["invented"] is True
    assert frame.attrs["target_g"] == 500.0
    assert frame.attrs["units"]["weight"] == "g"


def test_regenerating_gives_the_packaged_csv(generator: ModuleType) -> None:
    packaged = resources.files("nestfit.datasets").joinpath("fill_weights.csv").read_bytes()
    regenerated = generator.fill_weights_csv().encode("ascii")
    assert regenerated == packaged, (
        "tools/make_demo_data.py no longer reproduces src/nestfit/datasets/fill_weights.csv; "
        "if the generator or NumPy's random Generator changed on purpose, rerun the script"
    )
    assert generator.OUTPUT.read_bytes() == packaged


def test_seed_is_the_first_that_shows_the_scenario(generator: ModuleType) -> None:
    base = generator.SEED_BASE
    k = generator.SEED - base
    assert k >= 0
    for j in range(k):
        assert not generator.shows_scenario(generator.simulate_fill_weights(base + j))
    assert generator.shows_scenario(generator.simulate_fill_weights(generator.SEED))


def test_other_seeds_give_other_data(generator: ModuleType) -> None:
    assert generator.fill_weights_csv(generator.SEED + 7) != generator.fill_weights_csv()


def test_generator_check_mode(generator: ModuleType, capsys: pytest.CaptureFixture[str]) -> None:
    assert generator.main(["--check"]) == 0
    assert "up to date" in capsys.readouterr().out


def test_generator_writes_elsewhere(generator: ModuleType, tmp_path: Path) -> None:
    out = tmp_path / "fill.csv"
    assert generator.main([str(out)]) == 0
    assert out.read_bytes() == generator.OUTPUT.read_bytes()


def test_description_says_invented() -> None:
    text = describe_fill_weights()
    assert "invented" in text.lower()
    assert "INVENTED" in text
    for word in ("H4", "500 g", "shift", "line_speed", "weight", "0.8 g"):
        assert word in text


def test_docstrings_say_invented(generator: ModuleType) -> None:
    import nestfit.datasets

    assert "INVENTED" in (nestfit.datasets.__doc__ or "")
    assert "INVENTED" in (generator.__doc__ or "")
