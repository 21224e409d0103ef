"""Reading JSON that cannot hurt: sizes, depth and literals capped before parsing.

One rule tells JSON text from a path (:func:`source`): ``bytes`` are JSON
text; a ``str`` whose first non-blank character is ``{`` or ``[`` is JSON
text; any other ``str`` or ``os.PathLike`` is the path of a file holding
JSON. :func:`read_json` then reads the document with every limit checked
before the work it guards (file size before reading, nesting depth before
parsing, literal length before converting a number), and :func:`plain`
turns any nested value into plain JSON data (dict, list, str, int, float,
bool, None) or says where it is not. Every failure is a
:class:`~cdfsketch._validate.SpecError`.

Examples
--------
>>> read_json('{"a": [1, 2.5]}')
({'a': [1, 2.5]}, None)
>>> read_json("[" * 100 + "]" * 100)
Traceback (most recent call last):
...
cdfsketch._validate.SpecError: JSON text must nest at most 32 levels deep; got 100 levels...
"""

from __future__ import annotations

import json
import math
import numbers
import os
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

from .._validate import SpecError, fail, number, quote
from ._format import MAX_DEPTH, MAX_NUMBER_CHARS, MAX_SPEC_BYTES

__all__ = ["plain", "read_json", "real", "source", "where"]

#: Longest string taken as a path (longer ones are neither a path nor JSON text).
_MAX_PATH_CHARS = 4096
# an integer of MAX_NUMBER_CHARS decimal digits has about 3.32 bits per digit
_MAX_INT_BITS = int(MAX_NUMBER_CHARS * 3.33)
_OPEN = np.array([ord("["), ord("{")], dtype=np.uint8)
_CLOSE = np.array([ord("]"), ord("}")], dtype=np.uint8)


def _is_text(obj: Any) -> bool:
    return isinstance(obj, bytes | bytearray) or (
        isinstance(obj, str) and obj.lstrip()[:1] in ("{", "[")
    )


def source(obj: Any) -> tuple[str | Mapping[str, Any], Path | None]:
    """The JSON text or mapping behind ``obj``, and the folder relative paths start from.

    ``bytes`` are decoded as UTF-8; a path is read (at most
    :data:`~cdfsketch._limits.MAX_SPEC_BYTES`); its folder is returned so a
    file that names other files can find them. Text and mappings have no folder.

    Examples
    --------
    >>> source('  {"format": "x"}')
    ('  {"format": "x"}', None)
    """
    if isinstance(obj, Mapping):
        return obj, None
    if isinstance(obj, bytes | bytearray):
        if len(obj) > MAX_SPEC_BYTES:
            raise _too_big(len(obj), "text")
        return _decode(bytes(obj), "The JSON bytes"), None
    if isinstance(obj, str) and _is_text(obj):
        return obj, None
    if not isinstance(obj, str | os.PathLike):
        raise fail(
            "A spec must be given as a path, JSON text or a dict",
            f"{type(obj).__name__} {quote(obj)}",
            "Pass e.g. 'input.json' or the text Sketch.to_json() returns.",
            error=SpecError,
            value=obj,
        )
    name = os.fspath(obj)
    if isinstance(name, bytes):
        name = os.fsdecode(name)
    if len(name) > _MAX_PATH_CHARS or "\x00" in name or "\n" in name or not name.strip():
        raise fail(
            "A spec must be a path to a file or JSON text (which starts with '{')",
            f"a string that is neither: {quote(name)}",
            "Check what was passed; JSON text must start with '{'.",
            error=SpecError,
            value=name,
        )
    path = Path(name)
    try:
        if not path.is_file():
            raise fail(
                "A spec path must name an existing file",
                quote(name),
                "Check the path, or pass JSON text (starting with '{') or a dict.",
                error=SpecError,
                value=name,
            )
        size = path.stat().st_size
        if size > MAX_SPEC_BYTES:
            raise _too_big(size, f"file {quote(name)}")
        data = path.read_bytes()
    except (OSError, ValueError) as exc:
        if isinstance(exc, SpecError):
            raise
        raise fail(
            "A spec path must name a file that can be read",
            f"{quote(name)} ({type(exc).__name__}: {getattr(exc, 'strerror', None) or exc})",
            "Check the path, or pass JSON text (starting with '{') or a dict.",
            error=SpecError,
            value=name,
        ) from None
    return _decode(data, f"The file {quote(name)}"), path.resolve().parent


