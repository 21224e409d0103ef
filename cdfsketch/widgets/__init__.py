"""Notebook widgets: :class:`Editor` and :class:`ReviewBoard` (ipywidgets + bqplot).

Imported lazily by ``cdfsketch.Editor`` / ``cdfsketch.ReviewBoard`` so the
core never loads ipywidgets, bqplot or traitlets.
"""

from __future__ import annotations

from typing import Any

__all__ = ["Editor", "ReviewBoard"]


def __getattr__(name: str) -> Any:
    if name == "Editor":
        from .editor import Editor

        return Editor
    if name == "ReviewBoard":
        from .review import ReviewBoard

        return ReviewBoard
    raise AttributeError(f"module 'cdfsketch.widgets' has no attribute {name!r}")
