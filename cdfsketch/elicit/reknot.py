"""Target distribution → knots: the one way a smooth or mixed CDF becomes a sketch (numpy only).

:func:`reknot` takes anything that behaves like a distribution — ``cdf`` and
``ppf`` (required), and where present ``pdf``, ``support`` (a tuple or a
scipy-style method) and ``atoms`` (objects with ``x`` and ``mass``, or
``(x, mass)`` pairs) — so a scipy frozen distribution, a fitted candidate, a
sketch or an ECDF-like model all work. :func:`from_distribution` is the same
with the provenance of a user's "build me a sketch of this distribution".
Pools use the two private engines below directly (their targets are given by
a quantile function with gaps, or by a CDF with known jumps).

Accuracy contract
-----------------
Knots are placed at quantiles of the target (denser towards both ends, plus
the edges of every atom and every finite support end) and refined by
bisection in probability until the largest ``|F_sketch − F_target|`` found on
a dense check grid is at most ``tolerance``: 16 points inside every knot
interval in probability (the distance of ``u`` from ``[F(Q(u)⁻), F(Q(u))]``)
and 16 in ``x`` (``|F_sketch(x) − F_target(x)|``), plus a geometric grid
reaching into each exponential tail. The achieved maximum is stored as
``provenance["extra"]["max_abs_cdf_error"]``. It is a measured maximum on
that grid, not a proof between grid points; beyond the outer knots the error
is at most the tail mass left there (``tail_mass``, default
``min(tolerance, 1e-3)``), since both CDFs lie in ``[0, t]`` (``[1 − t, 1]``).
The tests check the contract independently on a dense grid against scipy.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any, Literal

import numpy as np

from .._validate import JudgementError, KnotError, fail, number
from ..sketch import Sketch
from ..tails import BoundedTail, ExponentialTail, Tail
from ._common import (
    DEFAULT_TOLERANCE,
    atom_mass_at,
    clean_knots,
    read_choice,
    read_count,
    read_labels,
    read_tolerance,
    spread,
    warn_short,
)

__all__ = ["from_distribution", "reknot"]

_CHECK_POINTS = 16
_TAU = np.linspace(0.0, 1.0, _CHECK_POINTS + 2)[1:-1]


def _gap_to_interval(sk: Sketch, x: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Distance of ``u`` from ``[F(x-), F(x)]``: 0 when ``x`` is a valid u-quantile."""
    right = np.asarray(sk.cdf(x), dtype=float)
    left = right - atom_mass_at(sk, x)
    return np.maximum(np.maximum(left - u, u - right), 0.0)


