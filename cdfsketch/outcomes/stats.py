"""Per-block statistics of the outputs and their exact combination (numpy + math).

A run is cut into stream blocks (:mod:`cdfsketch._blocks`). Each block
gives, per output and candidate, its draw count, sum, sum of squared
deviations from the block mean, minimum, maximum, exceedance counts, the same
for every paired difference between candidates, and the quantiles of a few
sections (for the standard error of quantile differences). Blocks combine with
:func:`math.fsum` (correctly rounded, so the order of the blocks does not
matter) and Chan, Golub & LeVeque's (1979) pairwise update for the squared
deviations; counts are integers. So the combined means, sds and exceedance
probabilities are the same bit for bit whatever scheduler ran the blocks.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np

__all__ = ["bad_draws", "block_stats", "combine", "histogram_quantile", "sorted_quantile"]

#: Sections a run is cut into, at least, for the standard error of quantile differences.
SECTIONS = 20


def sections_per_block(n_blocks: int) -> int:
    """How many sections each block is cut into so the run has at least :data:`SECTIONS`."""
    return max(1, -(-SECTIONS // n_blocks))


def block_stats(
    ys: np.ndarray, thresholds: Sequence[float], quantiles: Sequence[float], sections: int
) -> dict[str, Any]:
    """Statistics of one output on one block; ``ys`` is (candidates, draws).

    Examples
    --------
    >>> st = block_stats(np.array([[1.0, 2, 3, 4], [2.0, 3, 4, 5]]), [2.5], [0.5], 2)
    >>> st["sum"].tolist(), st["exceed"].tolist(), float(st["pair_sum"][0, 1])
    ([10.0, 14.0], [[2], [3]], 4.0)
    """
    c, n = ys.shape
    with np.errstate(invalid="ignore", over="ignore"):
        finite = np.isfinite(ys)
        bad = (~finite).sum(axis=1)
        first_bad = np.where(bad > 0, np.argmax(~finite, axis=1), -1)
        total = ys.sum(axis=1)
        mean = total / n
        m2 = ((ys - mean[:, None]) ** 2).sum(axis=1)
        t = np.asarray(thresholds, dtype=float)
        above = ys[:, :, None] > t[None, None, :]  # (c, n, T)
        exceed = above.sum(axis=1)
        pair_sum = np.zeros((c, c))
        pair_m2 = np.zeros((c, c))
        pair_exceed = np.zeros((c, c, t.size), dtype=np.int64)
        pair_disagree = np.zeros((c, c, t.size), dtype=np.int64)
        for i in range(c):  # d[i, j] = y_j - y_i, one pair at a time (memory O(n))
            for j in range(i + 1, c):
                d = ys[j] - ys[i]
                pair_sum[i, j] = d.sum()
                pair_sum[j, i] = -pair_sum[i, j]
                pair_m2[i, j] = pair_m2[j, i] = ((d - pair_sum[i, j] / n) ** 2).sum()
                up = above[j].sum(axis=0, dtype=np.int64) - above[i].sum(axis=0, dtype=np.int64)
                pair_exceed[i, j], pair_exceed[j, i] = up, -up
                pair_disagree[i, j] = pair_disagree[j, i] = (above[j] != above[i]).sum(axis=0)
        parts = np.array_split(np.arange(n), sections)
        sec_q = np.array(
            [
                np.quantile(ys[:, idx], quantiles, axis=1, method="inverted_cdf").T
                if idx.size and len(quantiles)
                else np.full((c, len(quantiles)), np.nan)
                for idx in parts
            ]
        ).reshape(sections, c, len(quantiles))
    return {
        "n": n,
        "bad": bad,
        "first_bad": first_bad,
        "sum": total,
        "m2": m2,
        "min": ys.min(axis=1),
        "max": ys.max(axis=1),
        "exceed": exceed.astype(np.int64),
        "pair_sum": pair_sum,
        "pair_m2": pair_m2,
        "pair_exceed": pair_exceed,
        "pair_disagree": pair_disagree,
        "sec_q": sec_q,
    }


def _fsum(stack: np.ndarray) -> np.ndarray:
    """Correctly rounded sums along axis 0 (independent of the order of the rows)."""
    flat = stack.reshape(stack.shape[0], -1)
    out = np.array([math.fsum(flat[:, j]) for j in range(flat.shape[1])])
    return out.reshape(stack.shape[1:])


def _mean_var(ns: np.ndarray, sums: np.ndarray, m2s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and sample variance from per-block counts, sums and squared deviations."""
    big_n = int(ns.sum())
    w = ns.reshape((-1,) + (1,) * (sums.ndim - 1)).astype(float)
    mean = _fsum(sums) / big_n
    block_mean = sums / w
    m2 = _fsum(m2s) + _fsum(w * (block_mean - mean) ** 2)
    return mean, m2 / max(big_n - 1, 1)


