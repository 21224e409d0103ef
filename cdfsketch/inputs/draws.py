"""The result of sampling an input set: a read-only mapping name → array."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import Any, NamedTuple

import numpy as np

from .._extras import need
from .dependence import spearman

__all__ = ["Draws", "RankCorrRow"]


class RankCorrRow(NamedTuple):
    """One target pair: its Spearman target and what the draws achieved."""

    a: str
    b: str
    target: float
    achieved: float


class Draws(Mapping):
    """Draws of several inputs, one array each (all the same length), read-only as a mapping.

    Examples
    --------
    >>> d = Draws({"a": np.arange(3.0), "b": np.ones(3)})
    >>> list(d), len(d), d.size
    (['a', 'b'], 2, 3)
    >>> d["c"] = 1
    Traceback (most recent call last):
    ...
    TypeError: 'Draws' object does not support item assignment
    """

    __slots__ = ("_data", "_target")

    def __init__(
        self,
        data: Mapping[str, np.ndarray],
        target: Mapping[tuple[str, str], float] | None = None,
    ) -> None:
        self._data = dict(data)
        self._target = dict(target or {})

    def __getitem__(self, name: str) -> np.ndarray:
        return self._data[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self._data)

    def __len__(self) -> int:
        return len(self._data)

    def __repr__(self) -> str:
        names = ", ".join(repr(n) for n in list(self._data)[:6])
        more = f", … ({len(self._data) - 6} more)" if len(self._data) > 6 else ""
        return f"Draws({names}{more}; {self.size} each)"

    @property
    def size(self) -> int:
        """Draws per input."""
        return next(iter(self._data.values())).size if self._data else 0

    def to_numpy(self) -> np.ndarray:
        """A 2-d array, one column per input in the set's order.

        Examples
        --------
        >>> Draws({"a": np.arange(2.0), "b": np.ones(2)}).to_numpy().tolist()
        [[0.0, 1.0], [1.0, 1.0]]
        """
        return np.column_stack(list(self._data.values())) if self._data else np.empty((0, 0))

    def to_pandas(self) -> Any:
        """A ``pandas.DataFrame``, one column per input (needs pandas).

        Examples
        --------
        >>> Draws({"a": np.arange(2.0)}).to_pandas().columns.tolist()
        ['a']
        """
        pd = need("all", "pandas")
        return pd.DataFrame(self._data)

    def spearman(self) -> tuple[tuple[str, ...], np.ndarray]:
        """The achieved Spearman matrix over all inputs: (names, matrix).

        Examples
        --------
        >>> names, m = Draws({"a": np.arange(3.0), "b": -np.arange(3.0)}).spearman()
        >>> names, m.tolist()
        (('a', 'b'), [[1.0, -1.0], [-1.0, 1.0]])
        """
        return tuple(self._data), spearman(list(self._data.values()))

    def rank_corr_report(self) -> tuple[RankCorrRow, ...]:
        """Each target pair's Spearman target beside the achieved value.

        Examples
        --------
        >>> d = Draws({"a": np.arange(3.0), "b": np.arange(3.0)}, {("a", "b"): 0.5})
        >>> d.rank_corr_report()
        (RankCorrRow(a='a', b='b', target=0.5, achieved=1.0),)
        """
        rows = []
        for (a, b), target in self._target.items():
            achieved = float(spearman([self._data[a], self._data[b]])[0, 1])
            rows.append(RankCorrRow(a, b, target, achieved))
        return tuple(rows)