def _in_probability(
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
        x, p = clean_knots(x, p)
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


def _in_x(
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
        x, p = clean_knots(x, p)
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


# ---------------------------------------------------------------- the target's shape


def _support_of(dist: Any) -> tuple[float, float]:
    supp = getattr(dist, "support", None)
    if callable(supp):
        try:
            supp = supp()
        except (TypeError, ValueError):
            supp = None
    if supp is not None:
        try:
            lo, hi = supp
            return float(lo), float(hi)
        except (TypeError, ValueError):
            pass
    lo = float(np.asarray(dist.ppf(0.0), dtype=float))
    hi = float(np.asarray(dist.ppf(1.0), dtype=float))
    return lo, hi


def _atoms_of(dist: Any) -> list[tuple[float, float]]:
    """``(x, mass)`` of the target's point masses, from its ``atoms`` if it states them."""
    atoms = getattr(dist, "atoms", None)
    if callable(atoms):
        atoms = atoms()
    out = []
    for a in atoms or ():
        x, m = (a.x, a.mass) if hasattr(a, "x") else a
        if float(m) > 0:
            out.append((float(x), float(m)))
    return out


def _check_distribution(dist: Any, what: str) -> None:
    for attr in ("ppf", "cdf"):
        if not callable(getattr(dist, attr, None)):
            raise TypeError(
                f"{what} must have callable ppf and cdf methods (a scipy frozen distribution, "
                f"a fit candidate, a sketch); got {type(dist).__name__} without {attr!r}."
            )
    med = np.asarray(dist.ppf(np.array([0.25, 0.5, 0.75])), dtype=float)
    if med.shape != (3,) or not np.all(np.isfinite(med)):
        raise fail(
            f"{what}.ppf must return finite values for probabilities 0.25, 0.5, 0.75",
            repr(med),
            "Pass a proper distribution (e.g. a scipy frozen distribution).",
            field=what,
        )
    if not med[2] > med[0]:
        raise fail(
            f"{what} must have some spread",
            f"ppf(0.25) = ppf(0.75) = {float(med[0])!r}",
            "A point mass is not a sketch; use Sketch([x, x], [0, 1]) for one.",
            field=what,
        )


def _density_at(dist: Any, x: float) -> float | None:
    pdf = getattr(dist, "pdf", None)
    if not callable(pdf):
        return None
    f = float(np.asarray(pdf(x), dtype=float))
    return f if math.isfinite(f) and f > 0 else None


def reknot(
    model: Any,
    *,
    knots: int = 20,
    interpolation: Literal["linear", "pchip"] = "pchip",
    tail: Literal["exponential", "bounded"] = "exponential",
    tolerance: float | None = None,
    tail_mass: float | None = None,
    max_knots: int = 400,
    pinned: Mapping[float, float] | None = None,
    name: str = "",
    units: str = "",
) -> Sketch:
    """A sketch with knots at quantiles of ``model``, within ``tolerance`` of its CDF.

    The one "target distribution → knots" function (see the module notes for
    the accuracy contract). Starts from ``knots`` quantiles, denser towards
    both ends, plus two knots at every atom the model states; bisects in
    probability wherever the check grid finds ``|F_sketch − F_model| >
    tolerance`` until it passes or ``max_knots`` is reached (then a
    ``UserWarning`` says what was achieved).

    Ends: a finite end of the support becomes a knot at ``p = 0`` or ``1``.
    On an infinite side the outer knot is at the quantile ``t = tail_mass``
    (``1 − t``) and the mass ``t`` beyond goes to

    * ``tail="exponential"``: ``ExponentialTail(scale=t / pdf(x_outer))``,
      continuing the model's density (the sketch's default tail if the model
      has no ``pdf``);
    * ``tail="bounded"``: ``BoundedTail(ppf(t / 1000), density="taper")``.

    Parameters
    ----------
    model : object with ``cdf`` and ``ppf``
        Optionally ``pdf``, ``support`` (tuple or method) and ``atoms``.
    knots : int
        Initial number of knots (≥ 3).
    interpolation : {"linear", "pchip"}
        How the sketch runs between knots.
    tail : {"exponential", "bounded"}
        What holds the mass on an infinite side.
    tolerance : float, optional
        Largest accepted ``|ΔF|``; ``None`` means ``1e-3``.
    tail_mass : float, optional
        Probability left beyond an outer knot on an infinite side; ``None``
        means ``min(tolerance, 1e-3)``.
    max_knots : int
        Stop refining at this many knots.
    pinned : mapping, optional
        Probability → value pairs that must be knots exactly (e.g. a mode).
    name, units : str
        Recorded on the sketch.

    Returns
    -------
    Sketch
        Provenance ``method="re-knotted from a distribution"``; ``extra``
        holds ``tolerance``, the achieved ``max_abs_cdf_error``, ``knots`` and
        ``tail_mass``.

    Examples
    --------
    >>> from scipy import stats
    >>> s = reknot(stats.gamma(2.0), tolerance=1e-4)
    >>> s.provenance["extra"]["max_abs_cdf_error"] <= 1e-4
    True
    >>> grid = np.linspace(0, 15, 3001)
    >>> bool(np.max(np.abs(s.cdf(grid) - stats.gamma(2.0).cdf(grid))) <= 1e-4)
    True
    """
    _check_distribution(model, "model")
    n0 = read_count(knots, "knots", 3)
    cap = read_count(max_knots, "max_knots", n0)
    read_choice(tail, ("exponential", "bounded"), "tail")
    read_choice(interpolation, ("linear", "pchip"), "interpolation")
    tol = read_tolerance(tolerance, DEFAULT_TOLERANCE)
    t = (
        min(tol, 1e-3)
        if tail_mass is None
        else number(tail_mass, field="tail_mass", low=0.0, high=0.5, low_open=True, high_open=True)
    )
    read_labels(name, units)
    lo, hi = _support_of(model)
    u_lo = 0.0 if math.isfinite(lo) else t
    u_hi = 1.0 if math.isfinite(hi) else 1.0 - t

    def quantile(u: np.ndarray) -> np.ndarray:
        return np.asarray(model.ppf(u), dtype=float)

    def cdf(x: np.ndarray) -> np.ndarray:
        return np.asarray(model.cdf(x), dtype=float)

    pins = {float(k): float(v) for k, v in (pinned or {}).items()}
    if math.isfinite(lo):
        pins.setdefault(0.0, lo)
    if math.isfinite(hi):
        pins.setdefault(1.0, hi)
    for ax, am in _atoms_of(model):
        right = float(cdf(np.array([ax]))[0])
        for edge in (right - am, right):
            if u_lo <= edge <= u_hi:
                pins[edge] = ax
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
            f = _density_at(model, x_out)
            tails[i] = ExponentialTail(mass / f) if f else ExponentialTail()
    u0 = np.r_[spread(u_lo, u_hi, n0), [u for u in pins if u_lo <= u <= u_hi]]
    sk, achieved = _in_probability(
        quantile,
        u0,
        interpolation=interpolation,
        lower_tail=tails[0],
        upper_tail=tails[1],
        tolerance=tol,
        max_knots=cap,
        cdf=cdf,
        pinned=pins,
        tail_check=(u_lo, 1.0 - u_hi),
    )
    warn_short(achieved, tol, cap, "reknot")
    extra = {
        "tolerance": tol,
        "max_abs_cdf_error": achieved,
        "knots": len(sk),
        "tail_mass": [u_lo, 1.0 - u_hi],
    }
    return sk.replace(
        name=name,
        units=units,
        provenance={"method": "re-knotted from a distribution", "extra": extra},
    )


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

    :func:`reknot` with a user's provenance: ``method="from distribution"``
    and ``extra["source"]`` (the repr of ``dist``). See :func:`reknot` for the
    ends, the tails and the accuracy contract; the error beyond the outer
    knot is at most ``min(tolerance, 1e-3)``.

    Parameters
    ----------
    dist : object with ``ppf`` and ``cdf``
        A distribution, e.g. ``scipy.stats.gamma(2.0)``.
    knots, tail, interpolation, tolerance, max_knots, name, units
        As in :func:`reknot`.

    Returns
    -------
    Sketch

    Examples
    --------
    >>> from scipy import stats
    >>> s = from_distribution(stats.norm(10, 2))
    >>> s.provenance["extra"]["max_abs_cdf_error"] <= 1e-3
    True
    >>> round(s.mean(), 2), round(s.std(), 1)
    (10.0, 2.0)
    """
    _check_distribution(dist, "dist")
    sk = reknot(
        dist,
        knots=knots,
        tail=tail,
        interpolation=interpolation,
        tolerance=tolerance,
        max_knots=max_knots,
        name=name,
        units=units,
    )
    extra = dict(sk.provenance["extra"])
    extra["source"] = repr(dist)[:200]
    del extra["tail_mass"]
    return sk.replace(provenance={"method": "from distribution", "extra": extra})
