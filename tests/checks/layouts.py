"""Random one-factor layouts shared by the checks tests."""

from __future__ import annotations

import numpy as np
import pandas as pd


def random_layout(seed: int, k: int = 4, offset: float = 0.0, spread: bool = True,
                  low: int = 3, high: int = 15) -> pd.DataFrame:
    """Unequal group sizes, unequal means and (if ``spread``) unequal standard deviations."""
    rng = np.random.default_rng(seed)
    sizes = rng.integers(low, high, size=k)
    labels = np.repeat([f"L{j}" for j in range(k)], sizes)
    means = rng.normal(0, 1, size=k)
    sds = rng.uniform(0.3, 2.0, size=k) if spread else np.ones(k)
    y = offset + np.repeat(means, sizes) + rng.normal(size=labels.size) * np.repeat(sds, sizes)
    order = rng.permutation(labels.size)
    return pd.DataFrame({"y": y[order], "g": labels[order]})


def split(data: pd.DataFrame, levels: list[str] | None = None) -> list[np.ndarray]:
    """The response of each level, in level order."""
    levels = levels or sorted(data["g"].unique())
    return [data.loc[data["g"] == lev, "y"].to_numpy() for lev in levels]
