"""One palette for every view: colour, dash pattern and marker (stdlib only).

Colours carry meaning consistently across the editor, the review board, the
standalone page and static figures: the data are grey, the sketch being
edited is blue, the band is a pale grey-blue, warnings are vermillion. The
colours are Okabe & Ito's (2008, "Color Universal Design").

A candidate on the board or the page gets a :class:`Style` by its position
in the review, once: colour, dash pattern and marker together, so up to
:data:`MAX_DISTINCT` candidates stay distinguishable when two colours look
alike (colour-vision deficiency, a grey printout). The marker follows the
colour and the dash pattern cycles with a period that shares no factor with
the number of colours, so two candidates that share a colour differ in dash,
and two whose colours merge differ in marker. The chosen candidate keeps its
style and is drawn thicker.

Examples
--------
>>> style(0)
Style(colour='#E69F00', dash='solid', marker='circle')
>>> style(7).colour == style(0).colour, style(7).dash
(True, 'dash-dot')
"""

from __future__ import annotations

from typing import NamedTuple

__all__ = [
    "BAND",
    "CANDIDATES",
    "DASHES",
    "DATA",
    "FONT",
    "KNOT",
    "KNOT_OUTSIDE_BAND",
    "LOCKED",
    "MARKERS",
    "MAX_DISTINCT",
    "OKABE_ITO",
    "SAMPLE",
    "SKETCH",
    "Style",
    "candidate_colour",
    "style",
]

#: Okabe–Ito colours in their usual order (black first).
OKABE_ITO = (
    "#000000",  # black
    "#E69F00",  # orange
    "#56B4E9",  # sky blue
    "#009E73",  # bluish green
    "#F0E442",  # yellow
    "#0072B2",  # blue
    "#D55E00",  # vermillion
    "#CC79A7",  # reddish purple
)

DATA = "#6b6b6b"  # ECDF steps and histogram
BAND = "#c9d6e3"  # simultaneous confidence band fill
SKETCH = OKABE_ITO[5]  # the sketch being edited
KNOT = OKABE_ITO[5]
KNOT_OUTSIDE_BAND = OKABE_ITO[6]  # knots outside the band, warnings
LOCKED = OKABE_ITO[0]
SAMPLE = OKABE_ITO[3]  # sample preview
#: Candidate colours, in order (yellow left out: too pale on white).
CANDIDATES = (
    OKABE_ITO[1],
    OKABE_ITO[2],
    OKABE_ITO[3],
    OKABE_ITO[5],
    OKABE_ITO[6],
    OKABE_ITO[7],
    OKABE_ITO[0],
)
#: Dash patterns by name (names as bqplot's ``line_style``); SVG dash arrays in :data:`DASH_ARRAY`.
DASHES = ("solid", "dashed", "dotted", "dash-dot")
#: Stroke dash arrays (SVG, in line widths of 1.8 px) for each dash name.
DASH_ARRAY = {"solid": "none", "dashed": "8 4", "dotted": "2 3", "dash-dot": "8 3 2 3"}
#: Markers by name (bqplot's ``marker`` names), one per candidate colour.
MARKERS = ("circle", "square", "triangle-up", "diamond", "cross", "triangle-down", "star")
#: Candidates that get pairwise different styles (colour, dash) before any repeats.
MAX_DISTINCT = len(CANDIDATES) * len(DASHES)
FONT = "system-ui, -apple-system, 'Segoe UI', Roboto, sans-serif"


class Style(NamedTuple):
    """How one candidate is drawn everywhere: colour, dash pattern, marker."""

    colour: str
    dash: str
    marker: str


def style(i: int) -> Style:
    """The style of the ``i``-th candidate (fixed by position; cycles after :data:`MAX_DISTINCT`).

    Examples
    --------
    >>> len({style(i) for i in range(12)})
    12
    """
    k = i % len(CANDIDATES)
    return Style(CANDIDATES[k], DASHES[i % len(DASHES)], MARKERS[k])


def candidate_colour(i: int) -> str:
    """Colour of the ``i``-th candidate (cycles); the same as ``style(i).colour``.

    Examples
    --------
    >>> candidate_colour(0)
    '#E69F00'
    """
    return style(i).colour
