"""A longer run of the wide random-sketch checks, with its counts printed.

The suite runs a fixed-seed slice of the same checks
(``tests/core/test_wide_sketches.py``); this script runs more examples and
prints how many were run, refused (a clear ``KnotError`` from the
constructor) and accepted, and the failures by kind, with the first few
failing sketches' arguments to turn into regression tests.

It also times the largest sketch the limits allow: ``MAX_KNOTS`` (100,000)
monotone cubic knots, compiled and sampled (``--big``).

Run: ``python tests/bench/fuzz_sketches.py [--n 10000] [--seed 7] [--big]``
(``--quick`` for a smoke run of 30 examples).
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "core"))

import numpy as np
from wide_sketches import run

from cdfsketch import Sketch
from cdfsketch._limits import MAX_KNOTS


def biggest() -> None:
    """Compile and sample a MAX_KNOTS monotone cubic sketch; print the times."""
    rng = np.random.default_rng(0)
    x = np.cumsum(rng.uniform(0.1, 1, MAX_KNOTS))
    t0 = time.perf_counter()
    s = Sketch(x, np.linspace(0, 1, MAX_KNOTS), interpolation="pchip")
    t1 = time.perf_counter()
    fast = s.sampler()
    t2 = time.perf_counter()
    u = np.sort(rng.random(100_000))
    err = float(np.max(np.abs(s.cdf(fast.ppf(u)) - u)))
    print(
        f"{MAX_KNOTS:,} pchip knots: built in {t1 - t0:.1f} s, compiled in {t2 - t1:.1f} s "
        f"({fast.n_intervals:,} intervals), max u-error {err:.1e}"
    )


def main(n: int = 10_000, seed: int = 7) -> dict[str, int]:
    t0 = time.perf_counter()
    counts, failures = run(n, seed)
    took = time.perf_counter() - t0
    print(f"wide random sketches, seed {seed}: {took:.0f} s")
    for key in ("examples", "accepted", "refused (clear KnotError)"):
        print(f"  {key:<28} {counts.get(key, 0):>7}")
    kinds = {
        k: v
        for k, v in counts.items()
        if k not in ("examples", "accepted", "refused (clear KnotError)")
    }
    print(f"  failures by kind: {kinds or 'none'}")
    for i, kind, args in failures[:5]:
        print(
            f"  example {i}: {kind}: x={args['x'].tolist()!r} p={args['p'].tolist()!r} "
            f"{args['interpolation']} {args['lower_tail']} {args['upper_tail']}"
        )
    return dict(counts)


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=10_000)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--big", action="store_true")
    a = ap.parse_args()
    main(30 if a.quick else a.n, a.seed)
    if a.big:
        biggest()
