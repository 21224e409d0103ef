"""Time the spec judges on specs at and beyond the limits, against ``json.loads`` of the same text.

Sizes are checked before the schema and the CDF rules, so a text with a
million knots is refused at once, and a spec at the limit (100,000 knots)
validates in well under 2 s. Each time is printed with its ratio to parsing
the same text with ``json.loads`` (the least any reader must do), measured
interleaved in this process::

    PYTHONPATH=$PWD python tests/bench/bench_spec_limits.py
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import ratio_interleaved

GOLDEN = Path(__file__).resolve().parents[1] / "data" / "spec-v1-linear-bounded.json"


def knots_text(n: int, *, valid: bool = True) -> str:
    """A linear spec with ``n`` knots as JSON text (p decreasing when not ``valid``)."""
    spec = json.loads(GOLDEN.read_text(encoding="utf-8"))
    p = np.linspace(0, 1, n) if valid else np.linspace(1, 0, n)
    spec["knots"] = {"x": np.arange(n, dtype=float).tolist(), "p": p.tolist()}
    spec["tails"] = {
        "lower": {"kind": "bounded", "limit": 0.0, "density": "uniform"},
        "upper": {"kind": "bounded", "limit": float(n - 1), "density": "uniform"},
    }
    return json.dumps(spec)


def _quietly(fn, obj):
    from cdfsketch.spec import SpecError

    def run():
        try:
            fn(obj)
        except SpecError:
            pass

    return run


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--knots", type=int, default=100_000, help="knots at the limit")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args(argv)
    from cdfsketch.loading import load, validate_spec

    n = args.knots
    cases = [
        (f"validate_spec, {n:,} knots (accepted)", validate_spec, knots_text(n)),
        (f"load, {n:,} knots (accepted)", load, knots_text(n)),
        (f"validate_spec, {n:,} knots, p decreasing", validate_spec, knots_text(n, valid=False)),
        (
            f"validate_spec, {10 * n:,} knots as a dict",
            validate_spec,
            json.loads(knots_text(10 * n)),
        ),
    ]
    for label, fn, obj in cases:
        text = obj if isinstance(obj, str) else json.dumps(obj)
        base, took = ratio_interleaved(
            lambda t=text: json.loads(t), _quietly(fn, obj), args.repeats
        )
        print(f"{label:<48} {took:7.3f} s  json.loads {base:6.3f} s  ratio {took / base:5.1f}")


if __name__ == "__main__":
    main()
