"""Automatic knots: a sketch with few knots that stays inside the data's band.

:func:`from_data` is what ``cdfsketch.from_data`` names. Only numpy (and the
core modules) are imported here.

What "inside the band" means
----------------------------
The band around the ECDF is a pair of right-continuous step functions
``L = max(F_n - ε, 0)`` and ``U = min(F_n + ε, 1)`` that jump at the distinct
data values ``x_1 < … < x_m``. For a non-decreasing sketch CDF ``G``,
``L ≤ G ≤ U`` everywhere holds exactly when, at every data value,

* ``G(x_j) ≥ lo_j = max(p_j - ε, 0)`` (on ``[x_j, x_{j+1})`` the lower edge is
  constant and ``G`` is smallest at the left end), and
* ``G(x_j⁻) ≤ hi_j = min(p_{j-1} + ε, 1)`` (with ``p_0 = 0``: on
  ``[x_{j-1}, x_j)`` the upper edge is constant and ``G`` is largest just
  before ``x_j``; below ``x_1`` it is ``ε``, above ``x_m`` it is 1).

So the band is checked on both sides of every jump, and nothing between
data values needs checking (:meth:`cdfsketch.empirical.Band.excursion`).
Where ``lo_j > hi_j`` (a tie heavier than ``2ε``) no continuous ``G`` fits and
the sketch gets an atom there.

How the knots are found
-----------------------
Between two forced atoms the sketch is a continuous non-decreasing polyline
that must meet every window ``[lo_j, hi_j]`` (with the atoms' own arrival
and departure windows at the ends), and any such polyline is inside the
band. The fewest line segments that do this — a minimum-link path in the
corridor between the band's two staircases, knots anywhere — are found
exactly by the window method of Suri (1986) and Imai & Iri (1986), see
:mod:`cdfsketch.elicit.minlink`; the runs are independent, so the sum of
their minima is the minimum for the whole sketch. Windows are narrowed by
``MARGIN = 1e-8`` so that rounding in the knots cannot leave the band, and
the built sketch is checked exactly (``max_excursion`` ≤ 0; knots would be
added if it were not, which the tests never see). Optimality is tested
against an exhaustive search (every path of fewer links checked by linear
programming) on small cases; the bimodal samples of the audit (n = 10⁴,
seeds 1–5) give 8 knots each, as an exhaustive search found.

The ends: the first knot is ``(min(data), 0)`` and the last
``(max(data), 1)``. The band allows both (``L = 0`` and ``U = ε`` below the
minimum, ``L = 1 - ε`` and ``U = 1`` above the maximum), and any knot beyond
the data would be a guess the data cannot check. When a tie at an end holds
more than ``ε`` (``p_1 > ε``, or ``1 - p_{m-1} > ε``) the band forces an
atom there. The tails therefore hold no mass; they are kept at the setting
given (or the :class:`Sketch` default) so an outer knot dragged off 0 or 1
later has a defined tail.

Large samples
-------------
With more than ``DECIMATE_ABOVE`` (200 000) distinct values the knots are
found on the decimated outline ``D`` of :meth:`ECDF.steps
<cdfsketch.empirical.ECDF.steps>` instead of at every data value, with the
tolerance ``tol = ε/16`` (``DECIMATE_FRACTION``). ``D`` is the ECDF's
staircase with jumps at the kept points only, so ``D ≤ F_n`` everywhere, and
``δ = sup (F_n - D) < tol`` is known exactly (``StepOutline.max_error``). The
knots are fitted inside the narrowed band ``[max(D - (ε - δ), 0), min(D + ε,
1)]``, which lies inside the exact band: ``D - ε + δ ≥ F_n - ε`` (as ``F_n - D
≤ δ``) and ``D + ε ≤ F_n + ε`` (as ``D ≤ F_n``), and clipping to ``[0, 1]``
costs a non-decreasing ``G`` with values in ``[0, 1]`` nothing. ``D`` is a
right-continuous step function, so the rules above, applied at its jumps with
its own left values, are exact for it; the sketch is checked there exactly,
and its excursion from the narrowed band is an upper bound on the excursion
from the exact band (stored as ``max_excursion``, ≤ 0, with
``outline_tolerance = δ``; ``δ = 0`` when every data value was used). The
price is a band narrower by ``δ < ε/16`` on its lower side, so a knot or two
more than the exact minimum at most in practice (the minimum is exact for the
narrowed band); a tie heavy enough to force an atom is found as before (a jump
of ``D`` may also gather several jumps of ``F_n`` closer than ``tol``). With
``n = 10⁷`` this fits on about ``10⁵`` points instead of ``10⁷``.

``interpolation="pchip"``: the monotone cubic through the same knots can
bulge outside the band between knots. The sketch is checked exactly (the
rules above hold for any non-decreasing ``G``) and, while it is outside, a
knot is added at the worst data value of each offending interval, in the
middle of its window (the ECDF's mid-step, which is inside). This ends: with
a knot at every data value the constraints hold by construction. The smooth
curve needs more knots than the polyline, more so for larger samples (a
narrower band): measured 1–2.3× at n = 2000 (tests: normal 9 vs 4, gamma 10
vs 5, lognormal 11 vs 5, a two-normal mixture 6 vs 6), 2.4–3.3× at n = 10⁴
and 5–5.6× at n = 10⁶ (tests/bench/bench_autoknots.py).

A knot budget
-------------
``max_knots=k`` asks for at most ``k`` knots, as close to the band as
possible: the smallest widening ``w`` of the band (``[L − w, U + w]``
clipped to ``[0, 1]``) inside which ``k`` knots suffice. The minimum knot
count is non-increasing in ``w`` and is computed exactly for each trial
``w`` (the method above), so ``w`` is found by bisection on a log scale
between ``ε/64`` and 1 (two knots always suffice): first halving down from 1
(coarse, cheap trials) to the first misfit, then bisecting; once the halving
goes below ``ε``, the band itself (``w = 0``, the exact minimum) is tried
first. Each
trial works on the decimated outline with tolerance ``max(w/4, ε/16)``
(``BUDGET_OUTLINE``), whose corridor lies inside the band widened by ``w``
and, for ``w ≥ ε/4``, contains it widened by ``3w/4``; the bisection stops at
a ratio of 1.05 (``BUDGET_PRECISION``). So the widening found is at most
``1.05 · 4/3`` times the smallest one — not exact, and stated as such. The
sketch's excursion from the band is measured on the knots found
(``max_excursion``, ≤ ``widening``; ``widening`` is stored too). A trial
stops as soon as it needs more than ``k`` knots, so a handful of knots on
10⁷ points costs little beyond building the ECDF (a sort).
``interpolation="pchip"`` keeps the same knots (no knots are added, so the
smooth curve may leave the band by more; ``max_excursion`` says how much).
"""

