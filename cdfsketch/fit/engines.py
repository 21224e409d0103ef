"""What a fitted candidate evaluates: the numerical engines behind :class:`Candidate`.

An engine has ``cdf``, ``sf``, ``pdf``, ``logpdf``, ``ppf``, ``isf``,
``rvs`` and ``breakpoints`` on float arrays, without argument checks (the
:class:`~cdfsketch.fit.candidate.Candidate` checks). Here: a frozen scipy
distribution, a normal mixture, and the safeguarded inversion both the
mixture and the KDE use. scipy is imported inside the functions.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

import numpy as np

from .._extras import need

__all__ = ["Engine", "MixtureEngine", "ScipyEngine", "invert", "sum_in_blocks"]

_LOG_2PI = math.log(2.0 * math.pi)


#: a sum over the data (a log-likelihood) evaluates this many points at a time
SUM_BLOCK = 1 << 18


def sum_in_blocks(f: Any, x: np.ndarray) -> float:
    """``Σ f(x)`` evaluated ``SUM_BLOCK`` points at a time (a model's temporaries stay small).

    One block (``x.size ≤ SUM_BLOCK``) is exactly ``float(np.sum(f(x)))``; more blocks add
    the blocks' sums, which differs from one sum only by rounding.

    Examples
    --------
    >>> sum_in_blocks(np.square, np.arange(4.0))
    14.0
    """
    if x.size <= SUM_BLOCK:
        return float(np.sum(f(x)))
    return float(sum(float(np.sum(f(x[i : i + SUM_BLOCK]))) for i in range(0, x.size, SUM_BLOCK)))


def special() -> Any:
    """``scipy.special`` (the 'fit' extra)."""
    return need("fit", "scipy.special")


class Engine:
    """What a candidate evaluates: cdf, sf, pdf, logpdf, ppf, isf, draws."""

    breakpoints: np.ndarray = np.empty(0)

    def cdf(self, x: np.ndarray) -> np.ndarray:
        raise NotImplementedError

    def sf(self, x: np.ndarray) -> np.ndarray:
        return 1.0 - self.cdf(x)

    def pdf(self, x: np.ndarray) -> np.ndarray:
        raise NotImplementedError

    def logpdf(self, x: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return np.log(self.pdf(x))

    def ppf(self, u: np.ndarray) -> np.ndarray:
        raise NotImplementedError

    def isf(self, q: np.ndarray) -> np.ndarray:
        return self.ppf(1.0 - q)

    def rvs(self, size: Any, gen: np.random.Generator) -> np.ndarray:
        return self.ppf(gen.random(size))

    def support(self) -> tuple[float, float]:
        return -math.inf, math.inf


class ScipyEngine(Engine):
    def __init__(self, dist: Any, breakpoints: Iterable[float] = ()) -> None:
        self.dist = dist
        lo, hi = (float(v) for v in dist.support())
        bp = [v for v in (lo, hi, *breakpoints) if math.isfinite(v)]
        self.breakpoints = np.unique(np.asarray(bp, dtype=float))

    def cdf(self, x: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", over="ignore", under="ignore"):
            return self.dist.cdf(x)

    def sf(self, x: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", over="ignore", under="ignore"):
            return self.dist.sf(x)

    def pdf(self, x: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", over="ignore", under="ignore"):
            return self.dist.pdf(x)

    def logpdf(self, x: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore"):
            return self.dist.logpdf(x)

    def ppf(self, u: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", over="ignore", under="ignore"):
            return self.dist.ppf(u)

    def isf(self, q: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", over="ignore", under="ignore"):
            return self.dist.isf(q)

    def rvs(self, size: Any, gen: np.random.Generator) -> np.ndarray:
        return np.asarray(self.dist.rvs(size=size, random_state=gen), dtype=float)

    def support(self) -> tuple[float, float]:
        lo, hi = self.dist.support()
        return float(lo), float(hi)


def invert(model: Engine, u: np.ndarray, lo: float, hi: float) -> np.ndarray:
    """Vectorised safeguarded Newton–bisection for ``cdf(x) = u`` on ``[lo, hi]``.

    ``lo`` and ``hi`` must bracket every root (``cdf(lo) ≤ u ≤ cdf(hi)``).
    """
    ndtri = special().ndtri

    u = np.asarray(u, dtype=float)
    flat = u.ravel()
    out = np.empty_like(flat)
    out[flat <= 0.0] = -math.inf
    out[flat >= 1.0] = math.inf
    inner = np.flatnonzero((flat > 0.0) & (flat < 1.0))
    if inner.size:
        uu = flat[inner]
        a = np.full(uu.shape, lo)
        b = np.full(uu.shape, hi)
        # start from a normal approximation clipped into the bracket
        mid, half = 0.5 * (lo + hi), (hi - lo) / 12.0
        x = np.clip(mid + half * ndtri(uu), lo, hi)
        for _ in range(200):
            f = model.cdf(x) - uu
            a = np.where(f < 0, x, a)
            b = np.where(f >= 0, x, b)
            d = model.pdf(x)
            with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                step = x - f / d
            bad = ~np.isfinite(step) | (step <= a) | (step >= b)
            new = np.where(bad, 0.5 * (a + b), step)
            done = (np.abs(new - x) <= 4e-16 * np.maximum(np.abs(x), 1e-300)) | (b - a <= 0)
            x = new
            if bool(done.all()):
                break
        out[inner] = x
    return out.reshape(u.shape)


#: a mixture evaluates this many points at a time (its (points, components) arrays stay small)
_MIX_BLOCK = 1 << 16


def _blocked(f: Any) -> Any:
    def run(self: Any, x: np.ndarray) -> np.ndarray:
        v = np.asarray(x, dtype=float)
        if v.size <= _MIX_BLOCK:
            return f(self, v)
        flat = v.ravel()
        out = np.empty(flat.size)
        for b0 in range(0, flat.size, _MIX_BLOCK):
            out[b0 : b0 + _MIX_BLOCK] = f(self, flat[b0 : b0 + _MIX_BLOCK])
        return out.reshape(v.shape)

    run.__doc__ = f.__doc__
    return run


class MixtureEngine(Engine):
    """A normal mixture: weights ``w``, means ``mu``, standard deviations ``sd``."""

    def __init__(self, w: np.ndarray, mu: np.ndarray, sd: np.ndarray) -> None:
        self.w, self.mu, self.sd = w, mu, sd

    def _z(self, x: np.ndarray) -> np.ndarray:
        return (np.asarray(x, dtype=float)[..., None] - self.mu) / self.sd

    @_blocked
    def cdf(self, x: np.ndarray) -> np.ndarray:
        ndtr = special().ndtr

        return np.clip(ndtr(self._z(x)) @ self.w, 0.0, 1.0)

    @_blocked
    def sf(self, x: np.ndarray) -> np.ndarray:
        ndtr = special().ndtr

        return np.clip(ndtr(-self._z(x)) @ self.w, 0.0, 1.0)

    @_blocked
    def pdf(self, x: np.ndarray) -> np.ndarray:
        z = self._z(x)
        return np.exp(-0.5 * z * z) @ (self.w / (self.sd * math.sqrt(2.0 * math.pi)))

    @_blocked
    def logpdf(self, x: np.ndarray) -> np.ndarray:
        z = self._z(x)
        lp = -0.5 * z * z - np.log(self.sd) - 0.5 * _LOG_2PI + np.log(self.w)
        top = lp.max(axis=-1)
        return top + np.log(np.exp(lp - top[..., None]).sum(axis=-1))

    def _range(self) -> tuple[float, float]:
        return float(np.min(self.mu - 40 * self.sd)), float(np.max(self.mu + 40 * self.sd))

    def ppf(self, u: np.ndarray) -> np.ndarray:
        return invert(self, u, *self._range())

    def rvs(self, size: Any, gen: np.random.Generator) -> np.ndarray:
        k = gen.choice(self.w.size, size=size, p=self.w)
        return self.mu[k] + self.sd[k] * gen.standard_normal(size)
