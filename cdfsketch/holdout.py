"""The one holdout split (numpy only): which observations are held out of a fit.

Every part of cdfsketch that holds data out — :func:`cdfsketch.compare`, the
editor's live holdout score — calls this module, so the same ``fraction`` and
``rng`` hold out the same points everywhere.

The rule: observation ``i`` gets the key ``u_i``, the ``i``-th double of the
stream keyed ``"holdout"`` of ``rng``; the ``round(fraction * n)``
observations with the smallest keys are held out (equal keys at the cut, a
chance of about ``n / 2**53``, are taken in index order). Sorting by independent uniform
keys is a uniformly random permutation, so the held-out set is a uniformly
random subset of its size. Two consequences the rule is chosen for:

* the ``m`` smallest keys are a uniformly random subset of the held-out
  ones, so :func:`holdout_subsample` gives a few thousand of them in one
  pass over the keys, without the split's index arrays;
* a smaller ``fraction`` holds out a subset of what a larger one holds out.

The keys are drawn and read in chunks, never all at once: the split needs
one flag per observation besides the indices it returns, the subsample only
``O(chunk)``.

Examples
--------
>>> train, test = holdout_split(10, fraction=0.3, rng=7)
>>> test.size, train.size, sorted({*train, *test}) == list(range(10))
(3, 7, True)
>>> bool((holdout_split(10, fraction=0.3, rng=7)[1] == test).all())
True
>>> few, held = holdout_subsample(10, fraction=0.3, size=2, rng=7)
>>> held, bool(np.isin(few, test).all())
(3, True)
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from typing import Any

import numpy as np

from . import _streams
from ._validate import _is_real, fail, integer, number

__all__ = ["holdout_counts", "holdout_fraction", "holdout_split", "holdout_subsample"]

#: keys drawn and compared per step (memory O(chunk), not O(n))
_CHUNK = 1 << 20


def _keys(root: np.random.SeedSequence, n: int) -> Iterator[tuple[int, np.ndarray]]:
    """``(start, keys[start:start+chunk])`` over the ``n`` keys (the same in any chunking)."""
    gen = _streams.generator(root, "holdout")
    for start in range(0, n, _CHUNK):
        yield start, gen.random(min(_CHUNK, n - start))


def _window(
    root: np.random.SeedSequence, n: int, k: int, *, from_zero: bool
) -> tuple[int, np.ndarray, np.ndarray]:
    """One pass: keys below a window around the ``k``-th smallest, and those inside it.

    The window is the expected ``k / n`` ± 12 standard deviations of that
    order statistic, plus ``64 / n`` (``from_zero``: it starts at 0); a window
    that misses (never seen in practice) is widened. Returns ``(below, index,
    key)``: the count of keys under the window and the indices and keys inside.
    """
    f = k / n
    half = 12.0 * math.sqrt(f * (1.0 - f) / n) + 64.0 / n
    while True:
        lo, hi = 0.0 if from_zero else max(f - half, 0.0), min(f + half, 1.0)
        below = 0
        indices: list[np.ndarray] = []
        keys: list[np.ndarray] = []
        for start, u in _keys(root, n):
            below += int(np.count_nonzero(u < lo)) if lo > 0 else 0
            inside = np.flatnonzero((u >= lo) & (u < hi))
            indices.append(start + inside)
            keys.append(u[inside])
        idx, key = np.concatenate(indices), np.concatenate(keys)
        if below < k <= below + key.size:
            return below, idx, key
        half *= 8.0


def _smallest(root: np.random.SeedSequence, n: int, k: int) -> np.ndarray:
    """Sorted indices of the ``k`` smallest keys (by key, then index), in one pass."""
    if k == 0:
        return np.zeros(0, dtype=np.intp)
    _, idx, key = _window(root, n, k, from_zero=True)
    return np.sort(idx[np.argsort(key, kind="stable")[:k]])


def _mark_held(root: np.random.SeedSequence, n: int, k: int, out: np.ndarray) -> None:
    """Set ``out[i]`` to whether observation ``i`` is among the ``k`` smallest keys.

    The first pass finds the cut ``t`` (the ``k``-th smallest key) from the
    keys near it; the second compares each key with ``t``, holding out the
    first of the keys equal to ``t`` as needed.
    """
    if k == 0:
        out[:] = False
        return
    below, _, key = _window(root, n, k, from_zero=False)
    t = float(np.partition(key, k - below - 1)[k - below - 1])
    take = k - below - int(np.count_nonzero(key < t))
    for start, u in _keys(root, n):
        mask = np.less(u, t, out=out[start : start + u.size])
        if take:
            ties = np.flatnonzero(u == t)[:take]
            mask[ties] = True
            take -= ties.size


def _split_args(n: Any, fraction: Any) -> tuple[int, int]:
    n = integer(n, field="n", low=0)
    fraction = number(
        fraction, field="fraction", low=0.0, high=1.0, high_open=True, example="fraction=0.2"
    )
    return n, round(fraction * n)


def holdout_fraction(holdout: Any) -> float:
    """A user's ``holdout=`` option as a fraction: ``None`` or 0 is 0.0 (nothing held out).

    Examples
    --------
    >>> holdout_fraction(None), holdout_fraction(0.3)
    (0.0, 0.3)
    >>> holdout_fraction(1.0)
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: holdout must be a finite number in (0, 1); got 1.0. ...
    """
    if holdout is None or (_is_real(holdout) and holdout == 0):
        return 0.0
    return number(
        holdout,
        field="holdout",
        low=0.0,
        high=1.0,
        low_open=True,
        high_open=True,
        example="holdout=0.3 (or None to skip)",
    )


def holdout_counts(n: int, *, fraction: float) -> tuple[int, int]:
    """How many observations train and how many are held out; an error unless both parts work.

    A split must leave at least 2 observations to train on (an ECDF, a fit)
    and hold out at least 1.

    Examples
    --------
    >>> holdout_counts(10, fraction=0.3)
    (7, 3)
    >>> holdout_counts(3, fraction=0.9)
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: holdout must leave at least 2 points for training and 1 ...
    """
    n, k = _split_args(n, fraction)
    if k < 1 or n - k < 2:
        raise fail(
            "holdout must leave at least 2 points for training and 1 held out",
            f"holdout={fraction!r} of {n} points: {n - k} and {k}",
            "Use more data, a smaller holdout, or holdout=None.",
            field="holdout",
            value=fraction,
        )
    return n - k, k


def holdout_split(n: int, *, fraction: float, rng: Any = None) -> tuple[np.ndarray, np.ndarray]:
    """Indices ``(train, test)`` of ``n`` observations, ``round(fraction * n)`` held out.

    The held-out ones are those with the smallest keys (see the module
    docstring): a uniformly random subset of that size.

    Parameters
    ----------
    n : int
        Number of observations (≥ 0).
    fraction : float
        Share held out, in ``[0, 1)``.
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the keys come from its
        ``"holdout"`` stream.

    Returns
    -------
    train, test : ndarray of int
        Sorted indices; together they are ``0 … n-1`` once each.

    Examples
    --------
    >>> train, test = holdout_split(8, fraction=0.25, rng=1)
    >>> test.size, bool(np.isin(test, holdout_split(8, fraction=0.5, rng=1)[1]).all())
    (2, True)
    """
    n, k = _split_args(n, fraction)
    held = np.empty(n, dtype=bool)
    _mark_held(_streams.root_seed(rng), n, k, held)
    test = np.flatnonzero(held)
    np.logical_not(held, out=held)
    return np.flatnonzero(held), test


def holdout_subsample(
    n: int, *, fraction: float, size: int, rng: Any = None
) -> tuple[np.ndarray, int]:
    """Indices of ``size`` held-out observations (a uniformly random subset) and the count held out.

    The held-out observations with the smallest keys: a uniformly random
    subset of :func:`holdout_split`'s ``test`` with the same ``n``,
    ``fraction`` and ``rng``, and all of it when ``size`` is not smaller.
    One pass over the keys; no array of ``n`` indices is made.

    Parameters
    ----------
    n : int
        Number of observations (≥ 0).
    fraction : float
        Share held out, in ``[0, 1)``.
    size : int
        Most indices wanted (≥ 0).
    rng : optional
        As for :func:`holdout_split`.

    Returns
    -------
    indices : ndarray of int
        ``min(size, held)`` sorted indices.
    held : int
        How many observations :func:`holdout_split` holds out: ``round(fraction * n)``.

    Examples
    --------
    >>> few, held = holdout_subsample(1000, fraction=0.3, size=5, rng=3)
    >>> few.size, held, bool(np.isin(few, holdout_split(1000, fraction=0.3, rng=3)[1]).all())
    (5, 300, True)
    """
    n, k = _split_args(n, fraction)
    m = min(integer(size, field="size", low=0, example="size=5000"), k)
    return _smallest(_streams.root_seed(rng), n, m), k