from __future__ import annotations

import math
from typing import Any, Literal

import numpy as np

from .._validate import choice, integer
from ..empirical import ECDF, Band, as_data
from ..sketch import Sketch
from ..spec import data_fingerprint
from ..tails import Tail
from ._common import clean_knots
from .minlink import fewest_links

__all__ = ["from_data", "from_ecdf"]

#: Windows are narrowed by this much in p so that rounding in the sketch's
#: cdf cannot push it outside the band.
MARGIN = 1e-8
#: Above this many distinct values the knots are found on the decimated outline
#: (module docstring, "Large samples").
DECIMATE_ABOVE = 200_000
#: The outline's tolerance as a fraction of the band's half-width ε.
DECIMATE_FRACTION = 1 / 16
#: Knot budget: the outline's tolerance as a fraction of the trial widening.
BUDGET_OUTLINE = 1 / 4
#: Knot budget: the bisection stops when the widening is known to this ratio.
BUDGET_PRECISION = 0.05
#: Knot budget: widenings below this fraction of ε count as "inside the band".
BUDGET_FLOOR = 1 / 64


def _linear_knots(
    xs: np.ndarray, lo: np.ndarray, hi: np.ndarray, max_knots: int | None = None
) -> tuple[np.ndarray, np.ndarray] | None:
    """Knots of a minimum-link non-decreasing polyline meeting every window.

    Runs between forced atoms are independent (the jump absorbs any level),
    so each run is solved by :func:`~cdfsketch.elicit.minlink.fewest_links`
    and the runs are joined by two knots at each atom. ``None`` when more
    than ``max_knots`` knots would be needed.
    """
    m = xs.size
    atom = lo > hi
    atom[0] = lo[0] > 0.0
    atom[-1] = hi[-1] < 1.0
    kx: list[float] = [float(xs[0])]
    ky: list[float] = [0.0]
    start = (float(lo[0]), float(hi[1])) if atom[0] else (0.0, 0.0)
    a = 0
    for b in [*(np.flatnonzero(atom[1:-1]) + 1).tolist(), m - 1]:
        end = (0.0, float(hi[b])) if b < m - 1 or atom[-1] else (1.0, 1.0)
        left = None
        if max_knots is not None:
            # knots so far, the run's own (links + 1, the first may repeat the last), the top
            left = max_knots - len(kx) - int(bool(atom[-1]))
            if left < 1:
                return None
        run = fewest_links(xs[a : b + 1], lo[a : b + 1], hi[a : b + 1], start, end, max_links=left)
        if run is None:
            return None
        kx += run[0].tolist()
        ky += run[1].tolist()
        if b < m - 1:
            start = (float(lo[b]), float(hi[b + 1]))
            a = b
    if atom[-1]:
        kx.append(float(xs[-1]))
        ky.append(1.0)
    out = clean_knots(np.asarray(kx), np.asarray(ky))
    if max_knots is not None and out[0].size > max_knots:
        return None
    return out


