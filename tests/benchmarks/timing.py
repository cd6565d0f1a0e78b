"""The one timing helper of the benchmark scripts (run as scripts, so imported by name)."""

from __future__ import annotations

import statistics
import time
from collections.abc import Callable


def median_s(fn: Callable[[], object], repeats: int, *, warm_up: bool = True) -> float:
    """Median wall-clock time of ``fn()`` over ``repeats`` calls, s (one untimed call first
    unless ``warm_up`` is False)."""
    if warm_up:
        fn()
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)
