"""Data sorted once, and a model evaluated once at it (numpy only).

Every score in :mod:`cdfsketch.metrics` reads the data through a
:class:`SortedSample` (sorted once per call, ties merged, the ECDF's levels
and ``∫ F_n (1 - F_n) dx`` computed once) and a model through an
:class:`Evaluated` (its CDF and left limit at the distinct data values and at
its own breakpoints inside the data's range, computed once). The distances,
statistics and integrals are then linear in the number of points.

Memory: besides the sorted data, a model evaluated at them holds one float
per point (two with atoms); the levels of data without ties are computed
where read (:class:`EvenLevels`), and every other per-point quantity (the
density, the survival function, the scores' terms) is computed and used in
blocks of 2^18 points.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..protocol import Model

__all__ = ["Evaluated", "EvenLevels", "SortedSample"]

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


class EvenLevels:
    """``F_n`` at ``n`` distinct values, ``(i + 1) / n``, computed where it is read.

    What :attr:`SortedSample.levels` is when there are no ties and no weights:
    indexed by a slice or an integer array it gives the same numbers as the
    array ``np.arange(1, n + 1) / n`` would, without holding ``n`` floats.

    Examples
    --------
    >>> lv = EvenLevels(4)
    >>> lv[1:3].tolist(), lv[np.array([0, 3])].tolist(), np.asarray(lv).tolist()
    ([0.5, 0.75], [0.25, 1.0], [0.25, 0.5, 0.75, 1.0])
    """

    __slots__ = ("size",)

    def __init__(self, n: int) -> None:
        self.size = n

    def __getitem__(self, key: slice | np.ndarray) -> np.ndarray:
        if isinstance(key, slice):
            lo, hi, step = key.indices(self.size)
            out = np.arange(lo + 1, hi + 1, step, dtype=float)
        else:
            out = np.asarray(key) + 1.0
        out /= self.size
        return out

    def __array__(self, dtype: Any = None, copy: Any = None) -> np.ndarray:
        return self[:] if dtype is None else self[:].astype(dtype)

    def tolist(self) -> list[float]:
        """The levels as a list."""
        return self[:].tolist()


class SortedSample:
    """Observations sorted once, with their (weighted) ECDF.

    Attributes
    ----------
    ys : ndarray
        The observations, sorted.
    ux : ndarray
        Distinct values.
    levels : ndarray or EvenLevels
        ``F_n`` at ``ux`` (right-continuous; the last is 1); read it by slices or
        index arrays (without ties or weights it is an :class:`EvenLevels`).

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
        levels: np.ndarray | EvenLevels
        if ws is None and new.all():  # no ties: the distinct values are the data themselves
            del new
            self.ux = ys
            levels = EvenLevels(n)
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

    Only the values themselves are stored (no index array of the data's size):
    the model's breakpoints inside the data's range are few, so where each
    distinct value sits among the points is computed block by block.

    Attributes
    ----------
    pts : ndarray
        ``ux`` together with the model's breakpoints strictly inside the data's range.
    inserted : ndarray of int
        Where those breakpoints were inserted into ``ux`` (``numpy.insert`` positions).
    F, F_left : ndarray
        The model's CDF and left limit ``P(X < x)`` at ``pts`` (the density is
        evaluated block by block where it is needed: :meth:`pdf_at_pts`).
    """

    __slots__ = ("F", "F_left", "inserted", "is_bp", "model", "pts", "sample")

    def __init__(self, model: Model, sample: SortedSample) -> None:
        ux = sample.ux
        bp = model.breakpoints
        inner = bp[(bp > ux[0]) & (bp < ux[-1])]
        pos = np.searchsorted(ux, inner)
        new = ux[pos] != inner  # pos < ux.size: every inner breakpoint is below ux[-1]
        pos, inner = pos[new], inner[new]
        pts = np.insert(ux, pos, inner) if inner.size else ux
        self.model, self.sample, self.pts, self.inserted = model, sample, pts, pos
        self.F = in_blocks(model.cdf, pts)
        ax, am = model.atom_table()
        if ax.size:
            self.F_left = np.empty(pts.size)
            for i0 in range(0, pts.size, _BLOCK):
                p, fb = pts[i0 : i0 + _BLOCK], self.F[i0 : i0 + _BLOCK]
                j = np.clip(np.searchsorted(ax, p), 0, ax.size - 1)
                mass = np.where(ax[j] == p, am[j], 0.0)
                np.maximum(fb - mass, 0.0, out=self.F_left[i0 : i0 + _BLOCK])
        else:
            self.F_left = self.F
        is_bp = np.zeros(pts.size, dtype=bool)
        if bp.size:
            at = np.searchsorted(pts, bp)
            hit = at < pts.size
            at = at[hit]
            is_bp[at[pts[at] == bp[hit]]] = True
        self.is_bp = is_bp

    def pdf_at_pts(self, lo: int, hi: int) -> np.ndarray:
        """The model's density at ``pts[lo:hi]`` (0 for a discrete model)."""
        if self.model.discrete:
            return np.zeros(hi - lo)
        return in_blocks(self.model.pdf, self.pts[lo:hi])

    def _where(self, j0: int, j1: int) -> slice | np.ndarray:
        """Where ``ux[j0:j1]`` sits in :attr:`pts` (a slice when nothing was inserted)."""
        if not self.inserted.size:
            return slice(j0, j1)
        j = np.arange(j0, j1)
        return j + np.searchsorted(self.inserted, j, side="right")

    def level_at_pts(self, lo: int = 0, hi: int | None = None) -> np.ndarray:
        """``F_n`` on each piece ``[pts_j, pts_j+1)``, for ``lo ≤ j < hi``."""
        s = self.sample
        if self.pts is s.ux:
            return s.levels[lo:hi]
        return s.levels[np.searchsorted(s.ux, self.pts[lo:hi], side="right") - 1]

    def dkw_excursion(self, eps: float) -> float:
        """Largest distance by which the model leaves the band ``F_n ± eps`` (≤ 0: inside).

        The same rule as :meth:`cdfsketch.empirical.Band.excursion`, read from the
        values already computed, in blocks.
        """
        s = self.sample
        worst = -np.inf
        for i0 in range(0, s.ux.size, _BLOCK):
            i1 = min(i0 + _BLOCK, s.ux.size)
            lv = s.levels[i0:i1]
            below = s.levels[i0 - 1 : i1 - 1] if i0 else np.r_[0.0, lv[:-1]]
            lo = np.maximum(lv - eps, 0.0)
            hi = np.minimum(below + eps, 1.0)
            F, FL = self.cdf_ux(i0, i1), self.cdf_left_ux(i0, i1)
            worst = max(worst, float(np.max(lo - F)), float(np.max(FL - hi)))
        return worst

    def sf_ux(self, j0: int = 0, j1: int | None = None) -> np.ndarray:
        """``P(X > x)`` at the distinct data values ``ux[j0:j1]`` (the model's own)."""
        return in_blocks(self.model.sf, self.sample.ux[j0:j1])

    def cdf_ux(self, j0: int = 0, j1: int | None = None) -> np.ndarray:
        """``P(X ≤ x)`` at the distinct data values ``ux[j0:j1]``."""
        return self.F[self._where(j0, self.sample.ux.size if j1 is None else j1)]

    def cdf_left_ux(self, j0: int = 0, j1: int | None = None) -> np.ndarray:
        """``P(X < x)`` at the distinct data values ``ux[j0:j1]``."""
        return self.F_left[self._where(j0, self.sample.ux.size if j1 is None else j1)]


def evaluate(model: Model, sample: SortedSample) -> Evaluated:
    """Shorthand for :class:`Evaluated`."""
    return Evaluated(model, sample)


ArrayLike = Any
