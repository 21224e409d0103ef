"""The one door data come in by (numpy and stdlib only).

:func:`as_data` (and :func:`as_aligned_data`, with weights or a censoring
mask) reads lists, tuples, numpy arrays (masked ones too) and pandas Series
(by duck typing: pandas is never imported). Missing values (NaN, ``None``,
``pd.NA``) and masked entries are dropped with a :class:`DroppedValuesWarning`
that counts them; anything else that is not a usable sample raises a
:class:`~cdfsketch._validate.DataError` saying what must hold, what was found
and the remedy. Nothing is dropped silently, and no numpy or pandas message
reaches the user in place of ours.

Refused, each with its remedy: ±inf; text, booleans, complex numbers,
dates, durations and categories (convert them to numbers yourself, in the
unit you mean); more than one dimension and ragged lists; generators,
iterators, sets and mappings (no order to align weights with: pass a list);
fewer values than the caller needs.

Weights only matter by their ratios: they are returned divided by the
largest weight, so sums of huge weights (1e308 each) do not overflow and
tiny ones (subnormal) do not vanish.

Examples
--------
>>> as_data([3, 1, 2]).tolist()
[3.0, 1.0, 2.0]
>>> _, w, _ = as_aligned_data([1, 2, 3], weights=[1e308, 1e308, 1.6e308])
>>> w.round(3).tolist()
[0.625, 0.625, 1.0]
"""

from __future__ import annotations

import numbers
import warnings
from collections.abc import Iterator, Mapping, Set
from typing import Any

import numpy as np

from .._validate import DataError, fail, first_bad, quote

__all__ = ["DataError", "DroppedValuesWarning", "as_aligned_data", "as_data"]

ArrayLike = Any


class DroppedValuesWarning(UserWarning):
    """Missing or masked values were dropped from the data; the message counts them."""


def _refuse(name: str, must: str, found: str, remedy: str, *, index: Any = None, value: Any = None):
    return fail(must, found, remedy, error=DataError, field=name, index=index, value=value)


def _dtype_text(values: Any) -> str:
    return str(getattr(values, "dtype", "") or "")


def _refuse_kind(values: Any, name: str) -> None:
    """Refuse dates, durations and categories (pandas or numpy), with the remedy."""
    dt = _dtype_text(values)
    kind = getattr(getattr(values, "dtype", None), "kind", "")
    if dt == "category":
        raise _refuse(
            name,
            f"{name} must be numbers",
            "a categorical column (its codes or labels are not measurements)",
            f"Convert it yourself, e.g. {name}.astype(float) if the labels are numbers.",
            value=values,
        )
    if kind == "M" or dt.startswith("datetime"):
        raise _refuse(
            name,
            f"{name} must be numbers",
            f"dates (dtype {dt})",
            "Convert them to durations in the unit you mean, e.g. "
            f"({name} - start) / pandas.Timedelta(hours=1) or np.timedelta64(1, 'h').",
            value=values,
        )
    if kind == "m" or dt.startswith("timedelta"):
        raise _refuse(
            name,
            f"{name} must be numbers",
            f"durations (dtype {dt})",
            f"Convert them to numbers in the unit you mean, e.g. {name} / np.timedelta64(1, 'h').",
            value=values,
        )


