"""Exact rational references for group models (fractions.Fraction on the float64 inputs).

Every float64 is a rational number, so sums of squares computed with
Fraction are the exact values for the stored inputs: the reference against
which rounding error is measured (common practice, no source).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np


def exact_partition_rss(y: np.ndarray, blocks: np.ndarray) -> Fraction:
    """Exact residual SS of the model 'one mean per block' (blocks: block index per row)."""
    ys = [Fraction(float(v)) for v in y]
    groups: dict[int, list[Fraction]] = {}
    for v, b in zip(ys, blocks.tolist()):
        groups.setdefault(int(b), []).append(v)
    total = Fraction(0)
    for vals in groups.values():
        mean = sum(vals, Fraction(0)) / len(vals)
        total += sum(((v - mean) ** 2 for v in vals), Fraction(0))
    return total


def exact_f(y: np.ndarray, small_blocks: np.ndarray, large_blocks: np.ndarray,
            den_blocks: np.ndarray | None = None) -> tuple[Fraction, Fraction, Fraction]:
    """Exact (RSS_small, RSS_large, F) for nested partition models."""
    rss_s = exact_partition_rss(y, small_blocks)
    rss_l = exact_partition_rss(y, large_blocks)
    den = large_blocks if den_blocks is None else den_blocks
    rss_d = exact_partition_rss(y, den)
    n = len(y)
    df = len(set(large_blocks.tolist())) - len(set(small_blocks.tolist()))
    df_den = n - len(set(den.tolist()))
    f = ((rss_s - rss_l) / df) / (rss_d / df_den)
    return rss_s, rss_l, f


def rel_err(value: float, exact: Fraction) -> float:
    """|value - exact| / |exact| computed exactly, then rounded."""
    if exact == 0:
        return abs(float(value))
    return float(abs(Fraction(float(value)) - exact) / abs(exact))
