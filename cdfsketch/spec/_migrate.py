"""Bringing older specs up to the current version (stdlib only).

Each step turns version ``k`` into ``k + 1``; :func:`migrate` applies them in
turn. There is only version 1 so far, so the chain is empty, but the version
is checked here, once.

Examples
--------
>>> migrate({"format": "cdfsketch-spec", "version": 1})["version"]
1
>>> migrate({"version": 7})
Traceback (most recent call last):
...
cdfsketch._validate.SpecError: version must be at most 1 (the newest this cdfsketch reads)...
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from .._validate import SpecError, fail, integer, quote
from .._version import __version__
from ._format import VERSION

__all__ = ["STEPS", "migrate"]

#: version k → the function that turns a version-k spec into version k + 1.
STEPS: dict[int, Callable[[dict[str, Any]], dict[str, Any]]] = {}


def migrate(spec: dict[str, Any]) -> dict[str, Any]:
    """``spec`` brought up to :data:`~cdfsketch.spec.VERSION` (a new dict when changed)."""
    version = integer(spec.get("version"), field="version", low=1, error=SpecError, example="1")
    if version > VERSION:
        raise fail(
            f"version must be at most {VERSION} (the newest this cdfsketch reads)",
            quote(version),
            f"This spec is newer than cdfsketch {__version__}; upgrade cdfsketch to load it.",
            error=SpecError,
            field="version",
            value=version,
        )
    while version < VERSION:
        spec = STEPS[version](dict(spec))
        version += 1
        spec["version"] = version
    return spec
