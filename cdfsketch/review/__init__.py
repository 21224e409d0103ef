"""Reviewing candidate distributions for one input: the record, the page, the figures.

* :class:`Review` (``record``) holds the candidates, the data, the
  comparison and the group's decision; no widgets needed.
* :func:`save_html` (``page``) writes ONE self-contained HTML page for the
  meeting; :func:`save_figure` (``figures``) a PNG, SVG or PDF (matplotlib,
  the ``review`` extra).
* ``palette`` (colour, dash, marker per candidate), ``table`` (the comparison
  as a review reads it), ``layers`` (what every view draws; THE histogram
  rule :func:`histogram_bins`), ``texts`` (THE caution).
* ``consequence_run`` (a :func:`cdfsketch.consequences` result checked
  against the review, or run on its candidates) and ``consequence_view``
  (what the board and the page show of it: does the choice change the
  model's answer?).

:class:`cdfsketch.ReviewBoard` is the notebook view of a :class:`Review`.
"""

from __future__ import annotations

from .candidates import FIT_KNOTS, ReviewCandidate
from .figures import save_figure
from .layers import histogram, histogram_bins
from .page import page_html, save_html
from .record import Review
from .texts import CAUTION

__all__ = [
    "CAUTION",
    "FIT_KNOTS",
    "Review",
    "ReviewCandidate",
    "histogram",
    "histogram_bins",
    "page_html",
    "save_figure",
    "save_html",
]
