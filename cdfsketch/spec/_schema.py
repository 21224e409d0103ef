"""The shipped JSON Schemas, and a small evaluator of the part of Draft 2020-12 they use.

Why not ``jsonschema`` at run time: importing it (any of its validator
classes) imports its optional format checkers, which takes seconds when
some optional packages are installed, and it is not a dependency of the
numpy-only install. The schemas use a small set of keywords
(:data:`KEYWORDS`); :func:`schema_errors` evaluates exactly those, without
format checking, and refuses a schema that uses any other keyword. The
tests run ``jsonschema.Draft202012Validator`` beside it on the fuzz corpus
and assert both give the same verdict.

Examples
--------
>>> schema()["$id"]
'cdfsketch-spec-v1'
>>> first_error({"type": "object", "required": ["a"]}, {})
('the spec', 'must have the key a')
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterator
from functools import cache
from typing import Any

from .._validate import SpecError, fail, quote
from ._format import SCHEMAS
from ._json import where as _where

__all__ = ["KEYWORDS", "check_against_schema", "first_error", "schema", "schema_errors"]

#: The Draft 2020-12 keywords the shipped schemas may use.
KEYWORDS = frozenset(
    {
        "$schema", "$id", "$defs", "$ref", "$comment", "title", "description",
        "type", "const", "enum", "required", "properties", "additionalProperties",
        "items", "minItems", "maxItems", "minimum", "maximum", "exclusiveMinimum",
        "exclusiveMaximum", "minLength", "maxLength", "pattern", "oneOf", "anyOf",
        "allOf", "not", "if", "then", "else", "default", "examples", "minProperties",
        "maxProperties", "patternProperties", "propertyNames", "dependentRequired",
        "uniqueItems", "multipleOf",
    }
)  # fmt: skip
_FILES = {"spec": "spec-v1.schema.json", "inputs": "inputs-v1.schema.json"}


@cache
def _text(which: str) -> str:
    if which not in _FILES:
        raise fail(
            "which must be 'spec' or 'inputs'",
            quote(which),
            "Pass which='spec' for a single input, 'inputs' for an input set.",
            error=SpecError,
            field="which",
            value=which,
        )
    return (SCHEMAS / _FILES[which]).read_text(encoding="utf-8")


def schema(which: str = "spec") -> dict[str, Any]:
    """The JSON Schema (Draft 2020-12) of a file format, as a fresh dict.

    ``which="spec"``: a single-input spec; ``which="inputs"``: an input-set file.

    Examples
    --------
    >>> schema()["properties"]["name"]["maxLength"]
    500
    """
    return json.loads(_text(which))


@cache
def _parsed(which: str) -> dict[str, Any]:
    return schema(which)


def _is_type(value: Any, kind: str) -> bool:
    if kind == "number":
        return isinstance(value, int | float) and not isinstance(value, bool)
    if kind == "integer":
        return (isinstance(value, int) and not isinstance(value, bool)) or (
            isinstance(value, float) and value.is_integer()
        )
    return isinstance(
        value,
        {"string": str, "object": dict, "array": list, "boolean": bool, "null": type(None)}[kind],
    )


def _equal(a: Any, b: Any) -> bool:
    """JSON equality: a bool is not a number, 1 equals 1.0."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    if _is_type(a, "number") and _is_type(b, "number"):
        return a == b
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(_equal(u, v) for u, v in zip(a, b, strict=True))
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(_equal(a[k], b[k]) for k in a)
    return type(a) is type(b) and a == b


def _resolve(root: dict[str, Any], ref: str) -> dict[str, Any]:
    if ref == "#":
        return root
    if not ref.startswith("#/"):
        raise ValueError(f"only local references are supported; got {ref!r}")
    node: Any = root
    for part in ref[2:].split("/"):
        node = node[part.replace("~1", "/").replace("~0", "~")]
    return node


def schema_errors(
    sch: Any, value: Any, root: dict[str, Any] | None = None, path: tuple[Any, ...] = ()
) -> Iterator[tuple[tuple[Any, ...], str]]:
    """Yield ``(path, what is wrong)`` for every rule of ``sch`` that ``value`` breaks.

    Examples
    --------
    >>> list(schema_errors({"type": "array", "items": {"minimum": 0}}, [1, -1]))
    [((1,), 'breaks minimum 0')]
    """
    root = sch if root is None else root
    if sch is True:
        return
    if sch is False:
        yield path, "must not be present"
        return
    unknown = set(sch) - KEYWORDS
    if unknown:
        raise ValueError(f"schema keyword(s) {sorted(unknown)} are not supported")
    if "$ref" in sch:
        yield from schema_errors(_resolve(root, sch["$ref"]), value, root, path)
    if "type" in sch:
        kinds = sch["type"] if isinstance(sch["type"], list) else [sch["type"]]
        if not any(_is_type(value, k) for k in kinds):
            yield path, f"must be of type {' or '.join(kinds)}"
            return
    if "const" in sch and not _equal(value, sch["const"]):
        yield path, f"must be {sch['const']!r}"
    if "enum" in sch and not any(_equal(value, v) for v in sch["enum"]):
        yield path, f"must be one of {', '.join(map(repr, sch['enum']))}"
    if isinstance(value, dict):
        yield from _object_errors(sch, value, root, path)
    if isinstance(value, list):
        if len(value) < sch.get("minItems", 0):
            yield path, f"must hold at least {sch['minItems']} items"
        if "maxItems" in sch and len(value) > sch["maxItems"]:
            yield path, f"must hold at most {sch['maxItems']} items"
        if sch.get("uniqueItems") and any(
            _equal(value[i], value[j]) for i in range(len(value)) for j in range(i)
        ):
            yield path, "must hold no repeated items"
        if "items" in sch:
            for i in _suspects(sch["items"], value):
                yield from schema_errors(sch["items"], value[i], root, (*path, i))
    if _is_type(value, "number"):
        for key, bad in (
            ("minimum", lambda v, b: v < b),
            ("maximum", lambda v, b: v > b),
            ("exclusiveMinimum", lambda v, b: v <= b),
            ("exclusiveMaximum", lambda v, b: v >= b),
        ):
            if key in sch and bad(value, sch[key]):
                yield path, f"breaks {key} {sch[key]!r}"
        if "multipleOf" in sch:
            q = value / sch["multipleOf"]
            if not (math.isfinite(q) and q == int(q)):
                yield path, f"must be a multiple of {sch['multipleOf']!r}"
    if isinstance(value, str):
        if len(value) < sch.get("minLength", 0):
            yield path, f"must have at least {sch['minLength']} characters"
        if "maxLength" in sch and len(value) > sch["maxLength"]:
            yield path, f"must have at most {sch['maxLength']} characters"
        if "pattern" in sch and not re.search(sch["pattern"], value):
            yield path, f"must match {sch['pattern']!r}"
    yield from _combined_errors(sch, value, root, path)


