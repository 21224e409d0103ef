"""Goodness-of-fit scores of a model against data: KS, AD, CvM, W1, CRPS.

Every function takes ``(data, model)``; ``model`` is anything
:func:`cdfsketch.protocol.as_model` reads (a fitted candidate, a sketch, an
ECDF — the distance between two samples —, a frozen scipy distribution,
discrete ones included). Data come in through :func:`cdfsketch.empirical.as_data`
(one observation is enough to score a model). The statistics are distances
only: their usual p-values do not hold when the model was fitted or tuned on
the same data.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._validate import DataError, fail
from ..empirical import as_aligned_data, as_data
from ..protocol import as_model
from .integrals import integrals
from .sample import Evaluated, SortedSample

__all__ = [
    "anderson_darling",
    "cramer_von_mises",
    "crps",
    "ks_distance",
    "wasserstein1",
]

ArrayLike = Any


def observations(data: ArrayLike) -> SortedSample:
    """Data to score a model on, sorted once (a single value is allowed)."""
    return SortedSample(as_data(data, distinct=1))


_BLOCK = 1 << 18


def ks_of(ev: Evaluated) -> float:
    """``sup |F_n - F|`` from both sides of every data value and every atom."""
    s, m = ev.sample, ev.model
    d = 0.0
    for j0 in range(0, s.ux.size, _BLOCK):  # in blocks: no temporaries of the data's size
        j1 = min(j0 + _BLOCK, s.ux.size)
        lv = s.levels[j0:j1]
        below = s.levels[j0 - 1 : j1 - 1] if j0 else np.r_[0.0, lv[:-1]]
        d = max(
            d,
            float(np.max(np.abs(lv - ev.cdf_ux(j0, j1)))),
            float(np.max(np.abs(below - ev.cdf_left_ux(j0, j1)))),
        )
    ax, _ = m.atom_table()
    if ax.size:
        right = np.searchsorted(s.ys, ax, side="right") / s.n
        left = np.searchsorted(s.ys, ax, side="left") / s.n
        d = max(
            d,
            float(np.max(np.abs(right - m.cdf(ax)))),
            float(np.max(np.abs(left - m.cdf_left(ax)))),
        )
    return d


def _at_obs(s: SortedSample, at_ux: Any, i0: int, i1: int) -> np.ndarray:
    """``at_ux(j0, j1)`` (values at ``ux[j0:j1]``) for the sorted observations ``i0 … i1-1``."""
    j = np.searchsorted(s.ux, s.ys[i0:i1])
    j0 = int(j[0])
    return at_ux(j0, int(j[-1]) + 1)[j - j0]


def ad_of(ev: Evaluated) -> float:
    """Anderson–Darling ``A²`` from the model's CDF and survival function at the data."""
    s = ev.sample
    n = s.n
    total = 0.0
    for i0 in range(0, n, _BLOCK):  # in blocks: no per-observation arrays of size n
        i1 = min(i0 + _BLOCK, n)
        k = np.arange(i0 + 1, i1 + 1, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            lu = np.log(_at_obs(s, ev.cdf_ux, i0, i1))
            l1 = np.log(_at_obs(s, ev.sf_ux, n - i1, n - i0))[::-1]  # ln(1 - u_{n+1-i})
            total += float(np.dot(2 * k - 1, lu + l1))
    return float(-n - total / n)


def cvm_of(ev: Evaluated) -> float:
    """Cramér–von Mises ``T`` from the model's CDF at the data."""
    s = ev.sample
    n = s.n
    total = 0.0
    for i0 in range(0, n, _BLOCK):
        i1 = min(i0 + _BLOCK, n)
        k = np.arange(i0 + 1, i1 + 1, dtype=float)
        total += float(np.sum((_at_obs(s, ev.cdf_ux, i0, i1) - (2 * k - 1) / (2 * n)) ** 2))
    return float(1.0 / (12 * n) + total)


def _ev(data: ArrayLike, model: Any) -> Evaluated:
    return Evaluated(as_model(model), observations(data))


def ks_distance(data: ArrayLike, model: Any) -> float:
    """Kolmogorov–Smirnov distance ``sup_x |F_n(x) - F(x)|``.

    Exact for any model: both sides of every data point and of every known
    atom of the model are checked. A distance only: its usual p-value does
    not hold when ``model`` was fitted or tuned on ``data``.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> ks_distance([0.5, 1.5], Sketch([0, 2], [0, 1]))
    0.25
    """
    return ks_of(_ev(data, model))


def anderson_darling(data: ArrayLike, model: Any) -> float:
    """Anderson–Darling statistic ``A² = -n - Σ (2i-1)/n [ln u_i + ln(1 - u_{n+1-i})]``.

    ``u_i = F(y_(i))``; ``inf`` when a data point lies where ``F`` is 0 or 1
    (outside the model's support). The formula is the continuous-case one; for
    a model with atoms it is a distance without a null distribution.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(anderson_darling([0.25, 0.75], Sketch([0, 1], [0, 1])), 6)
    0.249341
    """
    return ad_of(_ev(data, model))


def cramer_von_mises(data: ArrayLike, model: Any) -> float:
    """Cramér–von Mises statistic ``T = 1/(12n) + Σ (u_i - (2i-1)/(2n))²``.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(cramer_von_mises([0.25, 0.75], Sketch([0, 1], [0, 1])), 6)
    0.041667
    """
    return cvm_of(_ev(data, model))


def wasserstein1(data: ArrayLike, model: Any, *, weights: ArrayLike | None = None) -> float:
    """1-Wasserstein distance ``∫ |F_n(x) - F(x)| dx`` between the data's ECDF and a model.

    Parameters
    ----------
    data : array_like
        Observations.
    model : Candidate, Sketch, ECDF, frozen scipy distribution or CDFModel
        The model (an :class:`~cdfsketch.empirical.ECDF` gives the distance
        between two samples; a discrete scipy law is integrated exactly
        between its support points).
    weights : array_like, optional
        Non-negative weights of the observations.

    Examples
    --------
    >>> from cdfsketch.empirical import ECDF
    >>> wasserstein1([0, 1, 3], ECDF([5, 6, 8]))
    5.0
    """
    y, w, _ = as_aligned_data(data, weights=weights, distinct=1)
    if w is not None and not (w > 0).any():
        raise fail(
            "weights must have a positive sum",
            "all zero",
            "Give at least one observation a positive weight.",
            error=DataError,
            field="weights",
        )
    return integrals(Evaluated(as_model(model), SortedSample(y, w)))[0]


def crps(data: ArrayLike, model: Any) -> float:
    """Mean continuous ranked probability score of ``model`` over the observations ``data``.

    The argument order ``(data, model)`` is the same as for the other metrics.

    ``CRPS(F, y) = ∫ (F(x) - 1{x ≥ y})² dx`` (Gneiting & Raftery 2007);
    averaged over the observations it equals ``∫ (F - F_n)² dx + ∫ F_n(1 - F_n) dx``
    with ``F_n`` their ECDF, which is what is computed (the second term
    exactly, the first as described in :mod:`cdfsketch.metrics.integrals`).
    Finite for models with atoms and gaps; lower is better.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(crps(0.5, Sketch([0, 1], [0, 1])), 6)
    0.083333
    """
    ev = _ev(data, model)
    return integrals(ev)[1] + ev.sample.spread
