"""Sampler speed and memory against baselines timed in the same process.

Targets (issue 2): for 1e7 draws from a linear sketch with 10, 100 and 1000
knots ≥ 0.30× the rate of raw ``rng.random(n)`` and, at 100 knots, ≥ 4× the
rate of ``np.interp(rng.random(n), p, x)``; for a 20-knot pchip sketch
≥ 0.20× raw ``rng.random`` and ≥ 1.5× scipy.stats.sampling.NumericalInversePolynomial
(u_resolution=1e-10) on the same CDF. Peak extra memory O(chunk), not O(n).

Run: ``python tests/bench/bench_sampler.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import sys
import tracemalloc

import numpy as np
from _timing import ratio_interleaved

from cdfsketch import Sketch


def linear_sketch(k: int) -> Sketch:
    # knots at quantiles of a gamma-like shape, uneven spacing in x and p
    u = np.linspace(0, 1, k) ** 1.3
    x = -np.log1p(-np.clip(u, 0, 1 - 1e-9)) * 3 + np.sqrt(np.arange(k))
    return Sketch(np.sort(x) + np.arange(k) * 1e-3, u)


def pchip_sketch(k: int = 20) -> Sketch:
    u = np.linspace(0.02, 0.98, k)
    x = np.sqrt(-2 * np.log(np.minimum(u, 1 - u))) * np.sign(u - 0.5) + 10
    x = np.sort(x) + np.arange(k) * 1e-6
    return Sketch(x, u, interpolation="pchip")


def main(quick: bool = False) -> dict[str, float]:
    n = 10**5 if quick else 10**7
    reps = 1 if quick else 9
    rng = np.random.default_rng(12345)
    results: dict[str, float] = {}

    def raw():
        return rng.random(n)

    print(f"n = {n:.0e} draws; each ratio from alternating runs, best of {reps}")
    for k in (10, 100, 1000):
        s = linear_sketch(k)
        fast = s.sampler()
        t_raw, t = ratio_interleaved(raw, lambda fast=fast: fast.sample(n, rng=rng), reps)
        results[f"linear{k}_vs_raw"] = t_raw / t
        line = f"linear, {k:4d} knots: {t * 1e3:7.1f} ms  rate vs raw {t_raw / t:5.2f}x"
        line += " (target >= 0.30)"
        if k == 100:
            t_interp, t2 = ratio_interleaved(
                lambda pk=s.p, xk=s.x: np.interp(rng.random(n), pk, xk),
                lambda fast=fast: fast.sample(n, rng=rng),
                reps,
            )
            results["linear100_vs_interp"] = t_interp / t2
            line += f"  vs np.interp {t_interp / t2:5.2f}x (target >= 4)"
        print(line)
    s = pchip_sketch()
    fast = s.sampler()
    t_raw, t = ratio_interleaved(raw, lambda: fast.sample(n, rng=rng), reps)
    results["pchip20_vs_raw"] = t_raw / t
    line = f"pchip,    20 knots: {t * 1e3:7.1f} ms  rate vs raw {t_raw / t:5.2f}x (target >= 0.20)"
    try:
        from scipy.stats.sampling import NumericalInversePolynomial

        class Dist:
            def pdf(self, x):
                return float(s.pdf(x))

            def cdf(self, x):
                return float(s.cdf(x))

        lo, hi = s.ppf(1e-12), s.ppf(1 - 1e-12)
        pinv = NumericalInversePolynomial(
            Dist(), domain=(lo, hi), u_resolution=1e-10, random_state=1
        )
        t_pinv, t2 = ratio_interleaved(lambda: pinv.rvs(n), lambda: fast.sample(n, rng=rng), reps)
        results["pchip20_vs_pinv"] = t_pinv / t2
        line += f"  vs scipy PINV {t_pinv / t2:5.2f}x (target >= 1.5)"
    except ImportError:
        line += "  (scipy not installed: PINV baseline skipped)"
    print(line)
    print(f"pchip sampler: {fast.n_intervals} intervals")
    # memory: peak allocation during sampling beyond the output array
    for m in (10**5, 10**6) if quick else (10**6, 10**7):
        tracemalloc.start()
        out = fast.sample(m, rng=1)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        extra = peak - out.nbytes
        results[f"extra_bytes_{m}"] = extra
        print(f"peak extra memory for {m:.0e} draws: {extra / 1024:.0f} KiB beyond the output")
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
