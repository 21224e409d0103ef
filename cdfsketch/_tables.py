"""Compiling a piece table into the sampler's lookup tables (numpy only).

:func:`compile_tables` builds what :class:`cdfsketch.sampler.Sampler` reads:

* a uniform grid of ``M`` cells over ``u`` (a power of two, so ``u M`` is
  exact): cell ``j = floor(u M)`` holds a polynomial in the cell's local
  coordinate ``τ = u M - j``, ``x = a + τ (b + τ (c + τ d))`` — the exact
  inverse for linear pieces and atoms (``a`` the exact value at the cell's
  start, ``b`` the step to its end), a cubic through four exact inverse
  points for monotone cubic pieces and exponential tails, accepted only
  where ``|u - F(x(u))| ≤ u_tolerance`` at test points inside the cell and
  ``x(u)`` is non-decreasing (the guide-table idea of Chen & Asau 1974 taken
  to one interval per cell);
* the few cells that hold a breakpoint (a knot's p, an atom, a tail's start)
  or fail the accuracy test (next to ``u = 0`` or ``1`` under an exponential
  tail) have NaN coefficients. Their draws go to right-closed intervals
  ``(ul, ur]`` found by binary search, built the same way but halved
  adaptively until they pass. An interval that spans only a few doubles in
  ``x`` (knots a few rounding steps apart at their magnitude), or whose
  ``u``-width is already below the tolerance, is a straight line between
  its exact end points instead: monotone by construction and within the
  tolerance (``x`` lies between the exact inverses at its ends). So every
  valid sketch compiles; the interval count grows with the pieces, never
  without bound;
* ``edges``: the inverse at every cell edge (by the solver the cells are
  fitted with, made non-decreasing); every result is clipped
  between its cell's two edges and, on an interval, below the exact end of
  its piece, so ``x(u)`` never steps down from one cell, interval or tail to
  the next.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import _inverse, _pieces
from .tails import ResolvedExponentialTail

_LOBATTO = (1.0 - 1.0 / math.sqrt(5.0)) / 2.0
_FIT_TAU = np.array([0.0, _LOBATTO, 1.0 - _LOBATTO, 1.0])
_FIT_INV = np.linalg.inv(np.vander(_FIT_TAU, 4, increasing=True))
_TEST_TAU = np.array([0.02, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.98])
#: Adaptive intervals per cubic piece, on top of a fixed allowance, before the rest are
#: drawn as straight lines between exact points (a guard: never reached in the tests).
_INTERVALS_PER_PIECE = 4096
_BASE_INTERVALS = 200_000
#: An interval spanning at most this many doubles in x is a straight line between its ends.
_FEW_ULPS = 64


@dataclass(frozen=True, eq=False)
class Tables:
    """Everything the sampler reads (see the module docstring)."""

    cells: int
    a: np.ndarray
    b: np.ndarray
    c: np.ndarray  # empty when no cell is cubic
    d: np.ndarray
    cubic: bool
    edges: np.ndarray
    ul: np.ndarray
    ur: np.ndarray
    coef: tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]
    closed: np.ndarray
    closed_rows: tuple[np.ndarray, ...]
    ixmax: np.ndarray
    n_slow_cells: int


def compile_tables(pc: _pieces.Pieces, tol: float) -> Tables:
    """The lookup tables of piece table ``pc`` with accuracy ``tol`` in ``u``."""
    carries = pc.pr > pc.pl
    cells = _cell_count(int(np.sum(pc.nonlinear() & carries)), int(np.sum(carries)))
    regions = _regions(pc)
    a, b, c, d = _cell_tables(pc, regions, cells, tol)
    # the inverse at every cell edge, by the solver the cells are fitted with, made
    # non-decreasing: each cell's values must lie between its two edges' (then x(u) never
    # steps down from one cell to the next); a fast cell whose rounded ends do not is made
    # slow, and the slow path clips to them
    grid = np.arange(cells + 1) / cells
    edges = np.maximum.accumulate(_inverse.ppf(pc, grid, exact=False))
    edges = np.r_[edges, edges[-1]]  # the extra cell j = M (u = 1) ends there too
    _keep_between_edges(a, b, c, d, edges)
    cubic = bool(np.any(c != 0) or np.any(d != 0))
    if not cubic:
        c = d = np.zeros(0)  # not read: no need to keep them
    # the slow path: exact or adaptive intervals over the slow cells only
    ul, ur, coef, kind, w = _body_intervals(pc, regions, tol, _slow_ranges(a, cells))
    # atoms and linear pieces are inverted there by the closed form the cells were built
    # from (_inverse.linear_inverse): monotone in u, so slow and fast draws keep their
    # order; an atom is a piece of zero width
    lin = kind == 2
    piece = np.where(lin, w, 0)
    closed_rows = (
        np.where(lin, pc.xa[piece], coef[0]),
        np.where(lin, pc.h[piece], 0.0),
        np.where(lin, pc.c[0, piece], 0.0),
        np.where(lin, pc.c[1, piece], 1.0),
        np.where(lin, pc.xb[piece], coef[0]),
    )
    # x is non-decreasing: no interval may end above where the next one starts, nor a
    # cubic interval above its piece's exact end (this keeps rounding from lifting x
    # over a knot, an atom's position or a tail's edge)
    joined = np.r_[ul[1:] == ur[:-1], False]
    ixmax = np.where(joined, np.r_[coef[0][1:], np.inf], np.inf)
    cub = kind == 3
    ixmax[cub] = np.minimum(ixmax[cub], pc.xb[w[cub]])
    for arr in (a, b, c, d, edges, ul, ur, ixmax, *coef, *closed_rows):
        arr.setflags(write=False)  # shared by every thread that samples
    return Tables(
        cells=cells,
        a=a,
        b=b,
        c=c,
        d=d,
        cubic=cubic,
        edges=edges,
        ul=ul,
        ur=ur,
        coef=coef,  # type: ignore[arg-type]
        closed=kind != 3,
        closed_rows=closed_rows,
        ixmax=ixmax,
        n_slow_cells=int(np.isnan(a[:cells]).sum()),
    )


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
        a[lin] = _inverse.invert_pieces(pc, w[lin], lo[lin])
    simple = k != 3
    rows = (lo, hi, a, b, zeros, zeros, k, w)
    blocks = [np.vstack([row[simple] for row in rows])]
    cub = np.flatnonzero(k == 3)
    if cub.size:
        block = np.vstack(_cubic_intervals(pc, w[cub], lo[cub], hi[cub], tol))
        kind = np.full((1, block.shape[1]), 3.0)
        blocks.append(np.vstack([block[:6], kind, block[6:]]))
    block = np.concatenate(blocks, axis=1)
    # drop empty intervals (ul == ur: splitting a range a few doubles wide repeats its
    # ends), so that ur is strictly increasing and the binary search finds each u's own
    nonempty = block[1] > block[0]
    nonempty[0] |= not nonempty.any()  # the search needs one row (no body draws reach it)
    block = block[:, nonempty]
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

    Each range starts as 8 equal intervals (as one when there are thousands
    of ranges, e.g. a sketch with more cubic pieces than cells); an interval
    that fails the checks of :func:`_fit_inverse_cubics` is
    halved, all ranges at once. An interval whose ``u``-width is at most
    ``tol``, or whose exact end points are at most :data:`_FEW_ULPS` doubles
    apart, becomes the straight line between them (see the module
    docstring); past a generous count every interval left does. Returns
    ``ul, ur, a, b, c, d`` (coefficients in ``s = u - ul``) and the piece of
    each interval.
    """
    parts = np.full(j.size, 8 if j.size <= 4096 else 1)
    todo_j = np.repeat(j, parts)
    start = np.repeat(np.cumsum(parts) - parts, parts)
    frac = (np.arange(todo_j.size) - start) / np.repeat(parts, parts)
    width = np.repeat(hi - lo, parts)
    todo_l = np.repeat(lo, parts) + width * frac
    todo_r = np.r_[todo_l[1:], 0.0]
    todo_r[np.cumsum(parts) - 1] = hi
    done: list[np.ndarray] = []
    budget = _BASE_INTERVALS + _INTERVALS_PER_PIECE * j.size
    count = 0
    while todo_l.size:
        count += todo_l.size
        w = todo_r - todo_l
        tau_coef, ok, x_lo, x_hi = _fit_inverse_cubics(pc, todo_j, todo_l, todo_r, tol)
        few = _inverse.order_key(x_hi) <= _inverse.order_key(x_lo) + _FEW_ULPS
        line = ~ok & ((w <= tol) | few | (count > budget))
        tau_coef[:, line] = 0.0
        tau_coef[0, line] = x_lo[line]
        tau_coef[1, line] = np.maximum(x_hi[line] - x_lo[line], 0.0)
        ok |= line
        with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
            scale = np.array([np.ones_like(w), 1 / w, 1 / w**2, 1 / w**3])
            # x(u) = a + s (b + s (c + s d)) with s = u - ul: coefficients in s, not tau
            s_coef = np.vstack([tau_coef[:1, ok], tau_coef[1:, ok] * scale[1:, ok]])
        # intervals too narrow for their coefficients to be represented: constant
        flat = ~np.all(np.isfinite(s_coef), axis=0)
        s_coef[1:, flat] = 0.0
        done.append(np.vstack([todo_l[ok], todo_r[ok], s_coef, todo_j[ok]]))
        mid = 0.5 * (todo_l[~ok] + todo_r[~ok])
        todo_j = np.r_[todo_j[~ok], todo_j[~ok]]
        todo_l, todo_r = np.r_[todo_l[~ok], mid], np.r_[mid, todo_r[~ok]]
    block = np.concatenate(done, axis=1)
    return tuple(block[i].copy() for i in range(7))


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
    for tail in (pc.lower, pc.upper):
        if tail is None:
            continue
        side = (lo >= pc.p_high) if tail.side == "upper" else (hi <= pc.p_low)
        sel = np.flatnonzero(fast & (k == 0) & side)
        if sel.size:
            coef, ok = _fit_tail_cubics(tail, lo[sel], hi[sel], tol)
            good = sel[ok]
            a[good], b[good], c[good], d[good] = coef[:, ok]
    sel = fast & (k == 1)
    a[sel] = np.r_[pc.xa, pc.x_end][which[r[sel]]]
    sel = fast & (k == 2)
    if sel.any():
        j = which[r[sel]]
        x_lo = _inverse.invert_pieces(pc, j, lo[sel])
        x_hi = _inverse.invert_pieces(pc, j, hi[sel])
        # x_lo + b τ never passes x_hi (the next cell's first value): a fast cell has j ≥ 1,
        # so τ ≤ 1 - 2⁻⁵², and b = x_hi - x_lo rounded is at most (1 + 2⁻⁵³) times the exact
        # difference, so b τ rounded stays below it; rounding the sum is monotone
        a[sel] = x_lo
        b[sel] = x_hi - x_lo
    sel = np.flatnonzero(fast & (k == 3))
    if sel.size:
        coef, ok, _, _ = _fit_inverse_cubics(pc, which[r[sel]], lo[sel], hi[sel], tol)
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


