"""Fixed-seed property run over wide random sketches (see wide_sketches.py).

x from 1e-150 to 1e15, spacings down to 1e-100, 1-ulp p steps, atoms at both
ends, bounded and exponential tails with stated scales 1e-100…1e100: every
accepted sketch has a monotone cdf in [0, 1], a monotone exact ppf that
inverts it, a drag that never raises, and (every third) a sampler that
compiles, draws inside the support and meets its documented u-accuracy.
The longer run is ``tests/bench/fuzz_sketches.py``.
"""

from __future__ import annotations

from wide_sketches import run


def test_wide_random_sketches_fixed_seed():
    counts, failures = run(240, seed=20261202)
    assert counts["accepted"] >= 180, counts  # most draws make a valid sketch
    assert failures == [], (counts, failures[:3])
