"""The constraint layer: pure functions on knot arrays.

A valid set of knots ``(x, p)`` describes a CDF through the points
``F(x[i]) = p[i]``:

* ``x`` and ``p`` are 1-D, finite, of equal length ≥ 2;
* ``x`` is non-decreasing and two neighbours may share an ``x`` (a jump, that
  is a point mass of size ``p[i+1] - p[i] > 0``) but never three;
* ``p`` is non-decreasing and inside ``[0, 1]``;
* the knots span a range: ``x[-1] > x[0]``;
* magnitudes stay moderate: ``|x| ≤ MAX_ABS_X`` (1e100) and distinct positions
  at least ``MIN_SPACING`` (1e-100) apart (rescale the units otherwise); both
  come from :mod:`cdfsketch._limits`, the one limit table;
  Knots a few rounding steps apart at their magnitude (``1e15`` and
  ``1e15 + 0.25``) are accepted: every operation, the sampler included,
  handles pieces that span only a few floating-point numbers.

:func:`check_knots` enforces this strictly (and says which index breaks it and
how to repair it); :func:`project_knots` repairs any finite arrays to the
nearest valid knots; :func:`clamp_knot` moves one knot while keeping all the
others where they are, which is what a drag in the editor needs.

Only numpy is imported here.
"""

from __future__ import annotations

import numpy as np

from ._limits import MAX_ABS_X, MAX_KNOTS, MIN_SPACING
from ._validate import KnotError, fail, first_bad, integer, number, values

__all__ = [
    "MAX_ABS_X",
    "MAX_KNOTS",
    "MIN_SPACING",
    "KnotError",
    "check_knots",
    "clamp_knot",
    "insert_knot",
    "min_gap",
    "project_knots",
]

#: Relative gap kept between a dragged knot and its neighbours, as a fraction
#: of the knots' x range, so a drag never creates a jump by accident.
MIN_GAP_FRACTION = 1e-9

_REPAIR = "Sort the knots by x, or repair them with cdfsketch.project_knots()."


def _as_knot_array(raw: object, name: str) -> np.ndarray:
    """Return ``raw`` as a 1-D finite float array or raise a :class:`KnotError`."""
    arr, _ = values(raw, field=f"Knot {name}", nan=True, error=KnotError)
    if arr.ndim != 1:
        raise fail(
            f"Knot {name} must be a 1-D sequence",
            f"an array of shape {arr.shape}",
            f"Pass one value per knot, e.g. np.ravel({name}).",
            error=KnotError,
            field=name,
            value=raw,
        )
    i = first_bad(~np.isfinite(arr))
    if i is not None:
        count = int(np.sum(~np.isfinite(arr)))
        raise fail(
            f"Knot {name} must be finite",
            f"{name}[{i}]={float(arr[i])!r} ({count} non-finite value(s) in all)",
            "Remove or replace them; an unbounded end is described by a tail, not by an "
            "infinite knot.",
            error=KnotError,
            field=name,
            index=i,
            value=float(arr[i]),
        )
    return arr


def _as_pair(x: object, p: object) -> tuple[np.ndarray, np.ndarray]:
    xa = _as_knot_array(x, "x")
    pa = _as_knot_array(p, "p")
    if xa.shape != pa.shape:
        raise fail(
            "Knot x and p must have the same length",
            f"{xa.size} x values and {pa.size} p values",
            "Give one probability per knot.",
            error=KnotError,
            field="p",
        )
    if xa.size < 2:
        raise fail(
            "A sketch needs at least 2 knots",
            str(xa.size),
            "Add a knot at each end of the range you want to describe.",
            error=KnotError,
            field="x",
        )
    if xa.size > MAX_KNOTS:
        raise fail(
            f"A sketch has at most {MAX_KNOTS:,} knots",
            f"{xa.size:,}",
            "Thin the knots (e.g. cdfsketch.from_data with a knot budget).",
            error=KnotError,
            field="x",
        )
    return xa, pa


def _check_x(xa: np.ndarray) -> None:
    big = first_bad(np.abs(xa) > MAX_ABS_X)
    if big is not None:
        raise fail(
            f"Knot positions must satisfy |x| ≤ {MAX_ABS_X:g}",
            f"x[{big}]={float(xa[big])!r}",
            "Express the quantity in larger units (e.g. millions) so the numbers stay moderate.",
            error=KnotError,
            field="x",
            index=big,
            value=float(xa[big]),
        )


