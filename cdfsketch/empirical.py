"""The empirical distribution of data: intake, ECDF, confidence band, step outline.

* :func:`as_data` (and :func:`as_aligned_data` with weights or a censoring
  mask) is the one door data come in by: lists, numpy arrays and pandas
  Series (read by duck typing, pandas is never imported). Missing values
  (NaN, and ``None`` in object arrays) are dropped with a
  :class:`DroppedValuesWarning` that counts them; anything else that is not a
  usable sample (±inf, text, 2-D, empty, a single distinct value) raises a
  :class:`DataError` saying what must hold, what was found and the remedy.
  Nothing is dropped silently.
* :class:`ECDF` is the empirical CDF with ties and weights handled exactly;
  with a right-censoring mask it is the Kaplan–Meier estimate (Kaplan & Meier
  1958, JASA 53:457–481).
* :meth:`ECDF.band` is the simultaneous Dvoretzky–Kiefer–Wolfowitz band with
  Massart's (1990, Ann. Probab. 18:1269–1283) tight constant; see
  :func:`dkw_eps`.
* :meth:`ECDF.steps` is the step outline for drawing, decimated for large
  samples with a stated bound on the error in ``p``.

Only numpy and the standard library are imported here.
"""

from __future__ import annotations

import math
import numbers
import warnings
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from ._checks import check_size

__all__ = [
    "ECDF",
    "Band",
    "DataError",
    "DroppedValuesWarning",
    "StepOutline",
    "as_aligned_data",
    "as_data",
    "dkw_eps",
]

ArrayLike = Any


class DataError(ValueError):
    """Data that cannot be used as a one-dimensional sample (a :class:`ValueError`)."""


class DroppedValuesWarning(UserWarning):
    """Missing values (NaN, None) were dropped from the data; the message counts them."""


# ---------------------------------------------------------------- intake


def _to_numpy(values: Any) -> np.ndarray:
    """``values`` as a numpy array, reading pandas-like objects by duck typing."""
    to_numpy = getattr(values, "to_numpy", None)
    if callable(to_numpy) and not isinstance(values, np.ndarray):
        try:  # pandas nullable dtypes: pd.NA becomes NaN
            return np.asarray(to_numpy(dtype=float, na_value=np.nan))
        except (TypeError, ValueError):
            return np.asarray(to_numpy())
    if isinstance(values, str | bytes):
        return np.asarray([values])
    return np.asarray(values)


def _object_to_float(arr: np.ndarray, name: str) -> np.ndarray:
    out = np.empty(arr.shape, dtype=float)
    flat = arr.ravel()
    for i, v in enumerate(flat):
        if v is None:
            out.flat[i] = np.nan
        elif isinstance(v, bool | np.bool_) or not isinstance(v, numbers.Real):
            raise DataError(
                f"{name} must be real numbers; got {v!r} ({type(v).__name__}) at index {i}. "
                f"Convert or remove the non-numeric entries, e.g. "
                f"pandas.to_numeric({name}, errors='coerce') to turn them into NaN."
            )
        else:
            out.flat[i] = float(v)
    return out


def _float_vector(values: Any, name: str) -> np.ndarray:
    """Read ``values`` as a 1-D float array (NaN kept), or raise :class:`DataError`."""
    arr = _to_numpy(values)
    if arr.dtype == object:
        arr = _object_to_float(arr, name)
    elif arr.dtype.kind == "b":
        raise DataError(
            f"{name} must be real numbers; got booleans (dtype {arr.dtype}). Convert them "
            f"explicitly if you mean 0/1, e.g. np.asarray({name}, dtype=float)."
        )
    elif arr.dtype.kind not in "iuf":
        first = f" (first value {arr.ravel()[0]!r} at index 0)" if arr.size else ""
        raise DataError(
            f"{name} must be real numbers; got an array of dtype {arr.dtype}{first}. "
            f"Convert the values to numbers first, e.g. np.asarray({name}, dtype=float)."
        )
    if arr.ndim != 1:
        raise DataError(
            f"{name} must be one-dimensional (one value per observation); got shape "
            f"{arr.shape}. Pass a single column, e.g. np.ravel({name}) or {name}[:, 0]."
        )
    return np.asarray(arr, dtype=float)


