"""``∫|F - F_n| dx`` and ``∫(F - F_n)² dx`` exactly, in time linear in the data.

The data's range is cut at the distinct data values and at the model's
breakpoints (where its density may jump or kink, and its atoms). On each
piece ``F_n`` is a constant ``L`` and ``F`` is smooth, so:

* a model whose mass is all in atoms is flat on each piece: the integrals
  are ``h·|F - L|`` and ``h·(F - L)²``, exact;
* on a short piece where ``F - L`` keeps its sign, the density changes by
  less than 2⁻¹⁰ of itself and the piece holds less than 1e-4 of the
  probability, the endpoint-corrected trapezoid rule
  ``∫_a^b G = h/2 (G_a + G_b) + h²/12 (G'_a - G'_b)`` is used with the CDF and
  the density already known at the ends (exact for cubics; its error,
  ``h⁵/720 · G⁗``, is below ~1e-15 of the piece's contribution there);
* every other piece (near breakpoints, where ``F`` crosses ``L``, where the
  density changes fast or the piece is wide) goes to 6-point Gauss–Legendre
  quadrature, split at the crossing point and, where it holds more than 1/64
  of the model's probability, at intermediate quantiles.

Beyond the data the tails are integrated by Gauss–Legendre on pieces cut at
the quantiles ``F(y₁)·2⁻ᵏ`` (and the mirror image above), k = 1…128, so each
tail piece holds half the mass of the previous one (after pieces of 1/64
while the tail holds more than that); a tail that has not converged by then
(a model without a finite mean, for the W1 distance) gives ``inf``.
"""

from __future__ import annotations

import math

import numpy as np

from ..protocol import Model
from .sample import Evaluated, SortedSample

__all__ = ["integrals"]

_GL_T, _GL_W = np.polynomial.legendre.leggauss(6)
_TAIL_STEPS = 128
#: a piece uses the corrected trapezoid rule when its density changes by less than this ...
_SMOOTH = 2.0**-10
#: ... and it holds less than this probability
_SHORT = 1e-4
#: pieces evaluated by Gauss–Legendre at a time (bounds the memory of the nodes)
_CHUNK = 1 << 16


def _gl(
    m: Model, a: np.ndarray, b: np.ndarray, level: np.ndarray, upper: bool = False
) -> tuple[float, float]:
    """Σ ∫_a^b |G - level| and Σ ∫_a^b (G - level)² over pieces; ``G`` is F (1 - F above)."""
    t1 = t2 = 0.0
    for s in range(0, a.size, _CHUNK):
        aa, bb, lv = a[s : s + _CHUNK], b[s : s + _CHUNK], level[s : s + _CHUNK]
        half = 0.5 * (bb - aa)
        x = (0.5 * (aa + bb))[:, None] + half[:, None] * _GL_T
        g = m.sf(x) if upper else m.cdf(x)
        d = g - lv[:, None]
        t1 += float(half @ (np.abs(d) @ _GL_W))
        t2 += float(half @ ((d * d) @ _GL_W))
    return t1, t2


def _gl_parts(
    m: Model, a: np.ndarray, b: np.ndarray, level: np.ndarray, upper: bool
) -> tuple[np.ndarray, np.ndarray]:
    """Per-piece integrals (for the tail's convergence check)."""
    half = 0.5 * (b - a)
    x = (0.5 * (a + b))[:, None] + half[:, None] * _GL_T
    g = m.sf(x) if upper else m.cdf(x)
    d = g - level[:, None]
    return half * (np.abs(d) @ _GL_W), half * ((d * d) @ _GL_W)