def _to_numpy(values: Any, name: str) -> tuple[np.ndarray, np.ndarray | None]:
    """``values`` as a numpy array and the mask of masked entries (or ``None``)."""
    if isinstance(values, str | bytes):
        raise _refuse(
            name,
            f"{name} must be numbers",
            f"the text {quote(values)}",
            "Pass a list or an array of numbers (parse the text first).",
            value=values,
        )
    if isinstance(values, Mapping | Set) or (
        isinstance(values, Iterator) and not isinstance(values, np.ndarray)
    ):
        kind = type(values).__name__
        raise _refuse(
            name,
            f"{name} must be a sequence (list, tuple, array or Series)",
            f"a {kind}",
            "A set or mapping has no order to align weights with, and a generator is "
            f"used up once: pass list({name}) (or list({name}.values()) for a mapping).",
            value=values,
        )
    _refuse_kind(values, name)
    if isinstance(values, np.ma.MaskedArray):
        mask = np.ma.getmaskarray(values)
        arr = np.asarray(values.data)
        return arr, (mask if mask.any() else None)
    to_numpy = getattr(values, "to_numpy", None)
    if callable(to_numpy) and not isinstance(values, np.ndarray):
        try:  # pandas nullable dtypes: pd.NA becomes NaN
            return np.asarray(to_numpy(dtype=float, na_value=np.nan)), None
        except (TypeError, ValueError):
            return np.asarray(to_numpy()), None
    try:
        return np.asarray(values), None
    except (TypeError, ValueError):
        raise _refuse(
            name,
            f"{name} must be one value per observation",
            "a ragged or nested list (rows of different lengths)",
            f"Pass a flat list of numbers, e.g. [v for row in {name} for v in row].",
            value=values,
        ) from None


def _object_to_float(arr: np.ndarray, name: str) -> np.ndarray:
    out = np.empty(arr.shape, dtype=float)
    for i, v in enumerate(arr.ravel()):
        if v is None:
            out.flat[i] = np.nan
        elif isinstance(v, bool | np.bool_) or not isinstance(v, numbers.Real):
            if isinstance(v, list | tuple | np.ndarray):
                raise _refuse(
                    name,
                    f"{name} must be one value per observation",
                    f"a nested sequence {quote(v)} at index {i}",
                    f"Pass a flat list of numbers, e.g. [v for row in {name} for v in row].",
                    index=i,
                    value=v,
                )
            raise _refuse(
                name,
                f"{name} must be real numbers",
                f"{quote(v)} ({type(v).__name__}) at index {i}",
                "Convert or remove the non-numeric entries first (missing values may be "
                "None or NaN).",
                index=i,
                value=v,
            )
        else:
            out.flat[i] = float(v)
    return out


def _float_vector(values: Any, name: str) -> tuple[np.ndarray, np.ndarray | None]:
    """``values`` as a 1-D float array (NaN kept) and its mask, or raise DataError."""
    arr, mask = _to_numpy(values, name)
    _refuse_kind(arr, name)
    if arr.dtype == object:
        arr = _object_to_float(arr, name)
    elif arr.dtype.kind == "b":
        raise _refuse(
            name,
            f"{name} must be real numbers",
            f"booleans (dtype {arr.dtype})",
            f"Convert them explicitly if you mean 0/1, e.g. np.asarray({name}, dtype=float).",
            value=values,
        )
    elif arr.dtype.kind not in "iuf":
        first = f", first value {quote(arr.ravel()[0].item())}" if arr.size else ""
        what = "complex numbers" if arr.dtype.kind == "c" else f"values of dtype {arr.dtype}"
        raise _refuse(
            name,
            f"{name} must be real numbers",
            f"{what}{first}",
            f"Convert the values to real numbers first, e.g. np.asarray({name}, dtype=float).",
            value=values,
        )
    if arr.ndim != 1:
        raise _refuse(
            name,
            f"{name} must be one-dimensional (one value per observation)",
            f"shape {arr.shape}",
            f"Pass a single column, e.g. np.ravel({name}) or {name}[:, 0].",
            value=values,
        )
    out = np.asarray(arr, dtype=float)
    if mask is not None:
        out = np.where(mask, np.nan, out)
    return out, mask


#: elements compared per step when checking order (early exit; no array of n flags)
_ORDER_CHUNK = 1 << 18


def _is_sorted(x: np.ndarray) -> bool:
    """Whether ``x`` is non-decreasing (False when it holds a NaN: comparisons are false).

    Checked a chunk at a time, so unsorted data are told after the first
    unsorted chunk and no temporary of ``n`` flags is made.
    """
    n = x.size
    if n == 0:
        return False
    for start in range(0, n - 1, _ORDER_CHUNK):
        stop = min(start + _ORDER_CHUNK, n - 1)
        if not bool(np.all(x[start + 1 : stop + 1] >= x[start:stop])):
            return False
    return n > 1 or not bool(np.isnan(x[0]))


