"""Writing input-set files: the format's name and version, digests, the JSON text.

Below :mod:`cdfsketch.inputs.inputset` (it reads an input set's public
attributes only), so the value can write itself without an import cycle; the
reading half is :mod:`cdfsketch.inputs.file`.

Examples
--------
>>> INPUTSET_FORMAT, INPUTSET_VERSION
('cdfsketch-inputs', 1)
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .._files import write_text
from .._frozen import thaw

if TYPE_CHECKING:
    from ..sketch import Sketch
    from .inputset import InputSet

__all__ = [
    "INPUTSET_FORMAT",
    "INPUTSET_VERSION",
    "dump_inputset",
    "inputset_schema",
    "inputset_to_dict",
    "spec_digest",
]

INPUTSET_FORMAT = "cdfsketch-inputs"
INPUTSET_VERSION = 1
SCHEMA_PATH = Path(__file__).parents[1] / "spec" / "schemas" / "inputs-v1.schema.json"


def inputset_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of the input-set file, version 1.

    Examples
    --------
    >>> inputset_schema()["properties"]["format"]
    {'const': 'cdfsketch-inputs'}
    """
    return json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))


# ---------------------------------------------------------------- the one door to single specs


def _sketch_to_spec(sketch: Sketch) -> dict[str, Any]:
    return sketch.to_spec()


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
