"""The core stays light: loading a spec and sampling imports numpy only."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

SPEC = Path(__file__).parent / "data" / "spec-v1-pchip-atoms-exponential.json"
HEAVY = ["ipywidgets", "bqplot", "traitlets", "scipy", "matplotlib", "jsonschema", "pandas"]


def test_load_and_sample_import_nothing_heavy():
    code = (
        "import sys, json, cdfsketch\n"
        f"s = cdfsketch.load({str(SPEC)!r})\n"
        "s.sample(1000, rng=1); s.sampler().ppf([0.1, 0.9]); s.mean(); s.to_json()\n"
        f"print(json.dumps([m for m in {HEAVY!r} if m in sys.modules]))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert json.loads(out.stdout.strip().splitlines()[-1]) == []


def test_core_modules_import_only_numpy_and_stdlib():
    # module-level imports: numpy and the standard library only. Function-level imports
    # are allowed only where listed: validate_spec() runs the JSON Schema via jsonschema.
    import ast

    core = [
        "knots",
        "tails",
        "_pieces",
        "sketch",
        "sampler",
        "spec",
        "scipy_adapter",
        "empirical",
        "_version",
        "__init__",
    ]
    lazy_ok = {("spec", "jsonschema")}
    pkg = Path(__file__).parents[1] / "cdfsketch"
    allowed = set(sys.stdlib_module_names) | {"numpy", "__future__"}
    for name in core:
        path = pkg / f"{name}.py"
        if not path.exists():
            continue
        tree = ast.parse(path.read_text())
        for node in ast.walk(tree):
            if isinstance(node, ast.Import):
                mods = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.level == 0:
                mods = [node.module or ""]
            else:
                continue  # relative imports stay inside the package
            for mod in mods:
                top = mod.split(".")[0]
                assert top in allowed or (name, top) in lazy_ok, f"{name}.py imports {mod}"
