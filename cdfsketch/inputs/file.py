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
>>> import json
>>> from cdfsketch.inputs import InputSet
>>> ins = InputSet({"a": Sketch([0, 1], [0, 1])}, rank_corr=None, name="toy")
>>> again = inputset_from_dict(json.loads(ins.to_json()), base_dir=None)
>>> bool((again.sample(5, rng=1)["a"] == ins.sample(5, rng=1)["a"]).all())
True
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path, PurePosixPath, PureWindowsPath
from typing import Any

from .._validate import InputError, SpecError, fail, quote
from ..sketch import Sketch
from .inputset import MAX_INPUTS, InputSet
from .writing import INPUTSET_FORMAT, INPUTSET_VERSION

__all__ = ["inputset_from_dict", "read_inputset"]

_TOP = ("format", "version", "name", "inputs", "rank_corr", "provenance")


def _sketch_from_spec(d: Mapping[str, Any]) -> Sketch:
    """Build one embedded single-input spec (the single-spec reader's rules apply)."""
    return Sketch.from_spec(d)


def _load_sketch_file(path: Path) -> Any:
    """Load one single-input spec file (an input set inside an input set is refused)."""
    from ..spec import read_json

    data, _folder = read_json(path)
    if data.get("format") == INPUTSET_FORMAT:
        return data  # the caller names the field and refuses it
    return Sketch.from_spec(data)


# ---------------------------------------------------------------- reading


def _err(must: str, found: str, remedy: str, field: str, value: Any = None) -> SpecError:
    return fail(must, found, remedy, error=SpecError, field=field, value=value)  # type: ignore[return-value]


def read_inputset(source: Any) -> InputSet:
    """An :class:`InputSet` from a file path or JSON text, read as :func:`cdfsketch.load` reads.

    Examples
    --------
    >>> read_inputset("no-such-file.json")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: A spec path must name an existing file; got ...
    """
    from ..spec import read_json

    data, folder = read_json(source)
    return inputset_from_dict(data, base_dir=folder)


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
