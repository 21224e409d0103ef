"""The command line: check, summary, sample, ppf."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np

from cdfsketch import load
from cdfsketch.cli import main

GOLDEN = Path(__file__).parent / "data" / "spec-v1-linear-bounded.json"


def test_check_ok_and_bad(tmp_path, capsys):
    assert main(["check", str(GOLDEN)]) == 0
    bad = tmp_path / "bad.json"
    spec = json.loads(GOLDEN.read_text())
    spec["knots"]["p"][1] = 2.0
    bad.write_text(json.dumps(spec))
    assert main(["check", str(GOLDEN), str(bad)]) == 1
    out = capsys.readouterr().out
    assert "ok" in out and "knots.p[1]" in out


def test_sample_matches_python_api(tmp_path):
    out = tmp_path / "draws.npy"
    assert main(["sample", str(GOLDEN), "--size", "1000", "--seed", "5", "--out", str(out)]) == 0
    np.testing.assert_array_equal(np.load(out), load(GOLDEN).sample(1000, rng=5))
    txt = tmp_path / "draws.csv"
    assert main(["sample", str(GOLDEN), "--size", "10", "--seed", "5", "--out", str(txt)]) == 0
    np.testing.assert_array_equal(np.loadtxt(txt), load(GOLDEN).sample(10, rng=5))


def test_sample_bad_suffix(tmp_path, capsys):
    code = main(["sample", str(GOLDEN), "--size", "3", "--out", str(tmp_path / "x.xlsx")])
    assert code == 1 and "must end in .npy, .csv or .txt" in capsys.readouterr().err


def test_ppf_and_summary_as_a_process():
    res = subprocess.run(
        [sys.executable, "-m", "cdfsketch.cli", "ppf", str(GOLDEN), "0.5"],
        capture_output=True,
        text=True,
        check=True,
    )
    assert float(res.stdout.split()[1]) == load(GOLDEN).ppf(0.5)
    res = subprocess.run(
        [sys.executable, "-m", "cdfsketch.cli", "summary", str(GOLDEN)],
        capture_output=True,
        text=True,
        check=True,
    )
    assert "mean" in res.stdout.lower()
