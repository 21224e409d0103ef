"""What every view of a review draws: the shared x range, each candidate's curves, the
data's ECDF, band and histogram, and the flags a reviewer must see (numpy only).

The board, the page and the static figure take their geometry from here, so
they agree. What is drawn is decimated — the ECDF outline has at most 2,000
vertices, the histogram at most 60 bins, each curve 400 points plus its
knots — so 10⁷ observations cost no more to draw than 10³.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..empirical import ECDF
from ..sketch import Atom

__all__ = [
    "MAX_SPIKES",
    "Curve",
    "FloorFlag",
    "curves",
    "data_layers",
    "density_top",
    "flags_text",
    "floor_flags",
    "histogram",
    "histogram_bins",
    "nice_ticks",
    "span",
    "x_range",
]

#: Mass beyond a natural limit that is flagged (smaller is shown as none).
FLAG_MASS = 1e-4


_BIG = float(np.finfo(float).max)


def span(lo: float, hi: float, n: int) -> np.ndarray:
    """``n`` equally spaced points from ``lo`` to ``hi``, without overflow near ±1.8e308.

    Examples
    --------
    >>> bool(np.all(np.isfinite(span(-1.7e308, 1.7e308, 5))))
    True
    """
    t = np.linspace(0.0, 1.0, n)
    return lo * (1.0 - t) + hi * t


def histogram_bins(n: int) -> int:
    """Number of histogram bins for ``n`` observations: THE rule of every view.

    The Rice rule, ``ceil(2·n^(1/3))`` (Terrell & Scott 1985 discuss it),
    clipped to 10–60 bins so a plot stays readable (the clip: common
    practice, no source).

    Examples
    --------
    >>> histogram_bins(100), histogram_bins(10), histogram_bins(10**7)
    (10, 10, 60)
    """
    return int(min(60, max(10, math.ceil(2 * max(int(n), 1) ** (1 / 3)))))


def histogram(values: np.ndarray, *, is_sorted: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Equal-width bin edges over the data's range and the density in each bin.

    Pass ``is_sorted=True`` for sorted values: the counts then come from a
    binary search, without another pass over the data.

    Examples
    --------
    >>> edges, dens = histogram(np.arange(100.0))
    >>> edges.size, float(np.sum(dens * np.diff(edges)))
    (11, 1.0)
    """
    v = np.asarray(values, dtype=float)
    lo, hi = (float(v[0]), float(v[-1])) if is_sorted else (float(v.min()), float(v.max()))
    if not hi > lo:
        lo, hi = lo - 0.5, hi + 0.5
    edges = span(lo, hi, histogram_bins(v.size) + 1)
    if is_sorted:
        idx = np.searchsorted(v, edges, side="left")
        idx[-1] = v.size
        counts = np.diff(idx)
    else:
        counts, _ = np.histogram(v, bins=edges)
    return edges, counts / (v.size * np.diff(edges))


def nice_ticks(lo: float, hi: float, count: int = 6) -> np.ndarray:
    """About ``count`` round tick values (1, 2, 5 × 10^k steps) inside [lo, hi] (as the page).

    Examples
    --------
    >>> nice_ticks(-9.3, 55.1).tolist(), nice_ticks(0, 1, 5).tolist()
    ([0.0, 20.0, 40.0], [0.0, 0.2, 0.4, 0.6, 0.8, 1.0])
    """
    if not hi > lo:
        return np.array([lo])
    raw = hi / max(1, count) - lo / max(1, count)
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw)
    first, last = math.ceil(lo / step - 1e-9), math.floor(hi / step + 1e-9)
    return np.array([round(k * step, 12) if k else 0.0 for k in range(first, last + 1)])


def x_range(review: Any) -> tuple[float, float]:
    """The shared x range, padded 3 %.

    It covers the data and each candidate's 1–99 % range; with data, a
    long-tailed candidate extends it by at most half the data's span on each
    side (its far tail stays readable in the table and the read-outs).
    """
    lows, highs = [], []
    for c in review.candidates:
        q = c.ppf(np.array([0.01, 0.99]))
        lows.append(float(q[0]))
        highs.append(float(q[1]))
    lo, hi = min(lows), max(highs)
    if review.data is not None:
        dlo, dhi = review.data_range
        half = 0.5 * dhi - 0.5 * dlo  # no overflow for data near ±1.8e308
        lo = max(min(lo, dlo), max(-_BIG, dlo - half))
        hi = min(max(hi, dhi), min(_BIG, dhi + half))
    pad = 0.03 * hi - 0.03 * lo if hi > lo else 1.0
    return max(-_BIG, lo - pad), min(_BIG, hi + pad)


#: A candidate with more atoms than this gets no spikes in the density panel: its steps
#: show in the CDF panel and, for the resampled data, the histogram shows the values.
MAX_SPIKES = 60


