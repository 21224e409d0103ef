"""The house's structure: imports point down, no cycles, and the core stays numpy-only.

The import graph is read from the source (``ast``), counting imports inside
functions too (a lazy import is still an edge) but not those under
``if TYPE_CHECKING:`` (never executed). Importing ``a.b.c`` also executes the
package ``a.b``'s ``__init__``, so that is an edge as well — except for the
top package ``cdfsketch``, whose ``__init__`` only re-exports.
"""

from __future__ import annotations

import ast
import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).parents[1]
PKG = ROOT / "cdfsketch"
SPEC = ROOT / "tests" / "data" / "spec-v1-pchip-atoms-exponential.json"
HEAVY = ["ipywidgets", "bqplot", "traitlets", "scipy", "matplotlib", "jsonschema", "pandas", "dask"]

#: What a simulation needs: numpy and the standard library only, at import time and
#: in every function (optional modules come through cdfsketch._extras.need by name).
CORE = [
    "__init__", "_version", "_validate", "_frozen", "_streams", "_limits", "_extras",
    "_files", "_numfmt", "_progress", "holdout", "knots", "tails", "_pieces", "sketch",
    "sampler", "summary", "scipy_adapter", "spec", "loading", "inputs", "empirical",
    "protocol", "_blocks", "_distribution", "_inverse", "_tables",
]  # fmt: skip


def _module_name(path: Path) -> str:
    rel = path.relative_to(ROOT).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _modules() -> dict[str, Path]:
    return {_module_name(p): p for p in PKG.rglob("*.py")}


def _is_type_checking(node: ast.If) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING"
    )


def _imports(path: Path) -> list[tuple[ast.AST, str, list[str]]]:
    """(node, absolute module, names) for every executed import in ``path``."""
    name = _module_name(path)
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found: list[tuple[ast.AST, str, list[str]]] = []

    def visit(node: ast.AST) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.If) and _is_type_checking(child):
                for sub in child.orelse:
                    visit(sub)
                continue
            if isinstance(child, ast.Import):
                for alias in child.names:
                    found.append((child, alias.name, []))
            elif isinstance(child, ast.ImportFrom):
                if child.level:
                    base = package.split(".")
                    base = base[: len(base) - (child.level - 1)]
                    mod = ".".join([*base, child.module] if child.module else base)
                else:
                    mod = child.module or ""
                found.append((child, mod, [a.name for a in child.names]))
            visit(child)

    visit(ast.parse(path.read_text(encoding="utf-8")))
    return found


def _edges() -> dict[str, set[str]]:
    modules = _modules()
    graph: dict[str, set[str]] = {m: set() for m in modules}
    for mod, path in modules.items():
        for _node, target, names in _imports(path):
            if not target.startswith("cdfsketch"):
                continue
            hits = [f"{target}.{n}" for n in names if f"{target}.{n}" in modules]
            if (target in modules and len(hits) < len(names)) or not names:
                hits.append(target)
            parts = target.split(".")
            own = {".".join(mod.split(".")[:k]) for k in range(1, mod.count(".") + 1)}
            # parent packages of the target run first, unless they are our own ancestors
            hits += [p for k in range(2, len(parts)) if (p := ".".join(parts[:k])) not in own]
            graph[mod].update(h for h in hits if h in modules and h != mod)
    return graph


def test_the_import_graph_has_no_cycles():
    graph = _edges()
    state: dict[str, int] = {}
    stack: list[str] = []
    cycles: list[list[str]] = []

    def walk(m: str) -> None:
        state[m] = 1
        stack.append(m)
        for n in sorted(graph[m]):
            if n == "cdfsketch":
                continue  # the top package only re-exports (see the module docstring)
            if state.get(n) == 1:
                cycles.append([*stack[stack.index(n) :], n])
            elif n not in state:
                walk(n)
        stack.pop()
        state[m] = 2

    for m in sorted(graph):
        if m not in state:
            walk(m)
    assert not cycles, "import cycles:\n" + "\n".join(" -> ".join(c) for c in cycles)


def test_cycle_finder_sees_a_lazy_import(tmp_path, monkeypatch):
    # the graph reader must count an import inside a function (else the test above is empty)
    fake = tmp_path / "cdfsketch"
    fake.mkdir()
    (fake / "__init__.py").write_text("")
    (fake / "a.py").write_text("from . import b\n")
    (fake / "b.py").write_text("def f():\n    from .a import g\n")
    monkeypatch.setattr(sys.modules[__name__], "ROOT", tmp_path)
    monkeypatch.setattr(sys.modules[__name__], "PKG", fake)
    graph = _edges()
    assert "cdfsketch.a" in graph["cdfsketch.b"] and "cdfsketch.b" in graph["cdfsketch.a"]


def _core_files() -> list[Path]:
    files: list[Path] = []
    for name in CORE:
        single, package = PKG / f"{name}.py", PKG / name
        if single.exists():
            files.append(single)
        if package.is_dir():
            files.extend(sorted(package.rglob("*.py")))
    return files


@pytest.mark.parametrize("path", _core_files(), ids=lambda p: str(p.relative_to(PKG)))
def test_core_imports_only_numpy_and_the_standard_library(path):
    allowed = set(sys.stdlib_module_names) | {"numpy", "__future__"}
    for node, target, _names in _imports(path):
        if isinstance(node, ast.ImportFrom) and node.level:
            continue  # inside the package; the layering test covers those
        top = target.split(".")[0]
        assert top in allowed or top == "cdfsketch", (
            f"{path.relative_to(ROOT)}:{node.lineno} imports {target}; the core needs numpy "
            "only — load optional modules with cdfsketch._extras.need(extra, module)"
        )


def test_load_and_sample_import_nothing_heavy():
    code = (
        "import sys, json, cdfsketch\n"
        f"s = cdfsketch.load({str(SPEC)!r})\n"
        "s.sample(1000, rng=1); s.sampler().ppf([0.1, 0.9]); s.mean(); s.to_json()\n"
        f"print(json.dumps([m for m in {HEAVY!r} if m in sys.modules]))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert json.loads(out.stdout.strip().splitlines()[-1]) == []


def test_modules_stay_small():
    # one person can hold a module in mind; the few exceptions say why
    reasons = {
        "cli.py": "one command line: the argparse help of every argument of seven subcommands "
        "(about 170 lines of user-facing text) beside the commands it documents",
    }
    long = {
        str(p.relative_to(PKG)): n
        for p in PKG.rglob("*.py")
        if (n := len(p.read_text(encoding="utf-8").splitlines())) > 520
    }
    assert set(long) <= set(reasons), f"modules over ~500 lines: {long}"


def test_a_missing_extra_is_one_error_naming_it(monkeypatch, tmp_path):
    import cdfsketch.widgets
    from cdfsketch import demo

    monkeypatch.setitem(sys.modules, "ipywidgets", None)  # as if not installed
    with pytest.raises(ImportError, match=r"pip install 'cdfsketch\[notebook\]'"):
        cdfsketch.widgets.Editor  # noqa: B018
    monkeypatch.setitem(sys.modules, "scipy", None)
    with pytest.raises(ImportError, match=r"pip install 'cdfsketch\[fit\]'"):
        demo.run(tmp_path / "demo", echo=lambda line: None)
    assert not (tmp_path / "demo").exists()  # nothing written before the check
