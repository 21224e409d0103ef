"""The piece table: one exact description of a sketch's CDF that every
operation (cdf, pdf, ppf, moments, the sampler, the spec) reads.

A CDF is cut into

* polynomial pieces on ``[xa, xa + h)`` with ``F = c0 + c1 t + c2 t² + c3 t³``
  and ``t = (x - xa) / h`` — the segments between knots (linear or monotone
  cubic) and bounded tails;
* atoms, where two knots share an ``x`` (between two pieces);
* at most one exponential tail on each side.

Only numpy is imported here.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from ._limits import MAX_SCALE
from ._validate import KnotError, fail
from .tails import BoundedTail, ExponentialTail, ResolvedExponentialTail, Tail

INTERPOLATIONS = ("linear", "pchip")


@dataclass(frozen=True, eq=False)
class Pieces:
    """The piece table (read-only arrays, one column per polynomial piece).

    ``c`` holds ``F`` from the left end, ``F = c0 + t (c1 + t (c2 + t c3))``;
    ``e`` the same polynomial from the right end, ``F = pr - s (e0 + s (e1 + s e2))``
    with ``s = (xb - x) / h``. ``F`` is evaluated from the nearer end: from
    the left up to the piece's midpoint ``xm`` (capped at ``pm = F(xm)``),
    from the right beyond it (floored at ``pm``). So near a knot where the
    density vanishes ``F`` is computed to a few ulps of its distance from the
    knot's ``p``, not of ``F``, and the two halves meet without a step down.
    """

    xa: np.ndarray
    xb: np.ndarray  # exact right ends (xb[j] == xa[j + 1])
    h: np.ndarray
    c: np.ndarray  # shape (4, m)
    e: np.ndarray  # shape (3, m)
    xm: np.ndarray  # where evaluation switches ends (≈ the piece's middle)
    pm: np.ndarray  # F(xm)
    pl: np.ndarray
    pr: np.ndarray
    atom_x: np.ndarray
    atom_mass: np.ndarray
    lower: ResolvedExponentialTail | None
    upper: ResolvedExponentialTail | None
    p_low: float  # probability where the body (pieces and atoms) starts
    p_high: float  # ... and where it ends

    @property
    def x_end(self) -> float:
        return float(self.xb[-1])

    def nonlinear(self) -> np.ndarray:
        return (self.c[2] != 0) | (self.c[3] != 0)


def pchip_slopes(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Monotone cubic Hermite slopes at the points ``(x, y)``, ``x`` increasing.

    Interior slopes are the weighted harmonic mean of the neighbouring secants
    (Fritsch & Butland 1984), set to zero where the secants change sign or one
    is zero; end slopes use the one-sided three-point formula with the
    shape-preserving limits. This is the Fritsch–Carlson (1980) monotone
    construction as implemented by ``scipy.interpolate.PchipInterpolator``,
    so both agree to rounding.
    """
    h = np.diff(x)
    m = np.diff(y) / h
    n = x.size
    if n == 2:
        return np.array([m[0], m[0]])
    d = np.zeros(n)
    w1 = 2 * h[1:] + h[:-1]
    w2 = h[1:] + 2 * h[:-1]
    zero = (np.sign(m[1:]) != np.sign(m[:-1])) | (m[1:] == 0) | (m[:-1] == 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        whmean = (w1 / m[:-1] + w2 / m[1:]) / (w1 + w2)
        d[1:-1] = np.where(zero, 0.0, 1.0 / whmean)
    d[0] = _pchip_end_slope(h[0], h[1], m[0], m[1])
    d[-1] = _pchip_end_slope(h[-1], h[-2], m[-1], m[-2])
    return d


def _pchip_end_slope(h0: float, h1: float, m0: float, m1: float) -> float:
    d = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
    if np.sign(d) != np.sign(m0):
        return 0.0
    if np.sign(m0) != np.sign(m1) and abs(d) > 3 * abs(m0):
        return 3 * m0
    return float(d)


@np.errstate(over="ignore", divide="ignore", invalid="ignore")
def knot_slopes(
    x: np.ndarray,
    p: np.ndarray,
    interpolation: str,
    continue_lower: bool = False,
    continue_upper: bool = False,
) -> np.ndarray:
    """Density at each knot from inside its run (runs are split by jumps).

    ``continue_lower``/``continue_upper``: a derived exponential tail holds
    mass beyond that end and must continue the density there. Where the
    monotone cubic's end slope is zero although the outer segment rises (the
    one-sided formula flattens it when the next secant is steeper), that end
    slope is set to the outer segment's secant ``(p₁ - p₀)/(x₁ - x₀)``
    instead; the other end's slope is at most three secants (Fritsch–Butland),
    so the piece stays monotone (Fritsch & Carlson 1980: ``α, β ≤ 3``) and the
    tail continues a positive density. Linear pieces end with their secant
    already.
    """
    n = x.size
    d = np.zeros(n)
    breaks = np.flatnonzero(np.diff(x) == 0)  # knot i and i+1 share x
    starts = np.r_[0, breaks + 1]
    stops = np.r_[breaks + 1, n]
    runs = [(a, b) for a, b in zip(starts, stops, strict=True) if b - a >= 2]
    for a, b in runs:
        xs, ps = x[a:b], p[a:b]
        if interpolation == "pchip":
            d[a:b] = pchip_slopes(xs, ps)
        else:
            sec = np.diff(ps) / np.diff(xs)
            d[a : b - 1] = sec
            d[b - 1] = sec[-1]
    if interpolation == "pchip" and runs:
        a, b = runs[0]
        if continue_lower and d[a] == 0:
            d[a] = (p[a + 1] - p[a]) / (x[a + 1] - x[a])
        a, b = runs[-1]
        if continue_upper and d[b - 1] == 0:
            d[b - 1] = (p[b - 1] - p[b - 2]) / (x[b - 1] - x[b - 2])
    return d


def _outer_density(x: np.ndarray, p: np.ndarray, d: np.ndarray, side: str) -> float:
    """Density at the outer knot from inside, for deriving an exponential scale.

    It is the knot's slope on the first continuous segment (past an atom at
    the outer knot). Where that segment is flat there is no density to
    continue: the average density over the knots' range is used and the
    density jumps at the knot (the tail still holds exactly its mass).
    """
    idx = range(x.size - 1) if side == "lower" else range(x.size - 1, 0, -1)
    for i in idx:
        j = i + 1 if side == "lower" else i - 1
        if x[i] != x[j]:
            if d[i] > 0:
                return float(d[i])
            break
    return float((p[-1] - p[0]) / (x[-1] - x[0]))


def _derives(tail: Tail, mass: float) -> bool:
    return isinstance(tail, ExponentialTail) and tail.scale is None and mass > 0


def build_pieces(
    x: np.ndarray, p: np.ndarray, interpolation: str, lower: Tail, upper: Tail
) -> Pieces:
    """Build the piece table of a valid sketch (knots already checked)."""
    n = x.size
    p0, pn = float(p[0]), float(p[-1])
    d = knot_slopes(x, p, interpolation, _derives(lower, p0), _derives(upper, 1.0 - pn))
    xa, hh, cs, es, atom_x, atom_m = [], [], [], [], [], []
    lower_exp = upper_exp = None

    def add(x0: float, h: float, c: tuple, e: tuple) -> None:
        xa.append(x0)
        hh.append(h)
        cs.append(c)
        es.append(e)

    check_limits(x, lower, upper, p0, pn)
    if p0 > 0:
        if isinstance(lower, BoundedTail):
            c = lower.piece("lower", 0.0, p0)
            add(lower.limit, x[0] - lower.limit, c, _from_right(c))
        else:
            scale = _exp_scale(lower, x, p, d, "lower", p0)
            lower_exp = ResolvedExponentialTail(float(x[0]), p0, scale, "lower", 0.0)
    for i in range(n - 1):
        if x[i] == x[i + 1]:
            atom_x.append(x[i])
            atom_m.append(p[i + 1] - p[i])
            continue
        h = x[i + 1] - x[i]
        delta = p[i + 1] - p[i]
        if interpolation == "linear":
            add(x[i], h, (p[i], delta, 0.0, 0.0), (delta, 0.0, 0.0))
        else:
            a, b = h * d[i], h * d[i + 1]
            c = (p[i], a, 3 * delta - 2 * a - b, -2 * delta + a + b)
            add(x[i], h, c, (b, 3 * delta - a - 2 * b, a + b - 2 * delta))
    if pn < 1:
        mass = 1.0 - pn
        if isinstance(upper, BoundedTail):
            c = upper.piece("upper", pn, mass)
            add(x[-1], upper.limit - x[-1], c, _from_right(c))
        else:
            scale = _exp_scale(upper, x, p, d, "upper", mass)
            upper_exp = ResolvedExponentialTail(float(x[-1]), mass, scale, "upper", pn)
    c = np.array(cs, dtype=float).T.copy()
    pl = c[0].copy()
    pr = c.sum(axis=0)
    # the polynomial pieces must meet the knots exactly at their right ends
    bounded_upper = pn < 1 and isinstance(upper, BoundedTail)
    pr = _snap_right_ends(pr, p, x, np.asarray(xa), bounded_upper)
    xa_arr = np.asarray(xa, dtype=float)
    last = upper.limit if bounded_upper else x[-1]  # type: ignore[union-attr]
    xb_arr = np.r_[xa_arr[1:], last]  # pieces are contiguous
    h_arr = np.asarray(hh, dtype=float)
    xm = np.minimum(np.maximum(xa_arr + 0.5 * h_arr, xa_arr), xb_arr)
    pm = np.minimum(np.maximum(poly(c, (xm - xa_arr) / h_arr), pl), pr)
    return Pieces(
        xa=_ro(xa_arr),
        xb=_ro(xb_arr),
        h=_ro(h_arr),
        c=_ro(c),
        e=_ro(np.array(es, dtype=float).T.copy()),
        xm=_ro(xm),
        pm=_ro(pm),
        pl=_ro(pl),
        pr=_ro(pr),
        atom_x=_ro(np.asarray(atom_x, dtype=float)),
        atom_mass=_ro(np.asarray(atom_m, dtype=float)),
        lower=lower_exp,
        upper=upper_exp,
        p_low=p0 if lower_exp else 0.0,
        p_high=pn if upper_exp else 1.0,
    )


def _from_right(c: tuple) -> tuple[float, float, float]:
    """Coefficients of ``F`` from the right end (see :class:`Pieces`) from those from the left."""
    _, c1, c2, c3 = c
    return (c1 + 2 * c2 + 3 * c3, -(c2 + 3 * c3), c3)


def check_limits(x: np.ndarray, lower: Tail, upper: Tail, p0: float, pn: float) -> None:
    """Bounded tails' limits lie outside the knots (strictly where the tail holds mass)."""
    if isinstance(lower, BoundedTail) and not (
        lower.limit < x[0] or (lower.limit == x[0] and p0 == 0)
    ):
        raise fail(
            "A bounded lower tail needs its limit below the first knot",
            f"limit={lower.limit!r} and x[0]={float(x[0])!r}",
            "Lower the limit or move the knot.",
            error=KnotError,
            field="lower_tail",
            value=lower.limit,
        )
    if isinstance(upper, BoundedTail) and not (
        upper.limit > x[-1] or (upper.limit == x[-1] and pn == 1)
    ):
        raise fail(
            "A bounded upper tail needs its limit above the last knot",
            f"limit={upper.limit!r} and x[-1]={float(x[-1])!r}",
            "Raise the limit or move the knot.",
            error=KnotError,
            field="upper_tail",
            value=upper.limit,
        )


def _snap_right_ends(
    pr: np.ndarray, p: np.ndarray, x: np.ndarray, xa: np.ndarray, bounded_upper: bool
) -> np.ndarray:
    """Replace rounded right-end values by the exact knot probabilities.

    The knot at a piece's right end (the first of a jump) is the first knot past
    the piece's exact left end; the rounded right end ``xa + h`` could land one
    knot too far. A bounded upper tail (the last piece) ends at probability 1.
    """
    out = pr.copy()
    idx = np.searchsorted(x, xa, side="right")
    inside = idx < x.size
    out[inside] = p[idx[inside]]
    if bounded_upper:
        out[-1] = 1.0
    return out


def _exp_scale(tail: ExponentialTail, x, p, d, side: str, mass: float) -> float:
    """The tail's scale: stated, or ``mass / f`` with ``f`` the outer density.

    Where the ratio is not finite (``mass / f`` overflows or underflows) the
    knots' x range is used instead, so that any drag gives a valid sketch;
    :attr:`Sketch.tail_scales` shows the value used.
    """
    if tail.scale is not None:
        return float(tail.scale)
    f = _outer_density(x, p, d, side)
    scale = mass / f if f > 0 else math.inf
    if not (math.isfinite(scale) and scale > 0):
        scale = float(x[-1] - x[0])
    # at most what a stated scale may be, so it can be restated
    return min(scale, MAX_SCALE)


def _ro(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


# ---------------------------------------------------------------- evaluation


def poly(c: np.ndarray, t: np.ndarray) -> np.ndarray:
    """F on pieces: ``c`` has shape (4, k) gathered per point."""
    return c[0] + t * (c[1] + t * (c[2] + t * c[3]))


def dpoly(c: np.ndarray, t: np.ndarray) -> np.ndarray:
    return c[1] + t * (2 * c[2] + t * 3 * c[3])


def piece_cdf(pc: Pieces, j: np.ndarray, v: np.ndarray) -> np.ndarray:
    """``F`` at points ``v`` inside pieces ``j``, from the nearer end (see :class:`Pieces`).

    Kept inside the piece's ``[pl, pr]``, so ``F`` never steps down where two
    pieces meet. :func:`cdf` and the exact ``ppf`` both evaluate ``F`` with
    :func:`left_cdf` and :func:`right_cdf`, so ``cdf(ppf(u)) ≥ u`` holds as
    computed.
    """
    out = np.empty(v.shape)
    r = v > pc.xm[j]
    jl, jr = j[~r], j[r]
    out[~r] = left_cdf(pc.xa[jl], pc.h[jl], pc.c[:, jl], pc.pl[jl], pc.pm[jl], v[~r])
    out[r] = right_cdf(pc.xb[jr], pc.h[jr], pc.e[:, jr], pc.pm[jr], pc.pr[jr], v[r])
    return out


def left_cdf(xa, h, c, pl, pm, v):
    """``F`` on the left half of pieces, gathered per point: within ``[pl, pm]``."""
    t = (v - xa) / h
    return np.minimum(np.maximum(c[0] + t * (c[1] + t * (c[2] + t * c[3])), pl), pm)


def right_cdf(xb, h, e, pm, pr, v):
    """``F`` on the right half of pieces, gathered per point: within ``[pm, pr]``."""
    s = (xb - v) / h
    return np.minimum(np.maximum(pr - s * (e[0] + s * (e[1] + s * e[2])), pm), pr)


@np.errstate(over="ignore", under="ignore")
def cdf(pc: Pieces, v: np.ndarray) -> np.ndarray:
    out = np.empty(v.shape)
    j = np.searchsorted(pc.xa, v, side="right") - 1
    below = j < 0
    above = v >= pc.x_end
    body = ~(below | above)
    out[body] = piece_cdf(pc, j[body], v[body])
    out[below] = 0.0
    out[above] = pc.p_high
    for tail in (pc.lower, pc.upper):
        if tail is not None:
            on = v < tail.edge if tail.side == "lower" else v >= tail.edge
            out[on] = tail.cdf(v[on])
    return out


@np.errstate(over="ignore", under="ignore")
def sf(pc: Pieces, v: np.ndarray) -> np.ndarray:
    """``1 - F``, computed directly in the upper exponential tail (no cancellation)."""
    out = 1.0 - cdf(pc, v)
    if pc.upper is not None:
        hi = v >= pc.upper.edge
        out[hi] = pc.upper.sf(v[hi])
    return out


@np.errstate(over="ignore", under="ignore")
def pdf(pc: Pieces, v: np.ndarray) -> np.ndarray:
    out = np.zeros(v.shape)
    j = np.searchsorted(pc.xa, v, side="right") - 1
    body = (j >= 0) & (v < pc.x_end)
    jb = j[body]
    t = (v[body] - pc.xa[jb]) / pc.h[jb]
    out[body] = np.maximum(dpoly(pc.c[:, jb], t), 0.0) / pc.h[jb]
    for tail in (pc.lower, pc.upper):
        if tail is not None:
            on = v < tail.edge if tail.side == "lower" else v >= tail.edge
            out[on] = tail.pdf(v[on])
    return out


def breakpoints(pc: Pieces) -> np.ndarray:
    """Sorted distinct x where the density may jump or kink: knots and bounded limits."""
    out = np.unique(np.r_[pc.xa, pc.x_end])
    out.setflags(write=False)
    return out


def support(pc: Pieces) -> tuple[float, float]:
    if pc.lower is not None:
        low = -math.inf
    else:
        j = int(np.searchsorted(pc.pr, 0.0, side="right"))
        low = float(pc.xa[j]) if j < pc.pr.size else pc.x_end
    if pc.upper is not None:
        high = math.inf
    else:
        j = int(np.searchsorted(pc.pr, 1.0, side="left"))
        if j >= pc.pr.size:
            high = pc.x_end
        elif pc.pl[j] >= 1.0:
            high = float(pc.xa[j])
        else:
            high = float(pc.xb[j])
    return low, high


# ---------------------------------------------------------------- moments


@functools.cache
def _gauss_legendre_unit(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss–Legendre nodes and weights on [0, 1] (exact for degree ≤ 2n − 1)."""
    nodes, weights = np.polynomial.legendre.leggauss(n)
    return 0.5 * (nodes + 1.0), 0.5 * weights


def central_moment(pc: Pieces, k: int, about: float) -> float:
    """Exact ``E[(X - about)^k]`` (closed form per piece).

    Polynomial pieces: ``∫ (xa + h t - about)^k F'(t) dt`` is a polynomial of
    degree ``k + 2`` in ``t``, integrated exactly by Gauss–Legendre
    quadrature with enough nodes; atoms contribute ``m (x - about)^k``;
    exponential tails ``X = edge ± scale·E`` with ``E[E^j] = j!``.
    """
    t, w = _gauss_legendre_unit(k // 2 + 3)
    base = pc.xa - about
    vals = (base[:, None] + pc.h[:, None] * t[None, :]) ** k
    dens = dpoly(pc.c[:, :, None], t[None, :])
    total = float(np.sum(vals * dens * w[None, :]))
    if pc.atom_x.size:
        total += float(np.sum(pc.atom_mass * (pc.atom_x - about) ** k))
    for tail in (pc.lower, pc.upper):
        if tail is not None:
            total += tail.moment(k, about)
    return total
