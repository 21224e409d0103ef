"""Notebook widgets: :class:`Editor` and :class:`ReviewBoard` (ipywidgets + bqplot).

Imported lazily by ``cdfsketch.Editor`` / ``cdfsketch.ReviewBoard`` so the
core never loads ipywidgets, bqplot or traitlets.
"""

from __future__ import annotations

from typing import Any

from .._extras import need

__all__ = ["Editor", "ReviewBoard"]


def __getattr__(name: str) -> Any:
    if name in __all__:  # one clear error naming the extra, before any widget import
        for module in ("ipywidgets", "bqplot", "traitlets", "scipy"):
            need("notebook", module)
    if name == "Editor":
        from .editor import Editor

        return Editor
    if name == "ReviewBoard":
        from .review import ReviewBoard

        return ReviewBoard
    raise AttributeError(f"module 'cdfsketch.widgets' has no attribute {name!r}")
