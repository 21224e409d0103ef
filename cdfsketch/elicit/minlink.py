"""Fewest line segments through a sequence of vertical windows (numpy only).

The problem
-----------
Given points ``x_0 < x_1 < … < x_b`` with windows ``[lo_j, hi_j]`` at the
interior points, a start segment ``{x_0} × [s_lo, s_hi]`` and an end window
at ``x_b``, find a continuous, non-decreasing polyline with the fewest links
that starts in the start segment, meets every window and ends in the end
window. Knots may lie anywhere (between data values too). This is the
minimum-link path in the corridor between two monotone staircases (the
band's edges; :mod:`cdfsketch.elicit.autoknots` explains why meeting the
windows is the same as staying inside the band).

The method
----------
The window method for minimum-link paths of Suri (1986, "A linear time
algorithm for minimum link paths inside a simple polygon", Computer Vision,
Graphics and Image Processing 35) in the form Imai & Iri (1986, "An optimal
algorithm for approximating a piecewise linear function", Journal of
Information Processing 9(3)) give for function graphs: let ``R_k`` be the part
of the corridor reachable with ``k`` links. ``R_{k+1}`` is what one
non-decreasing segment starting in ``R_k`` can see; its frontier towards the
end is a single *window* ``W_{k+1}``, a piece of an extreme line. Every path
that gets past ``W_{k+1}`` crosses it, so some minimum-link path has a knot
on every window, and the number of windows crossed before the end window is
visible is the minimum number of links minus one (Suri 1986, Lemma 2).

In the dual plane a line ``y = c + s (x − x_r)`` is a point ``(s, c)``; a
window constraint ``lo_j ≤ ℓ(x_j) ≤ hi_j`` and "``ℓ`` crosses the segment
``W`` in the right direction" are half-planes, so the lines available to the
next link form a convex polygon, clipped window by window (Sutherland &
Hodgman 1974) until it would become empty at window ``j``:

* all lines pass **below** window ``j`` (the corridor turns up): the extreme
  line is the one highest at ``x_j``; the window is that line from where it
  crosses the previous window to ``x_j``, and the next link crosses it
  upwards;
* all lines pass **above** window ``j``: the extreme line is the one lowest
  at ``x_j``; the window runs to where it meets the upper edge, and the next
  link crosses it downwards.

Before the crossing a new link need not meet the windows the previous one
meets; after it, it lies on the side of the extreme line that keeps one of
the two window constraints automatically, so only the other is imposed up
to the wall. The knots are the crossings of consecutive extreme lines.

Cost: every window is tested against the polygon's few vertices in blocks
(numpy), and the polygon is clipped only at binding windows, so a run over
``m`` windows costs ``O(m)`` array work plus a short Python loop per binding
window.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["fewest_links"]


def _clip(poly: list[tuple[float, float]], a: float, b: float, r: float) -> list:
    """Part of convex polygon ``poly`` (dual points ``(s, c)``) with ``a·s + b·c ≤ r``.

    A vertex within rounding of the boundary (relative to the size of the
    terms) counts as on it, so a thin feasible sliver is never lost.
    """
    out: list[tuple[float, float]] = []
    n = len(poly)
    if n == 0:
        return out
    f = []
    for s, c in poly:
        v = a * s + b * c - r
        scale = abs(a * s) + abs(b * c) + abs(r)
        f.append(0.0 if abs(v) <= 1e-12 * scale else v)
    for i in range(n):
        p, q = poly[i], poly[(i + 1) % n]
        fp, fq = f[i], f[(i + 1) % n]
        if fp <= 0.0:
            out.append(p)
        if (fp < 0.0 < fq) or (fq < 0.0 < fp):
            t = fp / (fp - fq)
            out.append((p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])))
    return out


class _Source:
    """Where a link starts: a vertical segment, or a window on an extreme line.

    ``kind`` is "segment", "up" (cross the line upwards) or "down".
    The line is ``y = c + s (x − xr)``; the window is ``[xs, xe]`` on it.
    ``lo_from`` / ``hi_from`` are the first window indices whose lower /
    upper constraint the next link must meet. The next link's lines are
    written ``y = c + s (x − ref)`` with ``ref`` at the window's far end (the
    start for a segment), where its constraints begin: this keeps the dual
    polygon well conditioned.
    """

    __slots__ = ("c", "hi_from", "kind", "lo_from", "s", "xe", "xr", "xs", "y_hi", "y_lo")

    @property
    def ref(self) -> float:
        return self.xs if self.kind == "segment" else self.xe

    def __init__(self, kind, xr, s, c, xs, xe, lo_from, hi_from, y_lo=0.0, y_hi=0.0):
        self.kind, self.xr, self.s, self.c = kind, xr, s, c
        self.xs, self.xe = xs, xe
        self.lo_from, self.hi_from = lo_from, hi_from
        self.y_lo, self.y_hi = y_lo, y_hi

    def at(self, x: float) -> float:
        return self.c + self.s * (x - self.xr)

    def polygon(self, s_max: float) -> list[tuple[float, float]]:
        """Lines ``(s, c)`` with ``c = ℓ(self.ref)`` that start on this source."""
        if self.kind == "segment":
            lo, hi = self.y_lo, self.y_hi
            return [(0.0, lo), (s_max, lo), (s_max, hi), (0.0, hi)]
        big = s_max * (abs(self.xe - self.xs) + 1.0) + 4.0
        poly = [(0.0, -big), (s_max, -big), (s_max, big), (0.0, big)]
        ys, ye, w = self.at(self.xs), self.at(self.xe), self.xs - self.xe
        sign = 1.0 if self.kind == "up" else -1.0
        # up: ℓ(xs) ≤ W(xs) and ℓ(xe) ≥ W(xe); down: the reverse
        poly = _clip(poly, sign * w, sign, sign * ys)
        return _clip(poly, 0.0, -sign, -sign * ye)


def _scan(poly, src, x, lo, hi, j, end):
    """Clip ``poly`` by windows ``j…end`` while it stays non-empty.

    Returns ``(poly, None, "")`` when all are met, else ``(poly before the
    failing window, its index, "up" | "down")``. A window is tested against
    the polygon's vertices first; only a binding one clips it.
    """
    xr = src.ref
    lo_from, hi_from = src.lo_from, src.hi_from
    xl = x.tolist() if isinstance(x, np.ndarray) else x
    lol = lo.tolist() if isinstance(lo, np.ndarray) else lo
    hil = hi.tolist() if isinstance(hi, np.ndarray) else hi
    for jj in range(j, end + 1):
        d = xl[jj] - xr
        vmax = -math.inf
        vmin = math.inf
        for s, c in poly:
            v = c + s * d
            if v > vmax:
                vmax = v
            if v < vmin:
                vmin = v
        need_lo = lol[jj] if jj >= lo_from else -math.inf
        need_hi = hil[jj] if jj >= hi_from else math.inf
        if vmin >= need_lo and vmax <= need_hi:
            continue
        if vmax < need_lo:
            return poly, jj, "up"
        if vmin > need_hi:
            return poly, jj, "down"
        new = poly
        if vmin < need_lo:
            new = _clip(new, -d, -1.0, -need_lo)
        if vmax > need_hi:
            new = _clip(new, d, 1.0, need_hi)
        if not new:  # a sliver lost to rounding: keep the vertex nearest the window
            mid = 0.5 * (max(need_lo, vmin) + min(need_hi, vmax))
            new = [min(poly, key=lambda v: abs(v[1] + v[0] * d - mid))]
        poly = new
    return poly, None, ""


def _crossing(line: tuple[float, float, float], src: _Source) -> float:
    """x where ``line = (xr, s, c)`` meets the source's line, kept inside its window."""
    xr, s, c = line
    if src.kind == "segment":
        return src.xs
    ds = s - src.s
    gap = src.at(xr) - c
    xc = xr + gap / ds if ds != 0 else src.xs
    return min(max(xc, src.xs), src.xe)