def _is_sorted(x: np.ndarray) -> bool:
    """Whether ``x`` is non-decreasing (False when it holds a NaN: comparisons are false)."""
    return x.size >= 1 and bool(np.all(x[1:] >= x[:-1]))


def _valid_sorted(x: np.ndarray) -> bool:
    """Fast intake check for sorted data, or False to take the full path (which explains).

    A non-decreasing float array has no NaN (every comparison with NaN is false), keeps any
    ±inf at its ends, and holds two distinct values exactly when its ends differ: one pass
    (the order check) instead of separate passes for NaN, inf, min and max.
    """
    return (
        x.size >= 2
        and _is_sorted(x)
        and bool(np.isfinite(x[0]) and np.isfinite(x[-1]))
        and bool(x[0] < x[-1])
    )


def as_aligned_data(
    data: ArrayLike,
    *,
    weights: ArrayLike | None = None,
    censored: ArrayLike | None = None,
    name: str = "data",
) -> tuple[np.ndarray, np.ndarray | None, np.ndarray | None]:
    """Read data with optional weights and censoring mask, kept aligned.

    Missing values in ``data`` are dropped together with their weight and
    censoring flag (with a :class:`DroppedValuesWarning`). ``weights`` must be
    finite and non-negative with a positive sum; ``censored`` is a boolean
    mask (or 0/1), ``True`` for a right-censored observation.

    Parameters
    ----------
    data : array_like
        A 1-D sample: list, numpy array or pandas Series.
    weights, censored : array_like, optional
        One entry per observation of ``data`` (before dropping).
    name : str
        What to call the data in messages.

    Returns
    -------
    data, weights, censored : ndarray
        Float data, float weights (or ``None``), boolean mask (or ``None``).

    Raises
    ------
    DataError
        See :func:`as_data`; also for misaligned, negative or non-finite weights,
        non-boolean censoring flags, or every observation censored.

    Examples
    --------
    >>> x, w, c = as_aligned_data([3.0, 1.0, 2.0], weights=[1, 2, 1], censored=[0, 1, 0])
    >>> x.tolist(), w.tolist(), c.tolist()
    ([3.0, 1.0, 2.0], [1.0, 2.0, 1.0], [False, True, False])
    """
    x = _float_vector(data, name)
    if weights is None and censored is None and _valid_sorted(x):
        return x, None, None
    w = c = None
    if weights is not None:
        w = _float_vector(weights, "weights")
        if w.size != x.size:
            raise DataError(
                f"weights must have one entry per observation; got {w.size} weights for "
                f"{x.size} values of {name}. Pass weights aligned with the data."
            )
    if censored is not None:
        carr = _to_numpy(censored)
        if carr.ndim != 1 or carr.size != x.size:
            raise DataError(
                f"censored must be a 1-D mask with one flag per observation; got shape "
                f"{carr.shape} for {x.size} values of {name}. Pass a boolean array "
                "(True = right-censored)."
            )
        if carr.dtype.kind == "b":
            c = carr.astype(bool)
        else:
            try:
                cf = np.asarray(carr, dtype=float)
            except (TypeError, ValueError):
                cf = np.full(carr.shape, np.nan)
            bad = np.flatnonzero(~np.isin(cf, (0.0, 1.0)))
            if bad.size:
                i = int(bad[0])
                raise DataError(
                    f"censored must be True/False (or 1/0); got {carr[i].item()!r} at index {i}. "
                    "Pass a boolean mask, True where the observation is right-censored."
                )
            c = cf.astype(bool)
    missing = np.isnan(x)
    n_missing = int(missing.sum())
    if n_missing:
        first = np.flatnonzero(missing)[:5].tolist()
        warnings.warn(
            f"Dropped {n_missing} missing value(s) (NaN/None) from {name} of {x.size}, at "
            f"indices {first}{' ...' if n_missing > 5 else ''}; {x.size - n_missing} remain. "
            "Fill or remove them yourself to silence this warning.",
            DroppedValuesWarning,
            stacklevel=3,
        )
        keep = ~missing
        x = x[keep]
        w = None if w is None else w[keep]
        c = None if c is None else c[keep]
    inf = np.flatnonzero(np.isinf(x))
    if inf.size:
        i = int(inf[0])
        raise DataError(
            f"{name} must be finite; got {float(x[i])!r} at index {i} (after dropping missing "
            f"values; {inf.size} infinite value(s) in all). Remove them, or replace them by "
            "the value they stand for; an unbounded end is described by a tail."
        )
    if x.size == 0:
        raise DataError(
            f"{name} must hold at least two distinct values; got none"
            f"{' (all were missing)' if n_missing else ''}. Pass the observations."
        )
    if w is not None:
        bad = np.flatnonzero(~np.isfinite(w) | (w < 0))
        if bad.size:
            i = int(bad[0])
            raise DataError(
                f"weights must be finite and non-negative; got weights[{i}]={float(w[i])!r} (index "
                "after dropping missing data). Fix or remove that weight."
            )
        if not w.sum() > 0:
            raise DataError(
                "weights must have a positive sum; got all zero. Give at least two "
                "observations a positive weight."
            )
    if c is not None and c.all():
        raise DataError(
            f"At least one observation must be uncensored; got all {c.size} censored. "
            "The Kaplan–Meier estimate has no events to step at; check the mask "
            "(True = censored)."
        )
    live = x if w is None else x[w > 0]
    if live.size == 0 or live.min() == live.max():
        value = live[0] if live.size else x[0]
        raise DataError(
            f"{name} must hold at least two distinct values; got only {float(value)!r} "
            f"({live.size} observation(s) with positive weight). A single value is a point "
            "mass, not a distribution: add observations or state the sketch by hand."
        )
    return x, w, c


