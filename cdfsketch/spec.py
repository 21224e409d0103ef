"""The spec: the JSON contract between a sketch and the simulation models.

A spec is plain JSON (RFC 8259: no NaN or Infinity; an unbounded end is
described by its tail, never by an infinite number)::

    {"format": "cdfsketch-spec", "version": 1,
     "name": "...", "units": "...", "interpolation": "linear" | "pchip",
     "knots": {"x": [...], "p": [...]},           # atoms: two knots at one x
     "tails": {"lower": TAIL, "upper": TAIL},
     "provenance": {"author", "created", "rationale", "package_version",
                    "method", "notes", "data": {"sha256", "n", "label"},
                    "contributors": [{"name", "weight", "summary"}],
                    "decision": {...}, "extra": {...}}}

    TAIL = {"kind": "bounded", "limit": L, "density": "uniform" | "taper"}
         | {"kind": "exponential", "scale": S, "scale_rule": "stated" | "continue-density"}

The JSON Schema ships as ``cdfsketch/schema/spec-v1.schema.json``.
:func:`load` checks specs with the built-in checks of this module (stdlib and
numpy only, so loading stays light); :func:`validate_spec` also runs the JSON
Schema through ``jsonschema``. Both raise :class:`SpecError` naming the
field, the index, what was found and the remedy. Nothing in a spec is
executed; there is no pickle.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
from collections.abc import Mapping
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ._version import __version__
from .knots import KnotError
from .tails import BoundedTail, ExponentialTail

if TYPE_CHECKING:
    from .sketch import Sketch

__all__ = [
    "FORMAT",
    "MAX_KNOTS",
    "MAX_SPEC_BYTES",
    "VERSION",
    "SpecError",
    "data_fingerprint",
    "dump_spec",
    "load",
    "read_spec",
    "schema",
    "sketch_to_spec",
    "validate_spec",
]

FORMAT = "cdfsketch-spec"
VERSION = 1
MAX_KNOTS = 100_000
MAX_SPEC_BYTES = 10_000_000
SCHEMA_PATH = Path(__file__).with_name("schema") / "spec-v1.schema.json"

_TOP_KEYS = ("format", "version", "name", "units", "interpolation", "knots", "tails", "provenance")
_REQUIRED = ("format", "version", "interpolation", "knots", "tails")
_PROVENANCE_TEXT = ("author", "created", "rationale", "package_version", "method", "notes")
_PROVENANCE_KEYS = (*_PROVENANCE_TEXT, "data", "contributors", "decision", "extra")
# relative agreement asked of a stored derived scale with the one the knots give
_SCALE_RTOL = 1e-9


class SpecError(ValueError):
    """Anything wrong with a spec (a :class:`ValueError`)."""


# ---------------------------------------------------------------- writing


def _tail_to_spec(sketch: Sketch, side: str) -> dict[str, Any]:
    i = 0 if side == "lower" else 1
    tail = sketch.lower_tail if side == "lower" else sketch.upper_tail
    stated = sketch.tails_given[i]
    if isinstance(tail, BoundedTail):
        return {"kind": "bounded", "limit": tail.limit, "density": tail.density, "stated": stated}
    resolved = sketch.tail_scales[i]
    scale = tail.scale if tail.scale is not None else resolved
    return {
        "kind": "exponential",
        "scale": scale,
        "scale_rule": "stated" if tail.scale is not None else "continue-density",
        "stated": stated,
    }


def sketch_to_spec(sketch: Sketch, **provenance: Any) -> dict[str, Any]:
    """Describe ``sketch`` as a spec dict (see the module docstring).

    Keyword arguments are added to the provenance (``author=``,
    ``rationale=``, ``data=`` with an array to fingerprint, …). ``created`` and
    ``package_version`` are filled in when absent.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> spec = sketch_to_spec(Sketch([0, 1], [0, 1]), author="A. Analyst")
    >>> spec["knots"], spec["provenance"]["author"]
    ({'x': [0.0, 1.0], 'p': [0.0, 1.0]}, 'A. Analyst')
    """
    prov = dict(sketch.provenance)
    extra = dict(provenance)
    if "data" in extra and extra["data"] is not None and not isinstance(extra["data"], Mapping):
        extra["data"] = data_fingerprint(extra["data"])
    prov.update(extra)
    prov.setdefault("created", datetime.now(UTC).isoformat(timespec="seconds"))
    prov["package_version"] = __version__
    spec = {
        "format": FORMAT,
        "version": VERSION,
        "name": sketch.name,
        "units": sketch.units,
        "interpolation": sketch.interpolation,
        "knots": {"x": sketch.x.tolist(), "p": sketch.p.tolist()},
        "tails": {"lower": _tail_to_spec(sketch, "lower"), "upper": _tail_to_spec(sketch, "upper")},
        "provenance": prov,
    }
    check_provenance(prov)
    return spec


def dump_spec(spec: Mapping[str, Any], path: str | os.PathLike[str] | None = None) -> str:
    """JSON text of ``spec`` (no NaN/Infinity); written to ``path`` when given.

    The file is written to a temporary name first and then renamed, so a
    reader never sees half a spec.

    Examples
    --------
    >>> dump_spec({"format": "cdfsketch-spec"})
    '{\\n  "format": "cdfsketch-spec"\\n}'
    """
    try:
        text = json.dumps(spec, indent=2, allow_nan=False, ensure_ascii=False)
    except ValueError as exc:
        raise SpecError(
            f"A spec must be plain JSON without NaN or Infinity; {exc}. An unbounded end is "
            "described by its tail, never by an infinite number."
        ) from None
    if path is not None:
        target = Path(path)
        tmp = target.with_name(target.name + ".tmp")
        tmp.write_text(text + "\n", encoding="utf-8")
        os.replace(tmp, target)
    return text


def data_fingerprint(data: Any, *, label: str = "") -> dict[str, Any]:
    """The digest and size of a dataset, for the spec's provenance.

    The digest is SHA-256 of the values as little-endian float64 in the order
    given; ``n`` counts them.

    Examples
    --------
    >>> fp = data_fingerprint([1.0, 2.0, 3.0])
    >>> fp["n"], fp["sha256"][:12]
    (3, 'a68de4b5e96a')
    """
    arr = np.ascontiguousarray(np.asarray(data, dtype="<f8").ravel())
    out: dict[str, Any] = {"sha256": hashlib.sha256(arr.tobytes()).hexdigest(), "n": int(arr.size)}
    if label:
        out["label"] = str(label)
    return out


# ---------------------------------------------------------------- reading


def _reject_constant(name: str) -> Any:
    raise SpecError(
        f"A spec must be plain JSON; found {name}, which RFC 8259 does not allow. Describe an "
        "unbounded end by its tail and leave missing values out."
    )


def read_spec(obj: Any) -> dict[str, Any]:
    """Read a spec from a path, a JSON string or a mapping (not yet checked).

    Examples
    --------
    >>> read_spec('{"format": "cdfsketch-spec"}')
    {'format': 'cdfsketch-spec'}
    """
    if isinstance(obj, Mapping):
        return dict(obj)
    if isinstance(obj, bytes):
        obj = obj.decode("utf-8")
    if isinstance(obj, str) and obj.lstrip()[:1] in ("{", "["):
        text = obj
    elif isinstance(obj, str | os.PathLike):
        path = Path(obj)
        if not path.is_file():
            raise SpecError(
                f"No spec file at {str(path)!r}. Pass an existing path, a JSON string or a dict."
            )
        size = path.stat().st_size
        if size > MAX_SPEC_BYTES:
            raise SpecError(
                f"The spec file {str(path)!r} is {size:,} bytes; at most {MAX_SPEC_BYTES:,} are "
                "read. A spec needs far fewer knots; thin them before saving."
            )
        text = path.read_text(encoding="utf-8")
    else:
        raise SpecError(f"load() takes a path, a JSON string or a dict; got {type(obj).__name__}.")
    if len(text) > MAX_SPEC_BYTES:
        raise SpecError(
            f"The spec text is {len(text):,} characters; at most {MAX_SPEC_BYTES:,} are read."
        )
    try:
        data = json.loads(text, parse_constant=_reject_constant)
    except json.JSONDecodeError as exc:
        raise SpecError(
            f"The spec is not valid JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}. "
            "Fix the file, or write it again with Sketch.to_json()."
        ) from None
    if not isinstance(data, dict):
        raise SpecError(f"A spec must be a JSON object; got a JSON {type(data).__name__}.")
    return data


def _number(value: Any, field: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise SpecError(f"{field} must be a number; found {value!r}. Write a JSON number there.")
    try:
        v = float(value)
    except OverflowError:
        raise SpecError(
            f"{field} is too large for a float ({len(str(value))} digits). Use moderate numbers "
            "(rescale the units)."
        ) from None
    if not math.isfinite(v):
        raise SpecError(f"{field} must be finite; found {v!r}. Describe unbounded ends by tails.")
    return v


def _check_keys(obj: Mapping[str, Any], allowed: tuple[str, ...], where: str) -> None:
    unknown = [k for k in obj if k not in allowed]
    if unknown:
        raise SpecError(
            f"Unknown key {unknown[0]!r} in {where}; allowed keys are {list(allowed)}. Remove it "
            "(or check its spelling); free-form notes go in provenance.extra."
        )


def check_provenance(prov: Any) -> None:
    """Check a provenance record: known keys, right types, plain JSON (no NaN).

    Examples
    --------
    >>> check_provenance({"author": "A. Analyst"})
    >>> check_provenance({"autor": "A. Analyst"})
    Traceback (most recent call last):
    ...
    cdfsketch.spec.SpecError: Unknown key 'autor' in provenance; allowed keys are ...
    """
    if not isinstance(prov, Mapping):
        raise SpecError(
            f"provenance must be an object; found {type(prov).__name__}. Pass a dict such as "
            "{'author': 'A. Analyst'}."
        )
    _check_keys(prov, _PROVENANCE_KEYS, "provenance")
    try:
        json.dumps(prov, allow_nan=False)
    except (TypeError, ValueError) as exc:
        raise SpecError(
            f"provenance must be plain JSON (strings, finite numbers, lists, objects); {exc}. "
            "Convert arrays with .tolist() and leave out NaN or infinite values."
        ) from None
    for key in _PROVENANCE_TEXT:
        if key in prov and not isinstance(prov[key], str):
            raise SpecError(f"provenance.{key} must be a string; found {prov[key]!r}.")
    data = prov.get("data")
    if data is not None:
        if not isinstance(data, Mapping):
            raise SpecError("provenance.data must be an object with 'sha256' and 'n', or null.")
        _check_keys(data, ("sha256", "n", "label"), "provenance.data")
        digest = data.get("sha256")
        if not (
            isinstance(digest, str)
            and len(digest) == 64
            and all(ch in "0123456789abcdef" for ch in digest)
        ):
            raise SpecError(
                f"provenance.data.sha256 must be 64 lowercase hex digits; found {digest!r}. "
                "Use cdfsketch.data_fingerprint(data)."
            )
        n = data.get("n")
        if isinstance(n, bool) or not isinstance(n, int) or n < 0:
            raise SpecError(f"provenance.data.n must be a non-negative integer; found {n!r}.")
    contributors = prov.get("contributors")
    if contributors is not None:
        if not isinstance(contributors, list):
            raise SpecError("provenance.contributors must be a list of {name, weight} objects.")
        for i, item in enumerate(contributors):
            where = f"provenance.contributors[{i}]"
            if not isinstance(item, Mapping):
                raise SpecError(f"{where} must be an object with 'name' and 'weight'.")
            _check_keys(item, ("name", "weight", "summary"), where)
            if not isinstance(item.get("name"), str):
                raise SpecError(f"{where}.name must be a string; found {item.get('name')!r}.")
            w = _number(item.get("weight"), f"{where}.weight")
            if w < 0:
                raise SpecError(f"{where}.weight must be ≥ 0; found {w!r}.")
    for key in ("decision", "extra"):
        if key in prov and not isinstance(prov[key], Mapping):
            raise SpecError(f"provenance.{key} must be an object; found {prov[key]!r}.")


def _tail(make: type, value: float, field: str, **options: Any) -> Any:
    """A tail object, its own checks reported as a SpecError naming the spec's field."""
    try:
        return make(value, **options)
    except ValueError as err:
        raise SpecError(f"{field}: {err}") from None


