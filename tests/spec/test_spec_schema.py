"""The package's own evaluator of the shipped schemas against jsonschema, keyword by keyword."""

from __future__ import annotations

import pytest

from cdfsketch.spec import SpecError, check_against_schema
from cdfsketch.spec._schema import KEYWORDS, first_error

SCHEMA = {
    "$schema": "https://json-schema.org/draft/2020-12/schema",
    "type": "object",
    "required": ["kind"],
    "minProperties": 1,
    "maxProperties": 6,
    "dependentRequired": {"low": ["high"]},
    "propertyNames": {"maxLength": 8},
    "patternProperties": {"^x_": {"type": "integer"}},
    "additionalProperties": False,
    "properties": {
        "kind": {"enum": ["a", "b", 1]},
        "low": {"type": "number", "exclusiveMinimum": 0, "multipleOf": 0.5},
        "high": {"type": ["number", "null"], "maximum": 10, "exclusiveMaximum": 11},
        "tags": {"type": "array", "items": {"type": "string", "pattern": "^[a-z]+$",
                 "minLength": 1}, "uniqueItems": True, "minItems": 1, "maxItems": 3},
        "node": {"$ref": "#/$defs/node"},
    },
    "$defs": {
        "node": {
            "oneOf": [{"type": "integer", "minimum": 0}, {"type": "string", "const": "leaf"}],
            "not": {"const": 7},
        },
        "unused": {"anyOf": [{"type": "boolean"}], "allOf": [{"type": "boolean"}]},
    },
    "if": {"properties": {"kind": {"const": "b"}}},
    "then": {"required": ["tags"]},
    "else": {},
}  # fmt: skip

INSTANCES = [
    {"kind": "a"},
    {"kind": 1.0},
    {"kind": True},
    {},
    {"kind": "c"},
    {"kind": "a", "low": 1.5, "high": 2},
    {"kind": "a", "low": 1.25, "high": 2},
    {"kind": "a", "low": 0, "high": 2},
    {"kind": "a", "low": 1},
    {"kind": "a", "high": None},
    {"kind": "a", "high": 10.5},
    {"kind": "a", "high": 11},
    {"kind": "b"},
    {"kind": "b", "tags": ["x", "y"]},
    {"kind": "b", "tags": ["x", "x"]},
    {"kind": "b", "tags": []},
    {"kind": "b", "tags": ["x", "Y"]},
    {"kind": "b", "tags": [""]},
    {"kind": "b", "tags": ["a", "b", "c", "d"]},
    {"kind": "a", "x_1": 3},
    {"kind": "a", "x_1": 3.5},
    {"kind": "a", "x_1": 3.0},
    {"kind": "a", "other": 1},
    {"kind": "a", "longlongname": 1},
    {"kind": "a", "node": 3},
    {"kind": "a", "node": 7},
    {"kind": "a", "node": -1},
    {"kind": "a", "node": "leaf"},
    {"kind": "a", "node": "tree"},
    {"kind": "a", "node": 2.0},
    {"kind": "a", "low": 1, "high": 2, "tags": ["a"], "node": 1, "x_2": 1},
    [],
    "text",
]


@pytest.mark.parametrize("instance", INSTANCES, ids=range(len(INSTANCES)))
def test_evaluator_agrees_with_jsonschema(instance):
    # Reference: jsonschema.Draft202012Validator, format checking off
    import jsonschema

    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    expected = jsonschema.Draft202012Validator(SCHEMA).is_valid(instance)
    assert (first_error(SCHEMA, instance) is None) == expected


def test_the_test_schema_uses_every_supported_validation_keyword():
    used: set[str] = set()

    def walk(node, parent=None):
        if isinstance(node, dict):
            for key, value in node.items():
                if parent not in ("properties", "$defs", "patternProperties", "dependentRequired"):
                    used.add(key)
                walk(value, key)
        elif isinstance(node, list):
            for item in node:
                walk(item, parent)

    walk(SCHEMA)
    assert KEYWORDS - used <= {"$id", "$comment", "title", "description", "default", "examples"}


def test_unsupported_keywords_are_refused_not_ignored():
    with pytest.raises(ValueError, match="not supported"):
        first_error({"type": "object", "unevaluatedProperties": False}, {})


def test_schema_error_message_names_the_field_and_quotes_briefly():
    with pytest.raises(SpecError, match=r"knots.p\[1\] breaks maximum 1 \(the spec schema\)"):
        check_against_schema(
            {
                "format": "cdfsketch-spec",
                "version": 1,
                "interpolation": "linear",
                "knots": {"x": [0, 1], "p": [0, 2]},
                "tails": {
                    "lower": {"kind": "bounded", "limit": 0, "density": "uniform"},
                    "upper": {"kind": "bounded", "limit": 1, "density": "uniform"},
                },
            }
        )
