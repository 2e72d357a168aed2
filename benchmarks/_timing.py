"""Best-of-N wall-clock timing and peak traced memory of one call."""

from __future__ import annotations

import gc
import math
import time
import tracemalloc
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

__all__ = ["Timing", "best_of", "peak_traced_bytes"]


@dataclass(frozen=True)
class Timing:
    """The best (smallest) of ``runs`` wall-clock times, and the last result."""

    best: float
    runs: int
    times: tuple[float, ...]
    result: Any


def best_of(
    fn: Callable[[], Any],
    runs: int,
    budget: float = math.inf,
    *,
    min_runs: int = 2,
    slow: float = 60.0,
) -> Timing:
    """Call ``fn`` up to ``runs`` times; keep the smallest ``time.perf_counter`` interval.

    At least ``min(min_runs, runs)`` runs are made, unless the first takes
    more than ``slow`` seconds (then it is the only one). Beyond that, no
    further run starts once the runs so far have taken ``budget`` seconds.

    The minimum is the least noisy estimate of the cost of the code itself:
    interference from the rest of the machine only ever adds time. A garbage
    collection is forced before each run so that one run's garbage is not
    collected on the next run's clock.
    """
    times = []
    result: Any = None
    for i in range(max(1, runs)):
        if times and (times[0] > slow or (i >= min_runs and sum(times) >= budget)):
            break
        result = None
        gc.collect()
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return Timing(min(times), len(times), tuple(times), result)


def peak_traced_bytes(fn: Callable[[], Any]) -> int:
    """Peak of the memory newly allocated while ``fn`` runs, as traced by tracemalloc.

    Allocations made before the call (the input arrays) are not counted;
    numpy reports its array buffers to tracemalloc, so the figure covers
    numpy, pandas and Python objects alike. The result of ``fn`` is kept
    until the peak is read, so it counts too. Memory taken by C libraries
    that bypass both allocators (e.g. BLAS work space) is not seen.
    """
    gc.collect()
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        result = fn()
        _, peak = tracemalloc.get_traced_memory()
        del result
    finally:
        tracemalloc.stop()
    return int(peak)