def _violations(
    xs: np.ndarray, sketch: Sketch, lo: np.ndarray, hi: np.ndarray
) -> tuple[float, np.ndarray]:
    g = sketch.cdf(xs)
    gl = sketch.cdf(np.nextafter(xs, -np.inf))
    over = np.maximum(lo - g, gl - hi)
    return float(over.max()), over


def _outline_windows(
    ecdf: ECDF, band: Band, tol: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """Jump points and windows of the narrowed band around the decimated outline ``D``.

    Returns ``(x, lo, hi, delta)`` with ``delta = sup (F_n - D) < tol`` (exact); see the
    module docstring, "Large samples".
    """
    out = ecdf.steps(max_points=4 * math.ceil(1.0 / tol) + 8, tolerance=tol)
    delta = float(out.max_error)
    kx = out.x[0::2]
    kp = out.p[1::2]  # D at each kept point
    kl = out.p[0::2]  # D just before it (the previous kept point's value; 0 first)
    lo = np.maximum(kp - (band.eps - delta), 0.0)
    hi = np.minimum(kl + band.eps, 1.0)
    return kx, lo, hi, delta


def _windows(
    ecdf: ECDF, band: Band, tol: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """The exact windows, or the outline's when there are more than ``4/tol`` jump points."""
    if ecdf.x.size > 4 / tol:
        return _outline_windows(ecdf, band, tol)
    lo, hi = band.windows()
    return ecdf.x, lo, hi, 0.0


def _band_windows(ecdf: ECDF, band: Band) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """The windows the unbudgeted path uses: exact up to ``DECIMATE_ABOVE`` jump points."""
    if ecdf.x.size <= DECIMATE_ABOVE:
        lo, hi = band.windows()
        return ecdf.x, lo, hi, 0.0
    return _outline_windows(ecdf, band, band.eps * DECIMATE_FRACTION)


def _narrowed(lo0: np.ndarray, hi0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    wide = (hi0 - lo0) > 4 * MARGIN
    lo = np.where(wide, lo0 + MARGIN, lo0)
    hi = np.where(wide, hi0 - MARGIN, hi0)
    lo[0] = lo0[0]
    hi[-1] = hi0[-1]
    return lo, hi


def _widened(lo0: np.ndarray, hi0: np.ndarray, w: float) -> tuple[np.ndarray, np.ndarray]:
    return _narrowed(np.maximum(lo0 - w, 0.0), np.minimum(hi0 + w, 1.0))


def _budget_knots(
    ecdf: ECDF, band: Band, budget: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, float, float]:
    """At most ``budget`` knots, as close to the band as the search finds (module notes)."""
    eps = band.eps
    w_hi, w_lo = 1.0, eps * BUDGET_FLOOR
    cache: dict[float, Any] = {}

    def trial(w: float) -> Any:
        if w not in cache:
            if w == 0:
                xs, lo0, hi0, delta = _band_windows(ecdf, band)
            else:
                tol = max(w * BUDGET_OUTLINE, eps * DECIMATE_FRACTION)
                xs, lo0, hi0, delta = _windows(ecdf, band, tol)
            lo, hi = _widened(lo0, hi0, w)
            cache[w] = (_linear_knots(xs, lo, hi, max_knots=budget), xs, lo0, hi0, delta)
        return cache[w]

    # halve down from w = 1 (cheap: coarse outlines) until k knots no longer fit; once
    # below ε, the band itself (the exact minimum) is tried first
    tried_band = False
    while True:
        w = w_hi / 2.0
        if w < eps and not tried_band:
            tried_band = True
            if trial(0.0)[0] is not None:
                w_hi = w_lo = 0.0
                break
        if w < w_lo:
            w_lo = w_hi  # they fit all the way down to the floor
            break
        if trial(w)[0] is None:
            w_lo = w
            break
        w_hi = w
    # ... then bisect (geometrically) between the last misfit and the last fit
    while w_hi > w_lo * (1.0 + BUDGET_PRECISION):
        mid = math.sqrt(w_hi * w_lo)
        if trial(mid)[0] is not None:
            w_hi = mid
        else:
            w_lo = mid
    knots, xs, lo0, hi0, delta = trial(w_hi)
    assert knots is not None
    return knots[0], knots[1], xs, lo0, hi0, delta, w_hi


def from_data(
    data: Any,
    *,
    level: float = 0.95,
    interpolation: Literal["linear", "pchip"] = "linear",
    max_knots: int | None = None,
    lower_tail: Tail | None = None,
    upper_tail: Tail | None = None,
    name: str = "",
    units: str = "",
) -> Sketch:
    """A sketch with few knots that stays inside the data's DKW band.

    See the module docstring for what "inside" means, how the knots are
    found and why the ends are at the sample's minimum and maximum.

    Parameters
    ----------
    data : array_like
        A 1-D sample (see :func:`cdfsketch.empirical.as_data`; NaN are dropped
        with a warning). Censored data are not supported (no valid DKW band).
    level : float
        Coverage of the simultaneous band (Massart's constant), in (0, 1).
        A higher level gives a wider band and fewer knots.
    interpolation : {"linear", "pchip"}
        How the sketch runs between knots; ``"pchip"`` adds knots until the
        smooth curve is inside the band too.
    max_knots : int, optional
        A knot budget: at most this many knots (≥ 2), as close to the band as
        the search finds (module docstring, "A knot budget"); the excursion
        reached is ``extra["max_excursion"]`` and the widening searched
        ``extra["widening"]``. ``None``: the fewest knots inside the band.
    lower_tail, upper_tail : BoundedTail or ExponentialTail, optional
        Tail settings kept on the sketch (they hold no mass: the sketch runs
        from 0 at the minimum to 1 at the maximum).
    name, units : str
        Passed to the :class:`Sketch`.

    Returns
    -------
    Sketch
        Its provenance records the method, the data fingerprint, and in
        ``extra``: ``level``, ``eps``, ``n``, ``knots``, ``max_excursion``
        (the largest distance outside the band, ≤ 0; negative is the margin;
        for large samples an upper bound, see "Large samples" in the module
        docstring) and ``outline_tolerance`` (0 unless decimated).

    Raises
    ------
    cdfsketch.empirical.DataError
        For unusable data.
    cdfsketch._validate.InputError
        For bad options (a :class:`ValueError`).

    Examples
    --------
    >>> rng = np.random.default_rng(0)
    >>> s = from_data(rng.uniform(0, 10, 500))
    >>> len(s), s.provenance["extra"]["max_excursion"] <= 0
    (3, True)
    >>> two = from_data(rng.normal(size=2000), max_knots=2)  # a budget: outside the band
    >>> len(two), two.provenance["extra"]["max_excursion"] > 0
    (2, True)
    """
    x = as_data(data)
    return from_ecdf(
        ECDF(x), fingerprint=data_fingerprint(x), level=level, interpolation=interpolation,
        max_knots=max_knots, lower_tail=lower_tail, upper_tail=upper_tail, name=name,
        units=units,
    )  # fmt: skip


def from_ecdf(
    ecdf: ECDF,
    *,
    fingerprint: dict[str, Any] | None = None,
    level: float = 0.95,
    interpolation: Literal["linear", "pchip"] = "linear",
    max_knots: int | None = None,
    lower_tail: Tail | None = None,
    upper_tail: Tail | None = None,
    name: str = "",
    units: str = "",
) -> Sketch:
    """:func:`from_data` on an ECDF already built (the editor builds one for all its uses).

    Same options and result as :func:`from_data`; ``fingerprint`` (from
    :func:`cdfsketch.data_fingerprint` of the raw data) goes into the
    provenance when given. The ECDF must be of uncensored data.

    Examples
    --------
    >>> e = ECDF(np.random.default_rng(0).uniform(0, 10, 500))
    >>> len(from_ecdf(e)), len(from_ecdf(e, max_knots=2))
    (3, 2)
    """
    if not isinstance(ecdf, ECDF):
        raise TypeError(f"ecdf must be a cdfsketch ECDF; got {type(ecdf).__name__}.")
    choice(interpolation, field="interpolation", options=("linear", "pchip"))
    budget = None if max_knots is None else integer(max_knots, field="max_knots", low=2)
    return _from_ecdf(
        ecdf, fingerprint, level=level, interpolation=interpolation, budget=budget,
        lower_tail=lower_tail, upper_tail=upper_tail, name=name, units=units,
    )  # fmt: skip


def _from_ecdf(
    ecdf: ECDF,
    fingerprint: dict[str, Any] | None,
    *,
    level: float,
    interpolation: str,
    budget: int | None,
    lower_tail: Tail | None,
    upper_tail: Tail | None,
    name: str,
    units: str,
) -> Sketch:
    """:func:`from_data` on an ECDF already built (the editor builds it once for all uses)."""
    band = ecdf.band(level=level)
    widening = 0.0
    if budget is None:
        xs, lo0, hi0, delta = _band_windows(ecdf, band)
        lo, hi = _narrowed(lo0, hi0)
        lin_x, lin_p = _linear_knots(xs, lo, hi)  # type: ignore[misc]
    else:
        lin_x, lin_p, xs, lo0, hi0, delta, widening = _budget_knots(ecdf, band, budget)
        lo, hi = _widened(lo0, hi0, widening)

    def build(kx: np.ndarray, kp: np.ndarray, interp: str) -> Sketch:
        return Sketch(
            kx, kp, interpolation=interp, lower_tail=lower_tail, upper_tail=upper_tail,
            name=name, units=units,
        )  # fmt: skip

    sketch = build(lin_x, lin_p, interpolation)
    worst, over = _violations(xs, sketch, lo0, hi0)
    kx, kp = sketch.x, sketch.p
    while budget is None and worst > 0:
        # add the worst data value of each offending knot interval, mid-window
        bad = np.flatnonzero(over > 0)
        seg = np.searchsorted(kx, xs[bad], side="right")
        first = np.r_[True, seg[1:] != seg[:-1]]
        starts = np.flatnonzero(first)
        picks = [bad[s + int(np.argmax(over[bad[s:e]]))] for s, e in zip(
            starts, [*starts[1:].tolist(), bad.size], strict=True)]  # fmt: skip
        new_x = xs[picks]
        fresh = ~np.isin(new_x, kx)
        if not fresh.any():
            raise RuntimeError(
                "automatic knots: could not bring the sketch inside the band by adding "
                f"knots (excursion {worst:.3g}); please report this with the data."
            )
        new_x = new_x[fresh]
        new_p = np.clip(0.5 * (lo[picks] + hi[picks])[fresh], lo[picks][fresh], hi[picks][fresh])
        order = np.argsort(np.r_[kx, new_x], kind="stable")
        kx = np.r_[kx, new_x][order]
        kp = np.maximum.accumulate(np.r_[kp, new_p][order])
        sketch = build(kx, kp, interpolation)
        worst, over = _violations(xs, sketch, lo0, hi0)

    method = (
        f"automatic knots inside the {level * 100:g}% DKW band"
        if widening == 0
        else f"automatic knots, at most {budget}, near the {level * 100:g}% DKW band"
    )
    provenance: dict[str, Any] = {
        "method": method,
        "extra": {
            "level": float(level),
            "eps": float(band.eps),
            "n": int(ecdf.n),
            "knots": len(sketch),
            "max_excursion": float(worst),
            "interpolation": interpolation,
            "outline_tolerance": delta,
            "max_knots": budget,
            "widening": float(widening),
        },
    }
    if fingerprint is not None:
        provenance["data"] = fingerprint
    return sketch.replace(provenance=provenance)