def as_data(data: ArrayLike, *, name: str = "data") -> np.ndarray:
    """Read a one-dimensional sample as a float array, or say clearly why not.

    Accepts lists, numpy arrays and pandas Series (read with ``to_numpy``;
    pandas is not imported). Missing values (NaN, ``None``, ``pd.NA``) are
    dropped with a :class:`DroppedValuesWarning` that counts them.

    Parameters
    ----------
    data : array_like
        The observations.
    name : str
        What to call the data in messages.

    Returns
    -------
    ndarray
        Float64 values in the order given, missing values removed.

    Raises
    ------
    DataError
        For ±inf, non-numeric or boolean values, more than one dimension, no
        values, or fewer than two distinct values.

    Examples
    --------
    >>> as_data([3, 1, 2]).tolist()
    [3.0, 1.0, 2.0]
    >>> as_data([1.0, 1.0])
    Traceback (most recent call last):
    ...
    cdfsketch.empirical.DataError: data must hold at least two distinct values; got only 1.0 ...
    """
    return as_aligned_data(data, name=name)[0]


# ---------------------------------------------------------------- band


def _check_level(level: Any) -> float:
    try:
        lv = float(level)
    except (TypeError, ValueError):
        raise ValueError(f"level must be a number in (0, 1); got {level!r}.") from None
    if not 0.0 < lv < 1.0:
        raise ValueError(
            f"level must lie strictly between 0 and 1; got {level!r}. Use e.g. 0.95 for a "
            "95 % band."
        )
    return lv


def dkw_eps(n: float, *, level: float = 0.95) -> float:
    """Half-width of the DKW–Massart simultaneous band: ``sqrt(ln(2/α) / (2n))``.

    With ``α = 1 - level``, ``P(sup_x |F_n(x) - F(x)| > ε) ≤ 2 exp(-2 n ε²)``
    holds for every continuous ``F`` and every ``n`` (Massart 1990, with the
    tight constant 2), so the band ``F_n ± ε`` covers ``F`` with probability
    at least ``level``. For weighted data pass the Kish effective size.

    Parameters
    ----------
    n : float
        Sample size (> 0).
    level : float
        Coverage probability in (0, 1).

    Examples
    --------
    >>> round(dkw_eps(100), 6)
    0.13581
    """
    lv = _check_level(level)
    try:
        nv = float(n)
    except (TypeError, ValueError):
        raise ValueError(f"n must be a positive number; got {n!r}.") from None
    if not (math.isfinite(nv) and nv > 0):
        raise ValueError(f"n must be a positive finite number; got {n!r}.")
    return math.sqrt(math.log(2.0 / (1.0 - lv)) / (2.0 * nv))