def fewest_links(
    x: np.ndarray,
    lo: np.ndarray,
    hi: np.ndarray,
    start: tuple[float, float],
    end: tuple[float, float],
) -> tuple[np.ndarray, np.ndarray]:
    """Knots of a minimum-link non-decreasing polyline through the windows.

    Parameters
    ----------
    x : array
        Increasing positions ``x_0 … x_b``.
    lo, hi : array
        Windows at ``x_1 … x_{b-1}`` (entries 0 and b are ignored).
    start : (float, float)
        ``[s_lo, s_hi]``: where the polyline may start at ``x_0``.
    end : (float, float)
        ``[e_lo, e_hi]``: where it must end at ``x_b``.

    Returns
    -------
    (kx, ky) : arrays
        Knots, ``kx[0] = x_0``, ``kx[-1] = x_b``; ``len(kx) - 1`` links, the
        fewest possible (module docstring).

    Examples
    --------
    >>> x = np.array([0.0, 1.0, 2.0, 3.0])
    >>> lo, hi = np.array([0, 0.2, 0.3, 0]), np.array([0, 0.5, 0.6, 0])
    >>> kx, ky = fewest_links(x, lo, hi, (0.0, 0.0), (1.0, 1.0))
    >>> kx.tolist(), [round(v, 3) for v in ky]
    ([0.0, 2.0, 3.0], [0.0, 0.3, 1.0])
    """
    x = np.asarray(x, dtype=float)
    b = x.size - 1
    lo = np.array(lo, dtype=float)
    hi = np.array(hi, dtype=float)
    lo[b], hi[b] = end
    lo[0], hi[0] = -np.inf, np.inf
    # steepest slope any link can need: across the narrowest gap, bottom to top
    gaps = np.diff(x)
    s_max = float(np.max((np.minimum(hi[1:], 1e300) - start[0]) / gaps)) * 4.0 + 4.0
    s_max = max(s_max, 4.0 * (end[1] - start[0]) / float(x[b] - x[0]) + 4.0)
    src = _Source("segment", x[0], 0.0, start[0], x[0], x[0], 1, 1, start[0], start[1])
    lines: list[tuple[tuple[float, float, float], _Source]] = []
    while True:
        poly = src.polygon(s_max)
        first = min(src.lo_from, src.hi_from)
        poly, fail_at, side = _scan(poly, src, x, lo, hi, first, b)
        v = np.asarray(poly)
        if fail_at is None:
            s, c = v.mean(axis=0)
            lines.append(((src.ref, float(s), float(c)), src))
            break
        if len(lines) > b + 2:
            raise RuntimeError("fewest_links: no progress; please report this with the data.")
        xj = float(x[fail_at])
        vals = v[:, 1] + v[:, 0] * (xj - src.ref)
        pick = int(np.argmax(vals)) if side == "up" else int(np.argmin(vals))
        s, c = float(v[pick, 0]), float(v[pick, 1])
        line = (src.ref, s, c)
        lines.append((line, src))
        xs_new = _crossing(line, src)
        if side == "up":
            xe_new = xj
            lo_from, hi_from = fail_at, int(np.searchsorted(x, xs_new, side="right"))
        else:
            top = float(hi[fail_at])
            xe_new = src.ref + (top - c) / s if s > 0 else xj
            xe_new = min(max(xe_new, float(x[fail_at - 1])), xj)
            lo_from, hi_from = int(np.searchsorted(x, xs_new, side="right")), fail_at
        src = _Source(side, src.ref, s, c, xs_new, xe_new, lo_from, hi_from)
    kx = [float(x[0])]
    first_line = lines[0][0]
    ky = [first_line[2] + first_line[1] * (x[0] - first_line[0])]
    for (line, _), (nxt, nsrc) in zip(lines[:-1], lines[1:], strict=True):
        xc = _crossing(nxt, nsrc)
        kx.append(xc)
        ky.append(line[2] + line[1] * (xc - line[0]))
    last = lines[-1][0]
    kx.append(float(x[b]))
    ky.append(last[2] + last[1] * (x[b] - last[0]))
    kx_a, ky_a = np.asarray(kx), np.asarray(ky)
    ky_a[0] = min(max(ky_a[0], start[0]), start[1])
    ky_a[-1] = min(max(ky_a[-1], end[0]), end[1])
    ky_a = np.clip(np.maximum.accumulate(ky_a), start[0], end[1])
    if not math.isfinite(float(ky_a.sum())):
        raise RuntimeError("fewest_links: non-finite knot; please report this with the data.")
    return kx_a, ky_a
