"""Input-set sampling throughput and memory: 20 inputs × 1e7 draws in blocks.

Prints the rate as a ratio to raw ``rng.random`` for the same count of values
(20 × 1e7), timed alternately in this process, and the peak memory the block
loop allocates (tracemalloc; numpy reports its buffers to it) at 1 % and 10 %
of the size (tracing slows numpy down), which must stay O(block), not grow
with the size. Cases: independent random draws; the same with
Iman–Conover on 10 of the inputs; a Latin hypercube.

Run: ``python tests/bench/bench_inputs.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import sys
import tracemalloc

import numpy as np
from _timing import ratio_interleaved

from cdfsketch import Sketch
from cdfsketch.inputs import InputSet


def make_set(k: int = 20, *, dependent: int = 0) -> InputSet:
    sketches = {}
    for i in range(k):
        x = np.cumsum(np.r_[0.0, 1.0 + (np.arange(9) + i) % 4])
        interp = "pchip" if i % 4 == 0 else "linear"
        sketches[f"in{i:02d}"] = Sketch(x, np.linspace(0, 1, 10), interpolation=interp)
    names = list(sketches)
    pairs = {(names[i], names[i + 1]): 0.3 for i in range(0, max(dependent - 1, 0))}
    return InputSet(sketches, rank_corr=pairs or None)


def drain(ins: InputSet, n: int, block: int, **kw) -> int:
    total = 0
    for part in ins.blocks(n, block=block, rng=1, **kw):
        total += part.size
    return total


def main(quick: bool = False) -> dict[str, float]:
    n = 10**5 if quick else 10**7
    k = 20
    block = 1 << 16
    reps = 1 if quick else 3
    rng = np.random.default_rng(7)
    buf = np.empty(block)

    def raw() -> None:  # the same count of values, drawn block by block into one buffer
        for lo in range(0, n * k, block):
            rng.random(out=buf[: min(block, n * k - lo)])

    results: dict[str, float] = {}
    print(f"{k} inputs x {n:.0e} draws in blocks of {block:,}; best of {reps}, alternating")
    cases = {
        "independent": (make_set(k), {"dependence": "independent"}),
        "iman-conover (10 dependent)": (make_set(k, dependent=10), {}),
        "lhs, independent": (make_set(k), {"design": "lhs", "dependence": "independent"}),
    }
    for label, (ins, kw) in cases.items():
        drain(ins, 1000, block, **kw)  # compile the samplers, load scipy: not timed
        t_raw, t = ratio_interleaved(raw, lambda ins=ins, kw=kw: drain(ins, n, block, **kw), reps)
        peaks = []
        for m in (n // 100, n // 10):  # tracing is slow: two smaller runs show the growth
            tracemalloc.start()
            drain(ins, m, block, **kw)
            peaks.append(tracemalloc.get_traced_memory()[1] / 1e6)
            tracemalloc.stop()
        results[label] = t_raw / t
        print(
            f"{label:30s} {t:7.2f} s  rate vs raw rng.random {t_raw / t:5.2f}x  peak traced "
            f"memory {peaks[0]:5.1f} MB at {n // 100:.0e} draws, {peaks[1]:5.1f} MB at "
            f"{n // 10:.0e} (a result of {n // 10:.0e} would take {n // 10 * k * 8 / 1e6:,.0f} MB)"
        )
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
