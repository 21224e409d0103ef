"""One home for argument checks and the error template (numpy and stdlib only).

Every public function reads its arguments through the helpers here, so a rule
("a number, not a bool", "an integer ≥ 1", "probabilities in [0, 1]") is
written once and worded once. Errors follow one template — what must hold,
what was found (with the index), the remedy — and carry the field, the index
and the value found as attributes, so programs can act on them without
parsing text::

    Knot probabilities must be non-decreasing; got p[3]=0.42 < p[2]=0.57.
    Sort the knots by x, or repair them with cdfsketch.project_knots().

What a message quotes of a value is capped (:func:`quote`), so a 1 MB name
never becomes a 1 MB message.

Examples
--------
>>> number(2.5, field="scale", low=0, low_open=True)
2.5
>>> try:
...     integer(True, field="size", low=1)
... except InputError as exc:
...     print(exc.field, "|", exc)
size | size must be an integer ≥ 1; got True (a bool). Pass a whole number, e.g. size=10.
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np

__all__ = [
    "DataError",
    "InputError",
    "JudgementError",
    "KnotError",
    "SpecError",
    "choice",
    "first_bad",
    "flag",
    "integer",
    "mapping",
    "number",
    "probabilities",
    "quote",
    "shape",
    "text",
    "values",
]

#: How many characters of a value an error message quotes at most.
QUOTE_LIMIT = 80


class InputError(ValueError):
    """An argument or input that breaks a stated rule (a :class:`ValueError`).

    Attributes
    ----------
    field : str or None
        The argument, spec field or column at fault (``"p"``, ``"tails.upper.scale"``).
    index : int or tuple or None
        Where in it, when it is an array or a list.
    found : object
        The offending value (as given; the message quotes at most
        :data:`QUOTE_LIMIT` characters of it).
    """

    def __init__(
        self, message: str, *, field: str | None = None, index: Any = None, found: Any = None
    ) -> None:
        super().__init__(message)
        self.field = field
        self.index = index
        self.found = found

    def __reduce__(self) -> Any:  # keep attributes through pickling (Dask workers)
        return (_rebuild, (type(self), str(self), self.field, self.index, self.found))


def _rebuild(cls: type, message: str, field: Any, index: Any, found: Any) -> InputError:
    return cls(message, field=field, index=index, found=found)


class KnotError(InputError):
    """Knots that do not describe a valid CDF."""


class SpecError(InputError):
    """Anything wrong with a spec file or text."""


class DataError(InputError):
    """Data that cannot be used as a one-dimensional sample."""


class JudgementError(InputError):
    """Stated judgements (quantiles, three points, weights) that cannot make a CDF."""


# ---------------------------------------------------------------- messages


def quote(value: Any, *, limit: int = QUOTE_LIMIT) -> str:
    """``repr(value)`` capped at ``limit`` characters, then ``… (N more)``.

    Examples
    --------
    >>> quote("A" * 200)
    "'AAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAA… (122 more)"
    >>> quote(0.1 + 0.2)
    '0.30000000000000004'
    """
    if isinstance(value, np.ndarray) and value.size > 8:
        head = np.array2string(value.ravel()[:4], separator=", ")[:-1]
        return f"{head}, …] ({value.size} values)"
    try:
        text_ = repr(value)
    except Exception:  # a broken __repr__ must not hide the real error
        text_ = f"<{type(value).__name__}>"
    if len(text_) <= limit:
        return text_
    return f"{text_[:limit]}… ({len(text_) - limit} more)"


def fail(
    must: str,
    found: str,
    remedy: str,
    *,
    error: type[InputError] = InputError,
    field: str | None = None,
    index: Any = None,
    value: Any = None,
) -> InputError:
    """Build (not raise) an error in the template ``{must}; got {found}. {remedy}``.

    Examples
    --------
    >>> e = fail("level must lie in (0, 1)", "1.5", "Pass e.g. level=0.95.", field="level")
    >>> str(e), e.field
    ('level must lie in (0, 1); got 1.5. Pass e.g. level=0.95.', 'level')
    """
    return error(f"{must}; got {found}. {remedy}", field=field, index=index, found=value)


def first_bad(mask: np.ndarray) -> int | None:
    """Flat index of the first ``True`` in ``mask``, or ``None``.

    Examples
    --------
    >>> first_bad(np.array([False, True, True])), first_bad(np.zeros(3, bool))
    (1, None)
    """
    hits = np.flatnonzero(np.asarray(mask).ravel())
    return int(hits[0]) if hits.size else None


def _kind(value: Any) -> str:
    """What kind of value was found, in words (a bool is named as such, not as an int)."""
    return "a bool" if isinstance(value, bool | np.bool_) else type(value).__name__


def _is_real(value: Any) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, bool | np.bool_)


# ---------------------------------------------------------------- scalars


def number(
    value: Any,
    *,
    field: str,
    low: float | None = None,
    high: float | None = None,
    low_open: bool = False,
    high_open: bool = False,
    finite: bool = True,
    error: type[InputError] = InputError,
    example: str | None = None,
) -> float:
    """A real number (not a bool, not a string) inside the stated limits, as a float.

    Examples
    --------
    >>> number(3, field="x")
    3.0
    >>> number(float("inf"), field="x")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: x must be a finite number; got inf. Pass a finite float...
    """
    ex = example or f"{field}=1.0"
    lo_sym = ">" if low_open else "≥"
    hi_sym = "<" if high_open else "≤"
    rule = f"{field} must be a {'finite ' if finite else ''}number"
    if low is not None and high is not None:
        rule += f" in {'(' if low_open else '['}{low:g}, {high:g}{')' if high_open else ']'}"
    elif low is not None:
        rule += f" {lo_sym} {low:g}"
    elif high is not None:
        rule += f" {hi_sym} {high:g}"
    if not _is_real(value):
        kind = _kind(value)
        raise fail(
            rule,
            f"{quote(value)} ({kind})",
            f"Pass a float, e.g. {ex}.",
            error=error,
            field=field,
            value=value,
        )
    try:
        v = float(value)
    except OverflowError:  # an int beyond the float range, e.g. 10**400
        v = math.copysign(math.inf, value)
    if math.isnan(v) or (finite and math.isinf(v)):
        raise fail(
            rule,
            quote(v),
            f"Pass a finite float, e.g. {ex}.",
            error=error,
            field=field,
            value=value,
        )
    too_low = low is not None and (v <= low if low_open else v < low)
    too_high = high is not None and (v >= high if high_open else v > high)
    if too_low or too_high:
        raise fail(rule, quote(v), f"Pass e.g. {ex}.", error=error, field=field, value=value)
    return v


def integer(
    value: Any,
    *,
    field: str,
    low: int | None = None,
    high: int | None = None,
    error: type[InputError] = InputError,
    example: str | None = None,
) -> int:
    """A whole number (``int`` or numpy integer, not a bool or a float) in ``[low, high]``.

    Examples
    --------
    >>> integer(np.int64(4), field="k", low=1)
    4
    """
    ex = example or f"{field}={max(low or 0, 10) if high is None else high}"
    if low is not None and high is not None:
        rule = f"{field} must be an integer in [{low}, {high}]"
    elif low is not None:
        rule = f"{field} must be an integer ≥ {low}"
    elif high is not None:
        rule = f"{field} must be an integer ≤ {high}"
    else:
        rule = f"{field} must be an integer"
    if isinstance(value, bool | np.bool_) or not isinstance(value, numbers.Integral):
        kind = _kind(value)
        raise fail(
            rule,
            f"{quote(value)} ({kind})",
            f"Pass a whole number, e.g. {ex}.",
            error=error,
            field=field,
            value=value,
        )
    v = int(value)
    if (low is not None and v < low) or (high is not None and v > high):
        raise fail(rule, quote(v), f"Pass e.g. {ex}.", error=error, field=field, value=value)
    return v


def text(
    value: Any,
    *,
    field: str,
    max_len: int | None = None,
    empty: bool = True,
    error: type[InputError] = InputError,
) -> str:
    """A ``str`` that can be written as UTF-8 (no lone surrogates), at most ``max_len`` long.

    Examples
    --------
    >>> text("pump repair time", field="name", max_len=500)
    'pump repair time'
    >>> text("\\ud800", field="name")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: name must be text that can be saved as UTF-8; got ...
    """
    if not isinstance(value, str):
        raise fail(
            f"{field} must be a str",
            f"{type(value).__name__} {quote(value)}",
            f"Pass text, e.g. {field}='repair time'.",
            error=error,
            field=field,
            value=value,
        )
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise fail(
            f"{field} must be text that can be saved as UTF-8",
            f"an unpaired surrogate {value[exc.start]!r} at character {exc.start}",
            "Remove it or replace it with the intended character.",
            error=error,
            field=field,
            index=exc.start,
            value=value,
        ) from None
    if max_len is not None and len(value) > max_len:
        raise fail(
            f"{field} must be at most {max_len} characters",
            f"{len(value)} characters",
            "Shorten it; longer notes belong in the rationale.",
            error=error,
            field=field,
            value=value,
        )
    if not empty and not value.strip():
        raise fail(
            f"{field} must not be empty",
            quote(value),
            f"Give the {field} in words.",
            error=error,
            field=field,
            value=value,
        )
    return value


def choice(
    value: Any, *, field: str, options: Iterable[Any], error: type[InputError] = InputError
) -> Any:
    """``value`` if it is one of ``options``.

    Examples
    --------
    >>> choice("lhs", field="design", options=("random", "lhs", "sobol"))
    'lhs'
    """
    opts = tuple(options)
    if isinstance(value, str | int | float | bool | None) and value in opts:
        return value
    listed = ", ".join(repr(o) for o in opts)
    raise fail(
        f"{field} must be one of {listed}",
        quote(value),
        f"Pick one of {listed}.",
        error=error,
        field=field,
        value=value,
    )


def flag(value: Any, *, field: str, error: type[InputError] = InputError) -> bool:
    """``value`` if it is ``True`` or ``False`` (numpy's bool too; not 0, 1 or text).

    Examples
    --------
    >>> flag(True, field="hide_held_out")
    True
    >>> flag(1, field="hide_held_out")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: hide_held_out must be True or False; got int 1. ...
    """
    if isinstance(value, bool | np.bool_):
        return bool(value)
    raise fail(
        f"{field} must be True or False",
        f"{_kind(value)} {quote(value)}",
        f"Pass {field}=True or {field}=False.",
        error=error,
        field=field,
        value=value,
    )


def mapping(value: Any, *, field: str, error: type[InputError] = InputError) -> Mapping:
    """``value`` if it is a mapping (a dict or alike).

    Examples
    --------
    >>> mapping({"a": 1}, field="sketches")
    {'a': 1}
    """
    if not isinstance(value, Mapping):
        raise fail(
            f"{field} must be a mapping (a dict)",
            type(value).__name__,
            f"Pass e.g. {field}={{'name': value}}.",
            error=error,
            field=field,
            value=value,
        )
    return value


def shape(size: Any, *, field: str = "size") -> tuple[int, ...]:
    """Read a ``size=`` argument as a shape; ``None`` gives ``()`` (one scalar).

    Examples
    --------
    >>> shape(3), shape((2, 4)), shape(None)
    ((3,), (2, 4), ())
    """
    if size is None:
        return ()
    dims = (size,) if isinstance(size, numbers.Integral) else size
    try:
        ok = all(
            isinstance(d, numbers.Integral) and not isinstance(d, bool | np.bool_) and d >= 0
            for d in dims
        )
        out = tuple(int(d) for d in dims) if ok else ()
    except TypeError:
        ok = False
    if not ok:
        raise fail(
            f"{field} must be a non-negative integer or a tuple of them",
            quote(size),
            f"For example {field}=10_000 or {field}=(100, 3).",
            field=field,
            value=size,
        )
    return out


# ---------------------------------------------------------------- arrays


def values(
    x: Any,
    *,
    field: str = "x",
    nan: bool = False,
    error: type[InputError] = InputError,
) -> tuple[np.ndarray, bool]:
    """Points to evaluate at, as a float array, and whether the input was a scalar.

    NaN is refused unless ``nan=True``; ±inf is allowed (a CDF is defined there).

    Examples
    --------
    >>> values([1, 2], field="x")
    (array([1., 2.]), False)
    >>> values(3, field="x")
    (array(3.), True)
    """
    try:
        if isinstance(x, str | bytes):  # numpy would read "3" as 3.0
            raise TypeError
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise fail(
            f"{field} must be numbers",
            quote(x),
            "Pass a float or an array of floats.",
            error=error,
            field=field,
            value=x,
        ) from None
    if not nan:
        i = first_bad(np.isnan(arr))
        if i is not None:
            raise fail(
                f"{field} must not contain NaN",
                f"NaN at flat index {i}",
                "Drop or replace the missing values first.",
                error=error,
                field=field,
                index=i,
                value=x,
            )
    return arr, arr.ndim == 0


def probabilities(
    u: Any, *, field: str = "u", error: type[InputError] = InputError
) -> tuple[np.ndarray, bool]:
    """Probabilities in ``[0, 1]`` as a float array, and whether the input was a scalar.

    Examples
    --------
    >>> probabilities([0, 0.5, 1])
    (array([0. , 0.5, 1. ]), False)
    >>> probabilities([0.2, 1.5])
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: u must be probabilities in [0, 1]; got 1.5 at flat index 1...
    """
    arr, scalar = values(u, field=field, error=error)
    i = first_bad((arr < 0) | (arr > 1))
    if i is not None:
        raise fail(
            f"{field} must be probabilities in [0, 1]",
            f"{float(arr.ravel()[i])!r} at flat index {i}",
            "Rescale or clip them.",
            error=error,
            field=field,
            index=i,
            value=float(arr.ravel()[i]),
        )
    return arr, scalar
