"""Pools of several experts' sketches: the linear opinion pool and quantile averaging.

numpy only. See :func:`pool` for when the result is exact and when it is
re-knotted (with the achieved error recorded).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Literal

import numpy as np

from .._frozen import freeze
from .._validate import JudgementError, fail, first_bad, values
from ..sketch import Sketch
from ..tails import BoundedTail, ExponentialTail, Tail
from ._common import (
    POOL_TOLERANCE,
    atom_mass_at,
    read_choice,
    read_count,
    read_text,
    read_tolerance,
    warn_short,
)
from .reknot import _in_probability, _in_x

__all__ = ["pool"]


def _read_pool_inputs(sketches, weights, names):
    try:
        sks = list(sketches)
    except TypeError:
        raise TypeError(
            f"sketches must be a sequence of Sketch values; got {type(sketches).__name__}."
        ) from None
    if not sks:
        raise fail(
            "pool() needs at least one sketch", "none", "Pass a list of sketches.",
            error=JudgementError, field="sketches",
        )  # fmt: skip
    for i, s in enumerate(sks):
        if not isinstance(s, Sketch):
            raise TypeError(
                f"sketches[{i}] must be a Sketch; got {type(s).__name__}. Build one with "
                "Sketch(...) or from_quantiles(...)."
            )
    k = len(sks)
    if weights is None:
        w = np.full(k, 1.0 / k)
    else:
        w, _ = values(weights, field="weights", error=JudgementError)
        if w.shape != (k,):
            raise fail(
                "weights must give one number per sketch", f"shape {w.shape} for {k} sketches",
                "Pass one weight per sketch.", error=JudgementError, field="weights",
            )  # fmt: skip
        i = first_bad(~np.isfinite(w) | (w < 0))
        if i is not None:
            raise fail(
                "weights must be finite and non-negative", f"weights[{i}]={float(w[i])!r}",
                "Use 0 to leave a sketch out.", error=JudgementError, field="weights", index=i,
                value=float(w[i]),
            )  # fmt: skip
        total = float(w.sum())
        if not total > 0:
            raise fail(
                "weights must not all be zero", "a sum of 0",
                "Give at least one sketch a positive weight.", error=JudgementError,
                field="weights",
            )  # fmt: skip
        w = w / total
    if names is None:
        labels = [s.name or f"expert {i + 1}" for i, s in enumerate(sks)]
    else:
        labels = list(names)
        if len(labels) != k:
            raise fail(
                "names must give one name per sketch", f"{len(labels)} for {k}",
                "Pass one name per sketch.", error=JudgementError, field="names",
            )  # fmt: skip
        for i, nm in enumerate(labels):
            read_text(nm, f"names[{i}]")
    units = {s.units for s, wi in zip(sks, w, strict=True) if wi > 0 and s.units}
    if len(units) > 1:
        raise fail(
            "pooling needs one unit", f"sketches in different units {sorted(units)}",
            "Convert them first.", error=JudgementError, field="sketches",
        )  # fmt: skip
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
            wi * (np.asarray(s.cdf(x), dtype=float) - atom_mass_at(s, x))
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
    sk, measured = _in_x(
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
    sk, measured = _in_probability(
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
    cdfsketch._validate.JudgementError: weights must be finite and non-negative; got ...
    """
    sks, w, labels, units = _read_pool_inputs(sketches, weights, names)
    read_choice(method, ("linear", "quantile"), "method")
    tol = read_tolerance(tolerance, POOL_TOLERANCE)
    cap = read_count(max_knots, "max_knots", 10)
    read_text(name, "name")
    used = [(s, wi) for s, wi in zip(sks, w, strict=True) if wi > 0]
    us = [s for s, _ in used]
    uw = np.array([wi for _, wi in used])
    if method == "linear":
        sk, achieved, exact = _linear_pool(us, uw, tol, cap)
        label, source = "linear pool", "Stone 1961"
    else:
        sk, achieved, exact = _quantile_pool(us, uw, tol, cap)
        label, source = "quantile average", "Lichtendahl, Grushka-Cockayne & Winkler 2013"
    warn_short(achieved, tol, cap, "pool")
    if not name:
        common = {s.name for s in sks}
        name = common.pop() if len(common) == 1 else ""
    contributors = [
        freeze(
            {
                "name": nm,
                "weight": float(wi),
                "summary": {"mean": s.mean(), "median": s.median()},
            }
        )
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
