"""Hostile and edge inputs to the loader: every failure is a SpecError, in bounded time.

Regression cases of the outside fuzzing run (issue 15) and of the write and
check findings (issue 16), each minimal.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from cdfsketch.loading import load, validate_spec
from cdfsketch.sketch import Sketch
from cdfsketch.spec import MAX_DEPTH, SpecError, dump_spec, read_json

DATA = Path(__file__).resolve().parents[1] / "data"
GOLDEN = DATA / "spec-v1-linear-bounded.json"
JUDGES = [load, validate_spec]


def golden() -> dict:
    return json.loads(GOLDEN.read_text(encoding="utf-8"))


def refused(obj, match: str) -> None:
    for judge in JUDGES:
        with pytest.raises(SpecError, match=match) as info:
            judge(obj)
        assert len(str(info.value)) < 600, "a message quotes at most ~80 characters of a value"


def test_bytes_that_are_not_utf8(tmp_path):
    raw = b"N\xf1\xc3.\xa6\xef\xb8$*Rh\x91\x9b\xe2\xf7\xd9"
    refused(raw, r"must be UTF-8 text; got the byte b'\\xf1' at byte 1")
    path = tmp_path / "latin1.json"
    path.write_bytes(GOLDEN.read_text().replace('"units": "', '"units": "\xe9').encode("latin-1"))
    refused(path, "must be UTF-8 text")


@pytest.mark.parametrize("depth", [MAX_DEPTH + 1, 3000, 200_000])
def test_deep_nesting_in_text_is_refused_before_parsing(depth):
    text = json.dumps(golden()).replace('"name": ', '"name": ' + "[" * depth + "]" * depth + ", "
                                        '"n2": ', 1)  # fmt: skip
    refused(text, f"nest at most {MAX_DEPTH} levels deep; got {depth + 1} levels")


def _nested(levels: int) -> dict:
    # a spec whose deepest container is at `levels` (the spec object itself is level 1)
    spec = golden()
    node: list = []
    for _ in range(levels - 4):
        node = [node]
    spec["provenance"] = {"extra": {"deep": node}}
    return spec


def test_the_depth_limit_is_exact_for_text_and_dicts():
    for make in (lambda lv: _nested(lv), lambda lv: json.dumps(_nested(lv))):
        for judge in JUDGES:
            judge(make(MAX_DEPTH))
        refused(make(MAX_DEPTH + 1), f"nest at most {MAX_DEPTH} levels deep")


def test_deep_and_cyclic_dicts_passed_directly():
    spec = golden()
    deep: list = []
    node = deep
    for _ in range(5000):
        node.append([])
        node = node[0]
    spec["provenance"] = {"extra": {"deep": deep}}
    refused(spec, "nest at most 32 levels")
    cyclic = golden()
    cyclic["provenance"] = {"extra": {}}
    cyclic["provenance"]["extra"]["self"] = cyclic["provenance"]
    refused(cyclic, "nest at most 32 levels")


def test_huge_integer_literals():
    text = json.dumps(golden()).replace("0.5", "9" * 5000, 1)
    refused(text, "at most 1000 digits; got a literal of 5,000 digits")
    text = json.dumps(golden()).replace("0.5", "9" * 999, 1)  # a legal literal, beyond float
    refused(text, r"must be a finite number.*got an integer of 999 digits")
    spec = golden()
    spec["provenance"] = {"extra": {"n": 10**5000}}
    refused(spec, "must be a moderate number")


@pytest.mark.parametrize(
    "text",
    ["A" * 256, "a/" * 3000, "x" * 100_000, "no such file.json", "line\nbreak", "nul\x00", " "],
)
def test_strings_that_are_neither_json_nor_a_file(text):
    refused(text, "(must name an existing file|neither|name a file that can be read)")


def test_json_looking_long_string_and_a_folder(tmp_path):
    refused("{" + "a" * 100_000, "must be valid JSON")
    refused(tmp_path, "must name an existing file")
    refused("   [1, 2]", "must be a JSON object; got a JSON array")


def test_non_finite_numbers_in_a_dict_name_the_field():
    spec = golden()
    spec["knots"]["x"][1] = float("nan")
    refused(spec, r"knots.x\[1\] must be a finite number; got nan")
    spec = golden()
    spec["provenance"] = {"extra": {"w": float("inf")}}
    refused(spec, r"provenance.extra.w must be a finite number; got inf")


@pytest.mark.parametrize("escape", ["\\ud800", "\\udfff"])
def test_lone_surrogates_are_refused_where_they_enter(escape):
    text = json.dumps(golden()).replace('"units": "', f'"units": "{escape}', 1)
    refused(text, "Text in units must be writable as UTF-8; got an unpaired surrogate")
    spec = golden()
    spec["provenance"] = {"extra": {"k\ud800": 1}}
    refused(spec, "unpaired surrogate")


def test_a_failed_write_leaves_nothing_behind(tmp_path):
    spec = golden()
    spec["provenance"] = {"notes": "ok\ud800"}
    target = tmp_path / "s.json"
    with pytest.raises(SpecError, match=r"provenance\.notes must be writable as UTF-8"):
        dump_spec(spec, target)
    assert list(tmp_path.iterdir()) == []
    with pytest.raises(ValueError, match="folder of the spec file must exist"):
        dump_spec(golden(), tmp_path / "missing" / "s.json")
    assert list(tmp_path.iterdir()) == []
    dump_spec(golden(), target)
    assert [p.name for p in tmp_path.iterdir()] == ["s.json"]


def test_provenance_with_a_surrogate_cannot_enter_a_sketch(tmp_path):
    with pytest.raises(ValueError, match="unpaired surrogate"):
        Sketch([0, 1], [0, 1], provenance={"notes": "\ud800"})


def test_messages_quote_at_most_80_characters_of_a_value():
    spec = golden()
    spec["name"] = 12345678901234567890 * 10**60
    spec["units"] = ["u" * 1_000_000]
    for judge in JUDGES:
        with pytest.raises(SpecError) as info:
            judge(spec)
        assert len(str(info.value)) < 400
    spec = golden()
    spec["knots"] = {"x": ["a"] * 1_000_000, "p": [0] * 1_000_000}
    with pytest.raises(SpecError) as info:
        validate_spec(spec)
    assert len(str(info.value)) < 400


def _knots_text(n: int, *, valid: bool) -> str:
    x = np.arange(n, dtype=float)
    p = np.linspace(0, 1, n) if valid else np.linspace(1, 0, n)
    spec = golden()
    spec["interpolation"] = "linear"
    spec["knots"] = {"x": x.tolist(), "p": p.tolist()}
    spec["tails"] = {
        "lower": {"kind": "bounded", "limit": 0.0, "density": "uniform"},
        "upper": {"kind": "bounded", "limit": float(n - 1), "density": "uniform"},
    }
    return json.dumps(spec)


def test_sizes_are_checked_before_anything_else():
    # the size limits fire first (timings: tests/bench/bench_spec_limits.py)
    text = _knots_text(1_000_000, valid=True)
    refused(text, "at most 10,000,000 bytes")
    refused(json.loads(text), "must hold 2 to 100,000 numbers; got 1,000,000")
    refused(_knots_text(100_000, valid=False), "non-decreasing")


def test_a_spec_at_the_limit_is_accepted_by_both_judges():
    text = _knots_text(100_000, valid=True)
    assert len(load(text)) == 100_000
    validate_spec(text)


def test_text_path_and_bytes_give_the_same_sketch_and_the_path_gives_its_folder():
    s = load(GOLDEN)
    assert load(str(GOLDEN)) == load(GOLDEN.read_bytes()) == load(GOLDEN.read_text()) == s
    assert read_json(GOLDEN)[1] == GOLDEN.resolve().parent
    assert read_json(GOLDEN.read_text())[1] is None


def test_depth_scan_ignores_brackets_in_strings_and_escaped_quotes():
    from cdfsketch.spec._json import _depth

    inner = '"[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[ \\" [[[[[["'
    assert _depth('{"a": ' + inner + ', "b": [[1]]}') == 3
    assert _depth('{"a": "\\\\", "b": ' + "[" * 40 + "]" * 40 + "}") == 41
    # a text of many escaped quotes is scanned in linear time (a regex would be quadratic)
    refused('{"a": "' + '\\"' * 2_000_000 + '", "b": ' + "[" * 40 + "]" * 40 + "}", "nest at most")
