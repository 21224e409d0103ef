"""Peak memory of a review on large data, as a ratio to the data's bytes (issue 15: ≤ ~8×).

Run: ``PYTHONPATH=. python tests/bench/bench_review_memory.py [n]`` (default 1e7). Each
case runs in a fresh process; peak RSS from ``resource.getrusage`` minus the RSS after
the imports and the data were made. Cases: what the views draw (the data's ECDF,
band, histogram and the curves), the comparison alone, and the whole ReviewBoard.
Smoke call: ``main(quick=True)``.
"""

from __future__ import annotations

import subprocess
import sys

CASE = """
import resource, sys
import numpy as np
import cdfsketch, cdfsketch.review, cdfsketch.fit, cdfsketch.widgets.review, scipy.stats
from cdfsketch import Sketch
n = int(float(sys.argv[1]))
x = np.random.default_rng(0).gamma(2.0, 3.0, n)  # invented data
s = Sketch([0, 5, 60], [0, 0.6, 1], name="expert")
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
what = sys.argv[2]
if what == "layers":  # what the board and the page draw: ECDF, band, histogram, curves
    from types import SimpleNamespace
    from cdfsketch.empirical import ECDF
    from cdfsketch.review.layers import curves, data_layers
    e = ECDF(x)
    r = SimpleNamespace(candidates=cdfsketch.review.Review(None, [s]).candidates, data=x,
                        ecdf=e, level=0.95, data_range=(float(e.x[0]), float(e.x[-1])))
    data_layers(r); curves(r)
elif what == "compare":
    cdfsketch.fit.compare(x, [s], rng=0)
elif what == "board":
    cdfsketch.ReviewBoard(x, [s], rng=0)
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
print(f"{what:8s} n={n:.0e} peak above baseline {(peak - base) / 1024:7.0f} MB = "
      f"{(peak - base) * 1024 / x.nbytes:5.1f}x the data")
"""


def main(n: int = 10_000_000, *, quick: bool = False) -> None:
    if quick:
        n = 20_000
    for what in ("layers", "compare", "board"):
        out = subprocess.run([sys.executable, "-c", CASE, str(n), what], capture_output=True,
                             text=True, check=True)  # fmt: skip
        print(out.stdout.strip())


if __name__ == "__main__":
    main(int(float(sys.argv[1])) if len(sys.argv) > 1 else 10_000_000)
