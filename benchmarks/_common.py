"""Shared by the benchmark scripts: run against this checkout, best-of and interleaved timing.

Importing this module puts the repository root first on ``sys.path`` so that
``python benchmarks/<script>.py`` measures the package of this checkout (installed or
not); the environment variable ``ACTIVITY_BENCH_ROOT`` names another checkout instead
(how ``bench_speed.py --before DIR`` runs the old code in the same run). It imports
nothing heavy, so a script may still set thread variables before numpy.
"""

from __future__ import annotations

import os
import statistics
import sys
import time
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

ROOT = os.environ.get("ACTIVITY_BENCH_ROOT") or str(Path(__file__).resolve().parents[1])
if ROOT not in sys.path:
    sys.path.insert(0, ROOT)


def best_of(func: Callable[[], Any], repeat: int = 5) -> tuple[float, Any]:
    """Shortest wall time of ``repeat`` calls of ``func`` (seconds), and the last result."""
    times = []
    result = None
    for _ in range(repeat):
        start = time.perf_counter()
        result = func()
        times.append(time.perf_counter() - start)
    return min(times), result


def interleaved(funcs: Mapping[str, Callable[[], Any]], repeat: int = 7, warmup: int = 1) -> dict[str, float]:
    """Median wall time (s) of each function, the calls taken in turn (a, b, a, b, ...).

    On a shared machine the load drifts; taking the candidates in turn exposes them to the
    same drift, so the ratio of two medians is far steadier than either time.
    """
    for _ in range(warmup):
        for f in funcs.values():
            f()
    times: dict[str, list[float]] = {k: [] for k in funcs}
    for _ in range(repeat):
        for k, f in funcs.items():
            start = time.perf_counter()
            f()
            times[k].append(time.perf_counter() - start)
    return {k: statistics.median(v) for k, v in times.items()}
