"""The code base stays ruff clean (lint and format), notebooks included."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _ruff(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "ruff", *args], cwd=ROOT, capture_output=True, text=True
    )


@pytest.fixture(scope="module")
def ruff_available() -> None:
    if _ruff("--version").returncode != 0:
        if os.environ.get("CI"):
            pytest.fail("ruff is missing in CI: it comes with the 'test' extra")
        pytest.skip("ruff not installed (pip install -e '.[test]')")


@pytest.mark.parametrize("args", [("check", "."), ("format", "--check", ".")])
def test_ruff_clean(ruff_available, args):
    done = _ruff(*args)
    assert done.returncode == 0, done.stdout + done.stderr
