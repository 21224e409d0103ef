"""The constraint layer: pure functions on knot arrays.

A valid set of knots ``(x, p)`` describes a CDF through the points
``F(x[i]) = p[i]``:

* ``x`` and ``p`` are 1-D, finite, of equal length ≥ 2;
* ``x`` is non-decreasing and two neighbours may share an ``x`` (a jump, that
  is a point mass of size ``p[i+1] - p[i] > 0``) but never three;
* ``p`` is non-decreasing and inside ``[0, 1]``;
* the knots span a range: ``x[-1] > x[0]``;
* magnitudes stay moderate: ``|x| ≤ 1e100`` and distinct positions at least
  ``1e-100`` apart (rescale the units otherwise).

:func:`check_knots` enforces this strictly (and says which index breaks it and
how to repair it); :func:`project_knots` repairs any finite arrays to the
nearest valid knots; :func:`clamp_knot` moves one knot while keeping all the
others where they are, which is what a drag in the editor needs.

Only numpy is imported here.
"""

from __future__ import annotations

import numpy as np

__all__ = ["KnotError", "check_knots", "clamp_knot", "min_gap", "project_knots"]

#: Relative gap kept between a dragged knot and its neighbours, as a fraction
#: of the knots' x range, so a drag never creates a jump by accident.
MIN_GAP_FRACTION = 1e-9
#: Knot positions are kept within this magnitude (beyond it, squares of x spacings in the
#: monotone-cubic slopes and the sampler's tables lose range); rescale the units instead.
MAX_ABS_X = 1e100
#: Smallest spacing of distinct knot positions, for the same reason.
MIN_SPACING = 1e-100


class KnotError(ValueError):
    """Knots that do not describe a valid CDF (a :class:`ValueError`)."""


def _as_knot_array(values: object, name: str) -> np.ndarray:
    """Return ``values`` as a 1-D float array or raise a :class:`KnotError`."""
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise KnotError(
            f"Knot {name} must be numbers; got {values!r} which cannot be read as floats "
            f"({exc}). Pass a list or array of numbers."
        ) from None
    if arr.ndim != 1:
        raise KnotError(
            f"Knot {name} must be a 1-D sequence; got an array of shape {arr.shape}. "
            f"Pass one value per knot, e.g. np.ravel({name})."
        )
    bad = np.flatnonzero(~np.isfinite(arr))
    if bad.size:
        i = int(bad[0])
        raise KnotError(
            f"Knot {name} must be finite; got {name}[{i}]={float(arr[i])!r} "
            f"({bad.size} non-finite value(s) in all). Remove or replace them; an unbounded "
            "end is described by a tail, not by an infinite knot."
        )
    return arr


def _as_pair(x: object, p: object) -> tuple[np.ndarray, np.ndarray]:
    xa = _as_knot_array(x, "x")
    pa = _as_knot_array(p, "p")
    if xa.shape != pa.shape:
        raise KnotError(
            f"Knot x and p must have the same length; got {xa.size} x values and {pa.size} "
            "p values. Give one probability per knot."
        )
    if xa.size < 2:
        raise KnotError(
            f"A sketch needs at least 2 knots; got {xa.size}. Add a knot at each end of "
            "the range you want to describe."
        )
    return xa, pa


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
    cdfsketch.knots.KnotError: Knot probabilities must be non-decreasing; got p[2]=0.5 < p[1]=0.6...
    """
    xa, pa = _as_pair(x, p)
    xa = xa.copy()
    pa = pa.copy()
    out = np.flatnonzero((pa < 0) | (pa > 1))
    if out.size:
        i = int(out[0])
        raise KnotError(
            f"Knot probabilities must lie in [0, 1]; got p[{i}]={float(pa[i])!r}. "
            "Clip them, or repair the knots with cdfsketch.project_knots()."
        )
    dx = np.diff(xa)
    down = np.flatnonzero(dx < 0)
    if down.size:
        i = int(down[0]) + 1
        raise KnotError(
            f"Knot positions must be non-decreasing; got x[{i}]={float(xa[i])!r} < "
            f"x[{i - 1}]={float(xa[i - 1])!r}. Sort the knots by x, or repair them with "
            "cdfsketch.project_knots()."
        )
    dp = np.diff(pa)
    dec = np.flatnonzero(dp < 0)
    if dec.size:
        i = int(dec[0]) + 1
        raise KnotError(
            f"Knot probabilities must be non-decreasing; got p[{i}]={float(pa[i])!r} < "
            f"p[{i - 1}]={float(pa[i - 1])!r}. Sort the knots by x, or repair them with "
            "cdfsketch.project_knots()."
        )
    big = np.flatnonzero(np.abs(xa) > MAX_ABS_X)
    if big.size:
        i = int(big[0])
        raise KnotError(
            f"Knot positions must satisfy |x| ≤ {MAX_ABS_X:g}; got x[{i}]={float(xa[i])!r}. "
            "Express the quantity in larger units (e.g. millions) so the numbers stay moderate."
        )
    close = np.flatnonzero((dx > 0) & (dx < MIN_SPACING))
    if close.size:
        i = int(close[0]) + 1
        raise KnotError(
            f"Distinct knot positions must be at least {MIN_SPACING:g} apart; got "
            f"x[{i}] - x[{i - 1}] = {float(dx[i - 1])!r}. Express the quantity in smaller units, "
            "or make the two knots a jump (equal x)."
        )
    tie = dx == 0
    triple = np.flatnonzero(tie[1:] & tie[:-1])
    if triple.size:
        i = int(triple[0])
        raise KnotError(
            f"At most two knots may share an x (a jump); got x[{i}]=x[{i + 1}]=x[{i + 2}]="
            f"{float(xa[i])!r}. Keep only the lowest and highest p at that x."
        )
    empty = np.flatnonzero(tie & (dp == 0))
    if empty.size:
        i = int(empty[0])
        raise KnotError(
            f"Two knots at the same x must make a jump (p must rise); got x[{i}]=x[{i + 1}]="
            f"{float(xa[i])!r} with p[{i}]=p[{i + 1}]={float(pa[i])!r}. Remove one of them."
        )
    if not xa[-1] > xa[0]:
        raise KnotError(
            f"Knots must span a range of x; got all knots at x={float(xa[0])!r}. Spread the knots "
            "over the range of the quantity (a point mass alone is not a sketch)."
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
    big = np.flatnonzero(np.abs(xa) > MAX_ABS_X)
    if big.size:
        i = int(big[0])
        raise KnotError(
            f"Knot positions must satisfy |x| ≤ {MAX_ABS_X:g}; got x[{i}]={float(xa[i])!r}. "
            "Express the quantity in larger units so the numbers stay moderate."
        )
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
        raise KnotError(
            f"Knots must span a range of x; got all knots at x={float(xa[0])!r}. Spread the knots "
            "over the range of the quantity."
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

    It is :data:`MIN_GAP_FRACTION` of the knots' x range (and never less than
    the spacing of floating-point numbers there).

    Examples
    --------
    >>> min_gap(np.array([0.0, 10.0]))
    1e-08
    """
    span = float(x[-1] - x[0])
    scale = max(abs(float(x[0])), abs(float(x[-1])), span)
    return max(MIN_GAP_FRACTION * span, 4 * float(np.spacing(scale)))