def check_knots(x: object, p: object) -> tuple[np.ndarray, np.ndarray]:
    """Check knots strictly and return them as float arrays.

    Parameters
    ----------
    x, p : array_like
        Knot positions and cumulative probabilities, one of each per knot.

    Returns
    -------
    x, p : ndarray
        Fresh float64 copies of the knots.

    Raises
    ------
    KnotError
        Naming the first index that breaks a rule, the values found there and
        the remedy.

    Examples
    --------
    >>> x, p = check_knots([0, 1, 2], [0, 0.4, 1])
    >>> check_knots([0, 1, 2], [0, 0.6, 0.5])
    Traceback (most recent call last):
    ...
    cdfsketch._validate.KnotError: Knot probabilities must be non-decreasing; got p[2]=0.5 ...
    """
    xa, pa = _as_pair(x, p)
    xa = xa.copy()
    pa = pa.copy()

    def bad(must: str, found: str, remedy: str, field: str, i: int, value: float) -> KnotError:
        return fail(must, found, remedy, error=KnotError, field=field, index=i, value=value)

    i = first_bad((pa < 0) | (pa > 1))
    if i is not None:
        raise bad(
            "Knot probabilities must lie in [0, 1]",
            f"p[{i}]={float(pa[i])!r}",
            "Clip them, or repair the knots with cdfsketch.project_knots().",
            "p",
            i,
            float(pa[i]),
        )
    dx = np.diff(xa)
    i = first_bad(dx < 0)
    if i is not None:
        i += 1
        raise bad(
            "Knot positions must be non-decreasing",
            f"x[{i}]={float(xa[i])!r} < x[{i - 1}]={float(xa[i - 1])!r}",
            _REPAIR,
            "x",
            i,
            float(xa[i]),
        )
    dp = np.diff(pa)
    i = first_bad(dp < 0)
    if i is not None:
        i += 1
        raise bad(
            "Knot probabilities must be non-decreasing",
            f"p[{i}]={float(pa[i])!r} < p[{i - 1}]={float(pa[i - 1])!r}",
            _REPAIR,
            "p",
            i,
            float(pa[i]),
        )
    _check_x(xa)
    i = first_bad((dx > 0) & (dx < MIN_SPACING))
    if i is not None:
        i += 1
        raise bad(
            f"Distinct knot positions must be at least {MIN_SPACING:g} apart",
            f"x[{i}] - x[{i - 1}] = {float(dx[i - 1])!r}",
            "Express the quantity in smaller units, or make the two knots a jump (equal x).",
            "x",
            i,
            float(xa[i]),
        )
    tie = dx == 0
    i = first_bad(tie[1:] & tie[:-1])
    if i is not None:
        raise bad(
            "At most two knots may share an x (a jump)",
            f"x[{i}]=x[{i + 1}]=x[{i + 2}]={float(xa[i])!r}",
            "Keep only the lowest and highest p at that x.",
            "x",
            i,
            float(xa[i]),
        )
    i = first_bad(tie & (dp == 0))
    if i is not None:
        raise bad(
            "Two knots at the same x must make a jump (p must rise)",
            f"x[{i}]=x[{i + 1}]={float(xa[i])!r} with p[{i}]=p[{i + 1}]={float(pa[i])!r}",
            "Remove one of them.",
            "p",
            i + 1,
            float(pa[i]),
        )
    if not xa[-1] > xa[0]:
        raise bad(
            "Knots must span a range of x",
            f"all knots at x={float(xa[0])!r}",
            "Spread the knots over the range of the quantity (a point mass alone is not a sketch).",
            "x",
            0,
            float(xa[0]),
        )
    return xa, pa


def _pool_adjacent_violators(y: np.ndarray) -> np.ndarray:
    """Least-squares non-decreasing fit to ``y`` (equal weights).

    The classic pool-adjacent-violators algorithm (Ayer et al. 1955; Barlow et
    al. 1972); O(n) amortised.
    """
    n = y.size
    means = np.empty(n)
    counts = np.empty(n, dtype=np.intp)
    top = -1
    for v in y:
        top += 1
        means[top] = v
        counts[top] = 1
        while top > 0 and means[top - 1] > means[top]:
            total = counts[top - 1] + counts[top]
            means[top - 1] = (means[top - 1] * counts[top - 1] + means[top] * counts[top]) / total
            counts[top - 1] = total
            top -= 1
    return np.repeat(means[: top + 1], counts[: top + 1])