def _fit_tail_cubics(
    tail: ResolvedExponentialTail, lo: np.ndarray, hi: np.ndarray, tol: float
) -> tuple[np.ndarray, np.ndarray]:
    """Cubics through four points of an exponential tail's inverse, checked like pieces.

    Cells next to ``u = 0`` or ``u = 1`` (where the inverse is unbounded) fail
    the checks and stay on the exact slow path.
    """
    w = hi - lo
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u_nodes = lo[:, None] + w[:, None] * _FIT_TAU[None, :]
        x_nodes = tail.ppf(u_nodes)
        x0 = x_nodes[:, :1]
        tau_coef = (x_nodes - x0) @ _FIT_INV.T
        u_test = lo[:, None] + w[:, None] * _TEST_TAU[None, :]
        rel_test = _eval_tau(tau_coef, _TEST_TAU)
        x_test = x0 + rel_test
        err = np.abs(tail.cdf(x_test) - u_test).max(axis=1)
        dens = tail.pdf(x_test)
        floor = 4 * (dens * np.spacing(np.abs(x_test))).max(axis=1)
        path = np.concatenate([np.zeros_like(x0), rel_test, x_nodes[:, -1:] - x0], axis=1)
        monotone = np.all(np.diff(path, axis=1) >= 0, axis=1)
        ok = (err <= tol + floor) & monotone & np.all(np.isfinite(x_nodes), axis=1)
    coef = tau_coef.T.copy()
    coef[0] = x0[:, 0]  # the cubic passes through its first node: exactly, not as fitted
    return coef, ok


def _fit_inverse_cubics(
    pc: _pieces.Pieces, j: np.ndarray, lo: np.ndarray, hi: np.ndarray, tol: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Fit ``x(τ)``, ``τ = (u - lo) / (hi - lo)``, on each ``[lo, hi]`` of cubic piece ``j``.

    Returns the coefficients (4, k) in ``τ``, whether each passes, and the
    exact inverse at ``lo`` and ``hi``. A fit passes when
    ``|u - F(x(u))| ≤ tol`` (plus the rounding floor of ``x``) at test points
    and ``x(u)`` non-decreasing.
    """
    w = hi - lo
    u_nodes = lo[:, None] + w[:, None] * _FIT_TAU[None, :]
    u_nodes[:, -1] = hi
    jj = np.repeat(j, _FIT_TAU.size)
    x_nodes = _inverse.invert_pieces(pc, jj, u_nodes.ravel()).reshape(u_nodes.shape)
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
    return coef, ok, x_nodes[:, 0].copy(), x_nodes[:, -1].copy()
