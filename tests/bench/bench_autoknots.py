"""Automatic knots on large samples, as ratios to one ``np.sort`` of the same data.

1. ``from_data`` (fewest knots inside the band; exact minimum-link path, on the decimated
   outline above 200 000 distinct values) on 1e6 points, linear and pchip.
2. The editor's automatic start: ``from_data(data, max_knots=7)`` on 1e7 points of four
   shapes (skewed, heavy-tailed, bimodal with many ties, unsorted). Target: about 1 s,
   i.e. a small multiple of one sort (building the ECDF is itself a sort).

Run: ``python tests/bench/bench_autoknots.py`` (``--quick`` for a smoke run on small sizes).
"""

from __future__ import annotations

import sys

import numpy as np
from _timing import best_of

from cdfsketch.elicit import from_data


def _shapes(n: int, rng: np.random.Generator) -> dict[str, np.ndarray]:
    bimodal = np.where(rng.random(n) < 0.6, rng.normal(20, 3, n), rng.normal(50, 5, n))
    return {
        "skewed (lognormal)": rng.lognormal(0.0, 1.2, n),
        "heavy-tailed (t, 1.5 df)": rng.standard_t(1.5, n),
        "bimodal, ties (0.1)": np.round(bimodal, 1),
        "unsorted ramp": rng.permutation(np.linspace(0.0, 1.0, n) ** 3),
    }


def main(quick: bool = False) -> dict[str, float]:
    n = 10**4 if quick else 10**6
    reps = 1 if quick else 3
    rng = np.random.default_rng(12345)
    samples = {
        "normal": rng.normal(size=n),
        "lognormal": rng.lognormal(size=n),
        "mixture": np.where(rng.random(n) < 0.6, rng.normal(0, 1, n), rng.normal(5, 0.5, n)),
    }
    results: dict[str, float] = {}
    print(f"fewest knots inside the band, n = {n:.0e}")
    for label, data in samples.items():
        t_sort = best_of(lambda data=data: np.sort(data), reps)
        for interp in ("linear", "pchip"):
            t = best_of(
                lambda data=data, interp=interp: from_data(data, interpolation=interp), reps
            )
            s = from_data(data, interpolation=interp)
            extra = s.provenance["extra"]
            results[f"{label}_{interp}_ratio"] = t / t_sort
            print(
                f"  {label:9s} {interp:6s}: {t * 1e3:7.0f} ms = {t / t_sort:5.1f}x np.sort "
                f"({t_sort * 1e3:.0f} ms); {extra['knots']} knots, "
                f"max excursion {extra['max_excursion']:.2g}"
            )
    big_n = 10**5 if quick else 10**7
    print(f"automatic start, max_knots=7, n = {big_n:.0e}")
    for label, data in _shapes(big_n, rng).items():
        t_sort = best_of(lambda data=data: np.sort(data), 1)
        t = best_of(lambda data=data: from_data(data, max_knots=7), 1)
        s = from_data(data, max_knots=7)
        extra = s.provenance["extra"]
        results[f"start_{label}_ratio"] = t / t_sort
        print(
            f"  {label:25s}: {t * 1e3:6.0f} ms = {t / t_sort:4.1f}x np.sort "
            f"({t_sort * 1e3:.0f} ms); {len(s)} knots, excursion "
            f"{extra['max_excursion']:.2g} (eps {extra['eps']:.2g})"
        )
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