def _object_errors(
    sch: dict[str, Any], value: dict[str, Any], root: dict[str, Any], path: tuple[Any, ...]
) -> Iterator[tuple[tuple[Any, ...], str]]:
    for key in sch.get("required", ()):
        if key not in value:
            yield path, f"must have the key {key}"
    for key, needs in sch.get("dependentRequired", {}).items():
        if key in value:
            for other in needs:
                if other not in value:
                    yield path, f"must have the key {other} beside {key}"
    if len(value) < sch.get("minProperties", 0):
        yield path, f"must have at least {sch['minProperties']} keys"
    if "maxProperties" in sch and len(value) > sch["maxProperties"]:
        yield path, f"must have at most {sch['maxProperties']} keys"
    props = sch.get("properties", {})
    patterns = sch.get("patternProperties", {})
    extra = sch.get("additionalProperties", True)
    for key, item in value.items():
        if "propertyNames" in sch and not _valid(sch["propertyNames"], key, root, path):
            yield path, f"must not have the key {key!r} (its name breaks propertyNames)"
        matched = [p for p in patterns if re.search(p, key)]
        for p in matched:
            yield from schema_errors(patterns[p], item, root, (*path, key))
        if key in props:
            yield from schema_errors(props[key], item, root, (*path, key))
        elif matched:
            continue
        elif extra is False:
            yield path, f"must not have the key {key!r}"
        elif extra is not True:
            yield from schema_errors(extra, item, root, (*path, key))


_BOUNDS = {"minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum", "description"}


def _suspects(items: Any, value: list[Any]) -> range | list[int]:
    """Indices of ``value`` to check against ``items`` (a fast pass for arrays of numbers)."""
    if not (
        isinstance(items, dict)
        and items.get("type") == "number"
        and set(items) <= {"type", *_BOUNDS}
    ):
        return range(len(value))
    lo = items.get("minimum", -math.inf)
    hi = items.get("maximum", math.inf)
    lo_open = items.get("exclusiveMinimum", -math.inf)
    hi_open = items.get("exclusiveMaximum", math.inf)
    return [
        i
        for i, v in enumerate(value)
        if not (type(v) in (float, int) and lo <= v <= hi and lo_open < v < hi_open)
    ]


def _valid(sch: Any, value: Any, root: dict[str, Any], path: tuple[Any, ...]) -> bool:
    return next(schema_errors(sch, value, root, path), None) is None


def _combined_errors(
    sch: dict[str, Any], value: Any, root: dict[str, Any], path: tuple[Any, ...]
) -> Iterator[tuple[tuple[Any, ...], str]]:
    for sub in sch.get("allOf", ()):
        yield from schema_errors(sub, value, root, path)
    if "anyOf" in sch and not any(_valid(s, value, root, path) for s in sch["anyOf"]):
        yield path, "matches none of the allowed forms"
    if "oneOf" in sch:
        hits = sum(_valid(s, value, root, path) for s in sch["oneOf"])
        if hits != 1:
            yield path, "matches none of the allowed forms" if hits == 0 else "is ambiguous"
    if "not" in sch and _valid(sch["not"], value, root, path):
        yield path, "matches a form that is not allowed"
    if "if" in sch:
        branch = "then" if _valid(sch["if"], value, root, path) else "else"
        if branch in sch:
            yield from schema_errors(sch[branch], value, root, path)


def first_error(sch: dict[str, Any], value: Any) -> tuple[str, str] | None:
    """The first broken rule as ``(field, what is wrong)``, or ``None``."""
    hit = next(schema_errors(sch, value), None)
    return None if hit is None else (_where(hit[0]), hit[1])


def check_against_schema(value: Any, which: str = "spec") -> None:
    """Raise :class:`SpecError` when ``value`` breaks the shipped schema ``which``.

    Examples
    --------
    >>> check_against_schema({"format": "cdfsketch-spec", "version": 1})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: the spec must have the key interpolation (the spec schema); ...
    """
    hit = next(schema_errors(_parsed(which), value), None)
    if hit is not None:
        path, what = hit
        found = value
        for key in path:
            found = found[key]
        raise fail(
            f"{_where(path)} {what} (the {which} schema)",
            quote(found),
            "Fix that field; see cdfsketch.spec.schema().",
            error=SpecError,
            field=_where(path),
            value=found,
        )
