"""Each benchmark script runs once on small sizes, so the benchmarks cannot rot.

The figures themselves are read from the full runs (``python tests/bench/bench_x.py``);
timing assertions do not belong in unit tests on these noisy machines.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

BENCHES = sorted((Path(__file__).parent / "bench").glob("bench_*.py"))


@pytest.mark.parametrize("path", BENCHES, ids=[p.stem for p in BENCHES])
def test_bench_runs_quick(path, capsys, monkeypatch):
    monkeypatch.syspath_prepend(str(path.parent))  # as when run as a script
    spec = importlib.util.spec_from_file_location(path.stem, path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    module.main(quick=True)
    assert capsys.readouterr().out.strip()  # it printed its figures
