"""How long ``cdfsketch check one.json`` takes beside ``python -c "import numpy"``.

Both run as fresh processes, interleaved (noise hits both alike); the best
of each is printed with their difference and ratio. Target: the check within
0.5 s of importing numpy (it imports no JSON Schema library)::

    PYTHONPATH=$PWD python tests/bench/bench_check.py --repeats 7
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
SPEC = ROOT / "tests" / "data" / "spec-v1-pchip-atoms-exponential.json"
BASELINE = [sys.executable, "-c", "import numpy"]
CHECK = [
    sys.executable,
    "-c",
    "import sys; from cdfsketch.cli import main; sys.exit(main(['check', sys.argv[1]]))",
    str(SPEC),
]


def _run(cmd: list[str]) -> float:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, capture_output=True, env=env, cwd=ROOT)
    return time.perf_counter() - t0


def measure(repeats: int) -> tuple[float, float]:
    """Best wall times (baseline, check) over ``repeats`` interleaved runs."""
    best_b = best_c = float("inf")
    for _ in range(repeats):
        best_b = min(best_b, _run(BASELINE))
        best_c = min(best_c, _run(CHECK))
    return best_b, best_c


def main(argv: list[str] | None = None) -> tuple[float, float]:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7)
    args = parser.parse_args(argv)
    base, check = measure(args.repeats)
    print(f"python -c 'import numpy'     {base:7.3f} s")
    print(f"cdfsketch check {SPEC.name}  {check:7.3f} s")
    print(f"difference {check - base:+.3f} s (target ≤ 0.5 s), ratio {check / base:.2f}")
    return base, check


if __name__ == "__main__":
    main()