@dataclass(frozen=True)
class Curve:
    """Polylines of one candidate over the shared range."""

    x: np.ndarray
    cdf: np.ndarray
    pdf_x: np.ndarray
    pdf: np.ndarray
    atoms: tuple[Atom, ...] = field(default=())

    @property
    def spikes(self) -> tuple[Atom, ...]:
        """The atoms drawn as spikes (none past :data:`MAX_SPIKES`)."""
        return self.atoms if len(self.atoms) <= MAX_SPIKES else ()


def curves(review: Any, *, points: int = 400) -> list[Curve]:
    """Each candidate's CDF (with vertical jumps at atoms) and density over the range."""
    lo, hi = x_range(review)
    grid = span(lo, hi, points)
    out = []
    for c in review.candidates:
        bp = np.asarray(c.model.breakpoints, dtype=float)
        inside = bp[(bp > lo) & (bp < hi)]
        xs = np.unique(np.r_[grid, inside])
        ys = c.cdf(xs)
        atoms = tuple(a for a in c.atoms if lo <= a.x <= hi)
        for a in atoms:  # a jump: the left limit just before the value at the atom
            j = int(np.searchsorted(xs, a.x))
            xs = np.insert(xs, j, a.x)
            ys = np.insert(ys, j, float(c.cdf(a.x)) - a.mass)
        left = np.nextafter(inside, -np.inf)
        px = np.unique(np.r_[grid, inside, left])
        out.append(Curve(xs, ys, px, c.pdf(px), atoms))
    return out


def data_layers(review: Any) -> dict[str, Any] | None:
    """ECDF outline, DKW band polygon and density histogram of the data (None without data)."""
    if review.data is None:
        return None
    lo, hi = x_range(review)
    e = review.ecdf
    st = e.steps(max_points=2000)
    band = e.band(level=review.level)
    bp = np.r_[0.0, st.p, 1.0]
    edges, dens = _hist(review)
    return {
        "steps_x": np.r_[lo, st.x, hi],
        "steps_p": bp,
        "band_x": np.r_[lo, st.x, hi],
        "band_lower": np.clip(bp - band.eps, 0.0, 1.0),
        "band_upper": np.clip(bp + band.eps, 0.0, 1.0),
        "eps": float(band.eps),
        "edges": edges,
        "density": dens,
    }


def _hist(review: Any) -> tuple[np.ndarray, np.ndarray]:
    e: ECDF = review.ecdf
    x, p = np.asarray(e.x, float), np.asarray(e.p, float)
    edges = span(x[0], x[-1], histogram_bins(e.n) + 1) if x[-1] > x[0] else None
    if edges is None:
        return histogram(x)
    # counts from the ECDF (distinct values and their cumulative mass): no pass over the data
    below = np.r_[0.0, p][np.searchsorted(x, edges, side="left")]
    below[-1] = 1.0
    with np.errstate(over="ignore"):
        return edges, np.diff(below) / np.diff(edges)


def density_top(review: Any, cs: list[Curve], layers: dict[str, Any] | None) -> float:
    """Top of the density axis: histogram and the typical candidate peak, not a spike."""
    peaks = [float(np.max(c.pdf)) for c in cs if np.max(c.pdf) > 0]
    top = float(np.median(peaks)) if peaks else 0.0
    if layers is not None:
        top = max(top, float(np.max(layers["density"])))
    return 1.15 * top if top > 0 else 1.0


@dataclass(frozen=True)
class FloorFlag:
    """Mass a candidate puts beyond a limit the data never cross (e.g. below 0 h)."""

    name: str
    side: str
    limit: float
    mass: float


def flags_text(flags: list[FloorFlag]) -> str:
    """All flags in one sentence per limit (what the board, the page and the figure show).

    Examples
    --------
    >>> flags = [FloorFlag("normal", "below", 0.0, 0.0696), FloorFlag("kde", "below", 0.0, 0.02)]
    >>> flags_text(flags)
    'Mass below 0, where the data never go: normal 6.96 %, kde 2 %.'
    """
    from .._numfmt import significant

    parts = []
    for side in ("below", "above"):
        mine = [f for f in flags if f.side == side]
        if mine:
            items = ", ".join(f"{f.name} {significant(100 * f.mass, 3)} %" for f in mine)
            where = f"{side} {significant(mine[0].limit)}"
            parts.append(f"Mass {where}, where the data never go: {items}.")
    return " ".join(parts)


def floor_flags(review: Any) -> list[FloorFlag]:
    """Candidates with mass below 0 for data all ≥ 0, or above 1 for data in [0, 1]."""
    if review.data is None:
        return []
    dlo, dhi = review.data_range
    out = []
    for c in review.candidates:
        if dlo >= 0:
            m = float(c.cdf(np.nextafter(0.0, -np.inf)))
            if m >= FLAG_MASS:
                out.append(FloorFlag(c.name, "below", 0.0, m))
        if dlo >= 0 and dhi <= 1:
            m = float(c.model.sf(1.0))
            if m >= FLAG_MASS:
                out.append(FloorFlag(c.name, "above", 1.0, m))
    return out
