"""Random unbalanced factorial data for the table tests (invented; seeded)."""

from __future__ import annotations

import numpy as np
import pandas as pd


def unbalanced(seed: int, n: int = 60, *, levels: tuple[int, ...] = (3, 3), covariate: bool = False,
               min_per_cell: int = 1) -> pd.DataFrame:
    """Factors a, b (and c...) with random cell sizes, every cell filled at least ``min_per_cell``.

    The response has main effects, an interaction and noise; with ``covariate`` a column x
    whose slope differs a little between levels of a.
    """
    rng = np.random.default_rng(seed)
    names = "abcd"[: len(levels)]
    grid = np.array(np.meshgrid(*[np.arange(k) for k in levels], indexing="ij")).reshape(
        len(levels), -1).T
    base = np.repeat(grid, min_per_cell, axis=0)
    extra = grid[rng.integers(0, len(grid), size=max(0, n - len(base)))]
    cells = np.vstack([base, extra])
    cells = cells[rng.permutation(len(cells))]
    data = {nm: [f"{nm.upper()}{v + 1}" for v in cells[:, j]] for j, nm in enumerate(names)}
    effects = [rng.normal(0, 1, size=k) for k in levels]
    y = sum(e[cells[:, j]] for j, e in enumerate(effects))
    y = y + 0.7 * effects[0][cells[:, 0]] * effects[1][cells[:, 1]]
    frame = pd.DataFrame(data)
    if covariate:
        x = rng.normal(5.0, 2.0, size=len(cells))
        frame["x"] = x
        y = y + (0.8 + 0.3 * cells[:, 0]) * x
    frame["y"] = y + rng.normal(0, 0.8, size=len(cells))
    return frame


def rel(a: float, b: float) -> float:
    """Relative difference |a - b| / |b| (absolute when b = 0)."""
    return abs(a - b) / abs(b) if b != 0 else abs(a)
