"""Each benchmark and fuzz script runs once on small sizes, so they cannot rot.

The figures themselves are read from the full runs (``python tests/bench/bench_x.py``);
timing assertions do not belong in unit tests on these noisy machines.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from _helpers import load_script

BENCH = Path(__file__).parent / "bench"
SCRIPTS = sorted([*BENCH.glob("bench_*.py"), *BENCH.glob("fuzz_*.py")])
#: scripts whose main() reads command-line words; the rest take main(quick=True)
SMOKE_ARGS = {
    "bench_check": (["--repeats", "1"],),
    "bench_spec_limits": (["--knots", "2000", "--repeats", "1"],),
    "fuzz_specs": (["--n", "200"],),
}
SMOKE_KWARGS = {"fuzz_sketches": {"n": 30}}


@pytest.mark.slow
@pytest.mark.parametrize("path", SCRIPTS, ids=[p.stem for p in SCRIPTS])
def test_script_runs_quick(path, capsys, monkeypatch):
    monkeypatch.syspath_prepend(str(path.parent))  # as when run as a script
    module = load_script(path)
    if path.stem in SMOKE_ARGS:
        module.main(*SMOKE_ARGS[path.stem])
    else:
        module.main(**SMOKE_KWARGS.get(path.stem, {"quick": True}))
    assert capsys.readouterr().out.strip()  # it printed its figures
