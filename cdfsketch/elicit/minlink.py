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

import bisect
import itertools
import math

import numpy as np

__all__ = ["fewest_links"]


class _MinEnvelope:
    """``min_i (m_i·s + q_i)`` for lines added with non-increasing slopes (a monotone stack).

    Line ``i`` is the minimum on ``[bp[i], bp[i+1])``; adding a line pops
    the ones it hides (amortised O(1), the "convex hull trick").
    """

    __slots__ = ("bp", "m", "q")

    def __init__(self) -> None:
        self.m: list[float] = []
        self.q: list[float] = []
        self.bp: list[float] = []

    def add(self, m: float, q: float) -> None:
        M, Q, B = self.m, self.q, self.bp
        while M:
            if m == M[-1]:
                if q >= Q[-1]:
                    return
                M.pop(), Q.pop(), B.pop()
                continue
            x = (q - Q[-1]) / (M[-1] - m)
            if x <= B[-1]:
                M.pop(), Q.pop(), B.pop()
                continue
            M.append(m), Q.append(q), B.append(x)
            return
        M.append(m), Q.append(q), B.append(-math.inf)

    def piece(self, s: float) -> int:
        return bisect.bisect_right(self.bp, s) - 1

    def at(self, s: float) -> float:
        i = bisect.bisect_right(self.bp, s) - 1
        return self.m[i] * s + self.q[i]


class _Region:
    """Dual lines ``(s, c)`` with ``s ∈ [a, b]`` and ``L(s) ≤ c ≤ U(s)``.

    ``U`` is a :class:`_MinEnvelope` of upper constraints ``c ≤ m s + q``; the
    lower constraints ``c ≥ m s + q`` are kept mirrored (``t = −s``) so they
    also form a min-envelope with non-increasing slopes. Adding a constraint
    tests the interval's two ends (the gap ``U − L`` is concave, so a
    constraint that holds at both ends holds in between unless it cuts
    through the middle, which is checked at the breakpoints) and moves them.
    """

    def __init__(self, a: float, b: float) -> None:
        self.a, self.b = a, b
        self.up = _MinEnvelope()
        self.low = _MinEnvelope()  # lines (m, -q) in t = -s

    def U(self, s: float) -> float:
        return self.up.at(s)

    def L(self, s: float) -> float:
        return -self.low.at(-s)

    def _points(self, env: _MinEnvelope, mirrored: bool) -> list[float]:
        a, b = self.a, self.b
        if mirrored:
            lo_i, hi_i = env.piece(-b), env.piece(-a)
            inner = [-v for v in env.bp[lo_i + 1 : hi_i + 1]][::-1]
        else:
            lo_i, hi_i = env.piece(a), env.piece(b)
            inner = env.bp[lo_i + 1 : hi_i + 1]
        return [a, *[v for v in inner if a < v < b], b]

    def _cut(self, gap, pts, bad_a: bool, bad_b: bool) -> bool:
        """Shrink ``[a, b]`` to where the concave ``gap(s) ≥ 0``; False if nowhere.

        ``pts`` are ``a``, the breakpoints inside and ``b`` (``gap`` is linear
        between them); ``bad_a`` / ``bad_b`` say at which ends it is negative.
        With one bad end the root is found by walking in from that end only.
        """
        n = len(pts)
        if bad_a and not bad_b:
            v_prev = gap(pts[0])
            for i in range(1, n):
                v = gap(pts[i])
                if v >= 0.0:
                    s0, s1 = pts[i - 1], pts[i]
                    self.a = s1 - v * (s1 - s0) / (v - v_prev) if v != v_prev else s1
                    return True
                v_prev = v
            return False
        if bad_b and not bad_a:
            v_prev = gap(pts[-1])
            for i in range(n - 2, -1, -1):
                v = gap(pts[i])
                if v >= 0.0:
                    s0, s1 = pts[i], pts[i + 1]
                    self.b = s0 + v * (s1 - s0) / (v - v_prev) if v != v_prev else s0
                    return True
                v_prev = v
            return False
        vals = [gap(s) for s in pts]
        ok = [i for i, v in enumerate(vals) if v >= 0.0]
        if not ok:
            return False
        i0, i1 = ok[0], ok[-1]
        s0, s1, v0, v1 = pts[i0 - 1], pts[i0], vals[i0 - 1], vals[i0]
        self.a = s1 - v1 * (s1 - s0) / (v1 - v0) if v1 != v0 else s1
        s0, s1, v0, v1 = pts[i1], pts[i1 + 1], vals[i1], vals[i1 + 1]
        self.b = s0 + v0 * (s1 - s0) / (v0 - v1) if v1 != v0 else s0
        if self.b < self.a:
            self.a = self.b = 0.5 * (self.a + self.b)
        return True

    def add_upper(self, m: float, q: float) -> bool:
        """Add ``c ≤ m s + q``; False (and unchanged) if nothing is left."""
        a, b = self.a, self.b
        tol = 1e-15 * (abs(q) + abs(m) * max(abs(a), abs(b)) + 1.0)
        if self.low.m:
            bad_a = m * a + q < self.L(a) - tol
            bad_b = m * b + q < self.L(b) - tol
            if (bad_a or bad_b) and not self._cut(
                lambda s: m * s + q - self.L(s) + tol, self._points(self.low, True), bad_a, bad_b
            ):
                return False
        self.up.add(m, q)
        return True

    def add_lower(self, m: float, q: float) -> bool:
        """Add ``c ≥ m s + q``; False (and unchanged) if nothing is left."""
        a, b = self.a, self.b
        tol = 1e-15 * (abs(q) + abs(m) * max(abs(a), abs(b)) + 1.0)
        if self.up.m:
            bad_a = m * a + q > self.U(a) + tol
            bad_b = m * b + q > self.U(b) + tol
            if (bad_a or bad_b) and not self._cut(
                lambda s: self.U(s) - m * s - q + tol, self._points(self.up, False), bad_a, bad_b
            ):
                return False
        self.low.add(m, -q)
        return True

    def vertices(self) -> list[tuple[float, float]]:
        pts = sorted(set(self._points(self.up, False) + self._points(self.low, True)))
        return [(s, self.U(s)) for s in pts] + [(s, self.L(s)) for s in pts[::-1]]


