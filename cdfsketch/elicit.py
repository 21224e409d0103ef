"""Sketches from judgement: stated quantiles, three-point estimates, a known
distribution, and pools of several experts' sketches.

Every function here returns an ordinary :class:`~cdfsketch.Sketch`, so the
result can be edited, saved as a spec and sampled like any other. How it was
built (the method, what was stated, who contributed with what weight, the
achieved accuracy) is recorded in the sketch's provenance.

scipy is imported inside the functions that need it (``from_three_points``);
the rest needs numpy only.

Accuracy of re-knotted sketches
-------------------------------
Where a sketch approximates a smooth target (a scipy distribution, a PERT, a
pool that has no exact knot form) knots are placed at quantiles of the
target and refined by bisection until the largest ``|F_sketch − F_target|``
found on a dense check grid (16 points inside every knot interval, in
probability and, where the target's CDF is known, in ``x``; plus a geometric
grid reaching far into the tails) is at most ``tolerance``. The achieved value
is stored as ``provenance["extra"]["max_abs_cdf_error"]``. It is a measured
maximum on that grid, not a proof between grid points; beyond the grid the
error is bounded analytically by the tail mass left there.
"""

from __future__ import annotations

import itertools
import math
import warnings
from collections.abc import Callable, Iterable, Mapping, Sequence
from typing import Any, Literal

import numpy as np

from .knots import KnotError
from .sketch import Sketch
from .tails import BoundedTail, ExponentialTail, Tail

__all__ = [
    "JudgementError",
    "from_distribution",
    "from_quantiles",
    "from_three_points",
    "pool",
]

#: Default largest |ΔF| for re-knotted sketches (from_distribution, from_three_points).
DEFAULT_TOLERANCE = 1e-3
#: Default largest |ΔF| for pools that need re-knotting.
POOL_TOLERANCE = 1e-4
_CHECK_POINTS = 16
_TAU = np.linspace(0.0, 1.0, _CHECK_POINTS + 2)[1:-1]


class JudgementError(ValueError):
    """Stated judgements that cannot all hold (a :class:`ValueError`)."""


# ---------------------------------------------------------------- validation helpers


def _finite(value: Any, what: str) -> float:
    if isinstance(value, bool):
        raise JudgementError(f"{what} must be a number; got {value!r}.")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise JudgementError(f"{what} must be a number; got {value!r}. Pass a float.") from None
    if not math.isfinite(v):
        raise JudgementError(
            f"{what} must be finite; got {v!r}. An unbounded end is described by a tail "
            "(lower_tail= / upper_tail=), not by an infinite value."
        )
    return v


def _text(value: Any, what: str) -> str:
    if not isinstance(value, str):
        raise TypeError(f"{what} must be a str; got {type(value).__name__} {value!r}.")
    return value


def _choice(value: Any, allowed: tuple[str, ...], what: str) -> str:
    if value not in allowed:
        raise ValueError(f"{what} must be one of {allowed}; got {value!r}.")
    return value


def _tolerance(value: Any, default: float) -> float:
    if value is None:
        return default
    tol = _finite(value, "tolerance")
    if not 0 < tol < 0.5:
        raise ValueError(f"tolerance must lie in (0, 0.5) (a largest |ΔF|); got {tol!r}. Try 1e-3.")
    return tol


def _count(value: Any, what: str, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int | np.integer) or value < minimum:
        raise ValueError(f"{what} must be an integer ≥ {minimum}; got {value!r}.")
    return int(value)


def _fmt(v: float) -> str:
    return f"{v:.6g}"


# ---------------------------------------------------------------- stated quantiles


def _read_statements(q: Any) -> list[tuple[float, float]]:
    if isinstance(q, Mapping):
        items = list(q.items())
    elif isinstance(q, Iterable) and not isinstance(q, str | bytes):
        items = []
        for i, item in enumerate(q):
            try:
                pp, xx = item
            except (TypeError, ValueError):
                raise JudgementError(
                    f"Statement {i} must be a (probability, value) pair; got {item!r}. Pass a "
                    "dict such as {0.05: 12, 0.5: 20, 0.95: 41}."
                ) from None
            items.append((pp, xx))
    else:
        raise JudgementError(
            f"q must map probabilities to values; got {type(q).__name__}. Pass a dict such as "
            "{0.05: 12, 0.5: 20, 0.95: 41}."
        )
    out = []
    for i, (pp, xx) in enumerate(items):
        p = _finite(pp, f"The probability of statement {i}")
        x = _finite(xx, f"The value of statement {i} (p={pp!r})")
        if not 0 < p < 1:
            raise JudgementError(
                f"Stated probabilities must lie strictly between 0 and 1; got statement {i} "
                f"(p={pp!r}: {xx!r}). A stated minimum or maximum goes in lower= / upper=."
            )
        out.append((p, x))
    return out


def _check_statements(st: list[tuple[float, float]]) -> list[tuple[float, float]]:
    seen: dict[float, float] = {}
    for p, x in st:
        if p in seen:
            raise JudgementError(
                f"Two statements give the same probability: p={_fmt(p)}: {_fmt(seen[p])} and "
                f"p={_fmt(p)}: {_fmt(x)}. Keep one value per probability."
            )
        seen[p] = x
    st = sorted(st)
    for (p0, x0), (p1, x1) in itertools.pairwise(st):
        if x1 < x0:
            raise JudgementError(
                f"Stated values must increase with probability; the statements "
                f"P(X ≤ {_fmt(x0)}) = {_fmt(p0)} and P(X ≤ {_fmt(x1)}) = {_fmt(p1)} clash "
                f"(a higher probability has a lower value). Revise one of them."
            )
        if x1 == x0:
            raise JudgementError(
                f"The statements P(X ≤ {_fmt(x0)}) = {_fmt(p0)} and P(X ≤ {_fmt(x1)}) = "
                f"{_fmt(p1)} give the same value for two probabilities (a point mass of "
                f"{_fmt(p1 - p0)} at {_fmt(x0)}); values must strictly increase. Revise one, or "
                f"build Sketch([..., {_fmt(x0)}, {_fmt(x0)}, ...], [..., {_fmt(p0)}, {_fmt(p1)}, "
                "...]) if a point mass is intended."
            )
    return st


