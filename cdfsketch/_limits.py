"""The one table of limits (stdlib only).

The constructors, the spec loader, the JSON Schemas and the browser's spec
reader all take their limits from here; ``tests`` check that the shipped
schemas and ``js/spec-reader.mjs`` state the same numbers. A value a
constructor accepts is a value the loader accepts, so what is made can
always be saved and loaded again.

Examples
--------
>>> MAX_KNOTS, MAX_NAME_CHARS
(100000, 500)
"""

from __future__ import annotations

__all__ = [
    "MAX_ABS_X",
    "MAX_INPUTS",
    "MAX_KNOTS",
    "MAX_NAME_CHARS",
    "MAX_SCALE",
    "MAX_SPEC_BYTES",
    "MAX_TEXT_CHARS",
    "MAX_UNITS_CHARS",
    "MIN_SPACING",
]

#: Most knots in one sketch (and in one spec).
MAX_KNOTS = 100_000
#: Knot positions, bounded-tail limits: within ±this magnitude (rescale the units beyond it).
MAX_ABS_X = 1e100
#: Smallest spacing of two distinct knot positions.
MIN_SPACING = 1e-100
#: Largest stated exponential-tail scale.
MAX_SCALE = 1e100
#: Longest name of a quantity, an input or a candidate.
MAX_NAME_CHARS = 500
#: Longest units text.
MAX_UNITS_CHARS = 100
#: Longest free text in provenance (author, rationale, notes, …).
MAX_TEXT_CHARS = 100_000
#: Most inputs in one input set.
MAX_INPUTS = 10_000
#: Largest spec file or text read.
MAX_SPEC_BYTES = 10_000_000
