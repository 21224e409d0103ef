"""The empirical distribution of data: intake, ECDF, confidence band, step outline.

* :mod:`.intake` — :func:`as_data` / :func:`as_aligned_data`, the one door
  data come in by (missing and masked values dropped with a counted
  :class:`DroppedValuesWarning`, everything else unusable a
  :class:`~cdfsketch._validate.DataError` with the remedy).
* :mod:`.ecdf` — :class:`ECDF`, ties and weights exact; Kaplan–Meier with a
  right-censoring mask.
* :mod:`.band` — the DKW–Massart band (:func:`dkw_eps`, :class:`Band`).
* :mod:`.decimation` — the staircase for drawing, decimated with a stated
  error bound (:class:`StepOutline`).

Only numpy and the standard library are imported here.
"""

from __future__ import annotations

from .._validate import DataError
from .band import Band, dkw_eps
from .decimation import StepOutline
from .ecdf import ECDF
from .intake import DroppedValuesWarning, as_aligned_data, as_data

__all__ = [
    "ECDF",
    "Band",
    "DataError",
    "DroppedValuesWarning",
    "StepOutline",
    "as_aligned_data",
    "as_data",
    "dkw_eps",
]
