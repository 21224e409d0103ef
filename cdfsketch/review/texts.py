"""Texts every view shows the same way (stdlib only): THE caution about judgement.

The editor, the review board, the standalone page and static figures all
show :data:`CAUTION`; nothing else words it.

Examples
--------
>>> CAUTION.startswith("A sketch is judgement, to be reviewed.")
True
"""

from __future__ import annotations

__all__ = ["CAUTION"]

#: The caution about judgement-based inputs, shown on every view, page and figure.
CAUTION = (
    "A sketch is judgement, to be reviewed. Where it feeds safety- or money-critical "
    "decisions, local codes and licensed practice decide what is acceptable."
)