def _read_bound(
    bound: Any, tail: Any, side: str, st: list[tuple[float, float]]
) -> tuple[float | None, Tail | None]:
    """Return (knot x at p=0/1 or None, tail to pass or None)."""
    p_out, x_out = st[0] if side == "lower" else st[-1]
    below = side == "lower"
    if bound is not None and tail is not None:
        raise JudgementError(
            f"Give either {side}= (a stated {'minimum' if below else 'maximum'}) or "
            f"{side}_tail= (where the unstated mass goes), not both; got {side}={bound!r} and "
            f"{side}_tail={tail!r}."
        )
    if tail is not None and not isinstance(tail, BoundedTail | ExponentialTail):
        raise JudgementError(
            f"{side}_tail must be a BoundedTail, an ExponentialTail or None; got {tail!r}."
        )
    limit: float | None = None
    if isinstance(bound, BoundedTail):
        limit = bound.limit
        tail, bound = bound, None
    elif isinstance(tail, BoundedTail):
        limit = tail.limit
    elif bound is not None:
        limit = _finite(bound, f"The {side} bound")
    if limit is not None:
        inside = limit >= x_out if below else limit <= x_out
        if inside:
            word = "below the lowest" if below else "above the highest"
            raise JudgementError(
                f"The {side} bound {_fmt(limit)} must lie {word} stated value; it clashes with "
                f"the statement P(X ≤ {_fmt(x_out)}) = {_fmt(p_out)}. Move the bound outside "
                "the stated range or revise that statement."
            )
    return (limit if bound is not None else None), tail


def from_quantiles(
    q: Mapping[float, float] | Iterable[tuple[float, float]],
    *,
    interpolation: Literal["linear", "pchip"] = "linear",
    lower: float | BoundedTail | None = None,
    upper: float | BoundedTail | None = None,
    lower_tail: Tail | None = None,
    upper_tail: Tail | None = None,
    name: str = "",
    units: str = "",
    author: str = "",
    rationale: str = "",
) -> Sketch:
    """A sketch through stated quantiles.

    Every statement ``P(X ≤ x) = p`` becomes a knot, so the sketch reproduces
    every stated quantile exactly (``cdf(x) == p``). The mass below the lowest
    and above the highest stated probability goes to a stated bound, to the
    chosen tail, or by default to an exponential tail that continues the
    density at the outer knot.

    Parameters
    ----------
    q : mapping or iterable of pairs
        Probability → value, e.g. ``{0.05: 12, 0.5: 20, 0.95: 41}``.
        Probabilities strictly inside (0, 1); values strictly increasing with
        probability.
    interpolation : {"linear", "pchip"}
        Between the stated points: piecewise-uniform density, or smooth.
    lower, upper : float or BoundedTail, optional
        A stated minimum / maximum. A number is a knot at ``p = 0`` (``1``);
        a :class:`~cdfsketch.BoundedTail` holds the outer mass between its
        limit and the outer stated value.
    lower_tail, upper_tail : BoundedTail or ExponentialTail, optional
        Where the unstated outer mass goes when no bound is given. Leaving
        them out uses ``ExponentialTail()`` and the summary warns about it.
    name, units, author, rationale : str
        Recorded on the sketch and in its provenance.

    Returns
    -------
    Sketch
        Provenance ``method="from stated quantiles"`` and
        ``extra["stated_quantiles"] = [[p, x], ...]``.

    Raises
    ------
    JudgementError
        Naming the statements that clash: values not increasing with
        probability, probabilities outside (0, 1), duplicated probabilities or
        values, a bound inside the stated range.

    Examples
    --------
    >>> s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41})
    >>> [float(s.cdf(v)) for v in (12, 20, 41)]
    [0.05, 0.5, 0.95]
    >>> s.tail_mass
    (0.05, 0.050000000000000044)
    >>> from_quantiles({0.05: 12, 0.5: 30, 0.95: 25})
    Traceback (most recent call last):
    ...
    cdfsketch.elicit.JudgementError: Stated values must increase with probability; ...
    """
    _choice(interpolation, ("linear", "pchip"), "interpolation")
    for label, text in (("name", name), ("units", units), ("author", author)):
        _text(text, label)
    _text(rationale, "rationale")
    st = _check_statements(_read_statements(q))
    if not st:
        raise JudgementError("q is empty; state at least two quantiles, e.g. {0.1: 5, 0.9: 20}.")
    lo_x, lo_tail = _read_bound(lower, lower_tail, "lower", st)
    hi_x, hi_tail = _read_bound(upper, upper_tail, "upper", st)
    xs = [x for _, x in st]
    ps = [p for p, _ in st]
    if lo_x is not None:
        xs.insert(0, lo_x)
        ps.insert(0, 0.0)
    if hi_x is not None:
        xs.append(hi_x)
        ps.append(1.0)
    if len(xs) < 2:
        raise JudgementError(
            f"One statement (p={_fmt(st[0][0])}: {_fmt(st[0][1])}) does not make a sketch; "
            "state at least two quantiles, or add a bound with lower= or upper=."
        )
    extra: dict[str, Any] = {"stated_quantiles": [[p, x] for p, x in st]}
    if lo_x is not None:
        extra["lower_bound"] = lo_x
    if hi_x is not None:
        extra["upper_bound"] = hi_x
    prov: dict[str, Any] = {"method": "from stated quantiles", "extra": extra}
    if author:
        prov["author"] = author
    if rationale:
        prov["rationale"] = rationale
    try:
        return Sketch(
            xs,
            ps,
            interpolation=interpolation,
            lower_tail=lo_tail,
            upper_tail=hi_tail,
            name=name,
            units=units,
            provenance=prov,
        )
    except KnotError as exc:
        raise JudgementError(f"The stated quantiles do not make a valid sketch: {exc}") from None


# ---------------------------------------------------------------- re-knotting engines