def project_knots(x: object, p: object) -> tuple[np.ndarray, np.ndarray]:
    """Turn any finite knot arrays into the nearest valid knots.

    The knots are sorted by ``x`` (ties by ``p``; positions closer than
    :data:`MIN_SPACING` are merged into one), then ``p`` is replaced by
    its least-squares non-decreasing fit (pool adjacent violators, the L2
    isotonic projection) clipped to ``[0, 1]``. Where more than two knots share
    an ``x`` only the outer two are kept; where two knots share both ``x`` and
    ``p`` one is kept. The result passes :func:`check_knots` and projecting it
    again returns it unchanged.

    Parameters
    ----------
    x, p : array_like
        Finite knot positions and probabilities of equal length ≥ 2.

    Returns
    -------
    x, p : ndarray
        Valid knots (possibly fewer than given, see above).

    Raises
    ------
    KnotError
        For non-finite or non-numeric input, unequal lengths, fewer than 2
        knots, or when all knots share one ``x``.

    Examples
    --------
    >>> x, p = project_knots([2, 0, 1], [0.3, 0.0, 0.5])
    >>> x.tolist(), p.tolist()
    ([0.0, 1.0, 2.0], [0.0, 0.4, 0.4])
    """
    xa, pa = _as_pair(x, p)
    _check_x(xa)
    order = np.lexsort((pa, xa))
    xa = xa[order]
    # positions closer than MIN_SPACING become one position (a jump)
    close = np.r_[False, np.diff(xa) < MIN_SPACING]
    if close.any():
        xa = xa.copy()
        for i in np.flatnonzero(close):
            xa[i] = xa[i - 1]
    pa = np.clip(_pool_adjacent_violators(pa[order]), 0.0, 1.0)
    if not xa[-1] > xa[0]:
        raise fail(
            "Knots must span a range of x",
            f"all knots at x={float(xa[0])!r}",
            "Spread the knots over the range of the quantity.",
            error=KnotError,
            field="x",
            value=float(xa[0]),
        )
    # keep the first and last knot of each run of equal x, and drop zero-mass jumps
    same_prev = np.r_[False, xa[1:] == xa[:-1]]
    same_next = np.r_[xa[1:] == xa[:-1], False]
    keep = ~(same_prev & same_next)
    xa, pa = xa[keep], pa[keep]
    dup = np.r_[False, (xa[1:] == xa[:-1]) & (pa[1:] == pa[:-1])]
    return xa[~dup].copy(), pa[~dup].copy()


def min_gap(x: np.ndarray) -> float:
    """Smallest x distance a drag keeps from a neighbouring knot.

    It is :data:`MIN_GAP_FRACTION` of the knots' x range, and never less than
    four floating-point steps there nor :data:`MIN_SPACING`.

    Examples
    --------
    >>> min_gap(np.array([0.0, 10.0]))
    1e-08
    """
    span = float(x[-1] - x[0])
    scale = max(abs(float(x[0])), abs(float(x[-1])), span)
    return max(MIN_GAP_FRACTION * span, 4 * float(np.spacing(scale)), MIN_SPACING)


def step_from(a: float, gap: float, up: bool) -> float:
    """The double nearest ``a ± gap`` whose computed distance from ``a`` is at least ``gap``."""
    v = a + gap if up else a - gap
    for _ in range(4):
        if (v - a if up else a - v) >= gap:
            break
        v = float(np.nextafter(v, np.inf if up else -np.inf))
    return v


