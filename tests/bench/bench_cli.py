"""``cdfsketch check`` on one golden spec against ``python -c "import numpy"``.

Target (issue 16): within 0.5 s of importing numpy alone. Both run as fresh
subprocesses, alternately, so machine noise hits both alike; prints the best
times, their difference and their ratio.

Run: ``python tests/bench/bench_cli.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from _timing import ratio_interleaved

ROOT = Path(__file__).parents[2]
GOLDEN = ROOT / "tests" / "data" / "spec-v1-linear-bounded.json"
SET = ROOT / "tests" / "data" / "inputs-v1-inline.json"
ENV = {**os.environ, "PYTHONPATH": str(ROOT)}


def _run(*args: str) -> None:
    subprocess.run([sys.executable, *args], check=True, env=ENV, capture_output=True)


def main(quick: bool = False) -> dict[str, float]:
    reps = 1 if quick else 7
    results: dict[str, float] = {}
    for label, path in (("one golden spec", GOLDEN), ("one input set", SET)):
        t_np, t_cli = ratio_interleaved(
            lambda: _run("-c", "import numpy"),
            lambda path=path: _run("-m", "cdfsketch.cli", "check", str(path)),
            reps,
        )
        results[label] = t_cli - t_np
        print(
            f"cdfsketch check, {label:16s} {t_cli:6.3f} s; import numpy {t_np:6.3f} s; "
            f"difference {t_cli - t_np:+.3f} s (target <= 0.5), ratio {t_cli / t_np:4.1f}x"
        )
    return results


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