def _atom_mass_at(sk: Sketch, x: np.ndarray) -> np.ndarray:
    out = np.zeros(x.shape)
    for a in sk.atoms:
        out[x == a.x] += a.mass
    return out


def _gap_to_interval(sk: Sketch, x: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Distance of ``u`` from ``[F(x-), F(x)]``: 0 when ``x`` is a valid u-quantile."""
    right = np.asarray(sk.cdf(x), dtype=float)
    left = right - _atom_mass_at(sk, x)
    return np.maximum(np.maximum(left - u, u - right), 0.0)


def _clean_knots(x: np.ndarray, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Repair rounding: monotone x and p, at most two knots per x, no empty jumps."""
    x = np.maximum.accumulate(np.asarray(x, dtype=float))
    p = np.clip(np.maximum.accumulate(np.asarray(p, dtype=float)), 0.0, 1.0)
    same_prev = np.r_[False, x[1:] == x[:-1]]
    same_next = np.r_[x[1:] == x[:-1], False]
    keep = ~(same_prev & same_next)
    x, p = x[keep], p[keep]
    dup = np.r_[False, (x[1:] == x[:-1]) & (p[1:] == p[:-1])]
    return x[~dup], p[~dup]


def _reknot_in_probability(
    quantile: Callable[[np.ndarray], np.ndarray],
    u: np.ndarray,
    *,
    interpolation: str,
    lower_tail: Tail | None,
    upper_tail: Tail | None,
    tolerance: float,
    max_knots: int,
    cdf: Callable[[np.ndarray], np.ndarray] | None = None,
    right_quantile: Callable[[np.ndarray], np.ndarray] | None = None,
    pinned: Mapping[float, float] | None = None,
    tail_check: tuple[float, float] = (0.0, 0.0),
) -> tuple[Sketch, float]:
    """Knots at ``(quantile(u), u)``, bisected in ``u`` until the check grid passes.

    ``right_quantile`` gives ``Q(u+)`` where the target has a gap (a second
    knot at the same ``u``); ``pinned`` fixes ``x`` at given ``u`` exactly;
    ``tail_check = (lower mass, upper mass)`` adds geometric check grids into
    exponential tails holding those masses.
    """
    pinned = dict(pinned or {})
    u = np.unique(np.asarray(u, dtype=float))

    def xs_at(uu: np.ndarray) -> np.ndarray:
        x = np.asarray(quantile(uu), dtype=float)
        for pu, px in pinned.items():
            x = np.where(uu == pu, px, x)
        return x

    while True:
        xl = xs_at(u)
        if right_quantile is not None:
            xr = np.asarray(right_quantile(u), dtype=float)
            xk: list[float] = []
            pk: list[float] = []
            for uj, a, b in zip(u, xl, xr, strict=True):
                if uj > 0:
                    xk.append(a)
                    pk.append(uj)
                if uj < 1 and (b > a or uj == 0):
                    xk.append(b)
                    pk.append(uj)
            x, p = np.asarray(xk), np.asarray(pk)
        else:
            x, p = xl, u
        x, p = _clean_knots(x, p)
        try:
            sk = Sketch(
                x, p, interpolation=interpolation, lower_tail=lower_tail, upper_tail=upper_tail
            )
        except KnotError as exc:
            raise JudgementError(
                f"Could not place knots at the target's quantiles: {exc} The target may have "
                "point masses or no density; pass a continuous distribution."
            ) from None
        ug = (u[:-1, None] + np.diff(u)[:, None] * _TAU[None, :]).ravel()
        xg = xs_at(ug)
        ok = np.isfinite(xg)
        err_u = np.zeros(ug.shape)
        err_u[ok] = _gap_to_interval(sk, xg[ok], ug[ok])
        err = err_u.reshape(u.size - 1, _CHECK_POINTS).max(axis=1)
        if cdf is not None and right_quantile is None:
            xk = xs_at(u)
            xm = (xk[:-1, None] + np.diff(xk)[:, None] * _TAU[None, :]).ravel()
            em = np.abs(np.asarray(sk.cdf(xm)) - np.asarray(cdf(xm), dtype=float))
            err = np.maximum(err, em.reshape(u.size - 1, _CHECK_POINTS).max(axis=1))
        bad = np.flatnonzero(err > tolerance)
        if bad.size == 0 or u.size >= max_knots:
            break
        mids = 0.5 * (u[bad] + u[bad + 1])
        xm_new = xs_at(mids)
        xlo, xhi = xs_at(u[bad]), xs_at(u[bad + 1])
        usable = (xm_new > xlo) & (xm_new < xhi) & (mids > u[bad]) & (mids < u[bad + 1])
        if not usable.any():
            break
        u = np.unique(np.r_[u, mids[usable]])
    achieved = float(err.max()) if err.size else 0.0
    for side, mass in (("lower", tail_check[0]), ("upper", tail_check[1])):
        if mass <= 0:
            continue
        g = mass * np.geomspace(1e-8, 1.0, 64)[:-1]
        ug = g if side == "lower" else 1.0 - g
        xg = xs_at(ug)
        ok = np.isfinite(xg)
        if ok.any():
            achieved = max(achieved, float(_gap_to_interval(sk, xg[ok], ug[ok]).max()))
    return sk, achieved


def _reknot_in_x(
    cdf: Callable[[np.ndarray], np.ndarray],
    cdf_left: Callable[[np.ndarray], np.ndarray],
    breakpoints: np.ndarray,
    *,
    interpolation: str,
    lower_tail: Tail | None,
    upper_tail: Tail | None,
    snap: tuple[bool, bool],
    tolerance: float,
    max_knots: int,
) -> tuple[Sketch, float]:
    """Knots at ``(x, F(x))`` (two at a jump), bisected in ``x`` until the grid passes.

    ``snap`` says whether the first / last knot's probability is exactly 0 / 1
    (no tail mass on that side).
    """
    xs = np.unique(np.asarray(breakpoints, dtype=float))
    while True:
        right = np.clip(np.asarray(cdf(xs), dtype=float), 0.0, 1.0)
        left = np.clip(np.asarray(cdf_left(xs), dtype=float), 0.0, 1.0)
        if snap[0]:
            left[0] = 0.0
        if snap[1]:
            right[-1] = 1.0
        jump = right > left + 1e-15
        x = np.repeat(xs, np.where(jump, 2, 1))
        p = np.column_stack([left, right]).ravel()[
            np.column_stack([jump, np.ones(xs.size, dtype=bool)]).ravel()
        ]
        x, p = _clean_knots(x, p)
        if snap[0]:
            p[0] = 0.0
        if snap[1]:
            p[-1] = 1.0
        sk = Sketch(x, p, interpolation=interpolation, lower_tail=lower_tail, upper_tail=upper_tail)
        xg = (xs[:-1, None] + np.diff(xs)[:, None] * _TAU[None, :]).ravel()
        e = np.abs(np.asarray(sk.cdf(xg)) - np.asarray(cdf(xg), dtype=float))
        err = e.reshape(xs.size - 1, _CHECK_POINTS).max(axis=1)
        bad = np.flatnonzero(err > tolerance)
        if bad.size == 0 or xs.size >= max_knots:
            break
        mids = 0.5 * (xs[bad] + xs[bad + 1])
        mids = mids[(mids > xs[bad]) & (mids < xs[bad + 1])]
        if mids.size == 0:
            break
        xs = np.unique(np.r_[xs, mids])
    return sk, float(err.max()) if err.size else 0.0


def _warn_short(achieved: float, tolerance: float, max_knots: int, what: str) -> None:
    if achieved > tolerance:
        warnings.warn(
            f"{what}: reached max_knots={max_knots} with max |ΔF| = {achieved:.3g}, above the "
            f"tolerance {tolerance:.3g}. Raise max_knots or loosen tolerance.",
            UserWarning,
            stacklevel=3,
        )


def _spread(lo: float, hi: float, n: int) -> np.ndarray:
    """``n`` probabilities from ``lo`` to ``hi``, denser towards both ends."""
    k = np.arange(n)
    return lo + (hi - lo) * 0.5 * (1.0 - np.cos(np.pi * k / (n - 1)))


# ---------------------------------------------------------------- from a distribution


def _support_of(dist: Any) -> tuple[float, float]:
    supp = getattr(dist, "support", None)
    if callable(supp):
        try:
            lo, hi = supp()
            return float(lo), float(hi)
        except (TypeError, ValueError):
            pass
    lo = float(np.asarray(dist.ppf(0.0), dtype=float))
    hi = float(np.asarray(dist.ppf(1.0), dtype=float))
    return lo, hi


def _check_distribution(dist: Any) -> None:
    for attr in ("ppf", "cdf"):
        if not callable(getattr(dist, attr, None)):
            raise TypeError(
                f"dist must have callable ppf and cdf methods (a scipy frozen distribution, "
                f"a fit candidate); got {type(dist).__name__} without {attr!r}."
            )
    med = np.asarray(dist.ppf(np.array([0.25, 0.5, 0.75])), dtype=float)
    if med.shape != (3,) or not np.all(np.isfinite(med)):
        raise ValueError(
            f"dist.ppf must return finite values for probabilities 0.25, 0.5, 0.75; got {med!r}."
        )
    if not med[2] > med[0]:
        raise ValueError(
            f"dist has no spread: ppf(0.25) = ppf(0.75) = {float(med[0])!r}. "
            "A point mass is not a sketch."
        )


def _density_at(dist: Any, x: float) -> float | None:
    pdf = getattr(dist, "pdf", None)
    if not callable(pdf):
        return None
    f = float(np.asarray(pdf(x), dtype=float))
    return f if math.isfinite(f) and f > 0 else None


def from_distribution(
    dist: Any,
    *,
    knots: int = 20,
    tail: Literal["exponential", "bounded"] = "exponential",
    interpolation: Literal["linear", "pchip"] = "pchip",
    tolerance: float | None = None,
    max_knots: int = 400,
    name: str = "",
    units: str = "",
) -> Sketch:
    """A sketch with knots at quantiles of ``dist``, within a tolerance of it.

    Starts from ``knots`` quantiles (denser in the tails), then bisects in
    probability wherever the check grid (see the module notes) finds
    ``|F_sketch − F_dist| > tolerance``, until it passes or ``max_knots`` is
    reached (then a ``UserWarning`` says what was achieved).

    Ends: a finite end of ``dist.support()`` becomes a knot at ``p = 0`` or
    ``1`` whatever ``tail`` says. On an infinite side the outer knot is at the
    quantile ``t = min(tolerance, 1e-3)`` (``1 − t``) and the mass ``t`` beyond
    goes to

    * ``tail="exponential"``: ``ExponentialTail(scale=t / pdf(x_outer))``, an
      exponential continuing the source's density (the sketch's own density
      if ``dist`` has no ``pdf``);
    * ``tail="bounded"``: ``BoundedTail(dist.ppf(t / 1000), density="taper")``, the
      sketch ends where the source leaves a thousandth of that mass.

    Either way the error beyond the outer knot is at most ``t``.

    Parameters
    ----------
    dist : object with ``ppf`` and ``cdf``
        A continuous distribution, e.g. ``scipy.stats.gamma(2.0)``.
    knots : int
        Initial number of knots (≥ 3).
    tail : {"exponential", "bounded"}
        What holds the mass on an infinite side (see above).
    interpolation : {"linear", "pchip"}
        How the sketch runs between knots.
    tolerance : float, optional
        Largest accepted ``|ΔF|``; ``None`` means ``1e-3``.
    max_knots : int
        Stop refining at this many knots.
    name, units : str
        Recorded on the sketch.

    Returns
    -------
    Sketch
        Provenance ``method="from distribution"``; ``extra`` holds the
        tolerance, the achieved ``max_abs_cdf_error`` and ``source`` (the repr
        of ``dist``).

    Examples
    --------
    >>> from scipy import stats
    >>> s = from_distribution(stats.norm(10, 2))
    >>> s.provenance["extra"]["max_abs_cdf_error"] <= 1e-3
    True
    >>> round(s.mean(), 2), round(s.std(), 1)
    (10.0, 2.0)
    """
    _check_distribution(dist)
    n0 = _count(knots, "knots", 3)
    cap = _count(max_knots, "max_knots", n0)
    _choice(tail, ("exponential", "bounded"), "tail")
    _choice(interpolation, ("linear", "pchip"), "interpolation")
    tol = _tolerance(tolerance, DEFAULT_TOLERANCE)
    _text(name, "name")
    _text(units, "units")
    lo, hi = _support_of(dist)
    t = min(tol, 1e-3)
    u_lo = 0.0 if math.isfinite(lo) else t
    u_hi = 1.0 if math.isfinite(hi) else 1.0 - t

    def quantile(u: np.ndarray) -> np.ndarray:
        return np.asarray(dist.ppf(u), dtype=float)

    tails: list[Tail | None] = [None, None]
    for i, (side_u, mass) in enumerate(((u_lo, u_lo), (u_hi, 1.0 - u_hi))):
        if mass == 0:
            continue
        x_out = float(quantile(np.array([side_u]))[0])
        if tail == "bounded":
            far = mass / 1000.0
            limit = float(quantile(np.array([far if i == 0 else 1.0 - far]))[0])
            tails[i] = BoundedTail(limit, density="taper")
        else:
            f = _density_at(dist, x_out)
            tails[i] = ExponentialTail(mass / f) if f else ExponentialTail()
    sk, achieved = _reknot_in_probability(
        quantile,
        _spread(u_lo, u_hi, n0),
        interpolation=interpolation,
        lower_tail=tails[0],
        upper_tail=tails[1],
        tolerance=tol,
        max_knots=cap,
        cdf=lambda x: np.asarray(dist.cdf(x), dtype=float),
        tail_check=(u_lo, 1.0 - u_hi),
    )
    _warn_short(achieved, tol, cap, "from_distribution")
    extra = {
        "source": repr(dist)[:200],
        "tolerance": tol,
        "max_abs_cdf_error": achieved,
        "knots": len(sk),
    }
    return sk.replace(
        name=name, units=units, provenance={"method": "from distribution", "extra": extra}
    )


# ---------------------------------------------------------------- three points


def _three_point_dist(shape: str, a: float, m: float, b: float) -> Any:
    from scipy import stats

    if shape == "pert":
        # Malcolm et al. 1959 with λ = 4: Beta(1 + 4(m−a)/(b−a), 1 + 4(b−m)/(b−a)) on [a, b]
        alpha = 1.0 + 4.0 * (m - a) / (b - a)
        beta = 1.0 + 4.0 * (b - m) / (b - a)
        return stats.beta(alpha, beta, loc=a, scale=b - a)
    return stats.triang((m - a) / (b - a), loc=a, scale=b - a)


def _solve_ends(shape: str, low: float, mode: float, high: float, coverage: float):
    """Ends ``a < low``, ``b > high`` whose distribution with this mode has
    ``F(low) = (1 − coverage)/2`` and ``F(high) = (1 + coverage)/2``.

    Solved with scipy.optimize.root (Powell hybrid) on ``log((low − a)/w)``
    and ``log((b − high)/w)``, ``w = high − low``, from several starts.
    """
    from scipy import optimize

    w = high - low
    pl, ph = (1.0 - coverage) / 2.0, (1.0 + coverage) / 2.0

    def ends(theta):
        return low - w * math.exp(theta[0]), high + w * math.exp(theta[1])

    def residual(theta):
        if np.any(np.abs(theta) > 50):
            return np.array([1.0, 1.0])
        a, b = ends(theta)
        d = _three_point_dist(shape, a, mode, b)
        return np.array([float(d.cdf(low)) - pl, float(d.cdf(high)) - ph])

    best = None
    for start in ((-1.0, -1.0), (-2.0, -2.0), (0.0, 0.0), (-3.0, 0.0), (0.0, -3.0), (1.0, 1.0)):
        sol = optimize.root(residual, np.array(start), method="hybr", tol=1e-14)
        r = float(np.max(np.abs(residual(sol.x))))
        if best is None or r < best[0]:
            best = (r, sol.x)
        if r < 1e-11:
            break
    assert best is not None
    if best[0] > 1e-9:
        raise JudgementError(
            f"No {shape} distribution with mode {_fmt(mode)} has {_fmt(low)} and {_fmt(high)} "
            f"as its {pl:.3g} and {ph:.3g} quantiles (best residual {best[0]:.2g}). Check the "
            "three points and the coverage, or state the ends (coverage=1)."
        )
    return ends(best[1])


def from_three_points(
    low: float,
    mode: float,
    high: float,
    *,
    shape: Literal["pert", "triangular"] = "pert",
    coverage: float = 1.0,
    knots: int = 21,
    interpolation: Literal["linear", "pchip"] = "pchip",
    tolerance: float | None = None,
    max_knots: int = 400,
    name: str = "",
    units: str = "",
    author: str = "",
    rationale: str = "",
) -> Sketch:
    """The usual three-point estimate (PERT or triangular) as a sketch.

    ``shape="pert"`` is the PERT distribution of Malcolm et al. (1959) with
    the standard λ = 4: a Beta on ``[a, b]`` with ``α = 1 + 4(m − a)/(b − a)``,
    ``β = 1 + 4(b − m)/(b − a)`` (mean ``(a + 4m + b)/6``).
    ``shape="triangular"`` is the triangular distribution on ``[a, b]`` with
    mode ``m``.

    With ``coverage=1`` (the default) ``low`` and ``high`` are the ends
    ``a, b``. With ``coverage < 1`` they are the ``(1 − coverage)/2`` and
    ``(1 + coverage)/2`` quantiles (``coverage=0.9``: the 5 % and 95 %
    points), and the ends are solved: ``a < low`` and ``b > high`` such that
    the shape with the given mode has those two quantiles
    (``scipy.optimize.root``, Powell hybrid method; residual ≤ 1e-9 or a
    :class:`JudgementError`). The mass beyond ``low`` / ``high`` is then held
    by the shape's own tails down to the solved ends — a model choice not
    stated by the expert, which the summary flags.

    Knots sit at quantiles of the exact distribution (denser in the tails,
    plus the mode and the stated points exactly), refined until the check
    grid finds ``|ΔF| ≤ tolerance``; the achieved value is
    ``provenance["extra"]["max_abs_cdf_error"]``.

    Parameters
    ----------
    low, mode, high : float
        ``low ≤ mode ≤ high``, ``low < high``.
    shape : {"pert", "triangular"}
        PERT (Beta, λ = 4) or triangular.
    coverage : float
        Probability between ``low`` and ``high``, in (0, 1].
    knots : int
        Initial number of knots (≥ 3).
    interpolation : {"linear", "pchip"}
        How the sketch runs between knots.
    tolerance : float, optional
        Largest accepted ``|ΔF|``; ``None`` means ``1e-3``.
    max_knots : int
        Stop refining at this many knots.
    name, units, author, rationale : str
        Recorded on the sketch and in its provenance.

    Returns
    -------
    Sketch
        Provenance ``method="three-point estimate (pert)"`` or
        ``"... (triangular)"``; ``extra`` holds the three points, coverage,
        solved ends and achieved error.

    Examples
    --------
    >>> s = from_three_points(2, 5, 14)
    >>> round(s.mean(), 2)  # (2 + 4·5 + 14)/6
    6.0
    >>> s = from_three_points(2, 5, 14, coverage=0.9)
    >>> round(float(s.cdf(2)), 12), round(float(s.cdf(14)), 12)
    (0.05, 0.95)
    """
    lo = _finite(low, "low")
    m = _finite(mode, "mode")
    hi = _finite(high, "high")
    if not lo < hi:
        raise JudgementError(
            f"A three-point estimate needs low < high; got low={_fmt(lo)}, high={_fmt(hi)}. "
            "Swap them or widen the range."
        )
    if not lo <= m <= hi:
        raise JudgementError(
            f"The mode must lie between low and high; got low={_fmt(lo)}, mode={_fmt(m)}, "
            f"high={_fmt(hi)}. Revise the mode or the range."
        )
    _choice(shape, ("pert", "triangular"), "shape")
    _choice(interpolation, ("linear", "pchip"), "interpolation")
    cov = _finite(coverage, "coverage")
    if not 0 < cov <= 1:
        raise ValueError(
            f"coverage must lie in (0, 1]: the probability between low and high; got {cov!r}. "
            "Use 0.9 when low and high are the 5 % and 95 % points."
        )
    n0 = _count(knots, "knots", 3)
    cap = _count(max_knots, "max_knots", n0)
    tol = _tolerance(tolerance, DEFAULT_TOLERANCE)
    for label, text in (("name", name), ("units", units), ("author", author)):
        _text(text, label)
    _text(rationale, "rationale")
    if cov < 1:
        a, b = _solve_ends(shape, lo, m, hi, cov)
    else:
        a, b = lo, hi
    dist = _three_point_dist(shape, a, m, b)
    pl, ph = (1.0 - cov) / 2.0, (1.0 + cov) / 2.0
    pinned = {0.0: a, 1.0: b}
    pm = float(dist.cdf(m))
    u0 = _spread(0.0, 1.0, n0)
    extra_u = [pm] if 0 < pm < 1 else []
    if cov < 1:
        pinned.update({pl: lo, ph: hi})
        extra_u += [pl, ph]
    if 0 < pm < 1:
        pinned[pm] = m
    sk, achieved = _reknot_in_probability(
        lambda u: np.asarray(dist.ppf(u), dtype=float),
        np.r_[u0, extra_u],
        interpolation=interpolation,
        lower_tail=None,
        upper_tail=None,
        tolerance=tol,
        max_knots=cap,
        cdf=lambda x: np.asarray(dist.cdf(x), dtype=float),
        pinned=pinned,
    )
    _warn_short(achieved, tol, cap, "from_three_points")
    extra: dict[str, Any] = {
        "low": lo,
        "mode": m,
        "high": hi,
        "coverage": cov,
        "shape": shape,
        "ends": [a, b],
        "tolerance": tol,
        "max_abs_cdf_error": achieved,
    }
    if cov < 1:
        extra["stated_quantiles"] = [[pl, lo], [ph, hi]]
        extra["ends_method"] = (
            "ends solved so that the shape with the stated mode has the stated points as its "
            f"{pl:.3g} and {ph:.3g} quantiles (scipy.optimize.root, hybr)"
        )
        extra["ends_stated"] = [False, False]
    prov: dict[str, Any] = {"method": f"three-point estimate ({shape})", "extra": extra}
    if author:
        prov["author"] = author
    if rationale:
        prov["rationale"] = rationale
    return sk.replace(name=name, units=units, provenance=prov)


# ---------------------------------------------------------------- pooling


def _read_pool_inputs(sketches, weights, names):
    try:
        sks = list(sketches)
    except TypeError:
        raise TypeError(
            f"sketches must be a sequence of Sketch values; got {type(sketches).__name__}."
        ) from None
    if not sks:
        raise ValueError("pool() needs at least one sketch; got none.")
    for i, s in enumerate(sks):
        if not isinstance(s, Sketch):
            raise TypeError(
                f"sketches[{i}] must be a Sketch; got {type(s).__name__}. Build one with "
                "Sketch(...) or Sketch.from_quantiles(...)."
            )
    k = len(sks)
    if weights is None:
        w = np.full(k, 1.0 / k)
    else:
        try:
            w = np.asarray(weights, dtype=float)
        except (TypeError, ValueError):
            raise ValueError(f"weights must be numbers; got {weights!r}.") from None
        if w.shape != (k,):
            raise ValueError(
                f"weights must give one number per sketch; got shape {w.shape} for {k} sketches."
            )
        bad = np.flatnonzero(~np.isfinite(w) | (w < 0))
        if bad.size:
            i = int(bad[0])
            raise ValueError(
                f"weights must be finite and non-negative; got weights[{i}]={float(w[i])!r}. Use 0 "
                "to leave a sketch out."
            )
        total = float(w.sum())
        if not total > 0:
            raise ValueError(
                "weights must not all be zero; got a sum of 0. Give at least one sketch a "
                "positive weight."
            )
        w = w / total
    if names is None:
        labels = [s.name or f"expert {i + 1}" for i, s in enumerate(sks)]
    else:
        labels = list(names)
        if len(labels) != k:
            raise ValueError(f"names must give one name per sketch; got {len(labels)} for {k}.")
        for i, nm in enumerate(labels):
            if not isinstance(nm, str):
                raise TypeError(f"names[{i}] must be a str; got {nm!r}.")
    units = {s.units for s, wi in zip(sks, w, strict=True) if wi > 0 and s.units}
    if len(units) > 1:
        raise ValueError(
            f"The sketches are in different units {sorted(units)}; pooling needs one unit. "
            "Convert them first."
        )
    return sks, w, labels, (units.pop() if units else "")


def _exp_side(sk: Sketch, side: int) -> tuple[float, float, float] | None:
    """(edge, scale, mass) of an exponential tail holding mass, else None."""
    tail = sk.lower_tail if side == 0 else sk.upper_tail
    mass = sk.tail_mass[side]
    if mass > 0 and isinstance(tail, ExponentialTail):
        edge = float(sk.x[0] if side == 0 else sk.x[-1])
        return edge, float(sk.tail_scales[side]), mass  # type: ignore[arg-type]
    return None


def _same(a: float, b: float) -> bool:
    return math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-300)


