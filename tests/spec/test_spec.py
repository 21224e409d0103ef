"""The spec: round trips, golden files, validation messages, size limits."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np
import pytest

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch, SpecError
from cdfsketch.loading import load, validate_spec
from cdfsketch.spec import MAX_KNOTS, data_fingerprint, dump_spec, schema

DATA = Path(__file__).resolve().parents[1] / "data"
GOLDEN = sorted(DATA.glob("spec-v1-*.json"))


def good_spec() -> dict:
    return Sketch(
        [0, 1, 3],
        [0.1, 0.5, 0.9],
        interpolation="pchip",
        name="n",
        units="u",
        upper_tail=BoundedTail(5.0),
    ).to_spec(author="me")


GOLDEN_NAMES = (
    "spec-v1-linear-bounded.json",
    "spec-v1-pchip-atoms-exponential.json",
    "spec-v1-pooled-stated-scale.json",
)


def test_golden_files_exist_and_are_specs():
    # every named golden file is present, no file is unlisted, and each is a version-1 spec
    assert tuple(p.name for p in GOLDEN) == GOLDEN_NAMES
    for path in GOLDEN:
        raw = json.loads(path.read_text(encoding="utf-8"))
        assert (raw["format"], raw["version"]) == ("cdfsketch-spec", 1)


@pytest.mark.parametrize("path", GOLDEN, ids=[p.stem for p in GOLDEN])
def test_golden_files_load_and_validate(path):
    s = load(path)
    validate_spec(path)
    assert load(path.read_text()) == s == load(json.loads(path.read_text()))
    # round trip through our writer gives the same sketch and the same draws
    again = load(s.to_json())
    assert again == s
    np.testing.assert_array_equal(again.sample(1000, rng=9), s.sample(1000, rng=9))


def test_golden_linear_bounded_values():
    # hand computation (piecewise-uniform density): F(1) = 0.1 (1 - 0.5) / (2 - 0.5);
    # F(3) = 0.1 + 0.4 (3 - 2) / 1.5; the upper taper: 1 - F(x) = 0.03 ((20 - x) / 11)^2
    s = load(DATA / "spec-v1-linear-bounded.json")
    np.testing.assert_allclose(s.cdf([1.0, 3.0]), [0.1 * 0.5 / 1.5, 0.1 + 0.4 / 1.5], rtol=1e-15)
    assert s.sf(14.5) == pytest.approx(0.03 * (5.5 / 11) ** 2, rel=1e-13)
    assert s.support == (0.5, 20.0)


# Fixed-seed draws of each golden spec, computed once with this version and pasted as
# literals (numpy's `desired`-array habit): a change in the draws breaks reproducibility
# for users and needs a version note. rtol 1e-12 leaves room for libm exp/log by CPU only.
DESIRED = {
    "spec-v1-linear-bounded.json": [
        3.042261094140299, 2.223681680608696, 1.6465919701603278,
        4.8524111984062275, 3.0072972074521704, 3.340736727256669,
    ],
    "spec-v1-pchip-atoms-exponential.json": [
        1.4062397098210422, 0.07338311566933035, 0.0,
        4.0, 1.3612789403181105, 1.7761688992341607,
    ],
    "spec-v1-pooled-stated-scale.json": [
        17.287473150461032, 12.436632181384864, 10.587543659496783,
        27.88906532403633, 17.08027974786471, 19.056217643002483,
    ],
}  # fmt: skip
DESIRED_PPF = {  # the compiled sampler's ppf at u = 0.001, 0.25, 0.5, 0.999
    "spec-v1-linear-bounded.json": [0.515, 2.5625, 3.5, 17.99168395619596],
    "spec-v1-pchip-atoms-exponential.json": [
        0.0, 0.6947572839465753, 1.9737375614057824, 18.736069016284464,
    ],
    "spec-v1-pooled-stated-scale.json": [
        -1.7360690162844374, 14.444444444444445, 20.0, 93.90028756785182,
    ],
}  # fmt: skip


@pytest.mark.parametrize("name", GOLDEN_NAMES)
def test_golden_draws_are_pinned(name):
    s = load(DATA / name)
    np.testing.assert_allclose(s.sample(6, rng=20261202), DESIRED[name], rtol=1e-12, atol=0)
    u = np.array([0.001, 0.25, 0.5, 0.999])
    np.testing.assert_allclose(s.sampler().ppf(u), DESIRED_PPF[name], rtol=1e-12, atol=0)


def test_golden_draws_invert_the_same_uniforms():
    # the draws are the exact ppf of the generator's uniforms, to the sampler's accuracy
    t = load(DATA / "spec-v1-pchip-atoms-exponential.json")
    u = np.random.default_rng(20261202).random(6)
    np.testing.assert_allclose(t.sample(6, rng=20261202), t.ppf(u), rtol=0, atol=1e-9)


def test_round_trip_preserves_everything():
    s = Sketch(
        [0, 1, 1, 3],
        [0.05, 0.3, 0.6, 0.97],
        interpolation="pchip",
        name="x",
        units="kg",
        lower_tail=ExponentialTail(2.0),
        upper_tail=BoundedTail(9.0, density="taper"),
        provenance={"author": "A", "rationale": "why"},
    )
    t = load(s.to_json())
    assert (t.x.tolist(), t.p.tolist()) == (s.x.tolist(), s.p.tolist())
    assert t.interpolation == s.interpolation and t.name == "x" and t.units == "kg"
    assert t.lower_tail == s.lower_tail and t.upper_tail == s.upper_tail
    assert t.provenance["rationale"] == "why"
    np.testing.assert_array_equal(t.sample(500, rng=1), s.sample(500, rng=1))


def test_to_json_writes_file_atomically(tmp_path):
    s = Sketch([0, 1], [0, 1])
    path = tmp_path / "input.json"
    text = s.to_json(path)
    assert path.read_text().strip() == text
    assert sorted(p.name for p in tmp_path.iterdir()) == ["input.json"]
    assert load(path) == load(text)


def test_provenance_data_fingerprint():
    spec = Sketch([0, 1], [0, 1]).to_spec(data=[1.0, 2.0, 3.0])
    # reference: hashlib.sha256 of the little-endian float64 bytes
    import hashlib

    want = hashlib.sha256(np.array([1.0, 2.0, 3.0], dtype="<f8").tobytes()).hexdigest()
    assert spec["provenance"]["data"] == {"sha256": want, "n": 3}
    assert data_fingerprint([1, 2, 3], label="lab")["label"] == "lab"
    assert spec["provenance"]["package_version"] == cdfsketch.__version__


def test_json_never_contains_nan_or_infinity():
    s = Sketch([0, 1], [0.2, 0.8])  # unbounded both sides
    text = s.to_json()
    assert "Infinity" not in text and "NaN" not in text
    with pytest.raises(SpecError, match="must be a finite number; got nan"):
        dump_spec({"a": float("nan")})


def mutate(path: str, value):
    spec = good_spec()
    target = spec
    keys = path.split(".")
    for key in keys[:-1]:
        target = target[int(key)] if key.isdigit() else target[key]
    last = keys[-1]
    if value is KeyError:
        del target[last]
    elif last.isdigit():
        target[int(last)] = value
    else:
        target[last] = value
    return spec


BAD = [
    ("format", "other", "format must be 'cdfsketch-spec'"),
    ("version", 2, "newer than cdfsketch"),
    ("version", "1", "version must be an integer"),
    ("interpolation", "cubic", "interpolation must be one of"),
    ("colour", "red", "unknown key 'colour'"),
    ("knots", KeyError, "must have the key 'knots'"),
    ("knots.x", "0,1", r"knots.x must be an array"),
    ("knots.p.1", "half", r"knots.p\[1\] must be a finite number in \[0, 1\]; got 'half'"),
    ("knots.p.1", 1.5, r"knots.p\[1\] must be a finite number in \[0, 1\]; got 1.5"),
    ("knots.x.2", -1, "non-decreasing"),
    ("knots.extra", [1], "knots may hold only the keys 'x', 'p'; got the unknown key 'extra'"),
    ("tails.lower", {"kind": "gaussian"}, "tails.lower.kind must be one of"),
    (
        "tails.upper",
        {"kind": "bounded", "limit": "far", "density": "uniform"},
        "tails.upper.limit must be a finite number",
    ),
    ("tails.upper", {"kind": "bounded", "limit": 9, "density": "steep"}, "density must be"),
    (
        "tails.lower",
        {"kind": "exponential", "scale": -1, "scale_rule": "stated"},
        r"tails.lower.scale must be a finite number in \(0, 1e\+100\]",
    ),
    (
        "tails.lower",
        {"kind": "exponential", "scale": -1, "scale_rule": "continue-density"},
        r"tails.lower.scale must be a finite number > 0",
    ),
    ("tails.lower", {"kind": "exponential", "scale": 1.0, "scale_rule": "guess"}, "scale_rule"),
    (
        "tails.lower",
        {"kind": "exponential", "scale": 123.0, "scale_rule": "continue-density"},
        "the knots give",
    ),
    ("tails.upper", {"kind": "bounded", "limit": 9}, "must have a density"),
    ("tails.lower", {"kind": "exponential", "scale_rule": "stated"}, "scale must be a finite"),
    (
        "tails.lower",
        {"kind": "exponential", "scale_rule": "continue-density", "stated": "no"},
        "stated must be true or false",
    ),
    ("name", "n" * 501, "at most 500 characters"),
    ("units", "u" * 101, "at most 100 characters"),
    ("provenance.author", 5, "provenance.author must be a str"),
    ("provenance.notes", "n" * 100_001, "at most 100000 characters"),
    ("provenance.secret", "x", "unknown key 'secret'"),
    ("provenance.data", {"sha256": "abc", "n": 3}, "64 lowercase hex"),
    ("provenance.data", {"sha256": "a" * 64, "n": 3, "label": 7}, "provenance.data.label"),
    ("provenance.contributors", None, "provenance.contributors must be a list"),
    ("provenance.contributors", [{"name": "a", "weight": -1}], r"contributors\[0\].weight"),
    (
        "provenance.contributors",
        [{"name": "a", "weight": 1, "summary": "text"}],
        r"contributors\[0\].summary must be a mapping",
    ),
]


@pytest.mark.parametrize(("path", "value", "match"), BAD, ids=[b[0] for b in BAD])
def test_bad_specs_are_refused_by_load_with_field_and_remedy(path, value, match):
    with pytest.raises(SpecError, match=match):
        load(mutate(path, value))


@pytest.mark.parametrize(("path", "value", "match"), BAD, ids=[b[0] for b in BAD])
def test_schema_and_builtin_checks_agree(path, value, match):
    # the shipped JSON Schema (run by jsonschema) refuses every spec load() refuses, or the
    # refusal is a CDF rule the schema cannot express (ordering, jumps, derived scales)
    import jsonschema

    spec = mutate(path, value)
    validator = jsonschema.Draft202012Validator(schema())
    schema_ok = validator.is_valid(spec)
    cdf_rules = ("non-decreasing", "the knots give")
    if schema_ok:
        assert match in cdf_rules, f"schema accepts a spec load() refuses: {path}"
    with pytest.raises(SpecError):
        validate_spec(spec)


def test_schema_accepts_what_we_write():
    import jsonschema

    jsonschema.Draft202012Validator.check_schema(schema())
    for spec in (good_spec(), *(json.loads(p.read_text()) for p in GOLDEN)):
        jsonschema.validate(spec, schema(), cls=jsonschema.Draft202012Validator)


def test_nan_and_infinity_literals_refused():
    text = json.dumps(good_spec()).replace('"scale_rule"', '"scale": NaN, "scale_rule"', 1)
    with pytest.raises(SpecError, match="RFC 8259 allows no NaN or Infinity"):
        load(text)


def test_invalid_json_and_wrong_types():
    with pytest.raises(SpecError, match="must be valid JSON"):
        load("{not json")
    with pytest.raises(SpecError, match="must name an existing file"):
        load("/no/such/file.json")
    with pytest.raises(SpecError, match="must be given as a path, JSON text or a dict"):
        load(42)
    with pytest.raises(SpecError, match="must be a JSON object; got a JSON array"):
        load("[1, 2]")


def test_size_limits(tmp_path):
    spec = good_spec()
    n = MAX_KNOTS + 1
    spec["knots"] = {"x": list(range(n)), "p": [0.0] * (n - 1) + [1.0]}
    with pytest.raises(SpecError, match="must hold 2 to 100,000 numbers; got 100,001"):
        load(spec)
    big = tmp_path / "big.json"
    big.write_text(" " * 10_000_001)
    with pytest.raises(SpecError, match="at most 10,000,000 bytes; got 10,000,001"):
        load(big)


def test_nothing_is_executed():
    # a name that looks like code stays a string; there is no pickle or eval path
    spec = good_spec()
    spec["name"] = "__import__('os').system('echo hacked')"
    assert load(spec).name == spec["name"]
    import ast

    import cdfsketch.loading

    sources = [*Path(cdfsketch.spec.__file__).parent.glob("*.py"), Path(cdfsketch.loading.__file__)]
    tree = ast.parse("\n".join(p.read_text() for p in sources))
    imported = {
        a.name
        for n in ast.walk(tree)
        if isinstance(n, ast.Import | ast.ImportFrom)
        for a in n.names
    } | {n.module for n in ast.walk(tree) if isinstance(n, ast.ImportFrom) and n.module}
    assert not imported & {"pickle", "marshal", "shelve", "dill"}
    calls = {
        n.func.id
        for n in ast.walk(tree)
        if isinstance(n, ast.Call) and isinstance(n.func, ast.Name)
    }
    assert not calls & {"eval", "exec", "compile", "__import__"}


def test_spec_input_dict_not_mutated():
    spec = good_spec()
    before = copy.deepcopy(spec)
    load(spec)
    validate_spec(spec)
    assert spec == before
