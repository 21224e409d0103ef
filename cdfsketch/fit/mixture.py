"""Normal mixtures fitted by EM (our own vectorised numpy code): :func:`fit_normal_mixture`."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .._validate import DataError, fail, integer
from ..empirical import as_data
from ._blockwise import linear_bins
from .candidate import Candidate
from .engines import MixtureEngine, sum_in_blocks
from .families import scale_of, shown

__all__ = ["fit_mixture", "fit_normal_mixture"]

ArrayLike = Any
_LOG_2PI = math.log(2.0 * math.pi)
#: above this many points EM runs on linearly binned data, then polishes on all points
_MIXTURE_BIN_MIN = 5000
_MIXTURE_BIN_WIDTH = 0.01
_MIXTURE_POLISH = 10
#: EM on more unweighted points than this accumulates its sums block by block
_EM_BLOCK = 1 << 16
#: EM steps of each start's loose run, and how many of the best starts then converge
_LOOSE_STEPS = 100
_FINISH = 3
#: the best few starts converge to this mean log-likelihood gain per step, the winner to tol
_MID_TOL = 1e-7


def _em(
    x: np.ndarray,
    cnt: np.ndarray | None,
    w: np.ndarray,
    mu: np.ndarray,
    var: np.ndarray,
    floor: float,
    tol: float,
    it: int,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float, int]:
    """EM for a 1-D normal mixture on points ``x`` with counts ``cnt`` (None: all 1).

    Arrays are laid out (components, points) so the reductions over the few
    components are elementwise. Returns weights, means, variances, the
    log-likelihood at the returned parameters' predecessor and the iterations.
    """
    if cnt is None and x.size > _EM_BLOCK:
        return _em_blocks(x, w, mu, var, floor, tol, it)
    n = float(x.size if cnt is None else cnt.sum())
    prev = -math.inf
    ll = -math.inf
    for i in range(1, it + 1):
        d = x[None, :] - mu[:, None]
        lp = (
            d * d * (-0.5 / var)[:, None]
            + (np.log(w) - 0.5 * np.log(var) - 0.5 * _LOG_2PI)[:, None]
        )
        top = lp.max(axis=0)
        r = np.exp(lp - top)
        s = r.sum(axis=0)
        logs = top + np.log(s)
        ll = float(np.sum(logs) if cnt is None else logs @ cnt)
        if ll - prev <= tol * n:
            return w, mu, var, ll, i
        prev = ll
        r *= (1.0 / s) if cnt is None else (cnt / s)
        nk = r.sum(axis=1) + 1e-300
        w = nk / n
        mu = (r @ x) / nk
        d = x[None, :] - mu[:, None]
        var = np.einsum("ij,ij->i", r, d * d) / nk + floor
        keep = w > 1e-12
        if not keep.all():  # a component emptied: drop it
            w, mu, var = w[keep] / w[keep].sum(), mu[keep], var[keep]
    return w, mu, var, ll, it


def _em_blocks(
    x: np.ndarray,
    w: np.ndarray,
    mu: np.ndarray,
    var: np.ndarray,
    floor: float,
    tol: float,
    it: int,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float, int]:
    """:func:`_em` on many unweighted points, its sums accumulated block by block.

    The same update (the variance as ``Σ r x² / n_k - μ_k²``, equal to the
    centred form; the data are standardised) in memory bounded by the block.
    """
    n = float(x.size)
    prev = -math.inf
    ll = -math.inf
    for i in range(1, it + 1):
        ll = 0.0
        nk = np.zeros(mu.size)
        sx = np.zeros(mu.size)
        sxx = np.zeros(mu.size)
        const = (np.log(w) - 0.5 * np.log(var) - 0.5 * _LOG_2PI)[:, None]
        for b0 in range(0, x.size, _EM_BLOCK):
            xb = x[b0 : b0 + _EM_BLOCK]
            d = xb[None, :] - mu[:, None]
            lp = d * d * (-0.5 / var)[:, None] + const
            top = lp.max(axis=0)
            r = np.exp(lp - top)
            sb = r.sum(axis=0)
            ll += float(np.sum(top + np.log(sb)))
            r /= sb
            nk += r.sum(axis=1)
            sx += r @ xb
            sxx += r @ (xb * xb)
        if ll - prev <= tol * n:
            return w, mu, var, ll, i
        prev = ll
        nk += 1e-300
        w = nk / n
        mu = sx / nk
        var = np.maximum(sxx / nk - mu * mu, 0.0) + floor
        keep = w > 1e-12
        if not keep.all():  # a component emptied: drop it
            w, mu, var = w[keep] / w[keep].sum(), mu[keep], var[keep]
    return w, mu, var, ll, it


def fit_normal_mixture(
    data: ArrayLike,
    k: int,
    *,
    starts: int = 10,
    rng: Any = None,
    tol: float = 1e-10,
    max_iter: int = 2000,
) -> Candidate:
    """A ``k``-component normal mixture by EM (vectorised numpy) from seeded starts.

    Start 0 puts the means at the ``(i - ½)/k`` quantiles; the others pick
    means by k-means++ seeding (D² sampling) from ``rng``. Each start runs 100
    EM steps to a loose tolerance; the best three are then each iterated until
    the mean log-likelihood gains less than ``tol`` per step, and the best of
    those is kept (a loose run alone can rank the starts wrongly). With more than 5000
    points EM runs on the standardised data linearly binned onto a grid of
    spacing 0.01 standard deviations (weighted points; binning adds at most
    2.5e-5 sd² to each point's variance), then 10 EM steps on all the points
    polish the result; the log-likelihood reported uses all the points.
    Variances are floored at ``1e-6`` times the data's variance (ties could
    otherwise collapse a component onto a point).
    Free parameters: ``3k - 1``.

    Parameters
    ----------
    data : array_like
        Observations.
    k : int
        Number of components (≥ 1).
    starts : int
        Number of seeded starts (≥ 1).
    rng : optional
        Seed for the starts and the subsample.
    tol : float
        Stopping tolerance on the mean log-likelihood.
    max_iter : int
        Iteration cap for the final run (the note says if it was reached).

    Examples
    --------
    >>> gen = np.random.default_rng(0)
    >>> x = np.r_[gen.normal(0, 1, 300), gen.normal(6, 1, 300)]
    >>> m = fit_normal_mixture(x, 2, rng=0)
    >>> [round(v) for v in m.params["means"]], [round(v, 1) for v in m.params["weights"]]
    ([0, 6], [0.5, 0.5])
    """
    x = as_data(data)
    k = integer(k, field="k", low=1, example="k=2")
    starts = integer(starts, field="starts", low=1, example="starts=10")
    if k > x.size // 2:
        raise fail(
            f"a {k}-component mixture needs at least {2 * k} observations",
            f"{x.size}",
            "Use fewer components.",
            error=DataError,
            field="k",
            value=k,
        )
    return fit_mixture(
        x, k, starts=starts, gen=np.random.default_rng(rng), tol=tol, max_iter=max_iter
    )


def fit_mixture(
    x: np.ndarray, k: int, *, starts: int, gen: np.random.Generator, tol: float, max_iter: int
) -> Candidate:
    """Fit on checked data: seeded starts, the best few run to convergence."""
    scale = scale_of(x)  # a power of two: data at the edges of float64 stay representable
    xs = x if scale == 1.0 else x / scale
    center, spread = float(np.mean(xs)), float(np.std(xs))
    z = xs - center  # EM on standardised data (one array, scaled in place)
    z /= spread
    del xs
    floor = 1e-6
    binned = z.size > _MIXTURE_BIN_MIN
    c, cnt = linear_bins(z, float(z.min()), _MIXTURE_BIN_WIDTH) if binned else (z, None)
    wt = np.ones(c.size) if cnt is None else cnt
    loose = []
    n_starts = starts if k > 1 else 1
    for s in range(n_starts):
        if s == 0:
            mu = np.quantile(z, (np.arange(k) + 0.5) / k)
        else:  # k-means++ seeding: D² sampling
            mu = np.empty(k)
            mu[0] = c[gen.choice(c.size, p=wt / wt.sum())]
            for j in range(1, k):
                d2 = np.min((c[:, None] - mu[:j]) ** 2, axis=1) * wt
                tot = d2.sum()
                mu[j] = c[gen.choice(c.size, p=d2 / tot)] if tot > 0 else c[gen.integers(c.size)]
        var = np.full(k, 1.0 / k**2)
        w = np.full(k, 1.0 / k)
        loose.append(_em(c, cnt, w, mu, var, floor, 1e-6, _LOOSE_STEPS))
    # a loose run can rank starts wrongly: the best few are each run to convergence
    loose.sort(key=lambda r: -r[3])
    finished = [
        _em(c, cnt, w, mu, var, floor, tol, max_iter) for w, mu, var, _, _ in loose[:_FINISH]
    ]
    w, mu, var, _, iters = max(finished, key=lambda r: r[3])
    if binned:
        w, mu, var, _, _ = _em(z, None, w, mu, var, floor, tol, _MIXTURE_POLISH)
    order = np.argsort(mu)
    w, mu, var = w[order], mu[order], var[order]
    mu_x, sd_x = scale * (center + spread * mu), scale * (spread * np.sqrt(var))
    del z
    model = MixtureEngine(w, mu_x, sd_x)
    with np.errstate(all="ignore"):
        loglik = sum_in_blocks(model.logpdf, x)
    if not (math.isfinite(loglik) and np.isfinite(mu_x).all() and (sd_x > 0).all()):
        raise fail(
            f"a {k}-component normal mixture must have a finite log-likelihood",
            f"loglik={loglik!r}",
            "The data may be too extreme for a mixture; it is skipped.",
            error=DataError,
            field="k",
            value=k,
        )
    m = w.size
    note = (
        f"EM from {n_starts} seeded start(s), the best {min(_FINISH, n_starts)} run to convergence"
    )
    if binned:
        note += (
            f" on the data linearly binned to {c.size} points (spacing 0.01 sd), then "
            f"{_MIXTURE_POLISH} EM steps on all {x.size} points"
        )
    if iters >= max_iter:
        note += f"; stopped at max_iter={max_iter} before reaching tol"
    if m < k:
        note += f"; {k - m} component(s) emptied and dropped"
    return Candidate(
        name=f"normal mixture (k={m})",
        family="mixture",
        params={
            "weights": [shown(v) for v in w],
            "means": [shown(v) for v in mu_x],
            "sds": [shown(v) for v in sd_x],
        },
        loglik=loglik,
        n_params=float(3 * m - 1),
        n=int(x.size),
        support=(-math.inf, math.inf),
        notes=note,
        engine=model,
        refitter=lambda d, r: fit_mixture(
            d, m, starts=starts, gen=np.random.default_rng(r), tol=tol, max_iter=max_iter
        ),
    )
