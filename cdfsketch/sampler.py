"""Compiled inverse-transform sampling: :class:`Sampler`.

A sketch is compiled once (:mod:`cdfsketch._tables`) into a uniform grid of
``M`` cells over ``u``, each holding the inverse as a polynomial in the
cell's local coordinate, plus right-closed intervals for the few cells that
hold a breakpoint or fail the accuracy test. So a draw costs a cast, a
subtraction, two gathers and a multiply-add (four gathers and a Horner step
with cubic cells); the slow cells' draws are collected and redone together
by binary search over the intervals and the tails' closed forms. Every
result is clipped to the exact inverse at its cell's two edges, so ``x(u)``
never steps down from one cell, interval or tail to the next; inside a cubic
interval whose terms nearly cancel (next to a knot where the density is
zero) rounding can still make ``x`` step down by an ulp or two between
adjacent doubles ``u`` finer than the 2⁻⁵³ grid that ``sample`` draws from.

Draws are made in cache-sized chunks with fixed-size work buffers, so the
extra memory is O(chunk), and since each value depends only on its own
uniform, the same seed gives bit-identical draws whatever the chunk size,
and whether or not ``out=`` is given.

Only numpy is imported here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from . import _inverse, _pieces
from ._tables import compile_tables
from ._validate import InputError, fail, integer, number, probabilities, shape

if TYPE_CHECKING:
    from .sketch import Sketch

__all__ = ["Sampler"]

#: Draws transformed per chunk (fits the work buffers in L2 cache).
DEFAULT_CHUNK = 1 << 15
#: Slow-cell draws collected before they are redone together.
_SLOW_BATCH = 1 << 12


class Sampler:
    """Fast inverse-transform sampler compiled from a :class:`~cdfsketch.Sketch`.

    Use :meth:`cdfsketch.Sketch.sampler` to get one (it is cached there).

    Parameters
    ----------
    sketch : Sketch
        The distribution to compile.
    u_tolerance : float, optional
        Largest accepted ``|u - F(ppf(u))|`` for monotone cubic pieces and
        exponential tails (linear pieces and atoms are exact to rounding).

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
        "_closed",
        "_closed_rows",
        "_cubic",
        "_d",
        "_edges",
        "_ia",
        "_ib",
        "_ic",
        "_id",
        "_ixmax",
        "_lower",
        "_p_high",
        "_p_low",
        "_support",
        "_ul",
        "_upper",
        "_ur",
        "n_intervals",
        "n_slow_cells",
    )

    def __init__(self, sketch: Sketch, *, u_tolerance: float = 1e-11) -> None:
        tol = number(
            u_tolerance,
            field="u_tolerance",
            low=0.0,
            high=1e-3,
            low_open=True,
            high_open=True,
            example="u_tolerance=1e-11 (the default keeps the u-error below 1e-10)",
        )
        pc = sketch._pieces  # the package's own value; no copy needed
        t = compile_tables(pc, tol)
        self._cells = t.cells
        self._a, self._b, self._c, self._d = t.a, t.b, t.c, t.d
        self._cubic = t.cubic
        self._edges = t.edges
        self.n_slow_cells = t.n_slow_cells
        self._ul, self._ur = t.ul, t.ur
        self._ia, self._ib, self._ic, self._id = t.coef
        self._closed = t.closed
        self._closed_rows = t.closed_rows
        self._ixmax = t.ixmax
        self.n_intervals = int(t.ul.size)
        self._lower, self._upper = pc.lower, pc.upper
        self._p_low, self._p_high = pc.p_low, pc.p_high
        self._support = _pieces.support(pc)

    # ------------------------------------------------------------ evaluation
    def _table_values(self, t: np.ndarray, out: np.ndarray, g: np.ndarray, j: np.ndarray) -> None:
        """Table values at the ``u`` held in ``t``; NaN marks a slow cell.

        On return ``j`` holds each draw's cell and ``t`` its local coordinate
        ``τ = u M - j`` (exact: the cell count is a power of two).
        """
        t *= self._cells
        np.copyto(j, t, casting="unsafe")  # truncation: the cell, as u M >= 0
        np.subtract(t, j, out=t)  # the local coordinate in [0, 1)
        # indices are in range by construction: mode="clip" skips numpy's bounds check
        if self._cubic:
            np.take(self._d, j, out=out, mode="clip")
            out *= t
            out += np.take(self._c, j, out=g, mode="clip")
            out *= t
            out += np.take(self._b, j, out=g, mode="clip")
        else:
            np.take(self._b, j, out=out, mode="clip")
        out *= t
        out += np.take(self._a, j, out=g, mode="clip")

    def _fill(self, out: np.ndarray, chunk: int, load: Callable[[np.ndarray, int], Any]) -> None:
        """Write ``ppf`` of the uniforms that ``load(buffer, start)`` supplies into ``out``.

        Fixed work buffers of ``chunk`` values; the draws that fall in slow
        cells are collected (a few thousand at a time) and redone together, so
        the slow path's fixed cost is paid rarely.
        """
        n = out.size
        size = max(1, min(n, chunk))
        t, g = np.empty(size), np.empty(size)
        j = np.empty(size, dtype=np.intp)
        slow = np.empty(size, dtype=bool)
        where: list[np.ndarray] = []
        which: list[np.ndarray] = []
        pending = 0
        for lo in range(0, n, chunk):
            hi = min(lo + chunk, n)
            tt, jj, part = t[: hi - lo], j[: hi - lo], out[lo:hi]
            load(tt, lo)
            self._table_values(tt, part, g[: hi - lo], jj)
            idx = np.flatnonzero(np.isnan(part, out=slow[: hi - lo]))
            if idx.size:
                # the draw's uniform, recovered exactly (the cell count is a power of two)
                which.append((tt[idx] + jj[idx]) / self._cells)
                where.append(idx + lo)
                pending += idx.size
                if pending >= _SLOW_BATCH:
                    self._redo_slow(out, where, which)
                    pending = 0
        self._redo_slow(out, where, which)

    def _redo_slow(self, out: np.ndarray, where: list[np.ndarray], which: list[np.ndarray]) -> None:
        if where:
            out[np.concatenate(where)] = self._slow_ppf(np.concatenate(which))
            where.clear()
            which.clear()

    def _slow_ppf(self, u: np.ndarray) -> np.ndarray:
        """The slow path: closed-form exponential tails, intervals by binary search."""
        k = np.minimum(np.searchsorted(self._ur, u, side="left"), self._ur.size - 1)
        closed = self._closed[k]
        if closed.all():
            x = self._closed_form(k, u)
        else:
            s = np.clip(u - self._ul[k], 0.0, None)
            x = self._ia[k] + s * (self._ib[k] + s * (self._ic[k] + s * self._id[k]))
            x = np.minimum(x, self._ixmax[k])
            x[closed] = self._closed_form(k[closed], u[closed])
        if self._lower is not None:
            lo = u <= self._p_low
            if lo.any():
                ut = u[lo]
                # a draw of exactly u = 0 (chance 2^-53) goes far into the tail, not to -inf
                ut[ut == 0] = min(2.0**-54, 0.5 * self._lower.mass)
                x[lo] = self._lower.ppf(ut)
        if self._upper is not None:
            hi = u > self._p_high
            if hi.any():
                x[hi] = self._upper.ppf(u[hi])
        cell = (u * self._cells).astype(np.intp)  # exact, and truncation is floor here
        return np.minimum(np.maximum(x, self._edges[cell]), self._edges[cell + 1])

    def _closed_form(self, k: np.ndarray, u: np.ndarray) -> np.ndarray:
        """The closed form of ``invert_pieces`` on the atom and linear-piece intervals ``k``."""
        return _inverse.linear_inverse(*(row[k] for row in self._closed_rows), u)

    def ppf(self, u: Any) -> Any:
        """Table inverse at probabilities ``u`` (e.g. Latin hypercube or Sobol points).

        Exact to rounding for linear pieces and atoms; for monotone cubic pieces and
        exponential tails ``|u - cdf(ppf(u))| ≤ 1e-10`` plus what the rounding of ``x``
        allows (the density times a few ulps of ``x``, which matters only far from 0).
        ``ppf(0)``/``ppf(1)`` are the support's ends.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).sampler().ppf([0.0, 0.25, 1.0])
        array([ 0. ,  2.5, 10. ])
        """
        arr, scalar = probabilities(u)
        flat = np.ascontiguousarray(arr, dtype=float).ravel()
        out = np.empty(flat.size)
        with np.errstate(divide="ignore", invalid="ignore"):  # u == 0 or 1, set below
            self._fill(out, DEFAULT_CHUNK, lambda buf, lo: np.copyto(buf, flat[lo : lo + buf.size]))
        out[flat == 0.0] = self._support[0]
        out[flat == 1.0] = self._support[1]
        out = out.reshape(arr.shape)
        return float(out) if scalar else out

    def sample(
        self,
        size: int | tuple[int, ...] | None = None,
        *,
        rng: Any = None,
        out: np.ndarray | None = None,
        chunk: int = DEFAULT_CHUNK,
    ) -> Any:
        """Draw ``size`` values; memory beyond the output is O(``chunk``).

        Parameters
        ----------
        size : int or tuple of ints, optional
            Output shape; ``None`` gives one float (or, with ``out``, its shape).
        rng : optional
            Anything :func:`numpy.random.default_rng` takes.
        out : ndarray, optional
            A preallocated C-contiguous, writable float64 array to fill in
            place (of shape ``size`` when both are given); it is returned.
            The draws are bit-identical to the allocating call.
        chunk : int, optional
            Draws per chunk. The result does not depend on it.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> fast = Sketch([0, 10], [0, 1]).sampler()
        >>> bool(np.array_equal(fast.sample(100, rng=3), fast.sample(100, rng=3, chunk=7)))
        True
        >>> buf = np.empty(100)
        >>> fast.sample(rng=3, out=buf) is buf, bool(np.array_equal(buf, fast.sample(100, rng=3)))
        (True, True)
        """
        dims = shape(size)
        step = integer(chunk, field="chunk", low=1, example="chunk=32768")
        gen = np.random.default_rng(rng)
        if out is not None:
            _check_out(out, dims if size is not None else None)
            if out.size:
                self._fill(out.reshape(-1), step, lambda buf, lo: gen.random(out=buf))
            return out
        flat = np.empty(math.prod(dims))
        self._fill(flat, step, lambda buf, lo: gen.random(out=buf))
        if size is None:
            return float(flat[0])
        return flat.reshape(dims)


def _check_out(out: Any, dims: tuple[int, ...] | None) -> None:
    """``out`` must be a writable, C-contiguous float64 array (of shape ``dims`` if given)."""
    problem = None
    if not isinstance(out, np.ndarray):
        problem = f"a {type(out).__name__}"
    elif out.dtype != np.float64:
        problem = f"an array of dtype {out.dtype}"
    elif not out.flags.c_contiguous:
        problem = "a non-contiguous array (a strided view)"
    elif not out.flags.writeable:
        problem = "a read-only array"
    elif dims is not None and out.shape != dims:
        problem = f"an array of shape {out.shape} for size={dims}"
    if problem is not None:
        raise fail(
            "out must be a writable, C-contiguous float64 array of the requested shape",
            problem,
            "Allocate it with np.empty(size) (or drop size= and let out give the shape).",
            error=InputError,
            field="out",
            value=type(out).__name__,
        )
