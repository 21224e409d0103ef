"""Benchmark: peak memory of a data entry point on large data, as a ratio to the data's bytes.

Issue 15 target: peak RSS within about 8× the data's bytes for ``compare`` on 1e7
points, ``Editor(data=…)`` and ``ReviewBoard(data=…)``. Each measurement runs in a
fresh subprocess: it imports what the entry point needs, notes the peak RSS
(``resource.getrusage``), makes the data (invented: a seeded lognormal sample),
calls the entry point and reports ``(peak after - peak before) / data bytes``.
The data themselves count once in that ratio.

Run: ``python tests/bench/bench_memory.py [compare|editor|board|layers|ecdf|fit] [n]``
(default: compare on 1e7). ``main(quick=True)`` measures ``compare`` on 1e5 (the
smoke size).
"""

from __future__ import annotations

import json
import subprocess
import sys

TARGET_RATIO = 8.0

_CHILD = r"""
import json, resource, sys
import numpy as np
mode, n = sys.argv[1], int(sys.argv[2])

def peak():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024  # KiB on Linux

if mode == "compare":
    import scipy.stats as st
    from cdfsketch import Sketch
    from cdfsketch.fit import fit_candidates
    from cdfsketch.metrics import compare
    small = np.random.default_rng(1).lognormal(1.0, 0.6, 20_000)
    cands = list(fit_candidates(small, rng=0, kde=False))
    models = [Sketch([0, 2, 5, 60], [0, 0.3, 0.8, 1], name="sketch"), st.lognorm(0.6, scale=np.e),
              *cands]
    run = lambda x: compare(x, models, rng=0, progress=False)
elif mode == "fit":
    import scipy.stats  # what the fits import: a fixed cost, not the data's
    from cdfsketch.fit import fit_candidates
    run = lambda x: fit_candidates(x, rng=0, progress=False)
elif mode == "ecdf":
    from cdfsketch.empirical import ECDF
    run = lambda x: ECDF(x).steps()
elif mode == "editor":
    from cdfsketch import Editor
    run = lambda x: Editor(data=x)
elif mode == "board":
    import scipy.stats  # what the board's comparison imports: a fixed cost, not the data's
    import cdfsketch.metrics
    from cdfsketch import ReviewBoard, Sketch
    run = lambda x: ReviewBoard(x, [Sketch([0, 2, 5, 60], [0, 0.3, 0.8, 1], name="s")], rng=0,
                                progress=False)
elif mode == "layers":  # what the board and the page draw: ECDF, band, histogram, curves
    from types import SimpleNamespace
    from cdfsketch import Sketch
    from cdfsketch.empirical import ECDF
    from cdfsketch.review import Review
    from cdfsketch.review.layers import curves, data_layers
    cands = Review(None, [Sketch([0, 2, 5, 60], [0, 0.3, 0.8, 1], name="s")]).candidates
    def run(x):
        e = ECDF(x)
        r = SimpleNamespace(candidates=cands, data=x, ecdf=e, level=0.95,
                            data_range=(float(e.x[0]), float(e.x[-1])))
        data_layers(r), curves(r)
else:
    raise SystemExit(f"unknown mode {mode!r}")
before = peak()
x = np.random.default_rng(2024).lognormal(1.0, 0.6, n)
run(x)
after = peak()
print(json.dumps({"mode": mode, "n": n, "data_bytes": x.nbytes, "before": before,
                  "after": after}))
"""


def measure(mode: str = "compare", n: int = 10_000_000) -> dict[str, float]:
    """Run one entry point on ``n`` points in a fresh process; return the memory figures."""
    out = subprocess.run(
        [sys.executable, "-c", _CHILD, mode, str(n)],
        capture_output=True,
        text=True,
        check=True,
    )
    rec = json.loads(out.stdout.strip().splitlines()[-1])
    rec["ratio"] = (rec["after"] - rec["before"]) / rec["data_bytes"]
    return rec


def main(quick: bool = False, mode: str = "compare", n: int | None = None) -> dict[str, float]:
    n = n or (100_000 if quick else 10_000_000)
    rec = measure(mode, n)
    mb = 1024.0**2
    print(
        f"{rec['mode']} on n={n}: data {rec['data_bytes'] / mb:.0f} MB, peak RSS "
        f"{rec['before'] / mb:.0f} MB before → {rec['after'] / mb:.0f} MB after; growth "
        f"{rec['ratio']:.1f}x the data (target ≤ {TARGET_RATIO:.0f}x: "
        f"{'meets' if rec['ratio'] <= TARGET_RATIO else 'MISSES'})"
    )
    return rec


if __name__ == "__main__":
    args = sys.argv[1:]
    main(mode=args[0] if args else "compare", n=int(args[1]) if len(args) > 1 else None)