def _valid_plain(x: np.ndarray, distinct: int) -> bool:
    """Fast intake check for data without weights or mask (two passes, no temporaries).

    ``min`` and ``max`` propagate NaN and hold any ±inf, so finite ends mean
    every value is finite; the data hold two distinct values exactly when
    they differ. False sends the data down the full path (which says what is wrong).
    """
    if x.size < max(distinct, 1):
        return False
    lo, hi = x.min(), x.max()
    return bool(np.isfinite(lo) and np.isfinite(hi) and (distinct < 2 or lo < hi))


def _censoring(censored: Any, x: np.ndarray, name: str) -> np.ndarray:
    carr, _ = _to_numpy(censored, "censored")
    if carr.ndim != 1 or carr.size != x.size:
        raise _refuse(
            "censored",
            "censored must be a 1-D mask with one flag per observation",
            f"shape {carr.shape} for {x.size} values of {name}",
            "Pass a boolean array (True = right-censored).",
            value=censored,
        )
    if carr.dtype.kind == "b":
        return carr.astype(bool)
    try:
        cf = np.asarray(carr, dtype=float)
    except (TypeError, ValueError):
        cf = np.full(carr.shape, np.nan)
    i = first_bad(~np.isin(cf, (0.0, 1.0)))
    if i is not None:
        raise _refuse(
            "censored",
            "censored must be True/False (or 1/0)",
            f"{quote(carr[i].item())} at index {i}",
            "Pass a boolean mask, True where the observation is right-censored.",
            index=i,
            value=carr[i].item(),
        )
    return cf.astype(bool)


def _weights(w: np.ndarray) -> np.ndarray:
    i = first_bad(~np.isfinite(w) | (w < 0))
    if i is not None:
        raise _refuse(
            "weights",
            "weights must be finite and non-negative",
            f"weights[{i}]={quote(float(w[i]))} (index after dropping missing data)",
            "Fix or remove that weight.",
            index=i,
            value=float(w[i]),
        )
    top = float(w.max()) if w.size else 0.0
    if not top > 0:
        raise _refuse(
            "weights",
            "weights must have a positive sum",
            "all zero",
            "Give at least two observations a positive weight.",
        )
    return w / top  # only ratios matter: the largest becomes 1 (no overflow, no underflow)


