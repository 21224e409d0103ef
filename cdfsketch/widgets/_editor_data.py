"""What the editor precomputes from the data once, and the fast fit numbers per change.

The editor redraws and re-scores the sketch on every drag event, so
everything that depends on the data alone is computed here once, when the
editor opens: the ECDF (:class:`cdfsketch.empirical.ECDF`), its DKW band,
the decimated step outline, a histogram, and a seeded holdout split.

Fast KS distance and band excursion
-----------------------------------
:meth:`DataView.fit_numbers` evaluates the sketch only at the jump points
kept by :meth:`ECDF.steps` (at most ``max_points / 2`` of them), on both
sides of each. Between two kept points ``a < b`` the ECDF rises by less than
the outline's ``tolerance`` (the guarantee of :meth:`ECDF.steps`), and the
sketch's CDF ``G`` is non-decreasing, so for every ``x`` in ``[a, b)``
``F_n(x) - G(x) ≤ F_n(a) - G(a) + tol`` and
``G(x) - F_n(x) ≤ G(b⁻) - F_n(b⁻) + tol``; the band's windows obey the same
bounds. Hence the reported value ``d`` and the exact value ``D`` satisfy
``d ≤ D ≤ d + tol`` (for KS and for the excursion alike). When the sample
has few distinct values the outline keeps every jump, ``tol = 0`` and the
numbers are exact.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from .._streams import root_seed
from .._validate import fail, flag
from ..empirical import ECDF, as_data
from ..empirical.band import steps_at
from ..holdout import holdout_counts, holdout_fraction, holdout_split, holdout_subsample
from ..review.layers import histogram
from ..sketch import Sketch
from ..spec import data_fingerprint

__all__ = ["AUTO_KNOTS", "DataView", "automatic_start"]

#: knot budget of the automatic start
AUTO_KNOTS = 7

#: vertices of the drawn ECDF outline (and of the band); 1/300 tolerance in p
OUTLINE_POINTS = 1200
#: held-out points scored on each change; more are subsampled (by the split's own keys)
HOLDOUT_LIVE = 5_000


class DataView:
    """Data-only quantities for the editor (computed once; see the module docstring).

    Parameters
    ----------
    data : array_like
        The sample (see :func:`cdfsketch.empirical.as_data`).
    level : float
        Coverage of the simultaneous DKW band.
    holdout : float or None
        Fraction of the points held out for the live log score (``None`` or 0:
        no holdout score).
    rng : optional
        Seed of the holdout split (:func:`cdfsketch.holdout.holdout_subsample`: up to
        ``HOLDOUT_LIVE`` of the points :func:`cdfsketch.holdout.holdout_split` holds out).
    hide_held_out : bool
        Draw the ECDF, band and histogram from the training part only, so the
        held-out points are unseen and their score is an honest out-of-sample
        check (``n_shown`` < ``n``). Default: every point is drawn.
    """

    def __init__(
        self,
        data: Any,
        *,
        level: float,
        holdout: float | None,
        rng: Any,
        hide_held_out: bool = False,
    ) -> None:
        x = as_data(data)
        self.values = x
        self.n = int(x.size)
        self.holdout = holdout_fraction(holdout)
        self.hidden = flag(hide_held_out, field="hide_held_out")
        if self.hidden:
            if self.holdout == 0.0:
                raise fail(
                    "hide_held_out=True needs points held out",
                    f"holdout={holdout!r}",
                    "Pass e.g. holdout=0.3, or leave hide_held_out=False.",
                    field="hide_held_out",
                    value=hide_held_out,
                )
            holdout_counts(self.n, fraction=self.holdout)
        root = root_seed(rng)  # one root: the shown part and the scored points from one split
        shown = x[holdout_split(self.n, fraction=self.holdout, rng=root)[0]] if self.hidden else x
        self.n_shown = int(shown.size)
        #: what fits may use: all the data, or the training part when the held-out are hidden
        self.fit_values = shown
        # one sort for the ECDF, its band and outline, and the histogram
        self.ecdf, xs = ECDF._with_sorted(shown)
        self.range = (float(xs[0]), float(xs[-1]))
        self.hist_edges, self.hist_density = histogram(xs, is_sorted=True)
        del xs  # with ties, the sorted copy is not kept
        self.band = self.ecdf.band(level=level)
        self.level = float(level)
        out = self.ecdf.steps(max_points=OUTLINE_POINTS)
        self.outline = out
        jx, jp = self.ecdf.x, self.ecdf.p
        kept = np.searchsorted(jx, out.x[0::2])
        self.kept_x = jx[kept]
        self.kept_p = jp[kept]
        self.kept_p_left = np.where(kept > 0, jp[np.maximum(kept - 1, 0)], 0.0)
        self.tolerance = float(out.tolerance)
        # the one holdout split (as compare() makes it): up to HOLDOUT_LIVE of its points
        self.held: np.ndarray | None = None
        self.held_size = 0
        if self.holdout > 0:
            live, held = holdout_subsample(
                self.n, fraction=self.holdout, size=HOLDOUT_LIVE, rng=root
            )
            if held:
                self.held = np.sort(x[live])
                self.held_size = held
        self.resolution = _resolution(x[:5000], self.range[1] - self.range[0])
        lo, hi = self.range  # of the points in view: held-out ones leak nothing
        self.floor = 0.0 if lo >= 0 else None
        self.ceiling = 1.0 if lo >= 0 and hi <= 1 else None
        self._fingerprint: dict[str, Any] | None = None

    @property
    def fingerprint(self) -> dict[str, Any]:
        """``data_fingerprint`` of the data (computed on first use, then kept)."""
        if self._fingerprint is None:
            self._fingerprint = data_fingerprint(self.values)
        return self._fingerprint

    @property
    def live_subsampled(self) -> bool:
        """Whether the live holdout score uses a subsample of the held-out points."""
        return self.held is not None and self.held.size < self.held_size

    def fit_numbers(self, sketch: Sketch) -> dict[str, float]:
        """KS distance, band excursion (``d ≤ exact ≤ d + tolerance``) and holdout score."""
        g = sketch.cdf(self.kept_x)
        gl = sketch.cdf(np.nextafter(self.kept_x, -np.inf))
        ks = max(
            float(np.max(np.abs(self.kept_p - g))),
            float(np.max(np.abs(self.kept_p_left - gl))),
        )
        eps = self.band.eps
        lo = np.maximum(self.kept_p - eps, 0.0)
        hi = np.minimum(self.kept_p_left + eps, 1.0)
        excursion = float(max(np.max(lo - g), np.max(gl - hi)))
        out = {"ks": ks, "excursion": excursion, "tolerance": self.tolerance}
        if self.held is not None:
            keys = ("logscore", "n_outside", "n_at_atoms")
            out.update(zip(keys, log_score(sketch, self.held), strict=True))
        return out

    def outside_band(self, sketch: Sketch) -> np.ndarray:
        """Boolean per knot: ``p`` below the band's lower or above its upper edge at ``x``."""
        f = steps_at(self.ecdf.x, self.ecdf.p, sketch.x, 0.0)  # F_n(x)
        lo = np.maximum(f - self.band.eps, 0.0)
        hi = np.minimum(f + self.band.eps, 1.0)
        return (sketch.p < lo - 1e-12) | (sketch.p > hi + 1e-12)