def _linear_pool(sks, w, tol, max_knots):
    interp = "pchip" if any(s.interpolation == "pchip" for s in sks) else "linear"

    def cdf(x):
        return sum(wi * np.asarray(s.cdf(x), dtype=float) for s, wi in zip(sks, w, strict=True))

    def cdf_left(x):
        return sum(
            wi * (np.asarray(s.cdf(x), dtype=float) - _atom_mass_at(s, x))
            for s, wi in zip(sks, w, strict=True)
        )

    def pdf(x):
        return sum(wi * np.asarray(s.pdf(x), dtype=float) for s, wi in zip(sks, w, strict=True))

    bps = []
    for s in sks:
        bps.extend(s.x.tolist())
        lo, hi = s.support
        bps.extend(v for v in (lo, hi) if math.isfinite(v))
    bps_arr = np.unique(np.asarray(bps, dtype=float))
    tails: list[Tail | None] = [None, None]
    exact = True
    tail_bound = 0.0
    for side in (0, 1):
        exps = [e for e in (_exp_side(s, side) for s in sks) if e is not None]
        if not exps:
            continue
        edge, scale = exps[0][0], exps[0][1]
        others_inside = all(
            (s.support[0] >= edge if side == 0 else s.support[1] <= edge)
            for s in sks
            if _exp_side(s, side) is None
        )
        if all(_same(e, edge) and _same(sc, scale) for e, sc, _ in exps) and others_inside:
            tails[side] = ExponentialTail(scale)
            keep = bps_arr >= edge if side == 0 else bps_arr <= edge
            bps_arr = bps_arr[keep]
            continue
        exact = False
        far_scale = max(sc for _, sc, _ in exps)
        x_end = float(bps_arr[0] if side == 0 else bps_arr[-1])
        step = far_scale
        while True:
            x_far = x_end - step if side == 0 else x_end + step
            left_mass = float(cdf(np.array([x_far]))[0])
            mass = left_mass if side == 0 else 1.0 - left_mass
            if mass <= tol / 2:
                break
            step *= 2.0
        f = float(pdf(np.array([x_far]))[0])
        tails[side] = ExponentialTail(mass / f)
        tail_bound = max(tail_bound, mass)
        bps_arr = np.unique(np.r_[bps_arr, x_far])
    sk, measured = _reknot_in_x(
        cdf,
        cdf_left,
        bps_arr,
        interpolation=interp,
        lower_tail=tails[0],
        upper_tail=tails[1],
        snap=(tails[0] is None, tails[1] is None),
        tolerance=tol if not exact or interp == "pchip" else 1.0,  # exact: no bisection
        max_knots=max_knots,
    )
    exact = exact and interp == "linear"
    return sk, max(measured, tail_bound), exact


