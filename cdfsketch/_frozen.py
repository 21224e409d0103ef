"""Values immutable all the way down: a read-only dict and a deep freeze (stdlib only).

A :class:`FrozenDict` is a ``dict`` (so ``json.dumps`` and ``==`` work) whose
every mutating method raises. :func:`freeze` copies a nested structure of
mappings, lists and arrays into frozen dicts, tuples and read-only arrays;
:func:`thaw` gives a plain, writable deep copy back.

Examples
--------
>>> prov = freeze({"author": "A", "extra": {"runs": [1, 2]}})
>>> prov["extra"]["runs"]
(1, 2)
>>> prov["extra"]["k"] = 1
Traceback (most recent call last):
...
TypeError: This record is read-only; make a changed copy with cdfsketch's replace(...) ...
>>> thaw(prov)
{'author': 'A', 'extra': {'runs': [1, 2]}}
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any, NoReturn

import numpy as np

__all__ = ["FrozenDict", "freeze", "thaw"]


class FrozenDict(dict):
    """A ``dict`` that cannot be changed after it is made."""

    __slots__ = ()

    def _refuse(self, *args: Any, **kwargs: Any) -> NoReturn:
        raise TypeError(
            "This record is read-only; make a changed copy with cdfsketch's replace(...) "
            "(e.g. sketch.replace(provenance={...})), or take a writable copy with "
            "dict(record)."
        )

    __setitem__ = __delitem__ = _refuse
    clear = pop = popitem = setdefault = update = _refuse  # type: ignore[assignment]
    __ior__ = _refuse  # type: ignore[assignment]

    def __hash__(self) -> int:  # type: ignore[override]
        return hash(tuple(sorted((k, _hashable(v)) for k, v in self.items())))

    def __reduce__(self) -> Any:
        return (FrozenDict, (dict(self),))

    def __copy__(self) -> FrozenDict:
        return self

    def __deepcopy__(self, memo: Any) -> FrozenDict:
        return self


def _hashable(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        return (value.dtype.str, value.shape, value.tobytes())
    try:
        hash(value)
    except TypeError:
        return repr(value)
    return value


def freeze(obj: Any) -> Any:
    """A deep, read-only copy: mappings → :class:`FrozenDict`, lists → tuples.

    Arrays are copied and made read-only; other values are kept as they are.
    """
    if isinstance(obj, FrozenDict):
        return obj
    if isinstance(obj, Mapping):
        return FrozenDict({k: freeze(v) for k, v in obj.items()})
    if isinstance(obj, list | tuple):
        return tuple(freeze(v) for v in obj)
    if isinstance(obj, np.ndarray):
        arr = obj.copy()
        arr.setflags(write=False)
        return arr
    return obj


def thaw(obj: Any) -> Any:
    """A plain, writable deep copy: mappings → ``dict``, tuples → lists."""
    if isinstance(obj, Mapping):
        return {k: thaw(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [thaw(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return obj.copy()
    return obj
