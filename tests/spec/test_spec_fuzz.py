"""A fixed-seed fuzz corpus: one verdict from load and validate_spec, accepted specs sample.

The corpus (mutations of the golden specs, semantic edits, raw bytes and
strings) is built by tests/bench/fuzz_specs.py, which also runs the longer
corpus (≥ 100,000 inputs) and prints its counts.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
from _helpers import load_script

from cdfsketch.spec import SpecError, read_json, schema
from cdfsketch.spec._schema import first_error

SCRIPT = Path(__file__).resolve().parents[1] / "bench" / "fuzz_specs.py"
SEED = 20261202
N = 2500


def _fuzz() -> Any:
    return load_script(SCRIPT, "cdfsketch_fuzz_specs")


@pytest.fixture(scope="module")
def fuzz() -> Any:
    return _fuzz()


def test_corpus_is_fixed_and_varied(fuzz):
    a = list(fuzz.corpus(SEED, 300))
    b = list(fuzz.corpus(SEED, 300))
    assert [repr(x) for x in a] == [repr(x) for x in b]
    kinds = {type(x).__name__ for x in a}
    assert kinds >= {"dict", "str", "bytes"}


def test_load_and_validate_spec_agree_on_the_fuzz_corpus(fuzz):
    counts = {"accepted": 0, "refused": 0}
    problems = []
    for i, item in enumerate(fuzz.corpus(SEED, N)):
        r = fuzz.judge(item)
        if r["load"] == "other" or r["validate"] == "other":
            problems.append((i, "an exception other than SpecError", r["detail"]))
        elif r["load"] != r["validate"]:
            problems.append((i, f"load {r['load']} but validate_spec {r['validate']}", None))
        elif r["load"] == "ok":
            counts["accepted"] += 1
            if r["sampler"] != "ok":
                problems.append((i, f"accepted but the sampler gave {r['sampler']}", r["detail"]))
        else:
            counts["refused"] += 1
    assert not problems, problems[:5]
    # the corpus exercises both verdicts
    assert counts["accepted"] > 100 and counts["refused"] > 1000, counts


def test_schema_evaluator_agrees_with_jsonschema_on_the_corpus(fuzz):
    # Reference: jsonschema.Draft202012Validator (format checking off), on every input of
    # the corpus that parses as a JSON object: the package's own evaluator of the shipped
    # schema gives the same verdict.
    import jsonschema

    sch = schema()
    reference = jsonschema.Draft202012Validator(sch)
    compared = 0
    for item in fuzz.corpus(SEED, 1500):
        try:
            data, _ = read_json(item)
        except SpecError:
            continue
        assert (first_error(sch, data) is None) == reference.is_valid(data), repr(item)[:300]
        compared += 1
    assert compared > 500


# Minimal case of the longer fuzz run (tests/bench/fuzz_specs.py, seed 7): pchip knots a few
# ulps apart near 1e9 load fine, and the sampler must then compile (issue 15).
CLOSE_KNOTS = {
    "format": "cdfsketch-spec",
    "version": 1,
    "interpolation": "pchip",
    "knots": {
        "x": [1000000000.0000008, 1000000000.0000015, 1000000000.0000017],
        "p": [0.0, 0.21438286492516578, 1.0],
    },
    "tails": {
        "lower": {"kind": "exponential", "scale_rule": "continue-density"},
        "upper": {"kind": "exponential", "scale_rule": "continue-density"},
    },
}


def test_an_accepted_spec_with_knots_a_few_ulps_apart_samples():
    from cdfsketch.loading import load

    s = load(CLOSE_KNOTS)
    draws = s.sample(100, rng=1)
    assert ((draws >= s.support[0]) & (draws <= s.support[1])).all()
