"""Automatic knots on large samples, against ``np.sort`` of the same data.

Target (issue 4): ``from_data`` on 1e6 points in ≤ 2 s (linear, the default). Also
printed: 1e7 points (the editor's opening size, issue 5).

Run: ``python tests/bench/bench_autoknots.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import sys

import numpy as np
from _timing import best_of

from cdfsketch.elicit import from_data


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
    print(f"n = {n:.0e}")
    for label, data in samples.items():
        t_sort = best_of(lambda data=data: np.sort(data), reps)
        for interp in ("linear", "pchip"):
            t = best_of(
                lambda data=data, interp=interp: from_data(data, interpolation=interp), reps
            )
            s = from_data(data, interpolation=interp)
            extra = s.provenance["extra"]
            results[f"{label}_{interp}_s"] = t
            target = " (target <= 2 s)" if interp == "linear" else ""
            print(
                f"{label:9s} {interp:6s}: {t * 1e3:7.0f} ms = {t / t_sort:5.1f}x np.sort "
                f"({t_sort * 1e3:.0f} ms){target}; {extra['knots']} knots, "
                f"max excursion {extra['max_excursion']:.2g}"
            )
    # large n: the knots are found on the decimated outline (autoknots, "Large samples")
    big_n = 10**5 if quick else 10**7
    big = rng.gamma(3.0, 2.0, big_n)
    t_sort = best_of(lambda: np.sort(big), 1)
    t = best_of(lambda: from_data(big), 1)
    s = from_data(big)
    extra = s.provenance["extra"]
    results["gamma_large_linear_s"] = t
    print(
        f"n = {big_n:.0e} gamma linear: {t * 1e3:.0f} ms = {t / t_sort:.1f}x np.sort "
        f"({t_sort * 1e3:.0f} ms); {extra['knots']} knots, outline tolerance "
        f"{extra['outline_tolerance']:.2g} (eps {extra['eps']:.2g})"
    )
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