def clamp_knot(
    x: object,
    p: object,
    i: int,
    *,
    new_x: float | None = None,
    new_p: float | None = None,
    x_low: float = -np.inf,
    x_high: float = np.inf,
) -> tuple[np.ndarray, np.ndarray]:
    """Move knot ``i`` towards ``(new_x, new_p)``, clamped between its neighbours.

    No other knot moves. The new ``x`` stays strictly between the neighbours'
    (by :func:`min_gap`) unless the knot already shares its neighbour's ``x``
    (a jump), in which case it may stay there; ``p`` stays within
    ``[p[i-1], p[i+1]]`` and ``[0, 1]``. ``x_low``/``x_high`` bound the end
    knots (a bounded tail's limit, for instance).

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

    Returns
    -------
    x, p : ndarray
        New knot arrays.

    Examples
    --------
    >>> x, p = clamp_knot([0, 1, 2], [0, 0.5, 1], 1, new_x=5.0, new_p=-1.0)
    >>> float(p[1]), bool(x[1] < 2)
    (0.0, True)
    """
    xa, pa = check_knots(x, p)
    n = xa.size
    if not isinstance(i, int | np.integer) or not -n <= int(i) < n:
        raise KnotError(
            f"Knot index must be an integer in [{-n}, {n - 1}]; got {i!r}. "
            "Use the position of the knot in sketch.x."
        )
    i = int(i) % n
    gap = min_gap(xa)
    if new_x is not None:
        nx = _finite_scalar(new_x, "new_x")
        # a knot that is half of a jump may stay on its partner's x; otherwise it keeps
        # min_gap away from its neighbours
        tie_lo = i > 0 and xa[i] == xa[i - 1]
        tie_hi = i < n - 1 and xa[i] == xa[i + 1]
        lo = (xa[i - 1] if tie_lo else xa[i - 1] + gap) if i > 0 else x_low
        hi = (xa[i + 1] if tie_hi else xa[i + 1] - gap) if i < n - 1 else x_high
        if hi < lo:  # neighbours closer than the gap: stay where we are
            lo = hi = xa[i]
        nx = min(max(nx, lo), hi)
        if tie_lo and nx < xa[i - 1] + gap:
            nx = xa[i - 1]
        if tie_hi and nx > xa[i + 1] - gap:
            nx = xa[i + 1]
        xa[i] = nx
    if new_p is not None:
        np_ = _finite_scalar(new_p, "new_p")
        lo = pa[i - 1] if i > 0 else 0.0
        hi = pa[i + 1] if i < n - 1 else 1.0
        pa[i] = min(max(np_, lo), hi)
    # a jump partner must keep a positive step
    for j in (i - 1, i):
        if 0 <= j < n - 1 and xa[j] == xa[j + 1] and pa[j] == pa[j + 1]:
            pa[i] = np.nextafter(pa[i], 1.0 if j < i else 0.0)
    return xa, pa


def _finite_scalar(value: object, name: str) -> float:
    try:
        v = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise KnotError(f"{name} must be a number; got {value!r}. Pass a float.") from None
    if not np.isfinite(v):
        raise KnotError(f"{name} must be finite; got {v!r}. Pass a finite float.")
    return v
