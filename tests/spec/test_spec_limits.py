"""One limit table: the loader, the JSON Schema and the JS reader state the same numbers."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from cdfsketch import _limits
from cdfsketch.loading import load
from cdfsketch.sketch import Sketch
from cdfsketch.spec import MAX_DEPTH, SCHEMAS, SpecError, migrate, schema
from cdfsketch.spec._schema import KEYWORDS

ROOT = Path(__file__).resolve().parents[2]
JS = ROOT / "js" / "spec-reader.mjs"


def _js_constants() -> dict[str, float]:
    text = JS.read_text(encoding="utf-8")
    found = re.findall(r"^export const (\w+) = ([0-9.e+-]+);", text, flags=re.M)
    return {name: float(value) for name, value in found}


def test_schema_states_the_limit_table():
    s = schema()
    knots = s["properties"]["knots"]["properties"]
    tail_bounded, tail_exp = s["$defs"]["tail"]["oneOf"]
    prov = s["$defs"]["provenance"]["properties"]
    assert knots["x"]["maxItems"] == knots["p"]["maxItems"] == _limits.MAX_KNOTS
    assert knots["x"]["items"]["maximum"] == -knots["x"]["items"]["minimum"] == _limits.MAX_ABS_X
    assert tail_bounded["properties"]["limit"]["maximum"] == _limits.MAX_ABS_X
    assert tail_bounded["properties"]["limit"]["minimum"] == -_limits.MAX_ABS_X
    assert tail_exp["then"]["properties"]["scale"]["maximum"] == _limits.MAX_SCALE
    assert s["properties"]["name"]["maxLength"] == _limits.MAX_NAME_CHARS
    assert s["properties"]["units"]["maxLength"] == _limits.MAX_UNITS_CHARS
    for key in ("author", "created", "rationale", "package_version", "method", "notes"):
        assert prov[key]["maxLength"] == _limits.MAX_TEXT_CHARS, key
    assert prov["data"]["properties"]["label"]["maxLength"] == _limits.MAX_NAME_CHARS
    assert prov["contributors"]["items"]["properties"]["name"]["maxLength"] == (
        _limits.MAX_NAME_CHARS
    )


def test_js_reader_states_the_limit_table():
    js = _js_constants()
    assert js["MAX_KNOTS"] == _limits.MAX_KNOTS
    assert js["MAX_SPEC_CHARS"] == _limits.MAX_SPEC_BYTES
    for name in ("MAX_ABS_X", "MIN_SPACING", "MAX_SCALE", "MAX_NAME_CHARS", "MAX_UNITS_CHARS"):
        assert js[name] == getattr(_limits, name), name
    assert js["MAX_TEXT_CHARS"] == _limits.MAX_TEXT_CHARS
    assert js["MAX_DEPTH"] == MAX_DEPTH  # the reader's own guard (cdfsketch.spec)


def test_every_limit_of_the_table_is_used_by_the_reader():
    # each limit of a single spec appears in the JS reader and (but the byte and spacing
    # limits) in the schema; MAX_INPUTS belongs to input-set files (their schema only)
    text = json.dumps(schema())
    js = _js_constants()
    for name in _limits.__all__:
        if name == "MAX_INPUTS":
            assert f'"maxItems": {_limits.MAX_INPUTS}' in json.dumps(schema("inputs"))
            continue
        value = getattr(_limits, name)
        assert name in js or name == "MAX_SPEC_BYTES", name
        if name not in ("MAX_SPEC_BYTES", "MIN_SPACING"):
            assert repr(value) in text, name


@pytest.mark.parametrize(
    "path", sorted(p.name for p in SCHEMAS.iterdir() if p.name.endswith(".json"))
)
def test_shipped_schemas_are_valid_and_use_only_supported_keywords(path):
    # Reference: jsonschema's Draft 2020-12 metaschema check
    import jsonschema

    sch = json.loads((SCHEMAS / path).read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(sch)

    def walk(node, where):
        if isinstance(node, dict):
            for key, value in node.items():
                if where and where[-1] in ("properties", "$defs"):
                    walk(value, (*where, key))
                    continue
                assert key in KEYWORDS, f"{path}: unsupported keyword {key!r} at {where}"
                walk(value, (*where, key))
        elif isinstance(node, list):
            for item in node:
                walk(item, where)

    walk(sch, ())


def test_names_and_units_at_the_limit_save_and_load():
    s = Sketch([0, 1], [0, 1], name="A" * _limits.MAX_NAME_CHARS, units="u" * 100)
    t = load(s.to_json())
    assert (t.name, t.units) == (s.name, s.units)


@pytest.mark.parametrize(
    ("field", "value"), [("name", "A" * 501), ("units", "u" * 101), ("name", "\ud800")]
)
def test_what_the_constructor_accepts_saves_and_loads(field, value):
    # One limit table: the constructor refuses what the loader would refuse; whatever it
    # accepts, to_json writes and load reads back.
    with pytest.raises(ValueError, match=field):
        Sketch([0, 1], [0, 1], **{field: value})
    ok = {"name": "A" * 500, "units": "u" * 100}.get(field, "\u00e9")
    s = Sketch([0, 1], [0, 1], **{field: ok})  # at the limit: made, saved and read back
    assert getattr(load(s.to_json()), field) == ok


def test_migration_from_version_1_to_current():
    from cdfsketch.spec import VERSION

    spec = json.loads((ROOT / "tests" / "data" / "spec-v1-linear-bounded.json").read_text())
    out = migrate(spec)
    assert out["version"] == VERSION
    assert out == spec  # version 1 is current: nothing changes
    with pytest.raises(SpecError, match="newer than cdfsketch"):
        migrate({**spec, "version": VERSION + 1})
    with pytest.raises(SpecError, match=r"version must be an integer ≥ 1; got 0"):
        migrate({**spec, "version": 0})


def test_validate_spec_imports_no_schema_library_and_the_spec_package_no_sketch():
    import ast
    import subprocess
    import sys

    code = (
        "import sys; from cdfsketch.loading import validate_spec; "
        f"validate_spec({str(ROOT / 'tests' / 'data' / 'spec-v1-linear-bounded.json')!r}); "
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('jsonschema', 'scipy')))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=ROOT
    )
    assert out.stdout.strip() == "[]"
    # the spec package sits below the sketch: no import of it, not even inside a function
    for path in (ROOT / "cdfsketch" / "spec").glob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                names = {node.module or "", *(a.name for a in node.names)}
                assert "sketch" not in names and "..sketch" not in names, path.name
