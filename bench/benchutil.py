"""Helpers shared by the benchmark scripts (run by hand, not by the test suite)."""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable
from typing import Any


def median_time(fn: Callable[[], Any], repeat: int) -> tuple[float, Any]:
    """Median wall time of ``repeat`` calls of ``fn`` (s) and the last call's result."""
    times, last = [], None
    for _ in range(repeat):
        t = time.perf_counter()
        last = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), last
