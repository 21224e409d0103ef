"""The ECDF's staircase for drawing, decimated for large samples (numpy only).

:func:`decimate` keeps, in each bin of ``p`` of width ``tolerance``, the first
and the last jump point, so the drawn staircase stays within ``tolerance``
below the exact one (see :meth:`cdfsketch.empirical.ECDF.steps`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .._validate import fail, integer, number

__all__ = ["StepOutline", "decimate"]


@dataclass(frozen=True, eq=False)
class StepOutline:
    """Vertices of the ECDF's staircase for drawing as a polyline.

    ``(x[0], 0) → (x[0], p[0])`` rises, then horizontal and vertical moves
    alternate up to ``(x[-1], 1)`` (for Kaplan–Meier: to the last value).

    Attributes
    ----------
    x, p : ndarray
        Polyline vertices.
    tolerance : float
        The stated bound: the drawn staircase ``D`` satisfies
        ``0 ≤ F(t) - D(t) < tolerance`` for all ``t`` (0 when exact).
    max_error : float
        The largest ``F(t) - D(t)`` actually reached.
    """

    x: np.ndarray
    p: np.ndarray
    tolerance: float
    max_error: float


def _outline(xs: np.ndarray, ps: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    vx = np.repeat(xs, 2)
    vp = np.empty(vx.size)
    vp[0::2] = np.concatenate(([0.0], ps[:-1]))
    vp[1::2] = ps
    return vx, vp


def decimate(
    xs: np.ndarray, ps: np.ndarray, *, max_points: int = 2000, tolerance: float | None = None
) -> StepOutline:
    """The staircase through jump points ``xs`` with values ``ps``, decimated.

    See :meth:`cdfsketch.empirical.ECDF.steps` for the rule and the bound.

    Examples
    --------
    >>> out = decimate(np.arange(1.0, 5.0), np.array([0.25, 0.5, 0.75, 1.0]), max_points=8)
    >>> out.x.tolist(), out.tolerance
    ([1.0, 1.0, 2.0, 2.0, 3.0, 3.0, 4.0, 4.0], 0.0)
    """
    max_points = integer(max_points, field="max_points", low=8, example="max_points=2000")
    if tolerance is None:
        tol = 1.0 / (max_points // 4)
    else:
        tol = number(
            tolerance,
            field="tolerance",
            low=0.0,
            high=1.0,
            low_open=True,
            example="tolerance=0.002",
        )
        if 4 * math.ceil(1.0 / tol - 1e-12) > max_points:
            raise fail(
                f"tolerance must allow max_points={max_points} vertices",
                f"tolerance={tol!r}, which may need up to {4 * math.ceil(1 / tol)}",
                "Raise max_points or loosen the tolerance.",
                field="tolerance",
                value=tolerance,
            )
    if 2 * xs.size <= max_points:
        vx, vp = _outline(xs, ps)
        return StepOutline(vx, vp, 0.0, 0.0)
    # bin of p: clip(ceil(p / tol), 1, nbins) (clipped so that rounding of p / tol at
    # p = 1 cannot open an extra bin). It is non-decreasing along ps, so the bins'
    # boundaries are found by binary search on the p levels, O(nbins · log m), instead
    # of a pass over every jump point; candidates are then corrected by evaluating the
    # bin formula itself next to them, so the kept points are exactly those where the
    # bin changes.
    nbins = math.ceil(1.0 / tol - 1e-12)
    m = xs.size

    def bin_of(i: np.ndarray) -> np.ndarray:
        return np.clip(np.ceil(ps[i] / tol), 1, nbins)

    level = np.arange(1, nbins, dtype=float)
    # ends[k-1]: how many jump points lie in bins 1..k
    ends = np.searchsorted(ps, level * tol, side="right")
    for _ in range(64):
        up = (ends < m) & (bin_of(np.minimum(ends, m - 1)) <= level)
        down = (ends > 0) & (bin_of(np.maximum(ends - 1, 0)) > level)
        if not (up.any() or down.any()):
            break
        ends = ends + up - down
    bounds = np.concatenate(([0], ends, [m]))
    first, stop = bounds[:-1], bounds[1:]
    full = stop > first
    first, last = first[full], stop[full] - 1
    idx = np.unique(np.concatenate((first, last)))
    # error F - D: inside a bin it grows up to the jump before the bin's last point
    inner = last - first >= 2
    max_error = float(np.max(ps[last[inner] - 1] - ps[first[inner]])) if inner.any() else 0.0
    vx, vp = _outline(xs[idx], ps[idx])
    return StepOutline(vx, vp, tol, max_error)
