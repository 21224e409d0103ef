"""Compiled inverse-transform sampling: :class:`Sampler`.

A sketch is compiled once into lookup tables over ``u``:

* a uniform grid of ``M`` cells over ``u`` (a power of two, so ``u M`` is
  exact): cell ``j = floor(u M)`` holds a polynomial in the cell's local
  coordinate ``τ = u M - j``, ``x = a + τ (b + τ (c + τ d))`` — the exact
  inverse for linear pieces and atoms (``a`` the exact value at the cell's
  start, ``b`` the step to its end), a cubic through
  four exact inverse points for monotone cubic pieces, accepted only where
  ``|u - F(x(u))| ≤ u_tolerance`` at test points inside the cell and ``x(u)``
  is non-decreasing. So a draw costs a cast, a subtraction, two gathers and a
  multiply-add (four gathers and a Horner step with cubic cells): the
  guide-table idea of Chen & Asau 1974 taken to one interval per cell;
* exponential tails are tabled the same way (cubics through exact points of
  their closed-form inverse, accepted under the same checks);
* the few cells that hold a breakpoint (a knot's p, an atom, a tail's start)
  or fail the accuracy test (next to ``u = 0`` or ``1`` under an exponential
  tail) have NaN coefficients; their draws are collected and redone together
  with right-closed intervals ``(ul, ur]`` found by binary search, built the
  same way but halved adaptively until they pass, and with the tails' closed
  forms. Linear pieces are inverted there by the closed form the cells were
  built from, other intervals are kept at or below where the next one
  starts, and every result is clipped to the exact inverse at its cell's two
  edges, so ``x(u)`` never steps down from one cell or interval to the next.
  Inside a cubic interval whose terms nearly cancel (next to a knot where the
  density is zero) rounding can still make ``x`` step down by an ulp or two
  between adjacent doubles ``u`` finer than the 2⁻⁵³ grid that ``sample``
  draws from.

Draws are made in cache-sized chunks with fixed-size work buffers, so the
extra memory is O(chunk), and since each value depends only on its own
uniform, the same seed gives bit-identical draws whatever the chunk size.

Only numpy is imported here.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from . import _pieces
from ._checks import check_size

if TYPE_CHECKING:
    from .sketch import Sketch

__all__ = ["Sampler"]

#: Draws transformed per chunk (fits the work buffers in L2 cache).
DEFAULT_CHUNK = 1 << 15
#: Slow-cell draws collected before they are redone together.
_SLOW_BATCH = 1 << 12
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
        if not (isinstance(u_tolerance, float | int) and 0 < u_tolerance < 1e-3):
            raise ValueError(
                f"u_tolerance must be a float in (0, 1e-3); got {u_tolerance!r}. The default "
                "1e-11 keeps the u-error below the documented 1e-10."
            )
        pc = sketch._pieces  # the package's own value; no copy needed
        tol = float(u_tolerance)
        carries = pc.pr > pc.pl
        cells = _cell_count(int(np.sum(pc.nonlinear() & carries)), int(np.sum(carries)))
        self._cells = cells
        regions = _regions(pc)
        self._a, self._b, self._c, self._d = _cell_tables(pc, regions, cells, tol)
        # the exact inverse at every cell edge: each cell's values must lie between its two
        # edges' (then x(u) never steps down from one cell to the next); a fast cell whose
        # rounded ends do not is made slow, and the slow path clips to them
        edges = _pieces.ppf(pc, np.arange(cells + 1) / cells)
        self._edges = np.r_[edges, edges[-1]]  # the extra cell j = M (u = 1) ends there too
        _keep_between_edges(self._a, self._b, self._c, self._d, self._edges)
        self._cubic = bool(np.any(self._c != 0) or np.any(self._d != 0))
        if not self._cubic:
            self._c = self._d = np.zeros(0)  # not read: no need to keep them
        self.n_slow_cells = int(np.isnan(self._a[:cells]).sum())
        # the slow path: exact or adaptive intervals over the slow cells only
        ul, ur, coef, kind, w = _body_intervals(pc, regions, tol, _slow_ranges(self._a, cells))
        self._ul, self._ur = ul, ur
        self._ia, self._ib, self._ic, self._id = coef
        # atoms and linear pieces are inverted there by the closed form the cells were built
        # from (_pieces.linear_inverse): monotone in u, so slow and fast draws keep their
        # order; an atom is a piece of zero width
        lin = kind == 2
        piece = np.where(lin, w, 0)
        self._closed = kind != 3
        self._closed_rows = (
            np.where(lin, pc.xa[piece], coef[0]),
            np.where(lin, pc.h[piece], 0.0),
            np.where(lin, pc.c[0, piece], 0.0),
            np.where(lin, pc.c[1, piece], 1.0),
            np.where(lin, pc.xb[piece], coef[0]),
        )
        # x is non-decreasing: no interval may end above where the next one starts (this
        # keeps rounding from lifting x over a knot or an atom's position)
        joined = np.r_[ul[1:] == ur[:-1], False]
        self._ixmax = np.where(joined, np.r_[coef[0][1:], np.inf], np.inf)
        self.n_intervals = int(ul.size)
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
                tail = self._lower
                ut = u[lo]
                # a draw of exactly u = 0 (chance 2^-53) goes far into the tail, not to -inf
                ut[ut == 0] = min(2.0**-54, 0.5 * tail.mass)
                x[lo] = tail.edge + tail.scale * np.log(ut / tail.mass)
        if self._upper is not None:
            hi = u > self._p_high
            if hi.any():
                tail = self._upper
                x[hi] = tail.edge - tail.scale * np.log((1.0 - u[hi]) / tail.mass)
        cell = (u * self._cells).astype(np.intp)  # exact, and truncation is floor here
        return np.minimum(np.maximum(x, self._edges[cell]), self._edges[cell + 1])

    def _closed_form(self, k: np.ndarray, u: np.ndarray) -> np.ndarray:
        """The closed form of ``invert_pieces`` on the atom and linear-piece intervals ``k``."""
        return _pieces.linear_inverse(*(row[k] for row in self._closed_rows), u)

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
        from .sketch import _as_probabilities

        arr, scalar = _as_probabilities(u)
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
        shape = check_size(size)
        if not (isinstance(chunk, int | np.integer) and chunk >= 1):
            raise ValueError(f"chunk must be a positive integer; got {chunk!r}.")
        gen = np.random.default_rng(rng)
        n = math.prod(shape)
        out = np.empty(n)
        self._fill(out, int(chunk), lambda buf, lo: gen.random(out=buf))
        if size is None:
            return float(out[0])
        return out.reshape(shape)


# ---------------------------------------------------------------- compilation


def _body_intervals(
    pc: _pieces.Pieces,
    regions: tuple[np.ndarray, ...],
    tol: float,
    keep: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray, tuple[np.ndarray, ...], np.ndarray, np.ndarray]:
    """Intervals ``(ul, ur]`` covering the body, or only its parts inside ``keep``.

    ``keep`` holds sorted, disjoint ``[lo, hi]`` ranges of ``u`` (the slow
    cells); ``None`` covers the whole body ``(p_low, p_high]``. Returns
    ``ul, ur``, the coefficients ``(a, b, c, d)`` of ``x`` in ``s = u - ul``
    (for atoms and linear pieces only their value at ``ul``: they are inverted
    in closed form), and each interval's region kind and index (see
    :func:`_regions`).
    """
    rul, rur, kind, which = regions
    parts = [  # (lo, hi, kind, index) for every covered stretch
        (lo, hi, k, w)
        for r_lo, r_hi, k, w in zip(rul, rur, kind, which, strict=True)
        if k != 0  # exponential tails are inverted in closed form
        for lo, hi in _overlaps(float(r_lo), float(r_hi), keep)
    ]
    lo, hi, k, w = (
        (np.array(col) for col in zip(*parts, strict=True))
        if parts
        else (np.array([pc.p_low]), np.array([pc.p_high]), np.array([1]), np.array([0]))
    )
    w = w.astype(np.intp)
    zeros = np.zeros(lo.size)
    a = np.r_[pc.xa, pc.x_end][np.where(k == 1, w, 0)]  # atoms: constant x
    b = zeros.copy()
    lin = np.flatnonzero(k == 2)
    if lin.size:  # inverted in closed form (Sampler._closed_form); a is their start
        a[lin] = _pieces.invert_pieces(pc, w[lin], lo[lin])
    simple = k != 3
    rows = (lo, hi, a, b, zeros, zeros, k, w)
    blocks = [np.vstack([row[simple] for row in rows])]
    cub = np.flatnonzero(k == 3)
    if cub.size:
        block = np.vstack(_cubic_intervals(pc, w[cub], lo[cub], hi[cub], tol))
        kind = np.full((1, block.shape[1]), 3.0)
        blocks.append(np.vstack([block, kind, np.zeros_like(kind)]))  # index unused
    block = np.concatenate(blocks, axis=1)
    block = block[:, np.argsort(block[0], kind="stable")]
    cols = [block[i].copy() for i in range(8)]
    return cols[0], cols[1], tuple(cols[2:6]), cols[6].astype(np.intp), cols[7].astype(np.intp)


def _overlaps(lo: float, hi: float, keep: np.ndarray | None) -> list[tuple[float, float]]:
    """The parts of ``(lo, hi]`` inside the ranges ``keep`` (all of it when ``None``)."""
    if keep is None:
        return [(lo, hi)]
    first = int(np.searchsorted(keep[:, 1], lo, side="left"))
    out = []
    for k_lo, k_hi in keep[first:]:
        if k_lo >= hi:
            break
        a, b = max(lo, float(k_lo)), min(hi, float(k_hi))
        if b > a:
            out.append((a, b))
    return out


def _slow_ranges(a: np.ndarray, cells: int) -> np.ndarray:
    """Merged ``[lo, hi]`` ranges of ``u`` that cover the slow (NaN) cells.

    Each range reaches one cell further down: ``u`` at a cell's left edge may
    belong to the interval that ends there (intervals are right-closed).
    """
    slow = np.flatnonzero(np.isnan(a[:cells]))
    slow = np.unique(np.r_[slow, np.maximum(slow - 1, 0)])
    if slow.size == 0:
        return np.empty((0, 2))
    breaks = np.flatnonzero(np.diff(slow) > 1)
    starts = np.r_[slow[0], slow[breaks + 1]]
    stops = np.r_[slow[breaks], slow[-1]] + 1
    return np.column_stack([starts / cells, np.minimum(stops / cells, 1.0)])


def _cubic_intervals(
    pc: _pieces.Pieces, j: np.ndarray, lo: np.ndarray, hi: np.ndarray, tol: float
) -> tuple[np.ndarray, ...]:
    """Adaptive cubic interpolation of the inverse on ranges ``(lo, hi]`` of cubic pieces ``j``.

    Each range starts as 8 equal intervals; an interval that fails the checks
    of :func:`_fit_inverse_cubics` is halved, all ranges at once.
    """
    parts = 8
    todo_j = np.repeat(j, parts)
    todo_l = (lo[:, None] + (hi - lo)[:, None] * (np.arange(parts) / parts)[None, :]).ravel()
    todo_r = np.r_[todo_l[1:], 0.0]
    todo_r[parts - 1 :: parts] = hi
    done: list[np.ndarray] = []
    count = 0
    while todo_l.size:
        count += todo_l.size
        if count > _MAX_INTERVALS:
            raise RuntimeError(
                "The sampler needed more than 200,000 intervals for the cubic pieces; the "
                "sketch may have a nearly vertical stretch. Use interpolation='linear' there."
            )
        w = todo_r - todo_l
        tau_coef, ok = _fit_inverse_cubics(pc, todo_j, todo_l, todo_r, tol)
        ok |= w <= 4 * np.spacing(np.maximum(np.abs(todo_r), 1e-300))
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            scale = np.array([np.ones_like(w), 1 / w, 1 / w**2, 1 / w**3])
            # x(u) = a + s (b + s (c + s d)) with s = u - ul: coefficients in s, not tau
            s_coef = np.vstack([tau_coef[:1, ok], tau_coef[1:, ok] * scale[1:, ok]])
        # intervals too narrow for their coefficients to be represented: constant
        flat = ~np.all(np.isfinite(s_coef), axis=0)
        s_coef[1:, flat] = 0.0
        done.append(np.vstack([todo_l[ok], todo_r[ok], s_coef]))
        mid = 0.5 * (todo_l[~ok] + todo_r[~ok])
        todo_j = np.r_[todo_j[~ok], todo_j[~ok]]
        todo_l, todo_r = np.r_[todo_l[~ok], mid], np.r_[mid, todo_r[~ok]]
    block = np.concatenate(done, axis=1)
    return tuple(block[i].copy() for i in range(6))


def _eval_tau(coef: np.ndarray, tau: np.ndarray) -> np.ndarray:
    """Evaluate cubics with coefficients ``coef`` (k, 4) at ``tau`` (m,) → (k, m)."""
    a, b, c, d = (coef[:, i, None] for i in range(4))
    return a + tau * (b + tau * (c + tau * d))


def _cell_count(cubic_pieces: int, pieces: int) -> int:
    """Cells ``M`` of the uniform grid: a power of two, so ``u M`` is exact.

    About 512 cells per monotone cubic piece and at least 128 per piece of any
    kind, from 4096 up to 65536 when there are cubic cells to fit (each costs
    a few inverse evaluations to compile) or 131072 otherwise: enough that few
    cells hold a breakpoint or fail the accuracy test, few enough to compile
    in well under a second. (Measured, 1000 linear pieces: 2^17 cells sample
    slightly faster than 2^16 despite the larger tables, 2^15 clearly slower;
    1000 cubic pieces: 2^16 cells compile in ~170 ms and sample 1.6x faster
    than 2^14.)
    """
    want = max(512 * cubic_pieces, 128 * (pieces + 2))
    top = 16 if cubic_pieces else 17
    return 1 << min(top, max(12, math.ceil(math.log2(want))))


def _regions(pc: _pieces.Pieces) -> tuple[np.ndarray, ...]:
    """Stretches of ``u`` with one inverse each, in order: tails, atoms, pieces.

    Returns ``(ul, ur, kind, index)`` with kind 0 = exponential tail (inverted
    in closed form later), 1 = atom (``index`` into the atom positions
    ``[xa..., x_end]``), 2 = linear piece, 3 = cubic piece (``index`` = piece).
    """
    rows: list[tuple[float, float, int, int]] = []
    if pc.p_low > 0:
        rows.append((0.0, pc.p_low, 0, -1))
    before = np.r_[pc.p_low, pc.pr[:-1]]
    cubic = pc.nonlinear()
    for j in range(pc.xa.size):
        if pc.pl[j] > before[j]:
            rows.append((float(before[j]), float(pc.pl[j]), 1, j))
        if pc.pr[j] > pc.pl[j]:
            rows.append((float(pc.pl[j]), float(pc.pr[j]), 3 if cubic[j] else 2, j))
    if pc.p_high > pc.pr[-1]:
        rows.append((float(pc.pr[-1]), pc.p_high, 1, pc.xa.size))
    if pc.p_high < 1:
        rows.append((pc.p_high, 1.0, 0, -1))
    return tuple(np.asarray(col) for col in zip(*rows, strict=True))


def _fast_cells(regions: tuple[np.ndarray, ...], cells: int) -> tuple[np.ndarray, ...]:
    """Each cell's ``u`` range, its region and whether it may be fast.

    A cell ``[j/M, (j+1)/M)`` may be fast when it lies inside one region:
    strictly after the region's start (the inverse at ``u = ul`` belongs to the
    region before, since intervals are right-closed) and not past its end. The
    extra cell ``j = M`` (``u = 1``, ppf only) is always slow. Whether its
    rounded values stay between its edges is checked later, for every kind
    of cell at once (:func:`_keep_between_edges`).
    """
    idx = np.arange(cells + 1)
    lo = idx / cells
    hi = (idx + 1) / cells
    rul, rur, _, _ = regions
    r = np.minimum(np.searchsorted(rur, lo, side="left"), rur.size - 1)
    fast = (lo > rul[r]) & (hi <= rur[r]) & (idx < cells)
    return lo, hi, r, fast


def _cell_tables(
    pc: _pieces.Pieces, regions: tuple[np.ndarray, ...], cells: int, tol: float
) -> tuple[np.ndarray, ...]:
    """Per-cell coefficients in the local coordinate; NaN marks a slow cell.

    Fast cells are those of :func:`_fast_cells` whose polynomial passes the
    accuracy checks.
    """
    lo, hi, r, fast = _fast_cells(regions, cells)
    _, _, kind, which = regions
    a = np.full(cells + 1, np.nan)
    b = np.zeros(cells + 1)
    c = np.zeros(cells + 1)
    d = np.zeros(cells + 1)
    k = kind[r]
    for tail, upper in ((pc.lower, False), (pc.upper, True)):
        if tail is None:
            continue
        side = (lo >= pc.p_high) if upper else (hi <= pc.p_low)
        sel = np.flatnonzero(fast & (k == 0) & side)
        if sel.size:
            coef, ok = _fit_tail_cubics(tail, upper, lo[sel], hi[sel], tol)
            good = sel[ok]
            a[good], b[good], c[good], d[good] = coef[:, ok]
    sel = fast & (k == 1)
    a[sel] = np.r_[pc.xa, pc.x_end][which[r[sel]]]
    sel = fast & (k == 2)
    if sel.any():
        j = which[r[sel]]
        x_lo = _pieces.invert_pieces(pc, j, lo[sel])
        x_hi = _pieces.invert_pieces(pc, j, hi[sel])
        # x_lo + b τ never passes x_hi (the next cell's first value): a fast cell has j ≥ 1,
        # so τ ≤ 1 - 2⁻⁵², and b = x_hi - x_lo rounded is at most (1 + 2⁻⁵³) times the exact
        # difference, so b τ rounded stays below it; rounding the sum is monotone
        a[sel] = x_lo
        b[sel] = x_hi - x_lo
    sel = np.flatnonzero(fast & (k == 3))
    if sel.size:
        coef, ok = _fit_inverse_cubics(pc, which[r[sel]], lo[sel], hi[sel], tol)
        good = sel[ok]
        a[good], b[good], c[good], d[good] = coef[:, ok]
    return a, b, c, d


def _keep_between_edges(
    a: np.ndarray, b: np.ndarray, c: np.ndarray, d: np.ndarray, edges: np.ndarray
) -> None:
    """Make slow (NaN) every fast cell whose values could leave ``[edges[j], edges[j+1]]``.

    A cell's polynomial is non-decreasing in ``τ`` (checked when it was fitted),
    so its first value ``a`` and its value at the largest ``τ`` a draw can have
    bound it; both are computed with the arithmetic of the fast path.
    """
    j = np.flatnonzero(~np.isnan(a[:-1]))
    last = np.nextafter(j + 1.0, 0.0) - j
    end = ((d[j] * last + c[j]) * last + b[j]) * last + a[j]
    bad = (a[j] < edges[j]) | (end > edges[j + 1])
    a[j[bad]] = np.nan


def _tail_inverse(tail: _pieces.ExpTail, upper: bool, u: np.ndarray) -> np.ndarray:
    if upper:
        return tail.edge - tail.scale * np.log((1.0 - u) / tail.mass)
    return tail.edge + tail.scale * np.log(u / tail.mass)


def _tail_cdf(tail: _pieces.ExpTail, upper: bool, x: np.ndarray) -> np.ndarray:
    if upper:
        return 1.0 - tail.mass * np.exp(-(x - tail.edge) / tail.scale)
    return tail.mass * np.exp((x - tail.edge) / tail.scale)


def _fit_tail_cubics(
    tail: _pieces.ExpTail, upper: bool, lo: np.ndarray, hi: np.ndarray, tol: float
) -> tuple[np.ndarray, np.ndarray]:
    """Cubics through four points of an exponential tail's inverse, checked like pieces.

    Cells next to ``u = 0`` or ``u = 1`` (where the inverse is unbounded) fail
    the checks and stay on the exact slow path.
    """
    w = hi - lo
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u_nodes = lo[:, None] + w[:, None] * _FIT_TAU[None, :]
        x_nodes = _tail_inverse(tail, upper, u_nodes)
        x0 = x_nodes[:, :1]
        tau_coef = (x_nodes - x0) @ _FIT_INV.T
        u_test = lo[:, None] + w[:, None] * _TEST_TAU[None, :]
        rel_test = _eval_tau(tau_coef, _TEST_TAU)
        x_test = x0 + rel_test
        err = np.abs(_tail_cdf(tail, upper, x_test) - u_test).max(axis=1)
        dens = np.abs(_tail_cdf(tail, upper, x_test) - (0.0 if not upper else 1.0)) / tail.scale
        floor = 4 * (dens * np.spacing(np.abs(x_test))).max(axis=1)
        path = np.concatenate([np.zeros_like(x0), rel_test, x_nodes[:, -1:] - x0], axis=1)
        monotone = np.all(np.diff(path, axis=1) >= 0, axis=1)
        ok = (err <= tol + floor) & monotone & np.all(np.isfinite(x_nodes), axis=1)
    coef = tau_coef.T.copy()
    coef[0] = x0[:, 0]  # the cubic passes through its first node: exactly, not as fitted
    return coef, ok


def _fit_inverse_cubics(
    pc: _pieces.Pieces, j: np.ndarray, lo: np.ndarray, hi: np.ndarray, tol: float
) -> tuple[np.ndarray, np.ndarray]:
    """Fit ``x(τ)``, ``τ = (u - lo) / (hi - lo)``, on each ``[lo, hi]`` of cubic piece ``j``.

    Returns the coefficients (4, k) in ``τ`` and whether each passes:
    ``|u - F(x(u))| ≤ tol`` (plus the rounding floor of ``x``) at test points
    and ``x(u)`` non-decreasing.
    """
    w = hi - lo
    u_nodes = lo[:, None] + w[:, None] * _FIT_TAU[None, :]
    u_nodes[:, -1] = hi
    jj = np.repeat(j, _FIT_TAU.size)
    x_nodes = _pieces.invert_pieces(pc, jj, u_nodes.ravel()).reshape(u_nodes.shape)
    # fit x - x(lo): small numbers, so rounding of large x does not pollute the fit
    x0 = x_nodes[:, :1]
    tau_coef = (x_nodes - x0) @ _FIT_INV.T
    u_test = lo[:, None] + w[:, None] * _TEST_TAU[None, :]
    rel_test = _eval_tau(tau_coef, _TEST_TAU)
    x_test = x0 + rel_test
    cj = pc.c[:, j][:, :, None]
    t = np.clip((x_test - pc.xa[j][:, None]) / pc.h[j][:, None], 0.0, 1.0)
    err = np.abs(_pieces.poly(cj, t) - u_test).max(axis=1)
    # u cannot be resolved finer than the density times the spacing of x there
    dens = _pieces.dpoly(cj, t) / pc.h[j][:, None]
    floor = 4 * (dens * np.spacing(np.abs(x_test))).max(axis=1)
    path = np.concatenate([np.zeros_like(x0), rel_test, x_nodes[:, -1:] - x0], axis=1)
    monotone = np.all(np.diff(path, axis=1) >= 0, axis=1)
    ok = (err <= tol + floor) & monotone
    coef = tau_coef.T.copy()
    coef[0] = x0[:, 0]  # the cubic passes through its first node: exactly, not as fitted
    return coef, ok