def _too_big(size: int, what: str) -> SpecError:
    return fail(
        f"A spec {what} may have at most {MAX_SPEC_BYTES:,} bytes",
        f"{size:,}",
        "A spec needs far fewer knots; thin them before saving.",
        error=SpecError,
    )


def _decode(data: bytes, what: str) -> str:
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise fail(
            f"{what} must be UTF-8 text",
            f"the byte {data[exc.start : exc.start + 1]!r} at byte {exc.start}, which is not UTF-8",
            "Save the file as UTF-8 (cdfsketch writes UTF-8).",
            error=SpecError,
            index=exc.start,
        ) from None


def _depth(text: str) -> int:
    """Deepest nesting of ``[``/``{`` outside strings, in linear time (numpy, no regex)."""
    if text.count("[") + text.count("{") <= MAX_DEPTH:
        return 0
    b = np.frombuffer(text.encode("utf-8", "surrogatepass"), dtype=np.uint8)
    idx = np.arange(b.size, dtype=np.int32)  # MAX_SPEC_BYTES < 2**31
    # a quote is escaped when an odd run of backslashes ends just before it
    last_plain = np.maximum.accumulate(np.where(b != ord("\\"), idx, np.int32(-1)))
    run = np.zeros(b.size, dtype=np.int32)
    run[1:] = idx[:-1] - last_plain[:-1]
    del idx, last_plain
    quote = (b == ord('"')) & (run % 2 == 0)
    outside = np.cumsum(quote, dtype=np.int32) % 2 == 0
    step = np.isin(b, _OPEN).astype(np.int8) - np.isin(b, _CLOSE).astype(np.int8)
    step *= outside
    return int(np.cumsum(step, dtype=np.int32).max()) if step.size else 0


def _integer(s: str) -> int:
    # Python refuses to convert integer literals past 4300 digits (ValueError); refuse
    # long ones here, as a SpecError. Float literals of any length convert in linear
    # time (to ±inf beyond the range, which plain() refuses with the field).
    if len(s) > MAX_NUMBER_CHARS:
        raise fail(
            f"An integer in JSON text may have at most {MAX_NUMBER_CHARS} digits",
            f"a literal of {len(s):,} digits ({quote(s, limit=20)})",
            "Write moderate numbers (rescale the units).",
            error=SpecError,
        )
    return int(s)


def _constant(name: str) -> Any:
    raise fail(
        "A spec must be plain JSON (RFC 8259 allows no NaN or Infinity)",
        name,
        "Describe an unbounded end by its tail and leave missing values out.",
        error=SpecError,
        value=name,
    )


def read_json(obj: Any) -> tuple[dict[str, Any], Path | None]:
    """A JSON object from a path, JSON text, bytes or a mapping, as plain data, and its folder.

    See the module docstring for how text and paths are told apart.
    """
    src, base = source(obj)
    if isinstance(src, Mapping):
        return plain(src), base
    if len(src) > MAX_SPEC_BYTES:
        raise _too_big(len(src), "text")
    depth = _depth(src)
    if depth > MAX_DEPTH:
        raise _too_deep(depth)
    try:
        data = json.loads(src, parse_constant=_constant, parse_int=_integer)
    except json.JSONDecodeError as exc:
        raise fail(
            "A spec must be valid JSON",
            f"{exc.msg} at line {exc.lineno}, column {exc.colno}",
            "Fix the file, or write it again with Sketch.to_json().",
            error=SpecError,
        ) from None
    except RecursionError:
        raise _too_deep(depth) from None
    if not isinstance(data, dict):
        raise fail(
            "A spec must be a JSON object",
            f"a JSON {_json_kind(data)}",
            'Write an object: {"format": "cdfsketch-spec", ...}.',
            error=SpecError,
            value=data,
        )
    return plain(data), base


def _too_deep(depth: int | str) -> SpecError:
    return fail(
        f"JSON text must nest at most {MAX_DEPTH} levels deep",
        f"{depth} levels",
        "Flatten provenance.extra; a spec itself needs four levels.",
        error=SpecError,
    )


