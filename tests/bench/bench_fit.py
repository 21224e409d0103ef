"""Benchmark: fit_candidates and compare() on n = 1e6, as ratios to one ``np.sort``.

Issue 14 §6 targets, each printed as a ratio to one ``np.sort`` of the same
data measured in the same process: ``fit_candidates`` on 1e6 points ≤ 400×
the sort, and ``compare`` of 12 candidates on 1e6 points ≤ 400× the sort.
The data are invented: a seeded lognormal sample with a normal bump.

Run: ``python tests/bench/bench_fit.py`` (``main(quick=True)`` uses n = 1e4, the
smoke size).
"""

from __future__ import annotations

import time

import numpy as np

from cdfsketch.fit import fit_candidates
from cdfsketch.metrics import compare

TARGET_RATIO = 400.0


def _sort_time(x: np.ndarray) -> float:
    best = np.inf
    for _ in range(5):
        t0 = time.perf_counter()
        np.sort(x)
        best = min(best, time.perf_counter() - t0)
    return best


def main(quick: bool = False) -> dict[str, float]:
    n = 10_000 if quick else 1_000_000
    gen = np.random.default_rng(2024)
    x = np.r_[gen.lognormal(1.0, 0.6, int(0.9 * n)), gen.normal(12.0, 1.0, n - int(0.9 * n))]
    x = x[x > 0]
    base = _sort_time(x)
    stages: list[tuple[str, float]] = []
    last = [0.0]

    def progress(done: int, total: int, label: str) -> None:
        now = time.perf_counter()
        stages.append((label, now - last[0]))
        last[0] = now

    t0 = last[0] = time.perf_counter()
    cands = fit_candidates(x, rng=0, progress=progress)
    fit_s = time.perf_counter() - t0
    print(f"one np.sort of n={x.size}: {base * 1e3:.2f} ms")
    print(
        f"fit_candidates: {fit_s:.3f} s = {fit_s / base:.0f}x the sort "
        f"(target ≤ {TARGET_RATIO:.0f}x; {len(cands)} candidates, skipped {sorted(cands.skipped)})"
    )
    for label, dt in stages:
        print(f"  {label:<14} {dt:.3f} s")
    stages.clear()
    t0 = last[0] = time.perf_counter()
    compare(x, list(cands), rng=0, progress=progress)
    cmp_s = time.perf_counter() - t0
    print(
        f"compare of {len(cands)} candidates: {cmp_s:.3f} s = {cmp_s / base:.0f}x the sort "
        f"(target ≤ {TARGET_RATIO:.0f}x)"
    )
    for label, dt in stages:
        print(f"  {label:<22} {dt:.3f} s")
    if not quick:
        for what, s in (("fit_candidates", fit_s), ("compare", cmp_s)):
            print(f"{what}: {'meets' if s / base <= TARGET_RATIO else 'MISSES'} the target")
    return {"sort": base, "fit_ratio": fit_s / base, "compare_ratio": cmp_s / base}


if __name__ == "__main__":
    main()
