"""Data sorted once, and a model evaluated once at it (numpy only).

Every score in :mod:`cdfsketch.metrics` reads the data through a
:class:`SortedSample` (sorted once per call, ties merged, the ECDF's levels
and ``∫ F_n (1 - F_n) dx`` computed once) and a model through an
:class:`Evaluated` (its CDF, left limit, survival function and density at the
distinct data values and at its own breakpoints inside the data's range,
computed once). The distances, statistics and integrals are then linear in
the number of points.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..protocol import Model

__all__ = ["Evaluated", "SortedSample"]

#: points evaluated at a time (a model's own temporaries stay small)
_BLOCK = 1 << 18


def in_blocks(f: Any, x: np.ndarray) -> np.ndarray:
    """``f(x)`` evaluated block by block into one float array."""
    if x.size <= _BLOCK:
        return np.asarray(f(x), dtype=float)
    out = np.empty(x.size)
    for i0 in range(0, x.size, _BLOCK):
        out[i0 : i0 + _BLOCK] = f(x[i0 : i0 + _BLOCK])
    return out


class SortedSample:
    """Observations sorted once, with their (weighted) ECDF.

    Attributes
    ----------
    ys : ndarray
        The observations, sorted.
    ux : ndarray
        Distinct values.
    levels : ndarray
        ``F_n`` at ``ux`` (right-continuous; the last is 1).

    Examples
    --------
    >>> s = SortedSample(np.array([3.0, 1.0, 1.0, 2.0]))
    >>> s.ux.tolist(), s.levels.tolist(), s.spread
    ([1.0, 2.0, 3.0], [0.5, 0.75, 1.0], 0.4375)
    """

    __slots__ = ("levels", "n", "spread", "ux", "ys")

    def __init__(
        self, y: np.ndarray, w: np.ndarray | None = None, *, presorted: bool = False
    ) -> None:
        if w is None:
            ys = y if presorted else np.sort(y)
            ws = None
        else:
            order = np.argsort(y, kind="stable")
            ys, ws = y[order], w[order]
        self.ys = ys
        self.n = n = int(ys.size)
        new = np.empty(n, dtype=bool)
        new[0] = True
        np.not_equal(ys[1:], ys[:-1], out=new[1:])
        if ws is None and new.all():  # no ties: the distinct values are the data themselves
            del new
            self.ux = ys
            levels = np.arange(1, n + 1, dtype=float)
            levels /= n
        else:
            starts = np.flatnonzero(new)
            del new
            self.ux = ys[starts]
            if ws is None:
                levels = np.empty(starts.size)
                levels[:-1] = starts[1:]
                levels[-1] = n
                levels /= n
            else:
                levels = np.cumsum(np.add.reduceat(ws, starts))
                levels /= levels[-1]
        levels[-1] = 1.0
        self.levels = levels
        spread = 0.0
        for i0 in range(0, self.ux.size - 1, 1 << 18):  # in blocks: no n-sized temporaries
            i1 = min(i0 + (1 << 18), self.ux.size - 1)
            lv = levels[i0:i1]
            spread += float(np.dot(np.diff(self.ux[i0 : i1 + 1]), lv * (1.0 - lv)))
        self.spread = spread

    def subset(self, keep_sorted: np.ndarray) -> SortedSample:
        """The sample of the observations ``ys[keep_sorted]`` (already in order: no sort)."""
        return SortedSample(self.ys[keep_sorted], presorted=True)


class Evaluated:
    """A model evaluated once at a sample's distinct values and inner breakpoints.

    Attributes
    ----------
    pts : ndarray
        ``ux`` together with the model's breakpoints strictly inside the data's range.
    at_ux : ndarray of int
        Where each ``ux`` sits in ``pts``.
    F, F_left, f : ndarray
        The model's CDF, left limit ``P(X < x)`` and density at ``pts``.
    """

    __slots__ = ("F", "F_left", "at_ux", "f", "is_bp", "model", "pts", "sample")

    def __init__(self, model: Model, sample: SortedSample) -> None:
        ux = sample.ux
        bp = model.breakpoints
        inner = bp[(bp > ux[0]) & (bp < ux[-1])]
        if inner.size:
            pts = np.union1d(ux, inner)
            at_ux = np.searchsorted(pts, ux)
        else:
            pts, at_ux = ux, np.arange(ux.size)
        self.model, self.sample, self.pts, self.at_ux = model, sample, pts, at_ux
        self.F = in_blocks(model.cdf, pts)
        ax, am = model.atom_table()
        if ax.size:
            j = np.clip(np.searchsorted(ax, pts), 0, ax.size - 1)
            mass = np.where(ax[j] == pts, am[j], 0.0)
            self.F_left = np.maximum(self.F - mass, 0.0)
        else:
            self.F_left = self.F
        self.f = in_blocks(model.pdf, pts) if not model.discrete else np.zeros(pts.size)
        is_bp = np.zeros(pts.size, dtype=bool)
        if bp.size:
            j = np.clip(np.searchsorted(bp, pts), 0, bp.size - 1)
            is_bp = bp[j] == pts
        self.is_bp = is_bp

    def level_at_pts(self) -> np.ndarray:
        """``F_n`` on each piece ``[pts_j, pts_j+1)``."""
        s = self.sample
        if self.pts is s.ux:
            return s.levels
        return s.levels[np.searchsorted(s.ux, self.pts, side="right") - 1]

    def dkw_excursion(self, eps: float) -> float:
        """Largest distance by which the model leaves the band ``F_n ± eps`` (≤ 0: inside).

        The same rule as :meth:`cdfsketch.empirical.Band.excursion`, read from the
        values already computed, in blocks.
        """
        s = self.sample
        F, FL = self.cdf_ux(), self.cdf_left_ux()
        worst = -np.inf
        for i0 in range(0, s.ux.size, 1 << 18):
            i1 = min(i0 + (1 << 18), s.ux.size)
            lv = s.levels[i0:i1]
            below = s.levels[i0 - 1 : i1 - 1] if i0 else np.r_[0.0, lv[:-1]]
            lo = np.maximum(lv - eps, 0.0)
            hi = np.minimum(below + eps, 1.0)
            worst = max(worst, float(np.max(lo - F[i0:i1])), float(np.max(FL[i0:i1] - hi)))
        return worst

    def sf_ux(self) -> np.ndarray:
        """``P(X > x)`` at the distinct data values (the model's own, accurate far up)."""
        return in_blocks(self.model.sf, self.sample.ux)

    def cdf_ux(self) -> np.ndarray:
        """``P(X ≤ x)`` at the distinct data values."""
        return self.F[self.at_ux]

    def cdf_left_ux(self) -> np.ndarray:
        """``P(X < x)`` at the distinct data values."""
        return self.F_left[self.at_ux]


def evaluate(model: Model, sample: SortedSample) -> Evaluated:
    """Shorthand for :class:`Evaluated`."""
    return Evaluated(model, sample)


ArrayLike = Any
