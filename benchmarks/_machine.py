"""Facts about the machine and libraries a benchmark ran on."""

from __future__ import annotations

import contextlib
import io
import os
import platform
from typing import Any

import numpy as np
import pandas as pd
import scipy

__all__ = ["machine_facts"]


def _blas() -> str:
    try:
        from threadpoolctl import threadpool_info

        info = threadpool_info()
        return "; ".join(f"{d.get('internal_api')} {d.get('version')} "
                         f"({d.get('num_threads')} threads)" for d in info) or "unknown"
    except ImportError:
        pass
    try:
        config = np.show_config(mode="dicts")
        blas = config["Build Dependencies"]["blas"]
        return f"{blas.get('name')} {blas.get('version')}"
    except Exception:
        with contextlib.redirect_stdout(io.StringIO()) as out:
            np.show_config()
        return out.getvalue().strip().splitlines()[0] if out.getvalue() else "unknown"


def machine_facts() -> dict[str, Any]:
    """CPU count, memory, Python and library versions, BLAS as numpy reports it."""
    try:
        import statsmodels

        sm_version = statsmodels.__version__
    except ImportError:
        sm_version = "not installed"
    try:
        pages, page = os.sysconf("SC_PHYS_PAGES"), os.sysconf("SC_PAGE_SIZE")
        memory = f"{pages * page / 2**30:.1f} GiB"
    except (ValueError, OSError, AttributeError):
        memory = "unknown"
    cpus = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return {
        "cpus": cpus,
        "memory": memory,
        "processor": platform.processor() or platform.machine(),
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "pandas": pd.__version__,
        "statsmodels": sm_version,
        "blas": _blas(),
    }
