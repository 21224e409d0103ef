"""Fitting steps whose sums over the data run in blocks, so memory stays small on large data.

Each function computes what the plain whole-array formula computes, with
temporaries of at most :data:`BLOCK` points instead of several copies of the
data (scipy's own ``gumbel_r.fit`` holds about seven). On data of one block the
sums are the whole-array ones; on more blocks they are added block by block,
which changes results only by rounding (relative ~1e-15, checked against
scipy in ``tests/judging/test_fit.py``).
"""

from __future__ import annotations

import math

import numpy as np

from .._extras import need

__all__ = ["BLOCK", "gumbel_ml", "linear_bins", "triangular_profile"]

#: points per block
BLOCK = 1 << 18


def _blocks(n: int) -> range:
    return range(0, n, BLOCK)


def gumbel_ml(x: np.ndarray) -> tuple[float, float]:
    """Maximum-likelihood ``(loc, scale)`` of ``scipy.stats.gumbel_r``, sums in blocks.

    The equations and the root finder are those of ``scipy.stats.gumbel_r.fit``
    (Evans, Hastings & Peacock 2000, p. 101): ``scale`` is the root of
    ``mean(x) - Σ x w / Σ w - scale`` with ``w = exp(-x / scale)`` (scaled by
    its largest value), bracketed from ``(0.5, 2)`` outwards and solved by
    ``scipy.optimize.root_scalar`` to ``rtol = xtol = 1e-14``; then
    ``loc = -scale · (log Σ exp(-x / scale) - log n)``.

    Examples
    --------
    >>> import scipy.stats as st
    >>> x = np.array([0.1, 0.7, 1.3, 2.6, 4.0])
    >>> bool(np.allclose(gumbel_ml(x), st.gumbel_r.fit(x), rtol=1e-13))
    True
    """
    root_scalar = need("fit", "scipy.optimize").root_scalar
    n = x.size
    mean = _total(x) / n
    low = float(np.min(x))

    def func(scale: float) -> float:
        top = -low / scale  # the largest of -x / scale
        sw = swx = 0.0
        for i in _blocks(n):
            xb = x[i : i + BLOCK]
            w = np.exp(-xb / scale - top)
            sw += float(w.sum())
            swx += float(np.multiply(xb, w).sum())
        return mean - swx / sw - scale

    def brackets_root(lo: float, hi: float) -> bool:
        return bool(np.sign(func(lo)) != np.sign(func(hi)))

    lo, hi = 0.5, 2.0
    while not brackets_root(lo, hi) and (lo > 0 or hi < math.inf):
        lo /= 2
        hi *= 2
    scale = float(root_scalar(func, bracket=(lo, hi), rtol=1e-14, xtol=1e-14).root)
    top = -low / scale
    total = sum(float(np.exp(-x[i : i + BLOCK] / scale - top).sum()) for i in _blocks(n))
    return -scale * (top + math.log(total) - math.log(n)), scale


def _total(x: np.ndarray) -> float:
    if x.size <= BLOCK:
        return float(np.sum(x))
    return float(sum(float(np.sum(x[i : i + BLOCK])) for i in _blocks(x.size)))


def _run_starts(xs: np.ndarray) -> np.ndarray:
    """Block starts, each moved back to the first of its run of equal values."""
    starts = np.searchsorted(xs, xs[np.arange(0, xs.size, BLOCK)], side="left")
    return np.unique(starts)


