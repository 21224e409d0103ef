"""A sketch behind the scipy frozen-distribution protocol (without importing scipy).

Existing simulation code written for ``scipy.stats`` frozen distributions
(``dist.rvs(size, random_state=...)``, ``dist.ppf``, ``dist.mean()``, …) can
take :class:`FrozenSketch` unchanged. As in scipy, probabilities outside
``[0, 1]`` give NaN here (the :class:`~cdfsketch.Sketch` methods raise
instead).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from . import _pieces
from ._validate import fail, number

if TYPE_CHECKING:
    from .sketch import Sketch

__all__ = ["FrozenSketch"]


class FrozenSketch:
    """scipy-style frozen distribution wrapping a :class:`~cdfsketch.Sketch`.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> d = Sketch([0, 10], [0, 1]).to_scipy()
    >>> d.cdf(2.5), d.isf(0.25), d.support()
    (0.25, 7.5, (0.0, 10.0))
    """

    def __init__(self, sketch: Sketch) -> None:
        self.sketch = sketch

    def __repr__(self) -> str:
        return f"FrozenSketch({self.sketch!r})"

    @staticmethod
    def _probs(q: Any) -> tuple[np.ndarray, np.ndarray, bool]:
        arr = np.asarray(q, dtype=float)
        bad = ~((arr >= 0) & (arr <= 1))
        return np.where(bad, 0.5, arr), bad, arr.ndim == 0

    def _finish(self, values: Any, bad: np.ndarray, scalar: bool) -> Any:
        out = np.where(bad, np.nan, values)
        return float(out) if scalar else out

    def _points(self, x: Any) -> tuple[np.ndarray, np.ndarray, bool]:
        arr = np.asarray(x, dtype=float)
        bad = np.isnan(arr)
        return np.where(bad, 0.0, arr), bad, arr.ndim == 0

    def cdf(self, x: Any) -> Any:
        v, bad, scalar = self._points(x)
        return self._finish(self.sketch.cdf(v), bad, scalar)

    def sf(self, x: Any) -> Any:
        v, bad, scalar = self._points(x)
        return self._finish(self.sketch.sf(v), bad, scalar)

    def pdf(self, x: Any) -> Any:
        v, bad, scalar = self._points(x)
        return self._finish(self.sketch.pdf(v), bad, scalar)

    def logpdf(self, x: Any) -> Any:
        with np.errstate(divide="ignore"):
            return np.log(self.pdf(x))

    def logcdf(self, x: Any) -> Any:
        with np.errstate(divide="ignore"):
            return np.log(self.cdf(x))

    def ppf(self, q: Any) -> Any:
        u, bad, scalar = self._probs(q)
        return self._finish(self.sketch.ppf(u), bad, scalar)

    def isf(self, q: Any) -> Any:
        u, bad, scalar = self._probs(q)
        return self._finish(self.sketch.isf(u), bad, scalar)

    def rvs(self, size: Any = None, random_state: Any = None) -> Any:
        """Draws; ``random_state`` is anything ``np.random.default_rng`` takes."""
        return self.sketch.sample(size, rng=random_state)

    def mean(self) -> float:
        return self.sketch.mean()

    def var(self) -> float:
        return self.sketch.var()

    def std(self) -> float:
        return self.sketch.std()

    def median(self) -> float:
        return self.sketch.median()

    def moment(self, order: int) -> float:
        return self.sketch.moment(order)

    def support(self) -> tuple[float, float]:
        return self.sketch.support

    def interval(self, confidence: float) -> tuple[float, float]:
        """Central interval holding ``confidence`` of the mass."""
        c = number(confidence, field="confidence", low=0.0, high=1.0, example="confidence=0.9")
        return float(self.sketch.ppf((1 - c) / 2)), float(self.sketch.ppf((1 + c) / 2))

    def stats(self, moments: str = "mv") -> tuple[float, ...]:
        """Mean, variance, skewness, excess kurtosis (letters ``m``, ``v``, ``s``, ``k``), exact.

        Central moments are computed about the mean directly, not from raw
        moments (which cancel badly far from zero).
        """
        unknown = sorted(set(moments) - set("mvsk"))
        if unknown:
            raise fail(
                "moments takes the letters 'm', 'v', 's', 'k'",
                repr(moments),
                "Pass e.g. moments='mvsk'.",
                field="moments",
            )
        mu, var = self.mean(), self.var()
        pc = self.sketch._pieces
        out = []
        for m in moments:
            if m == "m":
                out.append(mu)
            elif m == "v":
                out.append(var)
            elif m == "s":
                out.append(_pieces.central_moment(pc, 3, mu) / var**1.5)
            else:
                out.append(_pieces.central_moment(pc, 4, mu) / var**2 - 3.0)
        return tuple(out)
