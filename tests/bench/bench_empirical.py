"""ECDF construction and the decimated step outline on large samples.

Target (issue 3): 1e7 points → at most a few thousand outline vertices in well under a
second. Building the ECDF needs the data sorted; the baseline ``np.sort`` of the same data
is timed in the same process. Pre-sorted input skips the sort (checked in O(n)).

Run: ``python tests/bench/bench_empirical.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import sys

import numpy as np
from _timing import best_of

from cdfsketch.empirical import ECDF


def main(quick: bool = False) -> dict[str, float]:
    n = 10**5 if quick else 10**7
    reps = 1 if quick else 3
    data = np.random.default_rng(12345).normal(size=n)
    ordered = np.sort(data)
    results: dict[str, float] = {}
    t_sort = best_of(lambda: np.sort(data), reps)
    t_ecdf = best_of(lambda: ECDF(data), reps)
    t_pre = best_of(lambda: ECDF(ordered), reps)
    e = ECDF(data)
    t_steps = best_of(lambda: e.steps(), reps)
    out = e.steps()
    results.update(
        sort_s=t_sort,
        ecdf_s=t_ecdf,
        ecdf_presorted_s=t_pre,
        steps_s=t_steps,
        vertices=float(out.x.size),
        ecdf_vs_sort=t_ecdf / t_sort,
    )
    print(f"n = {n:.0e}; np.sort: {t_sort * 1e3:.0f} ms")
    print(f"ECDF(data): {t_ecdf * 1e3:.0f} ms ({t_ecdf / t_sort:.2f}x np.sort)")
    print(f"ECDF(pre-sorted data): {t_pre * 1e3:.0f} ms")
    print(
        f"steps(): {t_steps * 1e3:.1f} ms, {out.x.size} vertices, tolerance {out.tolerance}, "
        f"max error {out.max_error:.2e} (target: a few thousand vertices, well under 1 s)"
    )
    print(f"ECDF + steps from raw data: {(t_ecdf + t_steps) * 1e3:.0f} ms")
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
