"""Goodness-of-fit metrics and the comparison table.

Everything here works on any model :func:`cdfsketch.protocol.as_model` reads:
a fitted :class:`~cdfsketch.fit.Candidate`, a :class:`~cdfsketch.Sketch`, an
:class:`~cdfsketch.empirical.ECDF` (the resampled data as a candidate) or a
frozen ``scipy.stats`` distribution (continuous or discrete).

* :mod:`.scores` — KS, Anderson–Darling, Cramér–von Mises, W1, CRPS.
* :mod:`.integrals` — the exact W1/CRPS integrals, linear in the data.
* :mod:`.sample` — data sorted once, a model evaluated once at it.
* :mod:`.table` — :class:`ComparisonTable`.
* :mod:`.compare` — :func:`compare`.

This package does not import :mod:`cdfsketch.fit`: a candidate is read
through the protocol (and refit through its ``refit`` method). scipy is
imported inside the functions that need it.
"""

from __future__ import annotations

from .compare import DEFAULT_SEED, compare
from .scores import anderson_darling, cramer_von_mises, crps, ks_distance, wasserstein1
from .table import ComparisonTable, format_cell

__all__ = [
    "DEFAULT_SEED",
    "ComparisonTable",
    "anderson_darling",
    "compare",
    "cramer_von_mises",
    "crps",
    "format_cell",
    "ks_distance",
    "wasserstein1",
]
