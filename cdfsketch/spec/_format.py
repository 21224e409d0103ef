"""What the spec format is: its name, version, keys and the reader's own limits (stdlib only).

The size limits shared with the constructors, the schema and the browser
reader come from :mod:`cdfsketch._limits`; the two limits here only guard
the JSON reader itself (how deep a text may nest, how long one integer
literal may be), so that no input can exhaust the stack or the integer parser.

Examples
--------
>>> FORMAT, VERSION, MAX_DEPTH
('cdfsketch-spec', 1, 32)
"""

from __future__ import annotations

from importlib import resources

from .._limits import (
    MAX_ABS_X,
    MAX_KNOTS,
    MAX_NAME_CHARS,
    MAX_SCALE,
    MAX_SPEC_BYTES,
    MAX_TEXT_CHARS,
    MAX_UNITS_CHARS,
    MIN_SPACING,
)

__all__ = [
    "FORMAT",
    "MAX_ABS_X",
    "MAX_DEPTH",
    "MAX_KNOTS",
    "MAX_NAME_CHARS",
    "MAX_NUMBER_CHARS",
    "MAX_SCALE",
    "MAX_SPEC_BYTES",
    "MAX_TEXT_CHARS",
    "MAX_UNITS_CHARS",
    "MIN_SPACING",
    "SCHEMAS",
    "VERSION",
]

#: The ``format`` field of a single-input spec.
FORMAT = "cdfsketch-spec"
#: The newest spec version this package writes and reads.
VERSION = 1
#: Deepest nesting of objects and arrays read (a spec itself needs 4; the rest is room
#: for ``provenance.extra``). Checked before parsing, so no input exhausts the stack.
MAX_DEPTH = 32
#: Most digits of an integer literal read (an integer longer than this is refused before
#: Python converts it; float literals convert in linear time, to ±inf beyond the range).
MAX_NUMBER_CHARS = 1000

#: The folder of the shipped JSON Schemas (``spec-v1.schema.json``, …).
SCHEMAS = resources.files(__package__) / "schemas"

TOP_KEYS = ("format", "version", "name", "units", "interpolation", "knots", "tails", "provenance")
REQUIRED = ("format", "version", "interpolation", "knots", "tails")
INTERPOLATIONS = ("linear", "pchip")
DENSITIES = ("uniform", "taper")
SCALE_RULES = ("stated", "continue-density")
PROVENANCE_TEXT = ("author", "created", "rationale", "package_version", "method", "notes")
PROVENANCE_KEYS = (*PROVENANCE_TEXT, "data", "contributors", "decision", "extra")
#: Relative agreement asked of a stored derived scale with the one the knots give.
SCALE_RTOL = 1e-9
