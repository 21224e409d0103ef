"""Stream windows and blocks: draws that any worker can make on its own (numpy only).

The points of one sampling call are cut into fixed *windows* of
:data:`WINDOW` (2¹⁶) points; the last window holds what is left. Window
``k`` of input ``name`` comes from the stream ``generator(root, "input",
name, "window", k)`` (:mod:`cdfsketch._streams`). Any window can therefore
be made on its own, which is what a Dask task does: a Dask chunk is filled
from the windows it overlaps (a chunk that cuts a window in two makes the
whole window and keeps its part). So the draws depend on ``rng`` and
``size`` only — never on the chunks, the scheduler, the number of workers or
the order the tasks run in. "The same block layout" means the same ``size``.

This module holds the rule once: :class:`BlockLayout`, the random window
(:func:`random_window`), the chunk check, the transport of a value to a
worker process, and the Dask array built from windows. ``dask`` is imported
only when a Dask array is built (extra: ``dask``); ``Sketch.to_dask`` and
``InputSet.to_dask`` build on it.

Examples
--------
>>> lay = BlockLayout(10, 4)
>>> lay.n_blocks, [lay.bounds(k) for k in range(lay.n_blocks)]
(3, [(0, 4), (4, 8), (8, 10)])
>>> lay.blocks_between(3, 9)
range(0, 3)
"""

from __future__ import annotations

import functools
import pickle
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from ._extras import need
from ._limits import MAX_NAME_CHARS
from ._streams import generator, root_seed
from ._validate import fail, integer, text

__all__ = [
    "SHARED_CACHE",
    "U_MAX",
    "U_MIN",
    "WINDOW",
    "BlockLayout",
    "SketchWindows",
    "WindowFill",
    "check_chunks",
    "clip_open",
    "from_portable",
    "random_window",
    "sketch_to_dask",
    "to_portable",
    "windows_to_dask",
]

#: Points per window (a power of two, so Sobol windows are whole balanced runs).
WINDOW = 1 << 16
#: Smallest and largest uniform a window holds (exact 0s and 1s are moved inside).
U_MIN = 2.0**-54
U_MAX = 1.0 - 2.0**-53


def clip_open(u: np.ndarray) -> np.ndarray:
    """Move exact 0s and 1s strictly inside (0, 1), in place.

    Examples
    --------
    >>> clip_open(np.array([0.0, 0.5, 1.0])).tolist() == [U_MIN, 0.5, U_MAX]
    True
    """
    return np.clip(u, U_MIN, U_MAX, out=u)


def random_window(root: np.random.SeedSequence, name: str, k: int, m: int) -> np.ndarray:
    """The ``m`` random uniforms of window ``k`` of input ``name``, strictly inside (0, 1).

    Examples
    --------
    >>> a = random_window(root_seed(1), "hours", 0, 4)
    >>> bool(np.array_equal(a, random_window(root_seed(1), "hours", 0, 4)))
    True
    """
    return clip_open(generator(root, "input", name, "window", k).random(m))


