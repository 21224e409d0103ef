"""The empirical CDF of a sample; Kaplan–Meier with right-censoring (numpy only).

With a right-censoring mask the estimate is Kaplan & Meier's (1958, JASA
53:457–481). An :class:`ECDF` satisfies :class:`cdfsketch.protocol.CDFModel`
(all its mass in atoms at the jump points), so it can be judged like any
other model: as "the resampled data".
"""

from __future__ import annotations

from typing import Any, Literal

import numpy as np

from .._validate import choice, fail, probabilities, shape, values
from .band import Band, check_level, dkw_eps, steps_at
from .decimation import StepOutline, decimate
from .intake import _is_sorted, as_aligned_data

__all__ = ["ECDF"]

ArrayLike = Any


#: jump points turned into ``F`` values per step (no array of ``n`` indices)
_LEVEL_CHUNK = 1 << 20


def _out(arr: np.ndarray, scalar: bool) -> Any:
    return float(arr) if scalar else arr


def _unweighted(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """``x`` sorted (``x`` itself if it was: checked with an early exit), its distinct values, F."""
    owned = not _is_sorted(x)
    xs = np.sort(x) if owned else x
    return (xs, *_distinct_levels(xs, owned=owned))


def _distinct_levels(xs: np.ndarray, *, owned: bool) -> tuple[np.ndarray, np.ndarray]:
    """Distinct values of sorted ``xs`` and ``F`` at each: ``(i + 1) / n`` at its last copy ``i``.

    With all values distinct (no ties), the values are ``xs`` itself when the
    caller ``owned`` the array (a copy otherwise) and ``F`` is ``1/n … n/n``.
    With ties, both are filled a chunk at a time, so no array of ``n`` flags
    or indices is made. The arithmetic is the same either way.
    """
    n = xs.size

    def last_of_run(start: int) -> np.ndarray:
        """Whether ``xs[j]`` is the last of its value, for ``j`` in one chunk from ``start``."""
        stop = min(start + _LEVEL_CHUNK, n)
        flags = np.empty(stop - start, dtype=bool)
        np.not_equal(xs[start : stop - 1], xs[start + 1 : stop], out=flags[:-1])
        flags[-1] = stop == n or bool(xs[stop - 1] != xs[stop])
        return flags

    chunks = range(0, n, _LEVEL_CHUNK)
    k = sum(int(np.count_nonzero(last_of_run(start))) for start in chunks)
    if k == n:
        p = np.arange(1, n + 1, dtype=float)
        p /= n
        return (xs if owned else xs.copy()), p
    ux = np.empty(k)
    p = np.empty(k)
    done = 0
    for start in chunks:
        last = np.flatnonzero(last_of_run(start))
        ux[done : done + last.size] = xs[start + last]
        last += start + 1
        np.divide(last, n, out=p[done : done + last.size])
        done += last.size
    return ux, p


class ECDF:
    """The empirical CDF of a sample; Kaplan–Meier with right-censoring.

    Parameters
    ----------
    data : array_like
        Observations (see :func:`as_data` for what is accepted).
    weights : array_like, optional
        Non-negative weight per observation; the ECDF puts mass
        ``w_i / sum(w)`` on ``data[i]`` (ties add up exactly).
    censored : array_like of bool, optional
        ``True`` where the observation is right-censored (the value is only
        known to exceed it). Then the estimate is Kaplan–Meier
        (Kaplan & Meier 1958), weighted when ``weights`` are given; at a tie an
        event precedes a censoring (the censored ones are still at risk). It
        jumps only at event times and reaches 1 only when the largest
        observation is an event.

    Attributes
    ----------
    x : ndarray
        Distinct values where ``F`` jumps (event times for Kaplan–Meier).
    p : ndarray
        ``F`` at ``x`` (right-continuous).
    n : int
        Number of observations used (missing values dropped).
    n_effective : float
        Kish's effective sample size ``(Σw)² / Σw²`` (``n`` without weights).
    censoring : bool
        Whether a censoring mask was given.

    Examples
    --------
    >>> e = ECDF([3, 1, 2, 2])
    >>> e.cdf([0, 1, 2, 2.5, 3]).tolist()
    [0.0, 0.25, 0.75, 0.75, 1.0]
    >>> float(e.ppf(0.5)), e.support
    (2.0, (1.0, 3.0))
    >>> e.sample(5, rng=1).tolist()
    [2.0, 3.0, 1.0, 3.0, 2.0]
    """

    __slots__ = ("_censoring", "_data_max", "_n", "_n_eff", "_p", "_x")

    def __init__(
        self,
        data: ArrayLike,
        *,
        weights: ArrayLike | None = None,
        censored: ArrayLike | None = None,
    ) -> None:
        x, w, c = as_aligned_data(data, weights=weights, censored=censored)
        n = x.size
        if w is None and c is None:
            xs, ux, p = _unweighted(x)
            n_eff = float(n)
        else:
            order = np.argsort(x, kind="stable")
            xs = x[order]
            ws = np.ones(n) if w is None else w[order]
            starts = np.flatnonzero(np.r_[True, xs[1:] != xs[:-1]])
            ux = xs[starts]
            wsum = np.add.reduceat(ws, starts)
            n_eff = float(ws.sum() ** 2 / np.dot(ws, ws))
            if c is None:
                keep = wsum > 0
                ux, wsum = ux[keep], wsum[keep]
                p = np.minimum(np.cumsum(wsum) / wsum.sum(), 1.0)
                p[-1] = 1.0
            else:
                ev = np.add.reduceat(np.where(c[order], 0.0, ws), starts)
                at_risk = ws.sum() - np.concatenate(([0.0], np.cumsum(wsum)[:-1]))
                keep = ev > 0
                frac = ev[keep] / at_risk[keep]
                survival = np.cumprod(1.0 - frac)
                survival[frac >= 1.0] = 0.0
                ux = ux[keep]
                p = np.clip(1.0 - survival, 0.0, 1.0)
        self._set(ux, p, n=n, n_eff=n_eff, censoring=c is not None, data_max=float(xs[-1]))

    def _set(
        self, ux: Any, p: Any, *, n: int, n_eff: float, censoring: bool, data_max: float
    ) -> None:
        ux = np.ascontiguousarray(ux, dtype=float)
        p = np.ascontiguousarray(p, dtype=float)
        ux.setflags(write=False)
        p.setflags(write=False)
        self._x = ux
        self._p = p
        self._n = int(n)
        self._n_eff = n_eff
        self._censoring = censoring
        self._data_max = data_max

    @classmethod
    def _with_sorted(cls, x: np.ndarray) -> tuple[ECDF, np.ndarray]:
        """The ECDF of ``x`` and ``x`` sorted, from one sort (for the editor's other views).

        ``x`` is data as :func:`as_data` returns them. The sorted array is
        ``x`` itself when it was sorted, else a new one; with all values
        distinct it is also :attr:`x` (then read-only). Neither is written to.
        """
        xs, ux, p = _unweighted(x)
        e = cls.__new__(cls)
        e._set(ux, p, n=xs.size, n_eff=float(xs.size), censoring=False, data_max=float(xs[-1]))
        return e, xs

    def __repr__(self) -> str:
        kind = "Kaplan–Meier" if self._censoring else "ECDF"
        return f"{kind}(n={self._n}, {self._x.size} distinct jump points, support={self.support})"

    # ------------------------------------------------------------ attributes
    @property
    def x(self) -> np.ndarray:
        """Distinct jump points (read-only)."""
        return self._x

    @property
    def p(self) -> np.ndarray:
        """``F`` at :attr:`x` (read-only)."""
        return self._p

    @property
    def n(self) -> int:
        """Number of observations used."""
        return self._n

    @property
    def n_effective(self) -> float:
        """Kish's effective sample size ``(Σw)² / Σw²``; ``n`` without weights."""
        return self._n_eff

    @property
    def censoring(self) -> bool:
        """Whether a right-censoring mask was given (Kaplan–Meier)."""
        return self._censoring

    @property
    def support(self) -> tuple[float, float]:
        """``(smallest, largest)`` jump point: where the estimated mass lies."""
        return float(self._x[0]), float(self._x[-1])

    @property
    def total_mass(self) -> float:
        """``F`` at the last jump: 1, or less for Kaplan–Meier ending on a censoring."""
        return float(self._p[-1])

    # ------------------------------------------------------------ protocol
    #: what it stands for when judged beside fitted candidates
    name = "resampled data"
    kind = "ecdf"

    @property
    def atoms(self) -> tuple[tuple[float, float], ...]:
        """All the mass, as ``(x, mass)`` pairs at the jump points."""
        ax, am = self.atom_table()
        return tuple(zip(ax.tolist(), am.tolist(), strict=True))

    def atom_table(self) -> tuple[np.ndarray, np.ndarray]:
        """The atoms as two arrays ``(x, mass)`` (no tuples built for large samples)."""
        return self._x, np.diff(self._p, prepend=0.0)

    @property
    def breakpoints(self) -> np.ndarray:
        """The jump points (where the CDF steps)."""
        return self._x

    # ------------------------------------------------------------ evaluation
    def cdf(self, x: ArrayLike) -> Any:
        """``F_n(x)``, right-continuous; a scalar for a scalar.

        Examples
        --------
        >>> ECDF([1, 2, 2, 4]).cdf(2)
        0.75
        """
        v, scalar = values(x, field="x")
        return _out(steps_at(self._x, self._p, v, 0.0), scalar)

    def sf(self, x: ArrayLike) -> Any:
        """``1 - F_n(x)``.

        Examples
        --------
        >>> ECDF([1, 2, 2, 4]).sf(2)
        0.25
        """
        v, scalar = values(x, field="x")
        return _out(1.0 - steps_at(self._x, self._p, v, 0.0), scalar)

    def pdf(self, x: ArrayLike) -> Any:
        """0 everywhere: all the mass is in atoms (see :attr:`atoms`)."""
        v, scalar = values(x, field="x")
        return _out(np.zeros(v.shape), scalar)

    def ppf(self, u: ArrayLike) -> Any:
        """Generalized inverse: the smallest jump point ``x`` with ``F_n(x) ≥ u``.

        ``ppf(0)`` is the smallest jump point. For Kaplan–Meier ending below 1,
        ``u`` above :attr:`total_mass` has no such ``x`` and gives ``inf``.

        Examples
        --------
        >>> ECDF([1, 2, 3, 4]).ppf([0, 0.25, 0.26, 1]).tolist()
        [1.0, 1.0, 2.0, 4.0]
        """
        v, scalar = probabilities(u, field="u")
        i = np.searchsorted(self._p, v, side="left")
        inside = self._x.take(np.minimum(i, self._x.size - 1))
        return _out(np.where(i < self._x.size, inside, np.inf), scalar)

    def sample(
        self,
        size: int | tuple[int, ...] | None = None,
        *,
        rng: Any = None,
        leftover: Literal["refuse", "largest"] = "refuse",
    ) -> Any:
        """Resample: draw from the empirical distribution itself.

        Each draw is ``x[j]`` with probability ``p[j] - p[j-1]`` (the observed
        values, weighted when weights were given; the Kaplan–Meier jumps with
        censoring).

        Parameters
        ----------
        size : int or tuple of ints, optional
            Output shape; ``None`` gives one float.
        rng : optional
            Anything :func:`numpy.random.default_rng` takes.
        leftover : {"refuse", "largest"}
            Only matters for a Kaplan–Meier estimate that stops below 1
            (largest observation censored). ``"refuse"`` (default) raises, as
            the mass beyond is unknown; ``"largest"`` puts the leftover mass on
            the largest observation (Efron's 1967 convention of treating it as
            an event), which biases the upper tail low.

        Examples
        --------
        >>> ECDF([1, 2, 3], weights=[0, 1, 3]).sample(6, rng=0).tolist()
        [3.0, 3.0, 2.0, 2.0, 3.0, 3.0]
        """
        dims = shape(size)
        choice(leftover, field="leftover", options=("refuse", "largest"))
        xs, ps = self._x, self._p
        if ps[-1] < 1.0:
            if leftover == "refuse":
                raise fail(
                    "a Kaplan–Meier estimate must reach F=1 to be resampled",
                    f"F={ps[-1]:.6g} (the largest observation, {self._data_max!r}, is "
                    f"censored), so {1 - ps[-1]:.6g} of the mass has no known place",
                    "Pass leftover='largest' to put it on the largest observation, or sample "
                    "a sketch with an explicit upper tail instead.",
                    field="leftover",
                    value=leftover,
                )
            if self._data_max > xs[-1]:
                xs = np.concatenate((xs, [self._data_max]))
                ps = np.concatenate((ps, [1.0]))
            else:
                ps = np.concatenate((ps[:-1], [1.0]))
        gen = np.random.default_rng(rng)
        u = gen.random(dims)
        i = np.minimum(np.searchsorted(ps, u, side="right"), xs.size - 1)
        out = xs[i]
        return float(out) if size is None else out

    # ------------------------------------------------------------ band
    def band(self, *, level: float = 0.95) -> Band:
        """Simultaneous DKW–Massart band ``clip(F_n ± ε, 0, 1)``, ``ε = dkw_eps(n)``.

        ``n`` is the Kish effective size for weighted data (an approximation:
        the DKW inequality is proved for unweighted i.i.d. samples). With
        censoring this refuses: DKW around the Kaplan–Meier estimate is not a
        valid band; see the message for an alternative.

        Examples
        --------
        >>> b = ECDF(np.arange(100)).band(level=0.95)
        >>> round(b.eps, 6), b.lower(49), round(b.upper(49), 6)
        (0.13581, 0.36419, 0.63581)
        """
        lv = check_level(level)
        if self._censoring:
            raise fail(
                "a DKW band needs uncensored data (the inequality holds for uncensored "
                "i.i.d. samples; around a Kaplan–Meier estimate its coverage is unknown)",
                "a right-censored sample",
                "Use a simultaneous band made for censored data, e.g. the Hall–Wellner "
                "(1980) or equal-precision (Nair 1984) bands (lifelines and R's km.ci provide "
                "them), or judge against the uncensored part only if censoring is ignorable.",
                field="censored",
            )
        eps = dkw_eps(self._n_eff, level=lv)
        return Band(eps=eps, level=lv, n=self._n_eff, x=self._x, p=self._p)

    # ------------------------------------------------------------ outline
    def steps(self, *, max_points: int = 2000, tolerance: float | None = None) -> StepOutline:
        """The staircase for drawing, decimated for large samples.

        The exact outline has two vertices per jump point. When that is more
        than ``max_points``, jump points are kept by bins of ``p`` of width
        ``tolerance``: in each bin ``(k·tol, (k+1)·tol]`` the first and the last
        jump point are kept. Between two kept points the exact ECDF rises by
        less than ``tolerance`` (same bin) or not at all (neighbouring
        non-empty bins), so the drawn staircase ``D`` (a step function with
        jumps only at kept points) satisfies ``0 ≤ F(t) - D(t) < tolerance`` for
        every ``t`` (up to the rounding of ``p / tolerance``, ~1e-15); it has at
        most ``4·ceil(1/tolerance)`` vertices. The error reached is returned as
        ``max_error``.

        Parameters
        ----------
        max_points : int
            Most vertices wanted (≥ 8).
        tolerance : float, optional
            Largest error in ``p`` allowed; default ``1 / floor(max_points/4)``
            (0.002 for 2000 points). Must allow ``max_points``:
            ``4·ceil(1/tolerance) ≤ max_points``.

        Examples
        --------
        >>> out = ECDF(np.arange(10_000)).steps(max_points=400)
        >>> out.x.size <= 400, out.tolerance, out.max_error < out.tolerance
        (True, 0.01, True)
        """
        return decimate(self._x, self._p, max_points=max_points, tolerance=tolerance)
