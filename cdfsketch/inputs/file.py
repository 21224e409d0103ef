"""The input-set file: several specs, their rank correlations and provenance in one JSON.

::

    {"format": "cdfsketch-inputs", "version": 1,
     "name": "pump model",
     "inputs": [{"name": "hours", "spec": {...a single-input spec, unchanged...}},
                {"name": "cost", "path": "specs/cost.json"}],
     "rank_corr": [{"a": "hours", "b": "cost", "rank_corr": 0.6}],
     "provenance": {...free JSON notes...}}

A ``path`` is relative to the input-set file's folder and must stay inside
it: absolute paths, ``..`` and links that lead outside are refused. The JSON
Schema ships as ``cdfsketch/spec/schemas/inputs-v1.schema.json``. Every
error is a :class:`~cdfsketch._validate.SpecError` naming the field.

Examples
--------
>>> from cdfsketch import Sketch
>>> from cdfsketch.inputs import InputSet
>>> ins = InputSet({"a": Sketch([0, 1], [0, 1])}, rank_corr=None, name="toy")
>>> again = inputset_from_dict(json.loads(ins.to_json()), base_dir=None)
>>> bool((again.sample(5, rng=1)["a"] == ins.sample(5, rng=1)["a"]).all())
True
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Mapping
from pathlib import Path, PurePosixPath, PureWindowsPath
from typing import TYPE_CHECKING, Any

from .._files import write_text
from .._limits import MAX_SPEC_BYTES
from .._validate import InputError, SpecError, fail, quote

if TYPE_CHECKING:
    from ..sketch import Sketch
    from .inputset import InputSet

__all__ = [
    "INPUTSET_FORMAT",
    "INPUTSET_VERSION",
    "dump_inputset",
    "inputset_from_dict",
    "inputset_to_dict",
    "read_inputset",
    "spec_digest",
]

INPUTSET_FORMAT = "cdfsketch-inputs"
INPUTSET_VERSION = 1
_TOP = ("format", "version", "name", "inputs", "rank_corr", "provenance")
SCHEMA_PATH = Path(__file__).parents[1] / "spec" / "schemas" / "inputs-v1.schema.json"


# ---------------------------------------------------------------- the one door to single specs


def _sketch_from_spec(d: Mapping[str, Any]) -> Sketch:
    """Build one embedded single-input spec (the single-spec reader's rules apply)."""
    from ..spec import spec_to_sketch

    return spec_to_sketch(d)


def _sketch_to_spec(sketch: Sketch) -> dict[str, Any]:
    return sketch.to_spec()


def _load_sketch_file(path: Path) -> Any:
    """Load one single-input spec file."""
    from ..spec import load

    return load(path)


def spec_digest(sketch: Sketch) -> str:
    """SHA-256 of a sketch's spec as canonical JSON (sorted keys, no spaces).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> len(spec_digest(Sketch([0, 1], [0, 1])))
    64
    """
    body = json.dumps(_sketch_to_spec(sketch), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(body.encode("utf-8")).hexdigest()


# ---------------------------------------------------------------- writing


def inputset_to_dict(inputs: InputSet) -> dict[str, Any]:
    """The file's content for ``inputs``, sketches inline."""
    from .._frozen import thaw

    return {
        "format": INPUTSET_FORMAT,
        "version": INPUTSET_VERSION,
        "name": inputs.name,
        "inputs": [{"name": n, "spec": _sketch_to_spec(inputs.sketches[n])} for n in inputs.names],
        "rank_corr": [{"a": a, "b": b, "rank_corr": v} for (a, b), v in inputs.rank_corr.items()],
        "provenance": thaw(inputs.provenance),
    }


def dump_inputset(inputs: InputSet, path: Any = None) -> str:
    """JSON text of ``inputs``; written atomically to ``path`` when given."""
    text = json.dumps(inputset_to_dict(inputs), indent=2, allow_nan=False, ensure_ascii=False)
    if path is not None:
        write_text(path, text + "\n")
    return text


# ---------------------------------------------------------------- reading


def _err(must: str, found: str, remedy: str, field: str, value: Any = None) -> SpecError:
    return fail(must, found, remedy, error=SpecError, field=field, value=value)  # type: ignore[return-value]


def _reject_constant(name: str) -> Any:
    raise _err(
        "An input-set file must be plain JSON",
        name,
        "RFC 8259 allows no NaN or Infinity; leave such values out.",
        "file",
    )


def read_inputset(source: Any) -> InputSet:
    """An :class:`InputSet` from a file path (relative paths inside it resolved there).

    Examples
    --------
    >>> read_inputset("no-such-file.json")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: The input-set file must exist; got 'no-such-file.json'...
    """
    path = Path(source)
    if not path.is_file():
        raise _err(
            "The input-set file must exist",
            quote(str(path)),
            "Check the path.",
            "path",
            source,
        )
    size = path.stat().st_size
    if size > MAX_SPEC_BYTES:
        raise _err(
            f"An input-set file must be at most {MAX_SPEC_BYTES:,} bytes",
            f"{size:,}",
            "Keep the specs in their own files and refer to them by path.",
            "path",
        )
    try:
        data = json.loads(path.read_text(encoding="utf-8"), parse_constant=_reject_constant)
    except json.JSONDecodeError as exc:
        raise _err(
            "The input-set file must be valid JSON",
            f"{exc.msg} at line {exc.lineno}, column {exc.colno}",
            "Fix the file, or write it again with InputSet.to_json().",
            "file",
        ) from None
    except UnicodeDecodeError:
        raise _err(
            "The input-set file must be UTF-8 text", "other bytes", "Save it as UTF-8.", "file"
        ) from None
    return inputset_from_dict(data, base_dir=path.parent)


def _member_path(raw: Any, base_dir: Path | None, field: str) -> Path:
    if not isinstance(raw, str) or not raw:
        raise _err(
            f"{field} must be a relative file path", quote(raw), "Write e.g. 'cost.json'.", field
        )
    if (
        PurePosixPath(raw).is_absolute()
        or PureWindowsPath(raw).is_absolute()
        or PureWindowsPath(raw).drive
    ):
        raise _err(
            f"{field} must be relative to the input-set file's folder",
            f"the absolute path {quote(raw)}",
            "Put the spec beside the input-set file (or below it) and write e.g. 'cost.json'.",
            field,
            raw,
        )
    if ".." in PurePosixPath(raw.replace("\\", "/")).parts:
        raise _err(
            f"{field} must stay inside the input-set file's folder",
            quote(raw),
            "Move the spec below that folder; '..' is not followed.",
            field,
            raw,
        )
    if base_dir is None:
        raise _err(
            f"{field} needs the folder of the input-set file",
            quote(raw),
            "Load the set from its file, or embed the spec inline with InputSet.to_json().",
            field,
            raw,
        )
    base = Path(base_dir).resolve()
    full = (base / raw).resolve()
    if not full.is_relative_to(base):
        raise _err(
            f"{field} must stay inside the input-set file's folder",
            f"{quote(raw)} (a link leading to {quote(str(full))})",
            "Copy the spec into that folder.",
            field,
            raw,
        )
    if not full.is_file():
        raise _err(
            f"{field} must name an existing spec file", quote(raw), "Check the path.", field, raw
        )
    return full


def _keys(obj: Any, allowed: tuple[str, ...], required: tuple[str, ...], field: str) -> None:
    if not isinstance(obj, Mapping):
        raise _err(f"{field} must be a JSON object", type(obj).__name__, "See the format.", field)
    for key in obj:
        if key not in allowed:
            raise _err(
                f"{field} may hold only {', '.join(allowed)}",
                f"the unknown key {quote(key)}",
                "Remove it or check its spelling; free notes go in provenance.",
                field,
                key,
            )
    for key in required:
        if key not in obj:
            raise _err(f"{field} must have {key!r}", "nothing", f"Add {key!r}.", field)


def inputset_from_dict(d: Any, *, base_dir: Path | None) -> InputSet:
    """Check an input-set file's content and build its :class:`InputSet`.

    Parameters
    ----------
    d : dict
        The parsed JSON.
    base_dir : Path or None
        The file's folder, against which ``path`` entries are resolved (they
        may not leave it). ``None`` refuses ``path`` entries.

    Examples
    --------
    >>> inputset_from_dict({"format": "cdfsketch-inputs", "version": 2}, base_dir=None)
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: version must be 1 (this cdfsketch reads version 1); got 2...
    """
    from ..sketch import Sketch
    from .inputset import MAX_INPUTS, InputSet

    _keys(d, _TOP, ("format", "version"), "the input-set file")
    if d["format"] != INPUTSET_FORMAT:
        raise _err(
            f"format must be {INPUTSET_FORMAT!r}",
            quote(d["format"]),
            "This is not a cdfsketch input-set file.",
            "format",
        )
    version = d["version"]
    if isinstance(version, bool) or not isinstance(version, int) or version != INPUTSET_VERSION:
        raise _err(
            f"version must be {INPUTSET_VERSION} (this cdfsketch reads version 1)",
            quote(version),
            "A newer file needs a newer cdfsketch: pip install -U cdfsketch.",
            "version",
        )
    _keys(d, _TOP, ("inputs",), "the input-set file")
    entries = d["inputs"]
    if not isinstance(entries, list) or not entries or len(entries) > MAX_INPUTS:
        raise _err(
            f"inputs must be a list of 1 to {MAX_INPUTS:,} entries",
            quote(entries),
            'Write e.g. [{"name": "hours", "path": "hours.json"}].',
            "inputs",
        )
    sketches: dict[str, Sketch] = {}
    for i, entry in enumerate(entries):
        field = f"inputs[{i}]"
        _keys(entry, ("name", "spec", "path"), ("name",), field)
        name = entry["name"]
        if not isinstance(name, str) or not name.strip():
            raise _err(
                f"{field}.name must be non-empty text", quote(name), "Name the input.", field
            )
        if name in sketches:
            raise _err(
                "input names must be unique", quote(name), "Rename one of them.", f"{field}.name"
            )
        if ("spec" in entry) == ("path" in entry):
            raise _err(
                f"{field} must have exactly one of 'spec' (inline) and 'path'",
                ", ".join(k for k in ("spec", "path") if k in entry) or "neither",
                "Give the spec inline or by a relative path.",
                field,
            )
        if "spec" in entry:
            if not isinstance(entry["spec"], Mapping):
                raise _err(
                    f"{field}.spec must be a JSON object",
                    quote(entry["spec"]),
                    "Embed the single-input spec unchanged.",
                    f"{field}.spec",
                )
            where, read, arg = f"{field}.spec", _sketch_from_spec, entry["spec"]
        else:
            full = _member_path(entry["path"], base_dir, f"{field}.path")
            where, read, arg = f"{field}.path ({entry['path']})", _load_sketch_file, full
        try:
            sk = read(arg)
        except ValueError as exc:  # a single-spec error: say where it came from
            inner = getattr(exc, "field", None)
            raise SpecError(
                f"{where}: {exc}",
                field=f"{field}.{inner}" if inner else field,
                index=getattr(exc, "index", None),
                found=getattr(exc, "found", None),
            ) from None
        if not isinstance(sk, Sketch):
            raise _err(
                f"{field}.path must name a single-input spec",
                quote(entry["path"]),
                "Input sets do not nest; list its inputs here instead.",
                f"{field}.path",
            )
        sketches[name] = sk
    pairs = d.get("rank_corr", [])
    if not isinstance(pairs, list):
        raise _err(
            "rank_corr must be a list",
            quote(pairs),
            'Write e.g. [{"a": …, "b": …, "rank_corr": 0.6}].',
            "rank_corr",
        )
    rank_corr: dict[tuple[str, str], Any] = {}
    for i, pair in enumerate(pairs):
        field = f"rank_corr[{i}]"
        _keys(pair, ("a", "b", "rank_corr"), ("a", "b", "rank_corr"), field)
        key = (pair["a"], pair["b"])
        if key in rank_corr or key[::-1] in rank_corr:
            raise _err(
                "each pair must appear once in rank_corr", quote(key), "Remove the repeat.", field
            )
        rank_corr[key] = pair["rank_corr"]
    name = d.get("name", "")
    provenance = d.get("provenance")
    try:
        return InputSet(sketches, rank_corr=rank_corr, name=name, provenance=provenance)
    except SpecError:
        raise
    except InputError as exc:
        raise SpecError(str(exc), field=exc.field, index=exc.index, found=exc.found) from None


def load_inputset_text(text: str, *, base_dir: Path | None = None) -> InputSet:
    """An :class:`InputSet` from JSON text (``path`` entries need ``base_dir``)."""
    try:
        data = json.loads(text, parse_constant=_reject_constant)
    except json.JSONDecodeError as exc:
        raise _err(
            "An input set must be valid JSON",
            f"{exc.msg} at line {exc.lineno}, column {exc.colno}",
            "Fix the text.",
            "text",
        ) from None
    return inputset_from_dict(data, base_dir=base_dir)


def is_path_like(obj: Any) -> bool:
    """Whether ``obj`` names a file (not JSON text)."""
    return isinstance(obj, os.PathLike) or (
        isinstance(obj, str) and obj.lstrip()[:1] not in ("{", "[")
    )
