"""The input-set file: golden files, round trips, relative paths, schema agreement."""

from __future__ import annotations

import json
import os
from pathlib import Path

import numpy as np
import pytest

from cdfsketch import Sketch
from cdfsketch._validate import SpecError
from cdfsketch.inputs import (
    INPUTSET_FORMAT,
    InputSet,
    inputset_from_dict,
    inputset_schema,
    read_inputset,
)

DATA = Path(__file__).parents[1] / "data"
GOLDEN = sorted(DATA.glob("inputs-v1-*.json"))


def schema_errors(doc):
    import jsonschema

    validator = jsonschema.Draft202012Validator(inputset_schema())
    return list(validator.iter_errors(doc))


def test_schema_limits_agree_with_the_limit_table():
    from cdfsketch._limits import MAX_NAME_CHARS
    from cdfsketch.inputs import MAX_INPUTS

    sch = inputset_schema()
    assert sch["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    import jsonschema  # a test dependency (the reference validator)

    jsonschema.Draft202012Validator.check_schema(sch)
    assert sch["properties"]["name"]["maxLength"] == MAX_NAME_CHARS
    assert sch["$defs"]["input"]["properties"]["name"]["maxLength"] == MAX_NAME_CHARS
    assert sch["properties"]["inputs"]["maxItems"] == MAX_INPUTS


def test_golden_files_exist():
    assert {p.name for p in GOLDEN} == {"inputs-v1-inline.json", "inputs-v1-paths.json"}


@pytest.mark.parametrize("path", GOLDEN, ids=lambda p: p.name)
def test_golden_files_keep_loading_and_pass_the_schema(path):
    ins = read_inputset(path)
    assert ins.names == ("repair_hours", "part_cost", "delay")
    assert ins.rank_corr == {("part_cost", "repair_hours"): 0.6, ("delay", "part_cost"): -0.2}
    assert ins.name == "pump model (invented)"
    assert schema_errors(json.loads(path.read_text())) == []


def test_golden_files_give_the_same_pinned_draws():
    # fixed seed, hard-coded values (numpy's "desired" habit): both files describe one set
    inline, paths = (read_inputset(p) for p in GOLDEN)
    a, b = inline.sample(5, rng=2026), paths.sample(5, rng=2026)
    for name in inline.names:
        np.testing.assert_array_equal(a[name], b[name])
    got = {k: v.round(6).tolist() for k, v in a.items()}
    assert got == PINNED, got


PINNED = {
    "repair_hours": [2.488241, 1.282588, 2.884092, 3.627851, 3.480481],
    "part_cost": [1.746162, 0.382883, 3.349155, 3.015177, 1.045244],
    "delay": [29.99156, 15.441472, 22.459234, 5.921299, 56.825097],
}


def test_round_trip_gives_identical_draws(tmp_path):
    ins = read_inputset(GOLDEN[0])
    path = tmp_path / "set.json"
    text = ins.to_json(path)
    assert path.read_text() == text + "\n"
    assert [p.name for p in tmp_path.iterdir()] == ["set.json"]  # no stray temporary file
    again = read_inputset(path)
    for design in ("random", "lhs", "sobol"):
        a = ins.sample(512, rng=3, design=design)
        b = again.sample(512, rng=3, design=design)
        for name in ins.names:
            np.testing.assert_array_equal(a[name], b[name])
    assert again.to_dict() == ins.to_dict()
    assert inputset_from_dict(json.loads(text), base_dir=None).to_dict() == ins.to_dict()


def test_written_file_passes_the_schema():
    s = Sketch([0, 1], [0, 1])
    ins = InputSet({"a": s, "b": s}, rank_corr={("a", "b"): 0.3}, provenance={"k": [1, 2]})
    doc = ins.to_dict()
    assert doc["format"] == INPUTSET_FORMAT and schema_errors(doc) == []


def base_doc():
    return json.loads(GOLDEN[0].read_text())


def spec_doc():
    return base_doc()["inputs"][0]["spec"]


def by_path(doc, path):
    doc["inputs"][0].pop("spec")
    doc["inputs"][0]["path"] = path


BAD = [
    ("format", lambda d: d.update(format="cdfsketch-spec"), "format"),
    ("version", lambda d: d.update(version=2), "version"),
    ("unknown key", lambda d: d.update(extra=1), "the input-set file"),
    ("no inputs", lambda d: d.update(inputs=[]), "inputs"),
    ("both", lambda d: d["inputs"][0].update(path="a.json"), "inputs[0]"),
    ("neither", lambda d: d["inputs"][0].pop("spec"), "inputs[0]"),
    ("empty name", lambda d: d["inputs"][0].update(name=""), "inputs[0]"),
    ("duplicate", lambda d: d["inputs"][1].update(name="repair_hours"), "inputs[1].name"),
    ("absolute", lambda d: by_path(d, "/etc/x.json"), "inputs[0].path"),
    ("dotdot", lambda d: by_path(d, "../x.json"), "inputs[0].path"),
    ("windows drive", lambda d: by_path(d, "C:x.json"), "inputs[0].path"),
    ("pair key", lambda d: d["rank_corr"][0].update(c=1), "rank_corr[0]"),
    ("pair range", lambda d: d["rank_corr"][0].update(rank_corr=1.5), "rank_corr"),
    ("pair name", lambda d: d["rank_corr"][0].update(a="nobody"), "rank_corr"),
    ("bad spec", lambda d: d["inputs"][0]["spec"]["knots"]["p"].__setitem__(1, 2.0), "inputs[0]"),
    ("spec format", lambda d: d["inputs"][0]["spec"].update(format="x"), "inputs[0]"),
]  # fmt: skip


@pytest.mark.parametrize(("label", "change", "field"), BAD, ids=[b[0] for b in BAD])
def test_bad_files_refused_by_loader_and_schema(label, change, field, tmp_path):
    doc = base_doc()
    change(doc)
    with pytest.raises(SpecError) as info:
        inputset_from_dict(doc, base_dir=tmp_path)
    assert (info.value.field or "").startswith(field), (info.value.field, str(info.value))
    assert len(str(info.value)) < 800
    if label not in ("duplicate", "pair name", "bad spec"):  # rules beyond a schema's reach
        assert schema_errors(doc), label


def test_relative_paths_resolve_against_the_folder(tmp_path):
    (tmp_path / "specs").mkdir()
    Sketch([0, 1], [0, 1], name="a").to_json(tmp_path / "specs" / "a.json")
    doc = {
        "format": INPUTSET_FORMAT,
        "version": 1,
        "inputs": [{"name": "a", "path": "specs/a.json"}],
    }
    (tmp_path / "set.json").write_text(json.dumps(doc))
    assert read_inputset(tmp_path / "set.json").sketches["a"].name == "a"
    with pytest.raises(SpecError, match="needs the folder"):
        inputset_from_dict(doc, base_dir=None)
    doc["inputs"][0]["path"] = "specs/missing.json"
    with pytest.raises(SpecError, match="existing spec file"):
        inputset_from_dict(doc, base_dir=tmp_path)


@pytest.mark.skipif(os.name == "nt", reason="symbolic links need privileges on Windows")
def test_links_leading_outside_are_refused(tmp_path):
    outside = tmp_path / "outside.json"
    Sketch([0, 1], [0, 1]).to_json(outside)
    inner = tmp_path / "set"
    inner.mkdir()
    (inner / "link.json").symlink_to(outside)
    doc = {"format": INPUTSET_FORMAT, "version": 1, "inputs": [{"name": "a", "path": "link.json"}]}
    with pytest.raises(SpecError, match="inside the input-set file's folder"):
        inputset_from_dict(doc, base_dir=inner)


def test_nested_input_sets_are_refused(tmp_path):
    nested = tmp_path / "inner.json"
    nested.write_text(GOLDEN[0].read_text())
    doc = {"format": INPUTSET_FORMAT, "version": 1, "inputs": [{"name": "a", "path": "inner.json"}]}
    with pytest.raises(SpecError) as info:
        inputset_from_dict(doc, base_dir=tmp_path)
    assert info.value.field.startswith("inputs[0]")


def test_not_psd_in_a_file_shows_nearest():
    doc = base_doc()
    doc["rank_corr"] = [
        {"a": "repair_hours", "b": "part_cost", "rank_corr": 0.9},
        {"a": "repair_hours", "b": "delay", "rank_corr": 0.9},
        {"a": "part_cost", "b": "delay", "rank_corr": -0.9},
    ]
    with pytest.raises(SpecError, match="nearest valid target"):
        inputset_from_dict(doc, base_dir=None)


def test_bad_json_and_nan(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    with pytest.raises(SpecError, match="valid JSON"):
        read_inputset(bad)
    bad.write_text('{"format": "cdfsketch-inputs", "version": NaN}')
    with pytest.raises(SpecError, match="plain JSON"):
        read_inputset(bad)