def _tail_from_spec(
    obj: Any, side: str
) -> tuple[BoundedTail | ExponentialTail | None, float | None]:
    where = f"tails.{side}"
    if not isinstance(obj, Mapping):
        raise SpecError(f"{where} must be an object with a 'kind'; found {obj!r}.")
    kind = obj.get("kind")
    stated = obj.get("stated", True)
    if not isinstance(stated, bool):
        raise SpecError(f"{where}.stated must be true or false; found {stated!r}.")
    if kind == "bounded":
        _check_keys(obj, ("kind", "limit", "density", "stated"), where)
        if not stated:
            raise SpecError(
                f"{where}: only the default tail (exponential, continue-density) can be "
                "unstated; found a bounded tail with stated=false. Set stated to true."
            )
        if "density" not in obj:
            raise SpecError(f'{where} lacks \'density\'; add "density": "uniform" or "taper".')
        density = obj.get("density")
        if density not in ("uniform", "taper"):
            raise SpecError(f"{where}.density must be 'uniform' or 'taper'; found {density!r}.")
        limit = _number(obj.get("limit"), f"{where}.limit")
        return _tail(BoundedTail, limit, f"{where}.limit", density=density), None
    if kind == "exponential":
        _check_keys(obj, ("kind", "scale", "scale_rule", "stated"), where)
        rule = obj.get("scale_rule")
        scale = obj.get("scale")
        if rule not in ("stated", "continue-density"):
            raise SpecError(
                f"{where}.scale_rule must be 'stated' or 'continue-density'; found {rule!r}."
            )
        if not stated and rule != "continue-density":
            raise SpecError(
                f"{where}: an unstated (default) tail derives its scale; found scale_rule "
                f"{rule!r} with stated=false. Set stated to true or the rule to "
                "'continue-density'."
            )
        if rule == "stated":
            return _tail(ExponentialTail, _number(scale, f"{where}.scale"), f"{where}.scale"), None
        if rule == "continue-density":
            stored = None if scale is None else _number(scale, f"{where}.scale")
            return (ExponentialTail(None) if stated else None), stored
        raise SpecError(
            f"{where}.scale_rule must be 'stated' or 'continue-density'; found {rule!r}."
        )
    raise SpecError(f"{where}.kind must be 'bounded' or 'exponential'; found {kind!r}.")


