"""The JS spec reader (js/spec-reader.mjs) and its shared test vectors.

* The committed vectors (tests/data/js-vectors.json) must be what
  tests/data/make_js_vectors.py writes now, so they cannot go stale.
* The vectors themselves are checked against references outside the
  project (scipy's PCHIP, numpy's linear interpolation).
* node's built-in test runner checks the JS reader against the vectors.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import subprocess
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from _helpers import load_script

ROOT = Path(__file__).resolve().parents[2]
VECTORS = ROOT / "tests" / "data" / "js-vectors.json"
SCRIPT = ROOT / "tests" / "data" / "make_js_vectors.py"


def _script() -> Any:
    return load_script(SCRIPT, "cdfsketch_make_js_vectors")


@pytest.fixture(scope="module")
def vectors() -> dict[str, Any]:
    return json.loads(VECTORS.read_text(encoding="utf-8"))


def _decode(values: list[Any]) -> np.ndarray:
    return np.array([{"inf": np.inf, "-inf": -np.inf}.get(v, v) for v in values], dtype=float)


def _first_difference(a: Any, b: Any, where: str = "") -> str | None:
    """Where two JSON values differ; floats may differ by 4 ulps (libm exp/log differ by CPU)."""
    if isinstance(a, dict) and isinstance(b, dict):
        if list(a) != list(b):
            return f"{where or 'top'}: keys {list(a)} != {list(b)}"
        for key in a:
            found = _first_difference(a[key], b[key], f"{where}.{key}")
            if found:
                return found
        return None
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return f"{where}: length {len(a)} != {len(b)}"
        for i, (u, v) in enumerate(zip(a, b, strict=True)):
            found = _first_difference(u, v, f"{where}[{i}]")
            if found:
                return found
        return None
    if isinstance(a, float) and isinstance(b, float):
        if a == b or abs(a - b) <= 4 * math.ulp(max(abs(a), abs(b))):
            return None
        return f"{where}: {a!r} != {b!r}"
    if type(a) is not type(b) or a != b:
        return f"{where}: {a!r} != {b!r}"
    return None


def test_committed_vectors_are_current(tmp_path: Path) -> None:
    out = _script().write_vectors(tmp_path / "js-vectors.json")
    fresh = json.loads(out.read_text(encoding="utf-8"))
    committed = json.loads(VECTORS.read_text(encoding="utf-8"))
    difference = _first_difference(fresh, committed)
    assert difference is None, (
        f"tests/data/js-vectors.json is stale ({difference}). Regenerate it with "
        "`python tests/data/make_js_vectors.py` and run `node --test js/test/`."
    )
    assert VECTORS.stat().st_size < 500_000, "keep the vectors small (< 500 KB)"


def test_vectors_cover_what_the_reader_must_handle(vectors: dict[str, Any]) -> None:
    specs = [c["spec"] for c in vectors["cases"]]
    kinds = {(t["kind"], t.get("density") or t.get("scale_rule"), side)
             for s in specs for side, t in s["tails"].items()}  # fmt: skip
    for side in ("lower", "upper"):
        for kind, detail in (
            ("bounded", "uniform"),
            ("bounded", "taper"),
            ("exponential", "stated"),
            ("exponential", "continue-density"),
        ):
            assert (kind, detail, side) in kinds
    assert {s["interpolation"] for s in specs} == {"linear", "pchip"}
    # atoms inside, at the lower end and at the upper end
    xs = [np.asarray(s["knots"]["x"]) for s in specs]
    assert any(x[0] == x[1] for x in xs) and any(x[-1] == x[-2] for x in xs)
    assert any(np.any(np.diff(x)[1:-1] == 0) for x in xs)
    assert max(x.size for x in xs) >= 300
    assert any(np.any(np.abs(x) >= 1e9) for x in xs)


def _pchip_cases(vectors: dict[str, Any]) -> list[dict[str, Any]]:
    out = []
    for c in vectors["cases"]:
        x = np.asarray(c["spec"]["knots"]["x"])
        if c["spec"]["interpolation"] == "pchip" and np.all(np.diff(x) > 0):
            out.append(c)
    return out


def _continued_pchip(spec: dict[str, Any], kx: np.ndarray, kp: np.ndarray) -> Any:
    """scipy's PCHIP, with a zero end slope set to the outer secant where a derived
    exponential tail holds mass beyond that end (the tail continues that density)."""
    from scipy.interpolate import CubicHermiteSpline, PchipInterpolator

    d = PchipInterpolator(kx, kp).derivative()(kx)
    tails = spec["tails"]
    # scipy's zero end slope is evaluated to rounding (e.g. -5e-23): zero relative to the secant
    lo, hi = (kp[1] - kp[0]) / (kx[1] - kx[0]), (kp[-1] - kp[-2]) / (kx[-1] - kx[-2])
    if tails["lower"].get("scale_rule") == "continue-density" and kp[0] > 0:
        if abs(d[0]) <= 1e-9 * lo:
            d[0] = lo
    if tails["upper"].get("scale_rule") == "continue-density" and 1 - kp[-1] > 0:
        if abs(d[-1]) <= 1e-9 * hi:
            d[-1] = hi
    return CubicHermiteSpline(kx, kp, d)


def test_pchip_vectors_match_scipy(vectors: dict[str, Any]) -> None:
    # Reference: scipy.interpolate's PCHIP slopes (Fritsch–Carlson monotone cubic with
    # scipy's one-sided three-point end slopes) in a CubicHermiteSpline, with the package's
    # stated end rule for derived tails applied (_continued_pchip), between the knots.
    cases = _pchip_cases(vectors)
    assert len(cases) >= 6
    for c in cases:
        kx, kp = (np.asarray(c["spec"]["knots"][k]) for k in ("x", "p"))
        ref = _continued_pchip(c["spec"], kx, kp)
        x = _decode(c["x"])
        inside = (x >= kx[0]) & (x < kx[-1])
        np.testing.assert_allclose(_decode(c["cdf"])[inside], ref(x[inside]), rtol=0, atol=1e-12)
        pdf = _decode(c["pdf"])
        np.testing.assert_allclose(  # relative to the largest density of the sketch
            pdf[inside],
            np.maximum(ref.derivative()(x[inside]), 0.0),
            rtol=0,
            atol=1e-12 * pdf.max(),
            err_msg=c["label"],
        )


def test_derived_exponential_scale_continues_scipy_density(vectors: dict[str, Any]) -> None:
    # REFERENCES: "exponential λ = f_n / (1 − p_n) continues density": scale = tail mass / f,
    # with f the PCHIP density at the outer knot (scipy.interpolate.PchipInterpolator).
    from scipy.interpolate import PchipInterpolator

    checked = 0
    for c in _pchip_cases(vectors):
        spec = c["spec"]
        kx, kp = (np.asarray(spec["knots"][k]) for k in ("x", "p"))
        slope = PchipInterpolator(kx, kp).derivative()
        for side, mass, edge in (("lower", kp[0], kx[0]), ("upper", 1 - kp[-1], kx[-1])):
            tail = spec["tails"][side]
            f = float(slope(edge))
            if tail.get("scale_rule") != "continue-density" or mass <= 0 or f <= 0:
                continue
            assert math.isclose(tail["scale"], mass / f, rel_tol=1e-12), c["label"]
            checked += 1
    assert checked >= 4


def test_linear_vectors_match_numpy_interp(vectors: dict[str, Any]) -> None:
    # Reference: numpy.interp (piecewise-linear interpolation) for F between the knots and,
    # with p strictly increasing, for its inverse.
    checked = 0
    for c in vectors["cases"]:
        spec = c["spec"]
        kx, kp = (np.asarray(spec["knots"][k]) for k in ("x", "p"))
        if spec["interpolation"] != "linear" or not np.all(np.diff(kx) > 0):
            continue
        x = _decode(c["x"])
        inside = (x >= kx[0]) & (x <= kx[-1])
        np.testing.assert_allclose(
            _decode(c["cdf"])[inside], np.interp(x[inside], kx, kp), rtol=0, atol=1e-12
        )
        if np.all(np.diff(kp) > 0):
            u = _decode(c["u"])
            body = (u >= kp[0]) & (u <= kp[-1]) & (u > 0) & (u < 1)
            np.testing.assert_allclose(
                _decode(c["ppf"])[body],
                np.interp(u[body], kp, kx),
                rtol=1e-12,
                atol=1e-12 * (kx[-1] - kx[0]),
                err_msg=c["label"],
            )
        checked += 1
    assert checked >= 5


def test_node_runs_the_js_reader_tests() -> None:
    node = shutil.which("node")
    if node is None:
        if os.environ.get("CI"):
            pytest.fail("node is not installed; CI must run the JS reader tests (install nodejs).")
        pytest.skip("node is not installed: the JS spec reader tests did not run")
    proc = subprocess.run(
        [node, "--test", "js/test/"],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=300,
        check=False,
    )
    output = proc.stdout + proc.stderr
    assert proc.returncode == 0, f"node --test js/test/ failed:\n{output[-6000:]}"
    passed = [int(line.split()[-1]) for line in output.splitlines() if line.startswith("# pass ")]
    failed = [int(line.split()[-1]) for line in output.splitlines() if line.startswith("# fail ")]
    assert passed and passed[-1] > 50, f"expected the JS tests to run:\n{output[-3000:]}"
    assert failed == [0], output[-3000:]