def _steps_at(xs: np.ndarray, ps: np.ndarray, v: np.ndarray, below: float) -> np.ndarray:
    """Right-continuous step function with values ``ps`` from ``xs`` on, ``below`` before."""
    i = np.searchsorted(xs, v, side="right")
    table = np.concatenate(([below], ps))
    return table[i]


def _as_points(x: ArrayLike, name: str = "x") -> tuple[np.ndarray, bool]:
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise TypeError(f"{name} must be numbers; got {x!r}. Pass a float or an array.") from None
    if np.isnan(arr).any():
        i = int(np.flatnonzero(np.isnan(arr.ravel()))[0])
        raise ValueError(f"{name} must not contain NaN; got NaN at flat index {i}. Drop it.")
    return arr, arr.ndim == 0


def _out(arr: np.ndarray, scalar: bool) -> Any:
    return float(arr) if scalar else arr


@dataclass(frozen=True, eq=False)
class Band:
    """A simultaneous confidence band around an ECDF: ``clip(F_n ± eps, 0, 1)``.

    Attributes
    ----------
    eps : float
        Half-width.
    level : float
        Coverage probability.
    n : float
        The (effective) sample size the width was computed for.
    x, p : ndarray
        The ECDF's jump points and values the band is built on.
    """

    eps: float
    level: float
    n: float
    x: np.ndarray
    p: np.ndarray

    def lower(self, x: ArrayLike) -> Any:
        """Lower edge ``max(F_n(x) - eps, 0)`` (a right-continuous step function)."""
        v, scalar = _as_points(x)
        out = np.maximum(_steps_at(self.x, self.p, v, 0.0) - self.eps, 0.0)
        return _out(out, scalar)

    def upper(self, x: ArrayLike) -> Any:
        """Upper edge ``min(F_n(x) + eps, 1)`` (a right-continuous step function)."""
        v, scalar = _as_points(x)
        out = np.minimum(_steps_at(self.x, self.p, v, 0.0) + self.eps, 1.0)
        return _out(out, scalar)

    def windows(self) -> tuple[np.ndarray, np.ndarray]:
        """For a non-decreasing ``G``: ``lo[j] ≤ G(x[j])`` and ``G(x[j]⁻) ≤ hi[j]``.

        These two inequalities at every jump point are necessary and
        sufficient for a non-decreasing ``G`` to lie inside the band
        everywhere, provided also ``G(x[-1]) ≥ lo[-1]`` (included) and
        ``G(x[0]⁻) ≤ hi[0]`` (included). The lower edge is constant on
        ``[x[j], x[j+1])`` where a non-decreasing ``G`` is smallest at
        ``x[j]``; the upper edge is constant there too and ``G`` is largest
        just before ``x[j+1]``.

        Examples
        --------
        >>> lo, hi = ECDF([1, 2, 3, 4]).band(level=0.5).windows()
        >>> lo.round(3).tolist(), hi.round(3).tolist()
        ([0.0, 0.084, 0.334, 0.584], [0.416, 0.666, 0.916, 1.0])
        """
        lo = np.maximum(self.p - self.eps, 0.0)
        hi = np.minimum(np.concatenate(([0.0], self.p[:-1])) + self.eps, 1.0)
        return lo, hi

    def excursion(
        self,
        cdf: Callable[[np.ndarray], np.ndarray],
        *,
        left_cdf: Callable[[np.ndarray], np.ndarray] | None = None,
    ) -> float:
        """Largest distance by which a non-decreasing CDF leaves the band (≤ 0: inside).

        ``max_j max(lo[j] - G(x[j]), G(x[j]⁻) - hi[j])`` over the windows of
        :meth:`windows`; exact for any non-decreasing ``G``. A negative value
        is the smallest margin to the band's edges at those points.

        Parameters
        ----------
        cdf : callable
            ``G``, vectorised.
        left_cdf : callable, optional
            ``x ↦ G(x⁻)``; by default ``G`` one floating-point step below ``x``
            (exact for a continuous ``G`` and for atoms at the points).

        Examples
        --------
        >>> b = ECDF([1, 2, 3, 4]).band(level=0.5)
        >>> round(b.excursion(lambda x: np.clip((x - 0.5) / 4, 0, 1)), 3)
        -0.125
        """
        lo, hi = self.windows()
        g = np.asarray(cdf(self.x), dtype=float)
        gl = (
            np.asarray(left_cdf(self.x), dtype=float)
            if left_cdf is not None
            else np.asarray(cdf(np.nextafter(self.x, -np.inf)), dtype=float)
        )
        return float(max(np.max(lo - g), np.max(gl - hi)))