@dataclass(frozen=True)
class BlockLayout:
    """``size`` draws cut into stream blocks of ``block`` draws (the windows)."""

    size: int
    block: int = WINDOW

    @property
    def n_blocks(self) -> int:
        """Number of stream blocks (at least one)."""
        return max(1, -(-self.size // self.block))

    def bounds(self, k: int) -> tuple[int, int]:
        """First draw and one past the last draw of block ``k``."""
        return k * self.block, min((k + 1) * self.block, self.size)

    def blocks_between(self, lo: int, hi: int) -> range:
        """The blocks that hold any of the draws ``lo`` to ``hi - 1``."""
        if hi <= lo:
            return range(0)
        return range(lo // self.block, (hi - 1) // self.block + 1)


def check_chunks(size: Any, chunks: Any) -> tuple[int, tuple[int, ...]]:
    """Validate ``size`` and ``chunks``; the size and the chunk lengths.

    ``chunks`` is draws per chunk (an int) or the chunk lengths (a tuple
    summing to ``size``; Dask's one-dimensional form ``((4, 6),)`` too).

    Examples
    --------
    >>> check_chunks(10, 4)
    (10, (4, 4, 2))
    >>> check_chunks(10, ((4, 6),))
    (10, (4, 6))
    """
    n = integer(size, field="size", low=1, example="size=1_000_000")
    if (
        isinstance(chunks, tuple | list)
        and len(chunks) == 1
        and isinstance(chunks[0], tuple | list)
    ):
        chunks = chunks[0]  # Dask's own form for one dimension: ((2, 3),)
    if isinstance(chunks, tuple | list):
        sizes = tuple(
            integer(c, field="chunks", low=1, example="chunks=(65_536, 34_464): the lengths")
            for c in chunks
        )
        if sum(sizes) != n:
            raise fail(
                "chunks must add up to size",
                f"sum {sum(sizes)} for size={n}",
                "Pass one chunk length (an int), or lengths that add up to size.",
                field="chunks",
                value=chunks,
            )
        return n, sizes
    c = integer(
        chunks, field="chunks", low=1, example="chunks=65_536 (or a tuple of chunk lengths)"
    )
    return n, tuple(min(c, n - lo) for lo in range(0, n, c))


# ---------------------------------------------------------------- transport
#: values a worker keeps (each with its compiled samplers); a large sketch's tables
#: can take tens of MB, so the cache is small
SHARED_CACHE = 8


def to_portable(obj: Any, *, shared: bool = True) -> tuple[str, Any]:
    """``obj`` packed for a worker process: pickled once, read once per worker.

    A ``shared`` value (an immutable Sketch or InputSet) travels as its pickle
    bytes, which are also the key of each worker's cache: the tasks on one
    worker share one value, and its compiled samplers, instead of compiling
    them again for every block. The value arrives exactly as it was sent
    (knots, tails, provenance). Other objects travel as they are.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 2, 5], [0, 0.5, 1], name="hours")
    >>> back = from_portable(to_portable(s))
    >>> back == s, back is from_portable(to_portable(s))
    (True, True)
    """
    if not shared:
        return ("as-is", obj)
    return ("shared", pickle.dumps(obj, protocol=pickle.HIGHEST_PROTOCOL))


def from_portable(item: tuple[str, Any]) -> Any:
    """The value :func:`to_portable` packed (a worker keeps the last few it read)."""
    kind, payload = item
    return _unpickle_shared(payload) if kind == "shared" else payload


@functools.lru_cache(maxsize=SHARED_CACHE)
def _unpickle_shared(blob: bytes) -> Any:
    # Values are immutable, so tasks on one worker share them and their compiled samplers.
    return pickle.loads(blob)


# ---------------------------------------------------------------- Dask
class WindowFill:
    """Fills one Dask chunk (rows of ``columns``) from the windows it overlaps.

    ``draw(root, k, m)`` gives window ``k`` (``m`` rows) as a list of arrays,
    one per column; it must be picklable (it travels to worker processes).
    """

    def __init__(self, draw: Callable[..., list[np.ndarray]], root: Any, n: int) -> None:
        self.draw, self.root, self.layout = draw, root, BlockLayout(n)

    def __call__(self, block_info: Any = None) -> np.ndarray:
        lo, hi = block_info[None]["array-location"][0]
        out: np.ndarray | None = None
        for k in self.layout.blocks_between(lo, hi):
            b_lo, b_hi = self.layout.bounds(k)
            columns = self.draw(self.root, k, b_hi - b_lo)
            if out is None:
                out = np.empty((hi - lo, len(columns)))
            a, b = max(lo, b_lo), min(hi, b_hi)
            for j, col in enumerate(columns):
                out[a - lo : b - lo, j] = col[a - b_lo : b - b_lo]
        return out  # type: ignore[return-value]


def windows_to_dask(
    draw: Callable[..., list[np.ndarray]], n_columns: int, size: Any, *, chunks: Any, rng: Any
) -> Any:
    """``size`` rows of ``draw``'s windows as one lazy 2-D Dask array (extra: dask).

    Examples
    --------
    >>> def draw(root, k, m):
    ...     return [random_window(root, "a", k, m)]
    >>> arr = windows_to_dask(draw, 1, 10, chunks=3, rng=5)
    >>> a = arr.compute(scheduler="synchronous")[:, 0]
    >>> bool(np.array_equal(a, random_window(root_seed(5), "a", 0, 10)))
    True
    """
    need("dask", "dask")
    da = need("dask", "dask.array")
    n, sizes = check_chunks(size, chunks)
    fill = WindowFill(draw, root_seed(rng), n)
    return da.map_blocks(fill, chunks=(sizes, (n_columns,)), dtype=float, meta=np.empty((0, 0)))


class SketchWindows:
    """The windows of one sketch drawn as input ``name`` (picklable; see :func:`to_portable`)."""

    def __init__(self, sketch: Any, name: str) -> None:
        self.sketch, self.name = sketch, name

    def __getstate__(self) -> dict[str, Any]:
        return {"sketch": to_portable(self.sketch), "name": self.name}

    def __setstate__(self, state: dict[str, Any]) -> None:
        self.sketch, self.name = from_portable(state["sketch"]), state["name"]

    def __call__(self, root: Any, k: int, m: int) -> list[np.ndarray]:
        return [self.sketch.sampler().ppf(random_window(root, self.name, k, m))]


def sketch_to_dask(sketch: Any, size: Any, *, chunks: Any, rng: Any = None, name: Any = "x") -> Any:
    """``size`` draws of one sketch as a lazy 1-D Dask array (see ``Sketch.to_dask``)."""
    name = text(name, field="name", empty=False, max_len=MAX_NAME_CHARS)
    return windows_to_dask(SketchWindows(sketch, name), 1, size, chunks=chunks, rng=rng)[:, 0]
