"""One input through a cheap model on a local Dask cluster: throughput and memory.

``size`` draws (1e9 for the full run) of one sketch go through ``y = 2 x + 1``
with :func:`cdfsketch.consequences` on a ``LocalCluster`` of two worker
processes (127.0.0.1, started and closed here). The reduction keeps per-block
sums and exceedance counts only, so memory is bounded by a few blocks of
``chunks`` draws, not by ``size``. Printed: throughput as a ratio to raw
``rng.random`` for the same count in one process (drawn block by block and
summed, so it too stays in bounded memory), the peak resident memory of each
worker and of this process, and the memory of one task's block. The cluster
run is made twice: with Dask's default worker environment and with a raised
glibc mmap threshold (see ``MMAP_THRESHOLD``), the setting to put in
``distributed.nanny.pre-spawn-environ`` on Linux clusters.

Run: ``python tests/bench/bench_dask.py --size 1e9`` (default 2e6, a smoke run;
``--quick`` is the same small size).
"""

from __future__ import annotations

import argparse
import os
import resource
import time

import numpy as np

from cdfsketch import Sketch
from cdfsketch.outcomes import consequences
from cdfsketch.scale import WINDOW

SMOKE = 2_000_000
CHUNKS = 16 * WINDOW  # draws per task (about 1e6)
#: Dask's nanny starts workers with MALLOC_TRIM_THRESHOLD_ set, which on Linux also fixes
#: glibc's mmap threshold at 128 KiB: every array of a 2^16-draw window is then a fresh
#: mmap and its pages fault in again. The second run raises the threshold (32 MiB).
MMAP_THRESHOLD = 32 * 2**20


def cheap(d):
    return 2.0 * d["x"] + 1.0


def peak_rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # Linux: kB


def raw_random_seconds(n: int) -> float:
    """Raw ``rng.random`` for ``n`` draws in one process, block by block, summed."""
    rng = np.random.default_rng(1)
    buf = np.empty(CHUNKS)
    total = 0.0
    t0 = time.perf_counter()
    for lo in range(0, n, CHUNKS):
        m = min(CHUNKS, n - lo)
        rng.random(out=buf[:m])
        total += float(buf[:m].sum())
    return time.perf_counter() - t0


def _on_cluster(model, sketch, kw, *, mmap_threshold):
    """(seconds, result, peak RSS per worker in MB) of the run on a fresh 2-worker cluster."""
    import dask
    from dask.distributed import Client, LocalCluster

    env = {} if mmap_threshold is None else {"MALLOC_MMAP_THRESHOLD_": mmap_threshold}
    with (
        dask.config.set({f"distributed.nanny.pre-spawn-environ.{k}": v for k, v in env.items()}),
        LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            host="127.0.0.1",
            processes=True,
            dashboard_address=None,
        ) as cluster,
        Client(cluster) as client,
    ):
        # workers up, the package imported there, before timing (a one-time cost)
        client.run(lambda: __import__("cdfsketch.outcomes.run"))
        t0 = time.perf_counter()
        res = consequences(model, {"x": sketch}, **kw)
        seconds = time.perf_counter() - t0
        worker_mb = sorted(
            client.run(lambda: resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0).values()
        )
    return seconds, res, worker_mb


def main(quick: bool = False, size: int | None = None) -> dict[str, float]:
    n = SMOKE if quick or size is None else int(size)
    sketch = Sketch([0, 2, 5, 9], [0, 0.3, 0.8, 1], interpolation="pchip", name="x")
    t_raw = raw_random_seconds(n)
    kw = {
        "vary": "x",
        "candidates": [sketch],
        "size": n,
        "rng": 2026,
        "thresholds": [12.0],
        "quantiles": (),
        "chunks": CHUNKS,
        "progress": False,
    }
    t0 = time.perf_counter()
    sync = consequences(cheap, {"x": sketch}, scheduler="synchronous", **kw)
    t_sync = time.perf_counter() - t0
    t_dask, res, worker_mb = _on_cluster(cheap, sketch, kw, mmap_threshold=None)
    t_tuned, tuned, tuned_mb = _on_cluster(cheap, sketch, kw, mmap_threshold=MMAP_THRESHOLD)
    assert tuned.table() == res.table()
    row = res.table()[0]
    assert res.table() == sync.table()  # the same bits on the cluster and in one process
    out = {
        "draws": float(n),
        "seconds_dask": t_dask,
        "seconds_raw_random": t_raw,
        "seconds_synchronous": t_sync,
        "throughput_ratio_to_raw_random": t_raw / t_dask,
        "throughput_ratio_synchronous_to_raw_random": t_raw / t_sync,
        "throughput_ratio_tuned_workers_to_raw_random": t_raw / t_tuned,
        "draws_per_second_dask": n / t_dask,
        "peak_worker_rss_mb": max(worker_mb),
        "peak_worker_rss_mb_tuned": max(tuned_mb),
        "peak_client_rss_mb": peak_rss_mb(),
        "block_mb": CHUNKS * 8 * 4 / 2**20,  # uniforms, x, y, exceedance flags (upper bound)
    }
    print(f"{n:.3g} draws of one input through y = 2x + 1 on a LocalCluster (2 workers x 1 thread)")
    print(f"  mean {row['mean']:.6g} ± {row['mean_se']:.2g}; P(y > 12) {row['p_above_12']:.6g}")
    print(
        f"  dask {t_dask:.2f} s ({n / t_dask:.3g} draws/s); raw rng.random in one process "
        f"{t_raw:.2f} s; throughput ratio dask / raw random = {t_raw / t_dask:.3f}"
    )
    print(
        f"  workers with MALLOC_MMAP_THRESHOLD_={MMAP_THRESHOLD} {t_tuned:.2f} s: ratio to raw "
        f"random {t_raw / t_tuned:.3f} (peak RSS per worker "
        f"{', '.join(f'{m:.0f}' for m in tuned_mb)} MB)"
    )
    print(
        f"  synchronous scheduler in this process {t_sync:.2f} s: ratio to raw random "
        f"{t_raw / t_sync:.3f}; load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores"
    )
    print(
        f"  peak RSS per worker {', '.join(f'{m:.0f}' for m in worker_mb)} MB; this process "
        f"{peak_rss_mb():.0f} MB; one task's arrays ≈ {out['block_mb']:.0f} MB"
    )
    return out


def _size(text: str) -> int:
    value = float(text)
    if not value.is_integer() or value < 20:
        raise argparse.ArgumentTypeError(f"size must be a whole number ≥ 20; got {text!r}")
    return int(value)


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", type=_size, default=SMOKE, help="draws, e.g. 1e9 (default 2e6)")
    parser.add_argument("--quick", action="store_true", help="the small smoke size")
    args = parser.parse_args()
    main(quick=args.quick, size=args.size)
