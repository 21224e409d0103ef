"""One colour-blind-safe palette for every view (Okabe & Ito 2008, "Color Universal Design").

Colours carry meaning consistently across the editor, the review board, the
standalone page and static figures: the data are grey, the sketch is blue,
the band is a pale grey-blue, warnings are vermillion.
"""

from __future__ import annotations

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
SKETCH = OKABE_ITO[5]  # the sketch being edited / the chosen candidate
KNOT = OKABE_ITO[5]
KNOT_OUTSIDE_BAND = OKABE_ITO[6]  # knots outside the band, warnings
LOCKED = OKABE_ITO[0]
SAMPLE = OKABE_ITO[3]  # sample preview
#: colours for candidates other than the chosen one, in order
CANDIDATES = (OKABE_ITO[1], OKABE_ITO[2], OKABE_ITO[3], OKABE_ITO[7], OKABE_ITO[6], OKABE_ITO[0])
FONT = "system-ui, -apple-system, 'Segoe UI', Roboto, sans-serif"


def candidate_colour(i: int) -> str:
    """Colour of the ``i``-th candidate (cycles).

    Examples
    --------
    >>> candidate_colour(0)
    '#E69F00'
    """
    return CANDIDATES[i % len(CANDIDATES)]
