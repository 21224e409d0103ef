"""The one holdout split (numpy only): which observations are held out of a fit.

Every part of cdfsketch that holds data out — :func:`cdfsketch.compare`, the
editor's live holdout score — calls :func:`holdout_split`, so the same
``fraction`` and ``rng`` hold out the same points everywhere. The draw comes
from the stream keyed ``"holdout"`` of ``rng``.

Examples
--------
>>> train, test = holdout_split(10, fraction=0.3, rng=7)
>>> test.size, train.size, sorted({*train, *test}) == list(range(10))
(3, 7, True)
>>> bool((holdout_split(10, fraction=0.3, rng=7)[1] == test).all())
True
"""

from __future__ import annotations

from typing import Any

import numpy as np

from . import _streams
from ._validate import integer, number

__all__ = ["holdout_split"]


def holdout_split(n: int, *, fraction: float, rng: Any = None) -> tuple[np.ndarray, np.ndarray]:
    """Indices ``(train, test)`` of ``n`` observations, ``round(fraction * n)`` held out.

    Parameters
    ----------
    n : int
        Number of observations (≥ 0).
    fraction : float
        Share held out, in ``[0, 1)``.
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the split uses its
        ``"holdout"`` stream.

    Returns
    -------
    train, test : ndarray of int
        Sorted indices; together they are ``0 … n-1`` once each.
    """
    n = integer(n, field="n", low=0)
    fraction = number(
        fraction, field="fraction", low=0.0, high=1.0, high_open=True, example="fraction=0.2"
    )
    k = round(fraction * n)
    perm = _streams.generator(_streams.root_seed(rng), "holdout").permutation(n)
    held = np.zeros(n, dtype=bool)
    held[perm[:k]] = True
    return np.flatnonzero(~held), np.flatnonzero(held)