def triangular_profile(xs: np.ndarray, a: float, b: float) -> tuple[float, float]:
    """Best mode and log-likelihood of a triangular law on ``[a, b]`` (sorted ``xs``).

    The MLE of the mode is one of the observations or an end (Oliver 1972,
    from memory), so all of them are tried with running sums: ``Σ_{i<k}
    log(x_i - a)`` from the left and ``Σ_{i≥k} log(b - x_i)`` from the right,
    ``k`` the number of points below the mode. The sums run block by block,
    each block's cumulative sum seeded with the total before it (so they are
    the whole array's sequential cumulative sums); blocks start at the first
    of a run of equal values, so every ``k`` a block needs lies in it.

    Examples
    --------
    >>> c, ll = triangular_profile(np.array([1.0, 2.0, 2.5, 4.0]), 0.0, 5.0)
    >>> c, round(ll, 6)
    (2.0, -5.639244)
    """
    n = xs.size
    starts = _run_starts(xs)
    ends = np.append(starts[1:], n)
    with np.errstate(divide="ignore", invalid="ignore"):
        below = [0.0]  # Σ_{i<start} log(x_i - a), block by block
        for s, e in zip(starts[:-1], ends[:-1], strict=True):
            below.append(float(np.cumsum(np.r_[below[-1], np.log(xs[s:e] - a)])[-1]))
        above = [0.0]  # Σ_{i≥end} log(b - x_i), from the last block down
        for s, e in zip(starts[:0:-1], ends[:0:-1], strict=True):
            above.append(float(np.cumsum(np.r_[above[-1], np.log(b - xs[s:e])[::-1]])[-1]))
        above.reverse()
        best_c, best_ll = a, -math.inf
        for m, (s, e) in enumerate(zip(starts, ends, strict=True)):
            s1 = np.cumsum(np.r_[below[m], np.log(xs[s:e] - a)])  # at k = s … e
            s2 = np.cumsum(np.r_[above[m], np.log(b - xs[s:e])[::-1]])[::-1]
            cand = xs[s:e]
            if m == 0:
                cand = np.r_[a, cand]
            if e == n:
                cand = np.r_[cand, b]
            k_lt = np.searchsorted(xs, cand, side="left")  # points strictly below c
            at = k_lt - s
            ll = (
                n * math.log(2.0 / (b - a))
                + np.where(k_lt > 0, s1[at] - k_lt * np.log(cand - a), 0.0)
                + np.where(k_lt < n, s2[at] - (n - k_lt) * np.log(b - cand), 0.0)
            )
            ll = np.where(np.isnan(ll), -np.inf, ll)
            j = int(np.argmax(ll))
            if m == 0 or ll[j] > best_ll:  # the first of equal maxima, as argmax
                best_c, best_ll = float(cand[j]), float(ll[j])
    return best_c, best_ll


def linear_bins(
    z: np.ndarray, lo: float, delta: float, *, per_point: float = 1.0
) -> tuple[np.ndarray, np.ndarray]:
    """Linear binning of ``z`` (all ``≥ lo``) onto the grid ``lo + j·delta``.

    Each point's mass ``1 / per_point`` is shared between its two neighbouring
    grid points in proportion to closeness (Wand 1994). Returns the grid
    points with positive mass and their masses. The masses are accumulated in
    the order of the whole-array rule (every point's share to its left grid
    point, then every point's share to its right one), block by block into one
    array over the grid when the grid has at most ``max(z.size, 2^16)``
    points; a wider grid (far outliers) is binned through ``numpy.unique``
    over the whole data.

    Examples
    --------
    >>> g, m = linear_bins(np.array([0.0, 0.25, 1.0]), 0.0, 0.5)
    >>> g.tolist(), m.tolist()
    ([0.0, 0.5, 1.0], [1.5, 0.5, 1.0])
    """
    span = math.floor((float(np.max(z)) - lo) / delta) + 2
    if span > max(z.size, 1 << 16):
        t = (z - lo) / delta
        j = np.floor(t).astype(np.int64)
        frac = t - j
        idx = np.concatenate((j, j + 1))
        mass = np.concatenate((1.0 - frac, frac))
        if per_point != 1.0:
            mass /= per_point
        uniq, inv = np.unique(idx, return_inverse=True)
        cnt = np.bincount(inv, weights=mass)
        keep = cnt > 0
        return lo + uniq[keep] * delta, cnt[keep]
    cnt = np.zeros(span)
    for side in (0, 1):
        for i in _blocks(z.size):
            t = (z[i : i + BLOCK] - lo) / delta
            j = np.floor(t).astype(np.int64)
            frac = t - j
            share = frac if side else 1.0 - frac
            if per_point != 1.0:
                share = share / per_point
            np.add.at(cnt, j + side, share)
    where = np.flatnonzero(cnt > 0)
    return lo + where * delta, cnt[where]