def _scan(src, x, lo, hi, j, end, s_max):
    """Add windows ``j…end`` to the lines leaving ``src`` while some line meets them all.

    Returns ``(vertices, None, "")`` when all are met, else ``(vertices
    before the failing window, its index, "up" | "down")``.
    """
    ref = src.ref
    reg = _Region(0.0, s_max)
    if src.kind == "segment":
        reg.add_upper(0.0, src.y_hi)
        reg.add_lower(0.0, src.y_lo)
    else:
        ys, ye, w = src.at(src.xs), src.at(src.xe), src.xe - src.xs
        if src.kind == "up":  # ℓ(xs) ≤ W(xs), ℓ(xe) ≥ W(xe)
            reg.add_upper(w, ys)
            reg.add_lower(0.0, ye)
        else:
            reg.add_lower(w, ys)
            reg.add_upper(0.0, ye)
    lo_from, hi_from = src.lo_from, src.hi_from
    xl, lol, hil = x.tolist(), lo.tolist(), hi.tolist()
    for jj in range(j, end + 1):
        m = ref - xl[jj]
        if jj >= lo_from and not reg.add_lower(m, lol[jj]):
            return reg.vertices(), jj, "up"
        if jj >= hi_from and not reg.add_upper(m, hil[jj]):
            return reg.vertices(), jj, "down"
    return reg.vertices(), None, ""


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
    *,
    max_links: int | None = None,
) -> tuple[np.ndarray, np.ndarray] | None:
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
    max_links : int, optional
        Stop (and return ``None``) as soon as more links than this are needed.

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
    >>> len(kx) - 1  # one line from (0, 0) cannot meet both windows and reach (3, 1)
    2
    >>> kx.round(3).tolist(), ky.round(3).tolist()
    ([0.0, 2.962, 3.0], [0.0, 0.889, 1.0])
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
        first = min(src.lo_from, src.hi_from)
        poly, fail_at, side = _scan(src, x, lo, hi, first, b, s_max)
        v = np.asarray(poly)
        if fail_at is None:
            s, c = v.mean(axis=0)
            lines.append(((src.ref, float(s), float(c)), src))
            break
        if max_links is not None and len(lines) >= max_links:
            return None
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
    for (line, _), (nxt, nsrc) in itertools.pairwise(lines):
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
