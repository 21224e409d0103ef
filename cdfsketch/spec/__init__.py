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

The JSON Schema ships as ``cdfsketch/spec/schemas/spec-v1.schema.json``
(:func:`schema`). This package knows the format only (numpy and stdlib; it
never imports the sketch): :func:`read_spec` reads a path, text or dict
into a checked plain dict, :func:`spec_to_kwargs` gives the sketch's
arguments, :func:`sketch_to_spec` and :func:`dump_spec` write.
:func:`cdfsketch.load` and :func:`cdfsketch.validate_spec` (in
:mod:`cdfsketch.loading`) build the sketch. Every failure is a
:class:`SpecError` naming the field, the index, what was found and the
remedy. Nothing in a spec is executed; there is no pickle.

Examples
--------
>>> tail = {"kind": "exponential", "scale_rule": "continue-density"}
>>> spec = read_spec({"format": "cdfsketch-spec", "version": 1, "interpolation": "pchip",
...                   "knots": {"x": [0, 1, 2], "p": [0, 0.5, 1]},
...                   "tails": {"lower": tail, "upper": tail}})
>>> spec["interpolation"], spec_to_kwargs(spec)["upper_tail"]
('pchip', ExponentialTail(scale=None))
"""

from __future__ import annotations

from .._validate import SpecError
from ._format import (
    FORMAT,
    MAX_DEPTH,
    MAX_KNOTS,
    MAX_NUMBER_CHARS,
    MAX_SPEC_BYTES,
    SCHEMAS,
    VERSION,
)
from ._json import plain, read_json, source
from ._migrate import migrate
from ._provenance import check_provenance, data_fingerprint
from ._read import check_spec, check_stored_scales, read_spec, spec_to_kwargs
from ._schema import check_against_schema, schema
from ._write import dump_spec, sketch_to_spec

__all__ = [
    "FORMAT",
    "MAX_DEPTH",
    "MAX_KNOTS",
    "MAX_NUMBER_CHARS",
    "MAX_SPEC_BYTES",
    "SCHEMAS",
    "VERSION",
    "SpecError",
    "check_against_schema",
    "check_provenance",
    "check_spec",
    "check_stored_scales",
    "data_fingerprint",
    "dump_spec",
    "migrate",
    "plain",
    "read_json",
    "read_spec",
    "schema",
    "sketch_to_spec",
    "source",
    "spec_to_kwargs",
]