def _left_right_quantiles(s: Sketch, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    left = np.asarray(s.ppf(u), dtype=float)
    right = left.copy()
    p = s.p
    idx = np.searchsorted(p, u, side="right") - 1  # last knot with p ≤ u
    hit = (idx >= 0) & (p[np.clip(idx, 0, p.size - 1)] == u)
    right[hit] = s.x[idx[hit]]
    right = np.maximum(right, left)
    return left, right


def _quantile_pool(sks, w, tol, max_knots):
    interp = "pchip" if any(s.interpolation == "pchip" for s in sks) else "linear"

    def q_left(u):
        return sum(wi * _left_right_quantiles(s, u)[0] for s, wi in zip(sks, w, strict=True))

    def q_right(u):
        return sum(wi * _left_right_quantiles(s, u)[1] for s, wi in zip(sks, w, strict=True))

    ends = []
    tails: list[Tail | None] = [None, None]
    exact = interp == "linear"
    checks = [0.0, 0.0]
    for side in (0, 1):
        exps = [_exp_side(s, side) for s in sks]
        with_mass = [e for e in exps if e is not None]
        if not with_mass:
            ends.append(0.0 if side == 0 else 1.0)
            if any(
                isinstance(s.lower_tail if side == 0 else s.upper_tail, BoundedTail)
                and s.tail_mass[side] > 0
                and (s.lower_tail if side == 0 else s.upper_tail).density == "taper"
                for s in sks
            ):
                exact = False
            continue
        # an average of exponential quantile functions x_k + s_k log(u / m_k) is again
        # one, with scale Σ w_k s_k, where every sketch is in its exponential tail
        scale = float(sum(wi * e[1] for e, wi in zip(exps, w, strict=True) if e is not None))
        m_min = min(e[2] for e in with_mass)
        if len(with_mass) == len(sks):
            u_out = m_min
        else:
            u_out = min(tol, m_min)
            exact = False
        if len({e[2] for e in with_mass}) > 1:
            exact = False
        tails[side] = ExponentialTail(scale)
        ends.append(u_out if side == 0 else 1.0 - u_out)
        checks[side] = u_out
    u = np.unique(np.concatenate([s.p for s in sks] + [np.asarray(ends)]))
    u = u[(u >= ends[0]) & (u <= ends[1])]
    sk, measured = _reknot_in_probability(
        q_left,
        u,
        interpolation=interp,
        lower_tail=tails[0],
        upper_tail=tails[1],
        tolerance=tol,
        max_knots=max_knots,
        right_quantile=q_right,
        tail_check=(checks[0], checks[1]),
    )
    return sk, measured, exact


def pool(
    sketches: Sequence[Sketch],
    *,
    weights: Sequence[float] | None = None,
    method: Literal["linear", "quantile"] = "linear",
    names: Sequence[str] | None = None,
    tolerance: float | None = None,
    max_knots: int = 5000,
    name: str = "",
) -> Sketch:
    """Pool several experts' sketches into one.

    ``method="linear"`` — the linear opinion pool (Stone 1961):
    ``F(x) = Σ w_k F_k(x)``, a mixture. ``method="quantile"`` — quantile
    averaging (Lichtendahl, Grushka-Cockayne & Winkler 2013):
    ``Q(u) = Σ w_k Q_k(u)``; same mean as the linear pool, sharper.

    What is returned — always an ordinary :class:`~cdfsketch.Sketch`:

    * **Linear pool of linear sketches**: knots at the union of all knots,
      bounded-tail limits and support ends, two knots wherever the mixture
      jumps (atoms). This is **exact** when each side's exponential tails
      (those holding mass) share one edge and one scale and no other sketch
      has mass beyond that edge: the pooled tail is then
      ``ExponentialTail(scale)`` with the summed mass. Otherwise — a mixture
      of different exponential tails is not an exponential tail, and a taper
      tail is quadratic — the sketch is **re-knotted**: intervals are bisected
      until the check grid finds ``|ΔF| ≤ tolerance``; the knots reach out to
      a point beyond which the mixture leaves at most ``tolerance/2`` of mass,
      held by an exponential tail continuing the mixture's density (so the
      error there is at most that mass).
    * **Linear pool with any pchip sketch**: a pchip sketch re-knotted the
      same way (no exact mixture value is kept).
    * **Quantile average**: knots at the union of the sketches' knot
      probabilities, ``x = Σ w_k Q_k(u)`` (two knots at one ``u`` where a
      sketch has a zero-density gap). Exact for linear sketches whose tails
      are bounded-uniform or are all exponential with equal tail mass (the
      average of exponential quantile functions is exponential with scale
      ``Σ w_k s_k``). Otherwise re-knotted by bisection in ``u`` to the
      tolerance; where only some sketches have exponential tails the outer
      knot is at probability ``min(tolerance, tail mass)``.

    The achieved ``max_abs_cdf_error`` (0 up to rounding when exact) and
    ``exact`` are in ``provenance["extra"]``; ``provenance["method"]`` is
    ``"linear pool"`` or ``"quantile average"``; ``provenance["contributors"]``
    lists each sketch's name, normalised weight and
    ``summary={"mean", "median"}``.

    Parameters
    ----------
    sketches : sequence of Sketch
        Same units (or none stated).
    weights : sequence of float, optional
        Non-negative, sum > 0; normalised to sum 1. Default: equal.
    method : {"linear", "quantile"}
        Linear opinion pool or quantile averaging.
    names : sequence of str, optional
        Contributors' names; default each sketch's name or "expert k".
    tolerance : float, optional
        Largest accepted ``|ΔF|`` where re-knotting is needed; ``None`` means
        ``1e-4``.
    max_knots : int
        Stop refining at this many knots.
    name : str
        Name of the pooled quantity; default the sketches' common name.

    Examples
    --------
    >>> a = Sketch([0, 10], [0, 1])
    >>> b = Sketch([5, 15], [0, 1])
    >>> lin = pool([a, b])
    >>> lin.x.tolist(), lin.p.tolist()
    ([0.0, 5.0, 10.0, 15.0], [0.0, 0.25, 0.75, 1.0])
    >>> pool([a, b], method="quantile").x.tolist()
    [2.5, 12.5]
    >>> pool([a, b], weights=[1, -1])
    Traceback (most recent call last):
    ...
    ValueError: weights must be finite and non-negative; got weights[1]=-1.0. ...
    """
    sks, w, labels, units = _read_pool_inputs(sketches, weights, names)
    _choice(method, ("linear", "quantile"), "method")
    tol = _tolerance(tolerance, POOL_TOLERANCE)
    cap = _count(max_knots, "max_knots", 10)
    _text(name, "name")
    used = [(s, wi) for s, wi in zip(sks, w, strict=True) if wi > 0]
    us = [s for s, _ in used]
    uw = np.array([wi for _, wi in used])
    if method == "linear":
        sk, achieved, exact = _linear_pool(us, uw, tol, cap)
        label, source = "linear pool", "Stone 1961"
    else:
        sk, achieved, exact = _quantile_pool(us, uw, tol, cap)
        label, source = "quantile average", "Lichtendahl, Grushka-Cockayne & Winkler 2013"
    _warn_short(achieved, tol, cap, "pool")
    if not name:
        common = {s.name for s in sks}
        name = common.pop() if len(common) == 1 else ""
    contributors = [
        {
            "name": nm,
            "weight": float(wi),
            "summary": {"mean": s.mean(), "median": s.median()},
        }
        for s, wi, nm in zip(sks, w, labels, strict=True)
    ]
    extra = {
        "method_source": source,
        "exact": bool(exact),
        "tolerance": tol,
        "max_abs_cdf_error": achieved,
    }
    prov = {"method": label, "contributors": contributors, "extra": extra}
    return sk.replace(name=name, units=units, provenance=prov)