def _split(
    m: Model, a: np.ndarray, b: np.ndarray, fa: np.ndarray, fb: np.ndarray, level: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cut pieces at the crossing of ``level`` and at quantiles every 1/64 of mass."""
    extra = []
    cross = (fa - level) * (fb - level) < 0
    if cross.any():
        c = m.ppf(level[cross])
        extra.append(np.clip(c, a[cross], b[cross]))
    for j in np.flatnonzero(fb - fa > 1.0 / 64):
        k = math.ceil((fb[j] - fa[j]) * 64)
        q = m.ppf(np.linspace(fa[j], fb[j], k + 1)[1:-1])
        extra.append(q[(q > a[j]) & (q < b[j])])
    if not extra:
        return a, b, level
    pts = np.r_[a, b[-1:]]
    allp = np.unique(np.concatenate([pts, *extra]))
    allp = allp[np.isfinite(allp)]
    idx = np.clip(np.searchsorted(pts, allp, side="right") - 1, 0, level.size - 1)
    return allp[:-1], allp[1:], level[idx][:-1]


def _inside(ev: Evaluated) -> tuple[float, float]:
    m = ev.model
    npts = ev.pts.size
    if npts < 2:
        return 0.0, 0.0
    t1 = t2 = 0.0
    for lo in range(0, npts - 1, _CHUNK * 4):  # in blocks: temporaries stay small
        hi = min(lo + _CHUNK * 4, npts - 1)
        q1, q2 = _block(ev, m, lo, hi)
        t1, t2 = t1 + q1, t2 + q2
    return t1, t2


def _block(ev: Evaluated, m: Model, lo: int, hi: int) -> tuple[float, float]:
    """The integrals over the pieces ``[pts_j, pts_j+1)``, ``lo ≤ j < hi``."""
    pts = ev.pts[lo : hi + 1]
    h = np.diff(pts)
    lev = ev.level_at_pts(lo, hi)
    ga = ev.F[lo:hi] - lev  # G just right of a
    gb = ev.F_left[lo + 1 : hi + 1] - lev  # G just left of b
    if m.discrete:  # flat between breakpoints (every atom is one)
        return float(h @ np.abs(ga)), float(h @ (ga * ga))
    f = ev.pdf_at_pts(lo, hi + 1)
    fa, fb = f[:-1], f[1:]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        smooth = (
            ~ev.is_bp[lo:hi]
            & ~ev.is_bp[lo + 1 : hi + 1]
            & (ga * gb >= 0)
            & (np.abs(fb - fa) <= _SMOOTH * np.maximum(fa, fb))
            & (ev.F_left[lo + 1 : hi + 1] - ev.F[lo:hi] <= _SHORT)
            & np.isfinite(fa)
            & np.isfinite(fb)
        )
    hs, gas, gbs, fas, fbs = h[smooth], ga[smooth], gb[smooth], fa[smooth], fb[smooth]
    # h·f is a probability: grouped so that h near 1e300 cannot overflow
    one = hs * (0.5 * (gas + gbs) + (hs * (fas - fbs)) / 12.0)
    two = hs * (0.5 * (gas * gas + gbs * gbs) + (hs * (gas * fas - gbs * fbs)) / 6.0)
    t1 = float(np.abs(one).sum())  # G keeps its sign on a smooth piece
    t2 = float(two.sum())
    rest = ~smooth
    if rest.any():
        a, b = pts[:-1][rest], pts[1:][rest]
        a, b, lv = _split(m, a, b, ev.F[lo:hi][rest], ev.F_left[lo + 1 : hi + 1][rest], lev[rest])
        q1, q2 = _gl(m, a, b, lv)
        t1, t2 = t1 + q1, t2 + q2
    return t1, t2


def _tail(m: Model, edge: float, mass: float, upper: bool) -> tuple[float, float]:
    """∫ of G and G² over the tail beyond ``edge`` (G = F below, 1 - F above)."""
    if mass <= 0:
        return 0.0, 0.0
    step = 1.0 / 64
    coarse = np.arange(mass - step, step, -step) if mass > 2 * step else np.empty(0)
    start = min(mass, step)
    q = np.concatenate((coarse, start * 0.5 ** np.arange(1, _TAIL_STEPS + 1)))
    if upper:
        xs = m.isf(q) if m.has_isf else m.ppf(1.0 - q[1.0 - q < 1.0])
        bp = m.breakpoints[m.breakpoints > edge]
    else:
        xs = m.ppf(q)
        bp = m.breakpoints[m.breakpoints < edge]
    pts = np.unique(np.concatenate(([edge], xs[np.isfinite(xs)], bp)))
    pts = pts[pts >= edge] if upper else pts[pts <= edge][::-1]
    if pts.size < 2:
        return 0.0, 0.0
    a, b = np.minimum(pts[:-1], pts[1:]), np.maximum(pts[:-1], pts[1:])
    i1, i2 = _gl_parts(m, a, b, np.zeros(a.size), upper)
    tot1, tot2 = float(i1.sum()), float(i2.sum())
    far = pts[-1]
    rest = float(m.sf(np.array([far]))[0]) if upper else float(m.cdf_left(np.array([far]))[0])
    if rest > 0:
        # not at the support's end: the last pieces must have become negligible
        if i1[-4:].sum() > 1e-6 * tot1:
            tot1 = math.inf
        if i2[-4:].sum() > 1e-6 * tot2:
            tot2 = math.inf
    return tot1, tot2


def integrals(ev: Evaluated) -> tuple[float, float]:
    """``∫|F - F_n| dx`` and ``∫(F - F_n)² dx`` for a model evaluated at a sample.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> from cdfsketch.protocol import as_model
    >>> s = SortedSample(np.array([0.25, 0.75]))
    >>> [round(v, 6) for v in integrals(Evaluated(as_model(Sketch([0, 1], [0, 1])), s))]
    [0.125, 0.020833]
    """
    m, s = ev.model, ev.sample
    t1, t2 = _inside(ev)
    lo = float(ev.F_left[0])
    hi = float(m.sf(s.ux[-1:])[0])
    l1, l2 = _tail(m, float(s.ux[0]), lo, upper=False)
    u1, u2 = _tail(m, float(s.ux[-1]), hi, upper=True)
    return t1 + l1 + u1, t2 + l2 + u2


def sample_of(y: np.ndarray) -> SortedSample:
    """Shorthand for :class:`SortedSample` of unsorted data."""
    return SortedSample(y)