def as_aligned_data(
    data: ArrayLike,
    *,
    weights: ArrayLike | None = None,
    censored: ArrayLike | None = None,
    name: str = "data",
    distinct: int = 2,
) -> tuple[np.ndarray, np.ndarray | None, np.ndarray | None]:
    """Read data with optional weights and censoring mask, kept aligned.

    Missing values in ``data`` (and masked entries of a masked array) are
    dropped together with their weight and censoring flag, with a
    :class:`DroppedValuesWarning` that counts them. ``weights`` must be finite
    and non-negative with a positive sum; they are returned divided by the
    largest weight (only ratios matter). ``censored`` is a boolean mask (or
    0/1), ``True`` for a right-censored observation.

    Parameters
    ----------
    data : array_like
        A 1-D sample: list, tuple, numpy (masked) array or pandas Series.
    weights, censored : array_like, optional
        One entry per observation of ``data`` (before dropping).
    name : str
        What to call the data in messages.
    distinct : int
        How many distinct values (with positive weight) are needed: 2 for a
        distribution (the default), 1 to score a model on observations.

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
    ([3.0, 1.0, 2.0], [0.5, 1.0, 0.5], [False, True, False])
    """
    if distinct == 1 and isinstance(data, numbers.Real) and not isinstance(data, bool | np.bool_):
        data = [data]  # one observation to score a model on
    x, mask = _float_vector(data, name)
    if weights is None and censored is None and mask is None and _valid_plain(x, distinct):
        return x, None, None
    w = c = None
    if weights is not None:
        w, _ = _float_vector(weights, "weights")
        if w.size != x.size:
            raise _refuse(
                "weights",
                "weights must have one entry per observation",
                f"{w.size} weights for {x.size} values of {name}",
                "Pass weights aligned with the data.",
            )
    if censored is not None:
        c = _censoring(censored, x, name)
    missing = np.isnan(x)
    n_missing = int(missing.sum())
    if n_missing:
        n_masked = 0 if mask is None else int(mask.sum())
        what = (
            f"{n_masked} masked and {n_missing - n_masked} missing value(s)"
            if n_masked
            else f"{n_missing} missing value(s) (NaN/None)"
        )
        first = np.flatnonzero(missing)[:5].tolist()
        warnings.warn(
            f"Dropped {what} from {name} of {x.size}, at indices {first}"
            f"{' ...' if n_missing > 5 else ''}; {x.size - n_missing} remain. "
            "Fill or remove them yourself to silence this warning.",
            DroppedValuesWarning,
            stacklevel=3,
        )
        keep = ~missing
        x = x[keep]
        w = None if w is None else w[keep]
        c = None if c is None else c[keep]
    i = first_bad(np.isinf(x))
    if i is not None:
        raise _refuse(
            name,
            f"{name} must be finite",
            f"{float(x[i])!r} at index {i} (after dropping missing values; "
            f"{int(np.isinf(x).sum())} infinite value(s) in all)",
            "Remove them, or replace them by the value they stand for; an unbounded end "
            "is described by a tail.",
            index=i,
            value=float(x[i]),
        )
    if x.size == 0:
        raise _refuse(
            name,
            f"{name} must hold at least {'two distinct values' if distinct > 1 else 'one value'}",
            f"none{' (all were missing)' if n_missing else ''}",
            "Pass the observations.",
        )
    if w is not None:
        w = _weights(w)
    if c is not None and c.all():
        raise _refuse(
            "censored",
            "at least one observation must be uncensored",
            f"all {c.size} censored",
            "The Kaplan–Meier estimate has no events to step at; check the mask (True = censored).",
        )
    if distinct > 1:
        live = x if w is None else x[w > 0]
        if live.size == 0 or live.min() == live.max():
            value = live[0] if live.size else x[0]
            raise _refuse(
                name,
                f"{name} must hold at least two distinct values",
                f"only {float(value)!r} ({live.size} observation(s) with positive weight)",
                "A single value is a point mass, not a distribution: add observations or "
                "state the sketch by hand.",
                value=float(value),
            )
    return x, w, c


def as_data(data: ArrayLike, *, name: str = "data", distinct: int = 2) -> np.ndarray:
    """Read a one-dimensional sample as a float array, or say clearly why not.

    Accepts lists, tuples, numpy arrays (masked entries dropped) and pandas
    Series (read with ``to_numpy``; pandas is not imported). Missing values
    (NaN, ``None``, ``pd.NA``) are dropped with a :class:`DroppedValuesWarning`
    that counts them.

    Parameters
    ----------
    data : array_like
        The observations.
    name : str
        What to call the data in messages.
    distinct : int
        Distinct values needed (2: a distribution; 1: observations to score a
        model on, a single number allowed).

    Returns
    -------
    ndarray
        Float64 values in the order given, missing values removed.

    Raises
    ------
    DataError
        For ±inf; text, booleans, complex numbers, dates, durations or
        categories; more than one dimension or ragged lists; generators, sets
        or mappings; no values, or fewer distinct values than ``distinct``.

    Examples
    --------
    >>> as_data([3, 1, 2]).tolist()
    [3.0, 1.0, 2.0]
    >>> as_data([1.0, 1.0])
    Traceback (most recent call last):
    ...
    cdfsketch._validate.DataError: data must hold at least two distinct values; got only 1.0 ...
    """
    return as_aligned_data(data, name=name, distinct=distinct)[0]
