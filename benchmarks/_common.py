"""Shared by the benchmark scripts: run against this checkout, and best-of timing.

Importing this module puts the repository root first on ``sys.path`` so that
``python benchmarks/<script>.py`` measures the package of this checkout (installed or
not). It imports nothing heavy, so a script may still set thread variables before numpy.
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

ROOT = str(Path(__file__).resolve().parents[1])
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