def clamp_knot(
    x: object,
    p: object,
    i: int,
    *,
    new_x: float | None = None,
    new_p: float | None = None,
    x_low: float = -MAX_ABS_X,
    x_high: float = MAX_ABS_X,
    min_dx: float = 0.0,
    min_dp: float = 0.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Move knot ``i`` towards ``(new_x, new_p)``, clamped inside every knot rule.

    No other knot moves, and the result always passes :func:`check_knots`
    (the call never raises for finite input). The new ``x`` stays between the
    neighbours' by ``max(min_dx, min_gap(x))`` when there is room for that,
    by :func:`min_gap` when there is not, and stays where it is when even
    that does not fit; a knot that already shares its neighbour's ``x`` (a
    jump) may stay there. ``p`` stays within ``[p[i-1], p[i+1]]`` and
    ``[0, 1]``, ``min_dp`` inside them when there is room; the two knots of a
    jump keep a positive step. ``x_low``/``x_high`` bound the end knots (a
    bounded tail's limit, for instance).

    Parameters
    ----------
    x, p : array_like
        Valid knots (checked).
    i : int
        Index of the knot to move; negative indices count from the end.
    new_x, new_p : float, optional
        Proposed position; ``None`` keeps the current value.
    x_low, x_high : float, optional
        Bounds for the first and last knot's ``x``.
    min_dx, min_dp : float, optional
        Gap kept from the neighbours in ``x`` and ``p`` when there is room
        (an editor passes a visible gap, e.g. a fraction of its axis span).

    Returns
    -------
    x, p : ndarray
        New knot arrays.

    Examples
    --------
    >>> x, p = clamp_knot([0, 1, 2], [0, 0.5, 1], 1, new_x=5.0, new_p=-1.0)
    >>> float(p[1]), bool(x[1] < 2)
    (0.0, True)
    >>> x, p = clamp_knot([0, 1, 2], [0, 0.5, 1], 1, new_x=5.0, min_dx=0.1)
    >>> float(x[1])
    1.9
    """
    xa, pa = check_knots(x, p)
    n = xa.size
    i = integer(i, field="Knot index", low=-n, high=n - 1, error=KnotError, example="i=1") % n
    gap_x = number(min_dx, field="min_dx", low=0.0, error=KnotError)
    gap_p = number(min_dp, field="min_dp", low=0.0, high=1.0, error=KnotError)
    x_low = max(number(x_low, field="x_low", finite=False, error=KnotError), -MAX_ABS_X)
    x_high = min(number(x_high, field="x_high", finite=False, error=KnotError), MAX_ABS_X)
    if new_x is not None:
        xa[i] = _clamp_x(xa, i, number(new_x, field="new_x", error=KnotError), x_low, x_high, gap_x)
    if new_p is not None:
        target = number(new_p, field="new_p", finite=True, error=KnotError)
        lo = pa[i - 1] if i > 0 else 0.0
        hi = pa[i + 1] if i < n - 1 else 1.0
        if hi - lo >= 2 * gap_p:
            lo, hi = lo + gap_p if i > 0 else lo, hi - gap_p if i < n - 1 else hi
        pa[i] = min(max(target, lo), hi)
    # the two knots of a jump keep a positive step
    if i > 0 and xa[i] == xa[i - 1] and pa[i] <= pa[i - 1]:
        pa[i] = np.nextafter(pa[i - 1], 1.0)
    if i < n - 1 and xa[i] == xa[i + 1] and pa[i] >= pa[i + 1]:
        pa[i] = np.nextafter(pa[i + 1], 0.0)
    return xa, pa


def _clamp_x(
    xa: np.ndarray, i: int, target: float, x_low: float, x_high: float, gap: float
) -> float:
    """Where knot ``i`` may go towards ``target`` (see :func:`clamp_knot`)."""
    n = xa.size
    base = min_gap(xa)
    tie_lo = i > 0 and xa[i] == xa[i - 1]
    tie_hi = i < n - 1 and xa[i] == xa[i + 1]
    for g in (max(gap, base), base):
        lo = step_from(float(xa[i - 1]), g, up=True) if i > 0 else x_low
        hi = step_from(float(xa[i + 1]), g, up=False) if i < n - 1 else x_high
        if lo <= hi:
            break
    else:
        return float(xa[i])  # no room even for the smallest gap: stay
    if tie_lo and target < lo:  # half of a jump stays on its partner until pulled clear
        return float(xa[i - 1])
    if tie_hi and target > hi:
        return float(xa[i + 1])
    return min(max(target, lo), hi)


def insert_knot(
    x: np.ndarray, p: np.ndarray, xv: float, pv: float, *, limits: tuple[float, float]
) -> tuple[np.ndarray, np.ndarray]:
    """New knot arrays with ``(xv, pv)`` added, ``pv`` clamped between its neighbours.

    A knot at an existing ``x`` makes a jump (up to it when ``pv`` is below
    that knot's p). ``xv`` must lie strictly inside ``limits`` (the bounded
    tails' limits).

    Examples
    --------
    >>> nx, np_ = insert_knot(np.array([0.0, 2.0]), np.array([0.0, 1.0]), 1.0, 0.9,
    ...                       limits=(-np.inf, np.inf))
    >>> nx.tolist(), np_.tolist()
    ([0.0, 1.0, 2.0], [0.0, 0.9, 1.0])
    """
    lo, hi = limits
    if not lo < xv < hi:
        raise fail(
            f"A new knot must lie inside the bounded tails' limits ({lo:g}, {hi:g})",
            f"x={xv!r}",
            "Move the limit first.",
            error=KnotError,
            field="x",
            value=xv,
        )
    i = int(np.searchsorted(x, xv, side="right"))
    if i > 0 and x[i - 1] == xv and pv < p[i - 1]:
        i -= 1  # a jump up to the existing knot at this x
    p_lo = float(p[i - 1]) if i > 0 else 0.0
    p_hi = float(p[i]) if i < x.size else 1.0
    pv = min(max(pv, p_lo), p_hi)
    return np.insert(x, i, xv), np.insert(p, i, pv)
