"""Timing helper shared by the benchmark scripts."""

from __future__ import annotations

import time
from collections.abc import Callable


def best_of(fn: Callable[[], object], repeats: int) -> float:
    """Best wall time of ``repeats`` calls (the least disturbed by other load)."""
    best = float("inf")
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best
