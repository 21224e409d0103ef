"""Inverting the piece table: the exact ``ppf`` and ``isf`` (numpy only).

Linear pieces are inverted in closed form (:func:`linear_inverse`), the
others by bisection over the doubles on the same ``F`` as
:func:`cdfsketch._pieces.cdf` (:func:`bisect_pieces`, monotone in ``u`` by
construction), tails by their own closed forms. :func:`invert_pieces` is the
fast Newton–bisection solve the sampler uses to fit its tables.
"""

from __future__ import annotations

import numpy as np

from ._pieces import Pieces, dpoly, left_cdf, poly, right_cdf, support


def linear_inverse(
    xa: np.ndarray, h: np.ndarray, c0: np.ndarray, c1: np.ndarray, xb: np.ndarray, u: np.ndarray
) -> np.ndarray:
    """The closed-form inverse on linear pieces, given their columns of the piece table.

    :func:`invert_pieces` and the sampler's slow path both use it, so the two
    agree bit for bit (the sampler relies on that for the order of its draws).
    """
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):  # c1 of 1 ulp
        return np.minimum(xa + h * np.clip((u - c0) / c1, 0.0, 1.0), xb)


def invert_pieces(pc: Pieces, j: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Solve ``F_j(t) = u`` on polynomial pieces ``j``; returns ``x``.

    Linear pieces are inverted in closed form; cubic pieces by safeguarded
    Newton iteration with bisection (converges to rounding), on the right
    half of a piece in the form anchored at its right end (``pr - u`` solved
    for ``s``), so next to a knot where the density vanishes the root is as
    accurate as the exact :func:`ppf`'s.
    """
    c = pc.c[:, j]
    lin = (c[2] == 0) & (c[3] == 0)
    x = np.empty(u.shape)
    jl = j[lin]
    x[lin] = linear_inverse(pc.xa[jl], pc.h[jl], c[0, lin], c[1, lin], pc.xb[jl], u[lin])
    if lin.all():
        return x
    t = np.empty(u.shape)
    # quadratic pieces (taper tails): the root in its cancellation-free form
    quad = (c[3] == 0) & ~lin
    if quad.any():
        r = u[quad] - c[0, quad]
        c1, c2 = c[1, quad], c[2, quad]
        den = c1 + np.sqrt(np.maximum(c1 * c1 + 4.0 * c2 * r, 0.0))
        with np.errstate(divide="ignore", invalid="ignore"):
            t[quad] = np.where(den > 0, 2.0 * r / den, 0.0)
    cub = ~(lin | quad)
    right = np.zeros(u.shape, dtype=bool)
    if cub.any():
        right[cub] = u[cub] > pc.pm[j[cub]]
        left = cub & ~right
        t[left] = _solve_monotone_cubic(c[:, left], u[left])
        if right.any():
            jr = j[right]
            e = pc.e[:, jr]
            q = np.vstack([np.zeros(jr.size), e[0], e[1], e[2]])
            t[right] = _solve_monotone_cubic(q, pc.pr[jr] - u[right])  # s, from the right
    rest = ~lin & ~right
    jr = j[rest]
    x[rest] = np.minimum(pc.xa[jr] + pc.h[jr] * np.clip(t[rest], 0.0, 1.0), pc.xb[jr])
    if right.any():
        jr = j[right]
        x[right] = np.maximum(pc.xb[jr] - pc.h[jr] * np.clip(t[right], 0.0, 1.0), pc.xa[jr])
    return x


def _solve_monotone_cubic(c: np.ndarray, u: np.ndarray) -> np.ndarray:
    lo = np.zeros(u.shape)
    hi = np.ones(u.shape)
    span = c[1] + c[2] + c[3]
    t = np.clip((u - c[0]) / np.where(span > 0, span, 1.0), 0.0, 1.0)
    active = np.ones(u.shape, dtype=bool)
    for _ in range(200):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        ci = c[:, idx]
        ti = t[idx]
        f = poly(ci, ti) - u[idx]
        pos = f > 0
        hi[idx[pos]] = ti[pos]
        lo[idx[~pos]] = ti[~pos]
        df = dpoly(ci, ti)
        with np.errstate(divide="ignore", invalid="ignore"):
            tn = ti - f / df
        bad = ~np.isfinite(tn) | (tn < lo[idx]) | (tn > hi[idx])
        tn[bad] = 0.5 * (lo[idx[bad]] + hi[idx[bad]])
        exact = f == 0
        tn[exact] = ti[exact]
        done = exact | (np.abs(tn - ti) <= 4e-16) | (hi[idx] - lo[idx] <= 4e-16)
        t[idx] = tn
        active[idx[done]] = False
    return t


_SIGN = np.int64(-(2**63))
_MAGNITUDE = np.int64(2**63 - 1)


def order_key(x: np.ndarray) -> np.ndarray:
    """Doubles → int64 keys in the same order (adjacent doubles, adjacent keys)."""
    b = np.ascontiguousarray(x, dtype=float).view(np.int64)
    return np.where(b >= 0, b, -(b & _MAGNITUDE))


def from_order_key(k: np.ndarray) -> np.ndarray:
    return np.where(k >= 0, k, (-k) | _SIGN).view(np.float64)


def bisect_pieces(pc: Pieces, j: np.ndarray, u: np.ndarray) -> np.ndarray:
    """The smallest ``x`` in piece ``j`` with ``F(x) ≥ u``, by bisection over the doubles.

    The walk first takes the half of the piece where ``u`` lies (``u ≤ pm``:
    ``(xa, xm]``, else ``(xm, xb]``), then halves the count of doubles in
    ``(lo, hi]`` (at most 64 steps, whatever the scale). Monotone in ``u`` by
    construction: every ``u`` in a
    piece walks the same tree of midpoints, and where the walks of
    ``u₁ < u₂`` part, ``u₁`` goes left of that midpoint and ``u₂`` right
    (``F(mid) ≥ u₂`` implies ``F(mid) ≥ u₁``). So even where rounding makes
    the computed ``F`` wiggle by an ulp (a density near zero), ``ppf`` never
    steps down. ``u`` lies in ``(pl, pr]`` of its piece.
    """
    hi = np.empty(u.shape, dtype=np.int64)
    right = u > pc.pm[j]  # a first node of the walk, the same for every u: the halves
    for side in (False, True):
        sel = np.flatnonzero(right == side)
        if sel.size:
            hi[sel] = _bisect_half(pc, j[sel], u[sel], side)
    # u = pr is reached at the piece's end exactly (F < pr inside a rising piece), even
    # where the rounded F touches pr a little earlier (a density near zero there)
    return np.where(u >= pc.pr[j], pc.xb[j], from_order_key(hi))


def _bisect_half(pc: Pieces, j: np.ndarray, u: np.ndarray, right: bool) -> np.ndarray:
    """:func:`bisect_pieces` on one half of pieces ``j`` (``(xa, xm]`` or ``(xm, xb]``).

    Every point takes the same number of steps: once ``hi = lo + 1`` the
    midpoint is ``lo``, whose predicate is false (tested, or ``F(lo) < u`` at
    the start), so further steps change nothing and no point is set aside.
    """
    if right:
        lo, hi = order_key(pc.xm[j]), order_key(pc.xb[j])
        args = (pc.xb[j], pc.h[j], pc.e[:, j], pc.pm[j], pc.pr[j])
        cdf = right_cdf
    else:
        lo, hi = order_key(pc.xa[j]), order_key(pc.xm[j])
        args = (pc.xa[j], pc.h[j], pc.c[:, j], pc.pl[j], pc.pm[j])
        cdf = left_cdf
    # doubles in the bracket: exact in integers unless the bracket straddles zero
    # (where the difference could overflow and a float is close enough)
    straddle = (lo < 0) & (hi >= 0)
    count = np.where(
        straddle, hi.astype(float) - lo.astype(float), (hi - lo * ~straddle).astype(float)
    )
    steps = int(np.max(np.ceil(np.log2(np.maximum(count, 1.0))))) + 2
    for _ in range(min(steps, 66)):
        mid = (lo >> 1) + (hi >> 1) + (lo & hi & 1)  # floor of the mean, without overflow
        up = cdf(*args, from_order_key(mid)) >= u
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    return hi


def ppf(pc: Pieces, u: np.ndarray, *, exact: bool = True) -> np.ndarray:
    """Generalized inverse: the smallest x with F(x) ≥ u, for u in [0, 1].

    Linear pieces are inverted in closed form; the others by
    :func:`bisect_pieces` on the same ``F`` as :func:`cdf`; tails by their
    closed forms. Every step is monotone in ``u``, so ``ppf`` is too.
    ``exact=False`` solves the other pieces by :func:`invert_pieces` instead
    (faster, to rounding, not monotone by construction): the sampler's
    tables are fitted through those values.
    """
    out = np.empty(u.shape)
    lo_end, hi_end = pc.p_low, pc.p_high
    body = (u > lo_end) & (u <= hi_end)
    ub = u[body]
    j = np.searchsorted(pc.pr, ub, side="left")
    res = np.empty(ub.shape)
    past = j >= pc.pr.size  # an atom at the top end
    res[past] = pc.x_end
    jj = j[~past]
    uu = ub[~past]
    at_left = uu <= pc.pl[jj]  # an atom, or the left end of a piece
    r = np.empty(uu.shape)
    r[at_left] = pc.xa[jj[at_left]]
    inv = ~at_left
    ji, ui = jj[inv], uu[inv]
    lin = ~pc.nonlinear()[ji]
    x = np.empty(ui.shape)
    jl = ji[lin]
    x[lin] = linear_inverse(pc.xa[jl], pc.h[jl], pc.c[0, jl], pc.c[1, jl], pc.xb[jl], ui[lin])
    solve = bisect_pieces if exact else invert_pieces
    x[~lin] = solve(pc, ji[~lin], ui[~lin])
    r[inv] = x
    res[~past] = r
    out[body] = res
    low, high = support(pc)
    if pc.lower is not None:
        lt = (u <= lo_end) & (u > 0)
        out[lt] = pc.lower.ppf(u[lt])
    else:
        out[u <= lo_end] = low
    if pc.upper is not None:
        ut = (u > hi_end) & (u < 1)
        out[ut] = pc.upper.ppf(u[ut])
    out[u == 0] = low
    out[u == 1] = high
    return out


def isf(pc: Pieces, q: np.ndarray) -> np.ndarray:
    """Inverse survival function; exact deep in an upper exponential tail."""
    out = ppf(pc, 1.0 - q)
    if pc.upper is not None:
        deep = (q > 0) & (q < pc.upper.mass)
        out[deep] = pc.upper.isf(q[deep])
    return out