# ---------------------------------------------------------------- outline


@dataclass(frozen=True, eq=False)
class StepOutline:
    """Vertices of the ECDF's staircase for drawing as a polyline.

    ``(x[0], 0) → (x[0], p[0])`` rises, then horizontal and vertical moves
    alternate up to ``(x[-1], 1)`` (for Kaplan–Meier: to the last value).

    Attributes
    ----------
    x, p : ndarray
        Polyline vertices.
    tolerance : float
        The stated bound: the drawn staircase ``D`` satisfies
        ``0 ≤ F(t) - D(t) < tolerance`` for all ``t`` (0 when exact).
    max_error : float
        The largest ``F(t) - D(t)`` actually reached.
    """

    x: np.ndarray
    p: np.ndarray
    tolerance: float
    max_error: float


def _outline(xs: np.ndarray, ps: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    vx = np.repeat(xs, 2)
    vp = np.empty(vx.size)
    vp[0::2] = np.concatenate(([0.0], ps[:-1]))
    vp[1::2] = ps
    return vx, vp


# ---------------------------------------------------------------- ECDF


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
            # sorted input (checked in one pass) is used as it is, without a copy
            xs = x if _is_sorted(x) else np.sort(x)
            new = np.empty(n, dtype=bool)
            np.not_equal(xs[1:], xs[:-1], out=new[:-1])
            new[-1] = True
            last = np.flatnonzero(new)
            ux = xs[last]
            p = (last + 1) / n
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
        ux = np.ascontiguousarray(ux, dtype=float)
        p = np.ascontiguousarray(p, dtype=float)
        ux.setflags(write=False)
        p.setflags(write=False)
        self._x = ux
        self._p = p
        self._n = int(n)
        self._n_eff = n_eff
        self._censoring = c is not None
        self._data_max = float(xs[-1]) if w is None and c is None else float(x.max())

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

    # ------------------------------------------------------------ evaluation
    def cdf(self, x: ArrayLike) -> Any:
        """``F_n(x)``, right-continuous; a scalar for a scalar.

        Examples
        --------
        >>> ECDF([1, 2, 2, 4]).cdf(2)
        0.75
        """
        v, scalar = _as_points(x)
        return _out(_steps_at(self._x, self._p, v, 0.0), scalar)

    def ppf(self, u: ArrayLike) -> Any:
        """Generalized inverse: the smallest jump point ``x`` with ``F_n(x) ≥ u``.

        ``ppf(0)`` is the smallest jump point. For Kaplan–Meier ending below 1,
        ``u`` above :attr:`total_mass` has no such ``x`` and gives ``inf``.

        Examples
        --------
        >>> ECDF([1, 2, 3, 4]).ppf([0, 0.25, 0.26, 1]).tolist()
        [1.0, 1.0, 2.0, 4.0]
        """
        v, scalar = _as_points(u, "u")
        bad = np.flatnonzero(((v < 0) | (v > 1)).ravel())
        if bad.size:
            i = int(bad[0])
            raise ValueError(
                f"u must be probabilities in [0, 1]; got {v.ravel()[i].item()!r} at flat "
                f"index {i}. Rescale or clip them."
            )
        i = np.searchsorted(self._p, v, side="left")
        table = np.concatenate((self._x, [np.inf]))
        return _out(table[i], scalar)

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
        shape = check_size(size)
        if leftover not in ("refuse", "largest"):
            raise ValueError(f"leftover must be 'refuse' or 'largest'; got {leftover!r}.")
        xs, ps = self._x, self._p
        if ps[-1] < 1.0:
            if leftover == "refuse":
                raise ValueError(
                    f"This Kaplan–Meier estimate reaches only F={ps[-1]:.6g} (the largest "
                    f"observation, {self._data_max!r}, is censored), so {1 - ps[-1]:.6g} of the "
                    "mass has no known place. Pass leftover='largest' to put it on the largest "
                    "observation, or sample a sketch with an explicit upper tail instead."
                )
            if self._data_max > xs[-1]:
                xs = np.concatenate((xs, [self._data_max]))
                ps = np.concatenate((ps, [1.0]))
            else:
                ps = np.concatenate((ps[:-1], [1.0]))
        gen = np.random.default_rng(rng)
        u = gen.random(shape)
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
        lv = _check_level(level)
        if self._censoring:
            raise ValueError(
                "A DKW band around a Kaplan–Meier estimate is not valid as it is (the "
                "inequality holds for uncensored i.i.d. samples). cdfsketch refuses rather "
                "than draw a band with unknown coverage. Use a simultaneous band made for "
                "censored data, e.g. the Hall–Wellner (1980) or equal-precision (Nair 1984) "
                "bands (lifelines and R's km.ci provide them), or judge against the "
                "uncensored part only if censoring is ignorable."
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
        if isinstance(max_points, bool) or not isinstance(max_points, numbers.Integral):
            raise TypeError(f"max_points must be an integer ≥ 8; got {max_points!r}.")
        if max_points < 8:
            raise ValueError(f"max_points must be ≥ 8; got {max_points}. Allow more vertices.")
        if tolerance is None:
            tol = 1.0 / (int(max_points) // 4)
        else:
            try:
                tol = float(tolerance)
            except (TypeError, ValueError):
                raise TypeError(f"tolerance must be a number; got {tolerance!r}.") from None
            if not 0.0 < tol <= 1.0:
                raise ValueError(f"tolerance must lie in (0, 1]; got {tolerance!r}.")
            if 4 * math.ceil(1.0 / tol - 1e-12) > max_points:
                raise ValueError(
                    f"tolerance={tol!r} may need up to {4 * math.ceil(1 / tol)} vertices, more "
                    f"than max_points={max_points}. Raise max_points or loosen the tolerance."
                )
        xs, ps = self._x, self._p
        if 2 * xs.size <= max_points:
            vx, vp = _outline(xs, ps)
            return StepOutline(vx, vp, 0.0, 0.0)
        # bin of p: clip(ceil(p / tol), 1, nbins) (clipped so that rounding of p / tol at
        # p = 1 cannot open an extra bin). It is non-decreasing along ps, so the bins'
        # boundaries are found by binary search on the p levels, O(nbins · log m), instead
        # of a pass over every jump point; candidates are then corrected by evaluating the
        # bin formula itself next to them, so the kept points are exactly those where the
        # bin changes.
        nbins = math.ceil(1.0 / tol - 1e-12)
        m = xs.size

        def bin_of(i: np.ndarray) -> np.ndarray:
            return np.clip(np.ceil(ps[i] / tol), 1, nbins)

        level = np.arange(1, nbins, dtype=float)
        # ends[k-1]: how many jump points lie in bins 1..k
        ends = np.searchsorted(ps, level * tol, side="right")
        for _ in range(64):
            up = (ends < m) & (bin_of(np.minimum(ends, m - 1)) <= level)
            down = (ends > 0) & (bin_of(np.maximum(ends - 1, 0)) > level)
            if not (up.any() or down.any()):
                break
            ends = ends + up - down
        bounds = np.concatenate(([0], ends, [m]))
        first, stop = bounds[:-1], bounds[1:]
        full = stop > first
        first, last = first[full], stop[full] - 1
        idx = np.unique(np.concatenate((first, last)))
        # error F - D: inside a bin it grows up to the jump before the bin's last point
        inner = last - first >= 2
        max_error = float(np.max(ps[last[inner] - 1] - ps[first[inner]])) if inner.any() else 0.0
        vx, vp = _outline(xs[idx], ps[idx])
        return StepOutline(vx, vp, tol, max_error)
