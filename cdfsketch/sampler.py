"""Compiled inverse-transform sampling: :class:`Sampler`.

A sketch is compiled once into lookup tables over ``u``:

* the body (the polynomial pieces and atoms between the exponential tails)
  becomes right-closed intervals ``(ul, ur]`` with ``x = a + s (b + s (c +
  s d))``, ``s = u - ul``. Linear pieces give ``c = d = 0`` and the exact
  inverse; atoms give constant intervals; monotone cubic pieces are covered by
  adaptively halved intervals, each a cubic through four exact inverse points,
  until ``|u - F(x(u))| ≤ u_tolerance`` at test points inside every interval
  and x(u) is non-decreasing there;
* a uniform guide table over ``u`` (Chen & Asau 1974) finds the interval in
  O(1): cell ``floor(u M)`` holds the first interval that can contain ``u``
  and the one breakpoint that may lie inside the cell; the few cells holding
  more breakpoints fall back to a binary search;
* exponential tails are inverted in closed form.

Draws are made in cache-sized chunks with fixed-size work buffers, so the
extra memory is O(chunk), and since each value depends only on its own
uniform, the same seed gives bit-identical draws whatever the chunk size.

Only numpy is imported here.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np

from . import _pieces

if TYPE_CHECKING:
    from .sketch import Sketch

__all__ = ["Sampler"]

#: Draws transformed per chunk (fits the work buffers in L2 cache).
DEFAULT_CHUNK = 1 << 14
_LOBATTO = (1.0 - 1.0 / math.sqrt(5.0)) / 2.0
_FIT_TAU = np.array([0.0, _LOBATTO, 1.0 - _LOBATTO, 1.0])
_FIT_INV = np.linalg.inv(np.vander(_FIT_TAU, 4, increasing=True))
_TEST_TAU = np.array([0.02, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.98])
_MAX_INTERVALS = 200_000


class Sampler:
    """Fast inverse-transform sampler compiled from a :class:`~cdfsketch.Sketch`.

    Use :meth:`cdfsketch.Sketch.sampler` to get one (it is cached there).

    Parameters
    ----------
    sketch : Sketch
        The distribution to compile.
    u_tolerance : float, optional
        Largest accepted ``|u - F(ppf(u))|`` for monotone cubic pieces (linear
        pieces, atoms and tails are exact).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> fast = Sketch([0, 1, 4], [0, 0.5, 1], interpolation="pchip").sampler()
    >>> draws = fast.sample(1000, rng=7)
    >>> bool(draws.min() >= 0 and draws.max() <= 4)
    True
    """

    __slots__ = (
        "_a",
        "_b",
        "_c",
        "_cells",
        "_cubic",
        "_cut",
        "_d",
        "_guide",
        "_lower",
        "_p_high",
        "_p_low",
        "_slow",
        "_support",
        "_ul",
        "_upper",
        "_ur",
        "n_intervals",
    )

    def __init__(self, sketch: Sketch, *, u_tolerance: float = 1e-11) -> None:
        if not (isinstance(u_tolerance, float | int) and 0 < u_tolerance < 1e-3):
            raise ValueError(
                f"u_tolerance must be a float in (0, 1e-3); got {u_tolerance!r}. The default "
                "1e-11 keeps the u-error below the documented 1e-10."
            )
        pc = sketch._pieces  # the package's own value; no copy needed
        ul, ur, coef = _body_intervals(pc, float(u_tolerance))
        self._ul, self._ur = ul, ur
        self._a, self._b, self._c, self._d = coef
        self._cubic = bool(np.any(coef[2] != 0) or np.any(coef[3] != 0))
        self._lower, self._upper = pc.lower, pc.upper
        self._p_low, self._p_high = pc.p_low, pc.p_high
        self._support = _pieces.support(pc)
        self.n_intervals = int(ul.size)
        self._build_guide()

    def _build_guide(self) -> None:
        k = self._ur.size
        cells = 1 << max(8, math.ceil(math.log2(4 * k)))
        cells = min(cells, 1 << 16)
        edges = np.arange(cells + 1) / cells
        # cell j covers [j/M, (j+1)/M); the extra last cell takes u == 1 (ppf only)
        start = np.minimum(np.searchsorted(self._ur, edges, side="left"), k - 1)
        count = np.r_[start[1:] - start[:-1], 0]  # breakpoints inside each cell
        cut = self._ur[start].copy()
        cut[start >= k - 1] = np.inf
        # the few cells with two or more breakpoints point at a sentinel interval
        # whose coefficients are NaN; those draws are redone by binary search
        slow = count > 1
        start[slow] = k
        cut[slow] = np.inf
        self._cells = cells
        self._guide = start.astype(np.intp)
        self._cut = cut
        self._slow = bool(slow.any())
        self._ul, self._a, self._b, self._c, self._d = (
            np.r_[arr, np.nan] for arr in (self._ul, self._a, self._b, self._c, self._d)
        )

    # ------------------------------------------------------------ evaluation
    def _transform(self, u: np.ndarray, out: np.ndarray, work: dict[str, np.ndarray]) -> None:
        """Write ``ppf(u)`` into ``out`` (same length), using preallocated work buffers."""
        n = u.size
        t = work["t"][:n]
        j = work["j"][:n]
        k = work["k"][:n]
        m = work["m"][:n]
        np.multiply(u, self._cells, out=t)
        np.copyto(j, t, casting="unsafe")
        # indices are in range by construction: mode="clip" skips numpy's bounds check
        np.take(self._guide, j, out=k, mode="clip")
        np.take(self._cut, j, out=t, mode="clip")
        np.greater(u, t, out=m)
        k += m
        self._evaluate(u, k, out, work)
        if self._slow:
            np.isnan(out, out=m)
            if m.any():
                idx = np.flatnonzero(m)
                kk = np.minimum(np.searchsorted(self._ur, u[idx], side="left"), self._ur.size - 1)
                k[idx] = kk
                self._evaluate(u, k, out, work, idx)
        if self._lower is not None:
            np.less(u, self._p_low, out=m)
            if m.any():
                tail = self._lower
                ut = np.maximum(u[m], 2.0**-54)
                out[m] = tail.edge + tail.scale * np.log(ut / tail.mass)
        if self._upper is not None:
            np.greater(u, self._p_high, out=m)
            if m.any():
                tail = self._upper
                out[m] = tail.edge - tail.scale * np.log((1.0 - u[m]) / tail.mass)

    def _evaluate(
        self,
        u: np.ndarray,
        k: np.ndarray,
        out: np.ndarray,
        work: dict[str, np.ndarray],
        idx: np.ndarray | None = None,
    ) -> None:
        """``out = a + s (b + s (c + s d))`` with ``s = u - ul`` (on ``idx`` only if given)."""
        if idx is not None:
            uu, kk = u[idx], k[idx]
            s = uu - self._ul[kk]
            x = self._a[kk] + s * (self._b[kk] + s * (self._c[kk] + s * self._d[kk]))
            out[idx] = x
            return
        n = u.size
        t = work["t"][:n]
        g = work["g"][:n]
        np.take(self._ul, k, out=t, mode="clip")
        np.subtract(u, t, out=t)
        if self._cubic:
            np.take(self._d, k, out=out, mode="clip")
            out *= t
            out += np.take(self._c, k, out=g, mode="clip")
            out *= t
            out += np.take(self._b, k, out=g, mode="clip")
        else:
            np.take(self._b, k, out=out, mode="clip")
        out *= t
        out += np.take(self._a, k, out=g, mode="clip")

    def _work(self, n: int) -> dict[str, np.ndarray]:
        return {
            "t": np.empty(n),
            "g": np.empty(n),
            "j": np.empty(n, dtype=np.intp),
            "k": np.empty(n, dtype=np.intp),
            "m": np.empty(n, dtype=bool),
        }

    def ppf(self, u: Any) -> Any:
        """Table inverse at probabilities ``u`` (e.g. Latin hypercube or Sobol points).

        Exact for linear sketches; ``|u - cdf(ppf(u))| ≤ 1e-10`` for monotone
        cubic ones. ``ppf(0)``/``ppf(1)`` are the support's ends.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).sampler().ppf([0.0, 0.25, 1.0])
        array([ 0. ,  2.5, 10. ])
        """
        from .sketch import _as_probabilities

        arr, scalar = _as_probabilities(u)
        flat = np.ascontiguousarray(arr, dtype=float).ravel()
        out = np.empty(flat.size)
        work = self._work(min(flat.size, DEFAULT_CHUNK))
        with np.errstate(divide="ignore", invalid="ignore"):  # u == 0 or 1, set below
            for lo in range(0, flat.size, DEFAULT_CHUNK):
                hi = min(lo + DEFAULT_CHUNK, flat.size)
                self._transform(flat[lo:hi], out[lo:hi], work)
        out[flat == 0.0] = self._support[0]
        out[flat == 1.0] = self._support[1]
        out = out.reshape(arr.shape)
        return float(out) if scalar else out

    def sample(
        self,
        size: int | tuple[int, ...] | None = None,
        *,
        rng: Any = None,
        chunk: int = DEFAULT_CHUNK,
    ) -> Any:
        """Draw ``size`` values; memory beyond the output is O(``chunk``).

        Parameters
        ----------
        size : int or tuple of ints, optional
            Output shape; ``None`` gives one float.
        rng : optional
            Anything :func:`numpy.random.default_rng` takes.
        chunk : int, optional
            Draws per chunk. The result does not depend on it.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> fast = Sketch([0, 10], [0, 1]).sampler()
        >>> bool(np.array_equal(fast.sample(100, rng=3), fast.sample(100, rng=3, chunk=7)))
        True
        """
        shape = _check_size(size)
        if not (isinstance(chunk, int | np.integer) and chunk >= 1):
            raise ValueError(f"chunk must be a positive integer; got {chunk!r}.")
        gen = np.random.default_rng(rng)
        n = math.prod(shape)
        out = np.empty(n)
        u = np.empty(min(n, int(chunk)))
        work = self._work(u.size)
        for lo in range(0, n, int(chunk)):
            hi = min(lo + int(chunk), n)
            uu = u[: hi - lo]
            gen.random(out=uu)
            self._transform(uu, out[lo:hi], work)
        if size is None:
            return float(out[0])
        return out.reshape(shape)


def _check_size(size: Any) -> tuple[int, ...]:
    if size is None:
        return (1,)
    dims = (size,) if isinstance(size, int | np.integer) else size
    try:
        shape = tuple(int(d) for d in dims)
        ok = all(isinstance(d, int | np.integer) and d >= 0 for d in dims)
    except (TypeError, ValueError):
        ok = False
    if not ok:
        raise ValueError(
            f"size must be a non-negative integer or a tuple of them; got {size!r}. "
            "For example size=10_000 or size=(100, 3)."
        )
    return shape


# ---------------------------------------------------------------- compilation


def _body_intervals(
    pc: _pieces.Pieces, tol: float
) -> tuple[np.ndarray, np.ndarray, tuple[np.ndarray, ...]]:
    """Intervals ``(ul, ur]`` covering ``(p_low, p_high]`` and their coefficients."""
    rows: list[tuple[np.ndarray, ...]] = []  # (ul, ur, a, b, c, d) blocks, in u order

    def const(lo: float, hi: float, x: float) -> None:
        if hi > lo:
            rows.append(tuple(np.array([v]) for v in (lo, hi, x, 0.0, 0.0, 0.0)))

    npieces = pc.xa.size
    atom_before = np.r_[pc.p_low, pc.pr[:-1]]
    cubic = pc.nonlinear()
    for j in range(npieces):
        const(float(atom_before[j]), float(pc.pl[j]), float(pc.xa[j]))
        lo, hi = float(pc.pl[j]), float(pc.pr[j])
        if not hi > lo:
            continue
        if cubic[j]:
            rows.append(_cubic_intervals(pc, j, lo, hi, tol))
        else:
            with np.errstate(over="ignore"):
                b = pc.h[j] / pc.c[1, j]
            if not np.isfinite(b):  # a piece holding ~1e-300 of mass: its left end
                b = 0.0
            rows.append(tuple(np.array([v]) for v in (lo, hi, pc.xa[j], b, 0.0, 0.0)))
    const(float(pc.pr[-1]), pc.p_high, pc.x_end)
    cols = [np.concatenate([r[i] for r in rows]) for i in range(6)]
    ul, ur = cols[0], cols[1]
    ur[-1] = pc.p_high
    _keep_below_atoms(*cols)
    return ul, ur, tuple(cols[2:])


def _keep_below_atoms(ul, ur, a, b, c, d) -> None:
    """Shift intervals that end where an atom starts down by a few ulps, in place.

    Rounding in the polynomial could otherwise put ``x(u)`` for ``u`` just
    below the atom a hair above the atom's ``x``, where ``F`` has already
    jumped. The shift is at most a few units in the last place.
    """
    const = (b == 0) & (c == 0) & (d == 0)
    before = np.flatnonzero(const[1:] & ~const[:-1])
    for k in before:
        w = ur[k] - ul[k]
        end = a[k] + w * (b[k] + w * (c[k] + w * d[k]))
        target = a[k + 1]
        margin = 2 * np.spacing(abs(target))
        if end > target - margin:
            a[k] -= end - target + margin


def _cubic_intervals(
    pc: _pieces.Pieces, j: int, lo: float, hi: float, tol: float
) -> tuple[np.ndarray, ...]:
    """Adaptive cubic interpolation of the inverse of cubic piece ``j`` on ``(lo, hi]``."""
    edges = np.linspace(lo, hi, 9)
    todo_l, todo_r = edges[:-1], edges[1:]
    todo_r[-1] = hi
    done: list[np.ndarray] = []
    while todo_l.size:
        if sum(d.shape[1] for d in done) + todo_l.size > _MAX_INTERVALS:
            raise RuntimeError(
                "The sampler needed more than 200,000 intervals for one cubic piece; the "
                "sketch may have a nearly vertical stretch. Use interpolation='linear' there."
            )
        w = todo_r - todo_l
        u_nodes = todo_l[:, None] + w[:, None] * _FIT_TAU[None, :]
        u_nodes[:, -1] = todo_r
        jj = np.full(u_nodes.shape, j)
        x_nodes = _pieces.invert_pieces(pc, jj.ravel(), u_nodes.ravel()).reshape(u_nodes.shape)
        # fit x - x(ul): small numbers, so rounding of large x does not pollute the fit
        x0 = x_nodes[:, :1]
        tau_coef = (x_nodes - x0) @ _FIT_INV.T  # coefficients in tau, per interval
        u_test = todo_l[:, None] + w[:, None] * _TEST_TAU[None, :]
        rel_test = _eval_tau(tau_coef, _TEST_TAU)
        x_test = x0 + rel_test
        t = np.clip((x_test - pc.xa[j]) / pc.h[j], 0.0, 1.0)
        err = np.abs(_pieces.poly(pc.c[:, j, None, None], t) - u_test).max(axis=1)
        # u cannot be resolved finer than the density times the spacing of x there
        dens = _pieces.dpoly(pc.c[:, j, None, None], t) / pc.h[j]
        floor = 4 * (dens * np.spacing(np.abs(x_test))).max(axis=1)
        path = np.concatenate([np.zeros_like(x0), rel_test, x_nodes[:, -1:] - x0], axis=1)
        monotone = np.all(np.diff(path, axis=1) >= 0, axis=1)
        ok = (err <= tol + floor) & monotone
        ok |= w <= 4 * np.spacing(np.maximum(np.abs(todo_r), 1e-300))
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            scale = np.array([np.ones_like(w), 1 / w, 1 / w**2, 1 / w**3])
            s_coef = tau_coef[ok].T * scale[:, ok]
        # intervals too narrow for their coefficients to be represented: constant
        flat = ~np.all(np.isfinite(s_coef), axis=0)
        s_coef[:, flat] = 0.0
        s_coef[0] += x0[ok, 0]
        done.append(np.vstack([todo_l[ok], todo_r[ok], s_coef]))
        mid = 0.5 * (todo_l[~ok] + todo_r[~ok])
        todo_l, todo_r = np.r_[todo_l[~ok], mid], np.r_[mid, todo_r[~ok]]
    block = np.concatenate(done, axis=1)
    block = block[:, np.argsort(block[0], kind="stable")]
    return tuple(block[i].copy() for i in range(6))


def _eval_tau(coef: np.ndarray, tau: np.ndarray) -> np.ndarray:
    """Evaluate cubics with coefficients ``coef`` (k, 4) at ``tau`` (m,) → (k, m)."""
    a, b, c, d = (coef[:, i, None] for i in range(4))
    return a + tau * (b + tau * (c + tau * d))