def _migrate(spec: dict[str, Any]) -> dict[str, Any]:
    """Bring an older spec up to :data:`VERSION` (there is only version 1 so far)."""
    version = spec.get("version")
    if isinstance(version, bool) or not isinstance(version, int):
        raise SpecError(f"version must be an integer; found {version!r}.")
    if version > VERSION:
        raise SpecError(
            f"This spec has version {version}, newer than this cdfsketch ({__version__}) reads "
            f"(up to {VERSION}). Upgrade cdfsketch to load it."
        )
    if version < 1:
        raise SpecError(f"version must be ≥ 1; found {version}.")
    return spec


def spec_to_sketch(spec: Mapping[str, Any]) -> Sketch:
    """Check a spec dict field by field and build its :class:`Sketch`."""
    from .sketch import Sketch

    spec = dict(spec)
    fmt = spec.get("format")
    if fmt != FORMAT:
        raise SpecError(
            f"format must be {FORMAT!r}; found {fmt!r}. This file is not a cdfsketch spec."
        )
    spec = _migrate(spec)
    _check_keys(spec, _TOP_KEYS, "the spec")
    missing = [k for k in _REQUIRED if k not in spec]
    if missing:
        raise SpecError(
            f"The spec lacks the required key {missing[0]!r}. Write the spec with "
            "Sketch.to_json(), or add the key (see cdfsketch.spec.schema())."
        )
    for key, longest in (("name", 500), ("units", 100)):
        if key in spec and not isinstance(spec[key], str):
            raise SpecError(f"{key} must be a string; found {spec[key]!r}. Write it as text.")
        if len(spec.get(key, "")) > longest:
            raise SpecError(
                f"{key} may have at most {longest} characters; found {len(spec[key])}. Put longer "
                "text in provenance.notes."
            )
    interp = spec["interpolation"]
    if interp not in ("linear", "pchip"):
        raise SpecError(f"interpolation must be 'linear' or 'pchip'; found {interp!r}.")
    knots = spec["knots"]
    if not isinstance(knots, Mapping):
        raise SpecError(
            f"knots must be an object with arrays 'x' and 'p'; found {type(knots).__name__}. "
            'Write e.g. "knots": {"x": [0, 1], "p": [0, 1]}.'
        )
    _check_keys(knots, ("x", "p"), "knots")
    arrays = {}
    for key in ("x", "p"):
        values = knots.get(key)
        if not isinstance(values, list):
            raise SpecError(f"knots.{key} must be an array of numbers; found {values!r}.")
        if len(values) > MAX_KNOTS:
            raise SpecError(
                f"knots.{key} has {len(values):,} entries; at most {MAX_KNOTS:,} are accepted. "
                "Thin the knots; a sketch rarely needs more than a few hundred."
            )
        arrays[key] = [_number(v, f"knots.{key}[{i}]") for i, v in enumerate(values)]
    tails_obj = spec["tails"]
    if not isinstance(tails_obj, Mapping):
        raise SpecError(
            f"tails must be an object with 'lower' and 'upper'; found {type(tails_obj).__name__}. "
            'Write e.g. "tails": {"lower": {...}, "upper": {...}}.'
        )
    _check_keys(tails_obj, ("lower", "upper"), "tails")
    lower, lower_stored = _tail_from_spec(tails_obj.get("lower"), "lower")
    upper, upper_stored = _tail_from_spec(tails_obj.get("upper"), "upper")
    prov = spec.get("provenance", {})
    check_provenance(prov)
    try:
        sketch = Sketch(
            arrays["x"],
            arrays["p"],
            interpolation=interp,
            lower_tail=lower,
            upper_tail=upper,
            name=spec.get("name", ""),
            units=spec.get("units", ""),
            provenance=prov,
        )
    except KnotError as exc:
        raise SpecError(f"The spec's knots or tails are not a valid CDF: {exc}") from None
    for side, stored, resolved in zip(
        ("lower", "upper"), (lower_stored, upper_stored), sketch.tail_scales, strict=True
    ):
        if stored is not None and resolved is not None:
            if not math.isclose(stored, resolved, rel_tol=_SCALE_RTOL):
                raise SpecError(
                    f"tails.{side}.scale is {stored!r} but the knots give {resolved!r} under "
                    "scale_rule 'continue-density'. Set scale_rule to 'stated' to keep the "
                    "stored scale, or remove the scale."
                )
    return sketch


