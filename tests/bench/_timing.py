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


def ratio_interleaved(
    baseline: Callable[[], object], candidate: Callable[[], object], repeats: int
) -> tuple[float, float]:
    """Best times of ``baseline`` and ``candidate`` run alternately (noise hits both alike)."""
    best_b = best_c = float("inf")
    for _ in range(repeats):
        best_b = min(best_b, best_of(baseline, 1))
        best_c = min(best_c, best_of(candidate, 1))
    return best_b, best_c