def _json_kind(value: Any) -> str:
    return {list: "array", str: "string", bool: "boolean", type(None): "null"}.get(
        type(value), "number"
    )


def where(path: tuple[Any, ...]) -> str:
    """A field path as the messages write it: ``knots.x[3]``, ``the spec`` for the root."""
    out = ""
    for key in path:
        out += f"[{key}]" if isinstance(key, int) else (f".{key}" if out else str(key))
    return out or "the spec"


def plain(value: Any, *, field: tuple[Any, ...] = ()) -> Any:
    """A plain JSON copy of ``value``, or a SpecError saying where it is not JSON.

    Mappings become dicts (string keys only), lists and tuples lists, numpy
    scalars Python numbers. Refused: NaN and ±inf, integers longer than
    :data:`MAX_NUMBER_CHARS` digits, text that cannot be written as UTF-8
    (an unpaired surrogate), nesting deeper than :data:`MAX_DEPTH`, and any
    other type.

    Examples
    --------
    >>> plain({"x": (1, 2.0), "n": np.int64(3)})
    {'x': [1, 2.0], 'n': 3}
    >>> plain({"x": [0.0, float("nan")]})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: x[1] must be a finite number; got nan. ...
    """
    kind = type(value)
    if kind is float:
        if math.isfinite(value):
            return value
    elif kind is str:
        return _text(value, field)
    elif kind is int or kind is bool or value is None:
        if kind is int and value.bit_length() > _MAX_INT_BITS:
            raise fail(
                f"{where(field)} must be a moderate number",
                f"an integer of {len(str(value)) if value.bit_length() < 14000 else 'many'} digits",
                "Write moderate numbers (rescale the units).",
                error=SpecError,
                field=where(field),
            )
        return value
    elif isinstance(value, Mapping | list | tuple) and len(field) >= MAX_DEPTH:
        raise _too_deep(f"more than {MAX_DEPTH}")
    elif isinstance(value, Mapping):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise fail(
                    f"Keys in {where(field)} must be strings",
                    f"{type(key).__name__} {quote(key)}",
                    "Use text keys (JSON objects have only text keys).",
                    error=SpecError,
                    field=where(field),
                    value=key,
                )
            out[_text(key, field)] = plain(item, field=(*field, key))
        return out
    elif isinstance(value, list | tuple):
        if all(type(v) is float for v in value):  # the fast path for knots
            if np.isfinite(np.fromiter(value, float, len(value))).all():
                return list(value)
        return [plain(item, field=(*field, i)) for i, item in enumerate(value)]
    elif isinstance(value, numbers.Integral | np.bool_):
        return plain(bool(value) if isinstance(value, np.bool_) else int(value), field=field)
    elif isinstance(value, numbers.Real):
        return plain(float(value), field=field)
    else:
        raise fail(
            f"{where(field)} must be plain JSON data (text, numbers, lists, objects)",
            f"{type(value).__name__} {quote(value)}",
            "Convert arrays with .tolist() and objects to dicts.",
            error=SpecError,
            field=where(field),
            value=value,
        )
    raise fail(
        f"{where(field)} must be a finite number",
        quote(value),
        "A spec is plain JSON: describe unbounded ends by tails, leave missing values out.",
        error=SpecError,
        field=where(field),
        index=field[-1] if field and isinstance(field[-1], int) else None,
        value=value,
    )


def _text(value: str, field: tuple[Any, ...]) -> str:
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise fail(
            f"Text in {where(field)} must be writable as UTF-8",
            f"an unpaired surrogate {value[exc.start]!r} at character {exc.start}",
            "Remove it or replace it with the intended character.",
            error=SpecError,
            field=where(field),
            index=exc.start,
            value=value,
        ) from None
    return value


def real(value: Any, *, field: str, **limits: Any) -> float:
    """:func:`cdfsketch._validate.number` as a SpecError, also for integers beyond float range.

    Examples
    --------
    >>> real(10**400, field="knots.x[0]")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: knots.x[0] must be a finite number; got an integer of 401 ...
    """
    try:
        return number(value, field=field, error=SpecError, **limits)
    except OverflowError:
        raise fail(
            f"{field} must be a finite number",
            f"an integer of {len(str(value))} digits, too large for a float",
            "Write moderate numbers (rescale the units).",
            error=SpecError,
            field=field,
            value=value,
        ) from None
