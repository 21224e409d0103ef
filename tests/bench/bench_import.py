"""Import overhead: ``import cdfsketch`` + load a spec + sample, against ``import numpy``.

Target (issue 2): at most 100 ms over ``import numpy``. Each variant runs in a
fresh interpreter, alternating, best of several runs (the baseline is timed in
the same loop, so machine load affects both alike). It also lists which heavy
optional modules the task pulled in (the core needs numpy only: none should).

Run: ``python tests/bench/bench_import.py`` (``--quick`` for a smoke run).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

SPEC = Path(__file__).parents[1] / "data" / "spec-v1-pchip-atoms-exponential.json"
TIMER = "import time; t0 = time.perf_counter(); {body}; print(time.perf_counter() - t0)"
BASELINE = "import numpy"
TASK = f"import numpy, cdfsketch; cdfsketch.load({str(SPEC)!r}).sample(1000, rng=1)"


def run(body: str) -> float:
    code = TIMER.format(body=body)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return float(out.stdout.strip())


HEAVY = ("scipy", "pandas", "matplotlib", "ipywidgets", "bqplot", "traitlets", "jsonschema")
LISTER = f"import sys; {TASK}; print(','.join(m for m in {HEAVY!r} if m in sys.modules) or 'none')"


def heavy_imports() -> str:
    """Which of :data:`HEAVY` the task imports."""
    out = subprocess.run([sys.executable, "-c", LISTER], capture_output=True, text=True, check=True)
    return out.stdout.strip()


def main(quick: bool = False) -> dict[str, float]:
    repeats = 2 if quick else 12
    base, task = [], []
    for _ in range(repeats):
        base.append(run(BASELINE))
        task.append(run(TASK))
    b, t = min(base), min(task)
    print(f"import numpy: {b * 1e3:.1f} ms")
    print(f"import cdfsketch + load + sample 1000: {t * 1e3:.1f} ms")
    print(f"overhead over numpy: {(t - b) * 1e3:.1f} ms (target <= 100 ms); ratio {t / b:.2f}x")
    print(f"heavy optional modules imported by the task: {heavy_imports()}")
    return {"numpy_s": b, "cdfsketch_s": t, "overhead_s": t - b}


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
