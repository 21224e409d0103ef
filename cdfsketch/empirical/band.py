"""The DKW–Massart simultaneous confidence band around an ECDF (numpy only).

:func:`dkw_eps` is the half-width (Massart 1990, Ann. Probab. 18:1269–1283,
tight constant); :class:`Band` is ``clip(F_n ± eps, 0, 1)`` with the exact
check of whether a non-decreasing CDF stays inside it.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._validate import number, values

__all__ = ["Band", "dkw_eps", "steps_at"]

ArrayLike = Any


def check_level(level: Any) -> float:
    """A coverage level in (0, 1)."""
    return number(
        level, field="level", low=0.0, high=1.0, low_open=True, high_open=True, example="level=0.95"
    )


def dkw_eps(n: float, *, level: float = 0.95) -> float:
    """Half-width of the DKW–Massart simultaneous band: ``sqrt(ln(2/α) / (2n))``.

    With ``α = 1 - level``, ``P(sup_x |F_n(x) - F(x)| > ε) ≤ 2 exp(-2 n ε²)``
    holds for every continuous ``F`` and every ``n`` (Massart 1990, with the
    tight constant 2), so the band ``F_n ± ε`` covers ``F`` with probability
    at least ``level``. For weighted data pass the Kish effective size.

    Parameters
    ----------
    n : float
        Sample size (> 0).
    level : float
        Coverage probability in (0, 1).

    Examples
    --------
    >>> round(dkw_eps(100), 6)
    0.13581
    """
    lv = check_level(level)
    nv = number(n, field="n", low=0.0, low_open=True, example="n=100")
    return math.sqrt(math.log(2.0 / (1.0 - lv)) / (2.0 * nv))


def steps_at(xs: np.ndarray, ps: np.ndarray, v: np.ndarray, below: float) -> np.ndarray:
    """Right-continuous step function with values ``ps`` from ``xs`` on, ``below`` before.

    Reads ``ps`` where needed (no copy of the table: it may hold 1e8 steps).

    Examples
    --------
    >>> steps_at(np.array([1.0, 2.0]), np.array([0.5, 1.0]), np.array([0.0, 1.0, 1.5, 9.0]), 0.0)
    array([0. , 0.5, 0.5, 1. ])
    """
    i = np.searchsorted(xs, v, side="right")
    return np.where(i > 0, ps.take(np.maximum(i - 1, 0)), below)


def _out(arr: np.ndarray, scalar: bool) -> Any:
    return float(arr) if scalar else arr


@dataclass(frozen=True, eq=False)
class Band:
    """A simultaneous confidence band around an ECDF: ``clip(F_n ± eps, 0, 1)``.

    Attributes
    ----------
    eps : float
        Half-width.
    level : float
        Coverage probability.
    n : float
        The (effective) sample size the width was computed for.
    x, p : ndarray
        The ECDF's jump points and values the band is built on.
    """

    eps: float
    level: float
    n: float
    x: np.ndarray
    p: np.ndarray

    def lower(self, x: ArrayLike) -> Any:
        """Lower edge ``max(F_n(x) - eps, 0)`` (a right-continuous step function)."""
        v, scalar = values(x, field="x")
        out = np.maximum(steps_at(self.x, self.p, v, 0.0) - self.eps, 0.0)
        return _out(out, scalar)

    def upper(self, x: ArrayLike) -> Any:
        """Upper edge ``min(F_n(x) + eps, 1)`` (a right-continuous step function)."""
        v, scalar = values(x, field="x")
        out = np.minimum(steps_at(self.x, self.p, v, 0.0) + self.eps, 1.0)
        return _out(out, scalar)

    def windows(self) -> tuple[np.ndarray, np.ndarray]:
        """For a non-decreasing ``G``: ``lo[j] ≤ G(x[j])`` and ``G(x[j]⁻) ≤ hi[j]``.

        These two inequalities at every jump point are necessary and
        sufficient for a non-decreasing ``G`` to lie inside the band
        everywhere, provided also ``G(x[-1]) ≥ lo[-1]`` (included) and
        ``G(x[0]⁻) ≤ hi[0]`` (included). The lower edge is constant on
        ``[x[j], x[j+1])`` where a non-decreasing ``G`` is smallest at
        ``x[j]``; the upper edge is constant there too and ``G`` is largest
        just before ``x[j+1]``.

        Examples
        --------
        >>> from cdfsketch.empirical import ECDF
        >>> lo, hi = ECDF([1, 2, 3, 4]).band(level=0.5).windows()
        >>> lo.round(3).tolist(), hi.round(3).tolist()
        ([0.0, 0.084, 0.334, 0.584], [0.416, 0.666, 0.916, 1.0])
        """
        lo = np.maximum(self.p - self.eps, 0.0)
        hi = np.minimum(np.concatenate(([0.0], self.p[:-1])) + self.eps, 1.0)
        return lo, hi

    def excursion(
        self,
        cdf: Callable[[np.ndarray], np.ndarray],
        *,
        left_cdf: Callable[[np.ndarray], np.ndarray] | None = None,
    ) -> float:
        """Largest distance by which a non-decreasing CDF leaves the band (≤ 0: inside).

        ``max_j max(lo[j] - G(x[j]), G(x[j]⁻) - hi[j])`` over the windows of
        :meth:`windows`; exact for any non-decreasing ``G``. A negative value
        is the smallest margin to the band's edges at those points.

        Parameters
        ----------
        cdf : callable
            ``G``, vectorised.
        left_cdf : callable, optional
            ``x ↦ G(x⁻)``; by default ``G`` one floating-point step below ``x``
            (exact for a continuous ``G`` and for atoms at the points).

        Examples
        --------
        >>> from cdfsketch.empirical import ECDF
        >>> b = ECDF([1, 2, 3, 4]).band(level=0.5)
        >>> round(b.excursion(lambda x: np.clip((x - 0.5) / 4, 0, 1)), 3)
        -0.125
        """
        lo, hi = self.windows()
        g = np.asarray(cdf(self.x), dtype=float)
        gl = (
            np.asarray(left_cdf(self.x), dtype=float)
            if left_cdf is not None
            else np.asarray(cdf(np.nextafter(self.x, -np.inf)), dtype=float)
        )
        return float(max(np.max(lo - g), np.max(gl - hi)))
