"""Benchmark: fit_candidates with the defaults on n = 1e5 (target ≤ 3 s on 2 cores),
then compare() of all the candidates on the same data.

Prints the wall time, the time of a baseline (scipy.stats.norm.fit on the same
data, a closed-form fit) and their ratio, and the time of each stage; for
compare(), the time per candidate (no target in an issue; the review board
waits on it).
Run: ``python tests/bench/bench_fit.py`` (``main(quick=True)`` uses n = 1e4).
"""

from __future__ import annotations

import time

import numpy as np
import scipy.stats as st

from cdfsketch.fit import compare, fit_candidates

TARGET_S = 3.0


def main(quick: bool = False) -> dict[str, float]:
    n = 10_000 if quick else 100_000
    # invented data: a seeded skewed, bimodal sample (gamma + normal bump)
    gen = np.random.default_rng(2024)
    x = np.r_[gen.gamma(3.0, 2.0, int(0.8 * n)), gen.normal(18.0, 1.5, n - int(0.8 * n))]
    t0 = time.perf_counter()
    for _ in range(10):
        st.norm.fit(x)
    base = (time.perf_counter() - t0) / 10
    stages: list[tuple[str, float]] = []
    last = [time.perf_counter()]

    def progress(done: int, total: int, label: str) -> None:
        now = time.perf_counter()
        stages.append((label, now - last[0]))
        last[0] = now

    t0 = time.perf_counter()
    last[0] = t0
    cands = fit_candidates(x, rng=0, progress=progress)
    total = time.perf_counter() - t0
    print(
        f"fit_candidates, n={n}: {total:.3f} s  ({len(cands)} candidates, "
        f"skipped {sorted(cands.skipped)})"
    )
    print(f"baseline scipy.stats.norm.fit: {base * 1e3:.3f} ms; ratio {total / base:.0f}x")
    for label, dt in stages:
        print(f"  {label:<14} {dt:.3f} s")
    if not quick:
        verdict = "meets" if total <= TARGET_S else "MISSES"
        print(f"target ≤ {TARGET_S} s: {verdict}")
    stages.clear()
    t0 = last[0] = time.perf_counter()
    compare(x, list(cands), rng=0, progress=progress)
    judged = time.perf_counter() - t0
    print(f"compare, {len(cands)} candidates: {judged:.3f} s; ratio {judged / base:.0f}x baseline")
    for label, dt in stages:
        print(f"  {label:<22} {dt:.3f} s")
    return {"seconds": total, "baseline": base, "ratio": total / base, "compare": judged}


if __name__ == "__main__":
    main()