def load(obj: Any) -> Sketch:
    """Load a spec (path, JSON string or dict) and return its :class:`Sketch`.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> text = Sketch([0, 1, 3], [0, 0.5, 1], name="delay", units="h").to_json()
    >>> s = load(text)
    >>> s.name, s.x.tolist()
    ('delay', [0.0, 1.0, 3.0])
    """
    return spec_to_sketch(read_spec(obj))


def schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of the current spec version.

    Examples
    --------
    >>> schema()["$schema"]
    'https://json-schema.org/draft/2020-12/schema'
    """
    return json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))


def validate_spec(obj: Any) -> None:
    """Check a spec against the JSON Schema and the CDF rules; raise :class:`SpecError`.

    Needs the ``jsonschema`` package (a dependency of cdfsketch).

    Examples
    --------
    >>> validate_spec({"format": "cdfsketch-spec", "version": 1})
    Traceback (most recent call last):
    ...
    cdfsketch.spec.SpecError: The spec lacks the required key 'interpolation'...
    """
    import jsonschema

    spec = read_spec(obj)
    if isinstance(spec.get("version"), int) and spec["version"] > VERSION:
        _migrate(spec)
    validator = jsonschema.Draft202012Validator(schema())
    errors = sorted(validator.iter_errors(spec), key=lambda e: (len(e.path), list(e.path)))
    if errors:
        raise SpecError(_explain(errors[0]))
    spec_to_sketch(spec)


def _explain(error: Any) -> str:
    """Rewrite a jsonschema error as field, what was found, remedy."""
    parts = []
    for item in error.absolute_path:
        if isinstance(item, int):
            parts[-1] = f"{parts[-1]}[{item}]" if parts else f"[{item}]"
        else:
            parts.append(str(item))
    field = ".".join(parts) or "the spec"
    kind = error.validator
    if kind == "required":
        missing = error.message.split("'")[1] if "'" in error.message else error.message
        return f"The spec lacks the required key {missing!r} (in {field}). Add it. "
    if kind == "additionalProperties":
        return (
            f"Unknown key in {field}: {error.message}. Remove it (or check its spelling); "
            "free-form notes go in provenance.extra."
        )
    if kind == "oneOf":
        return (
            f"{field} is not a valid tail; found {error.instance!r}. Use "
            "{'kind': 'bounded', 'limit': L, 'density': 'uniform'} or "
            "{'kind': 'exponential', 'scale': S, 'scale_rule': 'stated'}."
        )
    return f"{field}: {error.message} (schema rule {kind!r}). Fix that field."