def combine(blocks: Sequence[dict[str, Any]]) -> dict[str, Any]:
    """Combine per-block statistics of one output (any order gives the same result).

    Examples
    --------
    >>> y = np.arange(10.0)[None, :]
    >>> a = combine([block_stats(y[:, :4], [], [], 1), block_stats(y[:, 4:], [], [], 1)])
    >>> float(a["mean"][0]), float(a["var"][0]) == float(np.var(y, ddof=1))
    (4.5, True)
    """
    ns = np.array([b["n"] for b in blocks], dtype=np.int64)
    big_n = int(ns.sum())
    mean, var = _mean_var(
        ns, np.stack([b["sum"] for b in blocks]), np.stack([b["m2"] for b in blocks])
    )
    pair_mean, pair_var = _mean_var(
        ns, np.stack([b["pair_sum"] for b in blocks]), np.stack([b["pair_m2"] for b in blocks])
    )
    exceed = np.sum([b["exceed"] for b in blocks], axis=0, dtype=np.int64)
    pair_exceed = np.sum([b["pair_exceed"] for b in blocks], axis=0, dtype=np.int64)
    pair_disagree = np.sum([b["pair_disagree"] for b in blocks], axis=0, dtype=np.int64)
    e_mean = pair_exceed / big_n
    e_var = (pair_disagree - big_n * e_mean**2) / max(big_n - 1, 1)
    return {
        "n": big_n,
        "mean": mean,
        "var": np.maximum(var, 0.0),
        "min": np.min([b["min"] for b in blocks], axis=0),
        "max": np.max([b["max"] for b in blocks], axis=0),
        "exceed": exceed,
        "pair_mean": pair_mean,
        "pair_var": np.maximum(pair_var, 0.0),
        "pair_exceed_mean": e_mean,
        "pair_exceed_var": np.maximum(e_var, 0.0),
        "sec_q": np.concatenate([b["sec_q"] for b in blocks], axis=0),
    }


def bad_draws(blocks: Sequence[dict[str, Any]]) -> tuple[np.ndarray, np.ndarray]:
    """Per candidate: how many draws were NaN or infinite, and the first one's index (or -1).

    Examples
    --------
    >>> y = np.array([[1.0, np.nan, 2.0, np.inf]])
    >>> [a.tolist() for a in bad_draws([block_stats(y[:, :2], [], [], 1),
    ...                                 block_stats(y[:, 2:], [], [], 1)])]
    [[2], [1]]
    """
    bad = np.sum([b["bad"] for b in blocks], axis=0, dtype=np.int64)
    first = np.full(bad.shape, -1, dtype=np.int64)
    start = 0
    for b in blocks:
        hit = (first < 0) & (b["first_bad"] >= 0)
        first[hit] = start + b["first_bad"][hit]
        start += b["n"]
    return bad, first


def order_ranks(n: int, p: float, z: float) -> tuple[int, int, int]:
    """1-based ranks of the ``p`` quantile and of its distribution-free interval.

    The ``p`` quantile of ``n`` draws is the order statistic of rank ``ceil(n p)``
    (the generalised inverse); the interval's ranks are ``n p ∓ z sqrt(n p (1-p))``
    (normal approximation to the binomial count below the quantile; Conover,
    *Practical Nonparametric Statistics*, 3rd ed. 1999, §3.2, from memory).

    Examples
    --------
    >>> order_ranks(100, 0.5, 1.96)
    (50, 40, 60)
    """
    r = min(max(math.ceil(n * p - 1e-9), 1), n)
    half = z * math.sqrt(n * p * (1 - p))
    return r, max(math.floor(n * p - half), 1), min(math.ceil(n * p + half), n)


def sorted_quantile(sorted_y: np.ndarray, p: float, z: float) -> tuple[float, float]:
    """Quantile of sorted draws and its standard error (interval width / 2z).

    Examples
    --------
    >>> sorted_quantile(np.arange(1.0, 101.0), 0.5, 1.96)[0]
    50.0
    """
    r, lo, hi = order_ranks(sorted_y.size, p, z)
    return float(sorted_y[r - 1]), float(sorted_y[hi - 1] - sorted_y[lo - 1]) / (2 * z)


def _hist_value(counts: np.ndarray, edges: np.ndarray, rank: int) -> float:
    cum = np.cumsum(counts)
    j = int(np.searchsorted(cum, rank))  # first bin whose count reaches the rank
    below = cum[j - 1] if j else 0
    frac = (rank - below) / counts[j] if counts[j] else 0.0
    return float(edges[j] + frac * (edges[j + 1] - edges[j]))


def histogram_quantile(
    counts: np.ndarray, edges: np.ndarray, p: float, z: float
) -> tuple[float, float]:
    """Quantile from a histogram of all draws and its standard error.

    The order statistic of rank ``ceil(n p)`` lies in the bin where the
    cumulative count reaches that rank; the value returned interpolates
    linearly inside the bin, so it is within one bin width of the exact
    sample quantile (the error bound reported beside it).

    Examples
    --------
    >>> counts, edges = np.histogram(np.arange(1.0, 101.0), bins=100, range=(0.5, 100.5))
    >>> histogram_quantile(counts, edges, 0.5, 1.96)[0]
    50.5
    """
    n = int(counts.sum())
    r, lo, hi = order_ranks(n, p, z)
    value = _hist_value(counts, edges, r)
    return value, (_hist_value(counts, edges, hi) - _hist_value(counts, edges, lo)) / (2 * z)