def log_score(sketch: Sketch, y: np.ndarray) -> tuple[float, int, int]:
    """Mean log density at ``y``, with atoms scored by the log of their mass.

    Returns the mean, the number of points with zero density (``-inf``, kept
    in the mean) and the number of points at atoms. The same convention as
    :func:`cdfsketch.metrics.compare` (counting measure at atoms).
    """
    # a point at the last knot of a sketch without upper tail mass is inside the support:
    # it gets the density just below that knot (the density is right-continuous)
    end = float(sketch.x[-1])
    at_end = np.nextafter(end, -np.inf) if sketch.tail_mass[1] <= 0 else end
    with np.errstate(divide="ignore"):
        s = np.log(np.asarray(sketch.pdf(np.where(y == end, at_end, y)), dtype=float))
    hits = 0
    for a in sketch.atoms:
        at = y == a.x
        hits += int(at.sum())
        s[at] = math.log(a.mass)
    outside = int(np.count_nonzero(np.isneginf(s)))
    return float(np.mean(s)), outside, hits


def _resolution(sample: np.ndarray, span: float) -> float:
    """The step the values are recorded to (a power of ten), or a tenth of a per mille of the span.

    Examples
    --------
    >>> _resolution(np.array([1.5, 2.25, 7.0]), 5.5), _resolution(np.array([3.0, 12.0]), 9.0)
    (0.01, 1.0)
    """
    v = sample[np.isfinite(sample)]
    for k in range(7):
        scaled = v * 10.0**k
        if np.all(np.abs(scaled - np.round(scaled)) <= 1e-9 * np.maximum(1.0, np.abs(scaled))):
            return 10.0**-k
    return 10.0 ** (math.floor(math.log10(span)) - 4) if span > 0 else 1e-4


def automatic_start(view: DataView, *, budget: int = AUTO_KNOTS) -> Sketch:
    """The automatic starting sketch: at most ``budget`` knots, as close to the band as they go.

    The fewest-knots search of :func:`cdfsketch.elicit.from_data` with a knot
    budget, on the ECDF the view already holds (no second sort). The ends are
    the data's extremes: the sketch has no tail mass until one is added (the
    readout says so).
    """
    from ..elicit import from_ecdf

    return from_ecdf(view.ecdf, fingerprint=view.fingerprint, level=view.level, max_knots=budget)
