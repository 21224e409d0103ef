"""A sketch or an input set as Dask arrays, one random stream per block (extra: dask).

Each Dask chunk is filled from the stream blocks it overlaps (see
:mod:`cdfsketch.scale.blocks`): a chunk that cuts a block in two generates the
whole block and keeps its part, so any ``chunks`` give the same draws for the
same ``rng``, ``size`` and ``block``. Chunks that are multiples of ``block``
waste nothing.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._extras import need
from .._streams import root_seed
from .._validate import choice, fail, integer
from .blocks import BlockLayout, block_inputs, block_sketch

__all__ = ["check_layout", "inputset_to_dask", "sketch_to_dask"]

DESIGNS = ("random", "lhs", "sobol")


def check_layout(size: Any, chunks: Any, block: Any) -> tuple[BlockLayout, tuple[int, ...]]:
    """Validate ``size``, ``chunks`` and ``block``; the layout and the chunk sizes.

    ``chunks`` is draws per chunk (an int) or the chunk sizes (a tuple summing
    to ``size``); ``block=None`` takes the first chunk's size.

    Examples
    --------
    >>> lay, sizes = check_layout(10, 4, None)
    >>> lay.block, sizes
    (4, (4, 4, 2))
    """
    n = integer(size, field="size", low=1, example="size=1_000_000")
    if isinstance(chunks, tuple | list):
        sizes = tuple(integer(c, field="chunks", low=1, example="chunks=100_000") for c in chunks)
        if sum(sizes) != n:
            raise fail(
                "chunks must add up to size",
                f"sum {sum(sizes)} for size={n}",
                "Pass one chunk length (an int), or lengths that add up to size.",
                field="chunks",
                value=chunks,
            )
    else:
        c = integer(chunks, field="chunks", low=1, example="chunks=100_000")
        sizes = tuple(min(c, n - lo) for lo in range(0, n, c))
    b = sizes[0] if block is None else integer(block, field="block", low=1, example="block=65_536")
    return BlockLayout(n, b), sizes


def _dask_array() -> Any:
    need("dask", "dask")
    return need("dask", "dask.array")


def sketch_to_dask(
    sketch: Any, size: int, *, chunks: Any, rng: Any = None, block: int | None = None
) -> Any:
    """``size`` draws of one sketch as a lazy :class:`dask.array.Array`.

    Parameters
    ----------
    sketch : Sketch
        The input.
    size : int
        Number of draws.
    chunks : int or tuple of int
        Draws per Dask chunk (or the chunk lengths).
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the root of the streams.
    block : int, optional
        Draws per stream block (default: the first chunk's length). The draws
        depend on ``rng``, ``size`` and ``block`` only: the same values come
        out for any ``chunks``, scheduler, number of workers or block order.
        Block ``k`` equals ``sketch.sample(n_k, rng=generator(root, "block", k))``.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 2, 5], [0, 0.5, 1])
    >>> a = sketch_to_dask(s, 10, chunks=4, rng=7).compute(scheduler="synchronous")
    >>> b = sketch_to_dask(s, 10, chunks=8, block=4, rng=7).compute(scheduler="synchronous")
    >>> bool(np.array_equal(a, b)), a.shape
    (True, (10,))
    """
    da = _dask_array()
    layout, sizes = check_layout(size, chunks, block)
    root = root_seed(rng)

    def fill(block_info: Any = None) -> np.ndarray:
        lo, hi = block_info[None]["array-location"][0]
        parts = []
        for k in layout.blocks_between(lo, hi):
            b_lo, b_hi = layout.bounds(k)
            draws = block_sketch(sketch, root, k, b_hi - b_lo)
            parts.append(draws[max(lo, b_lo) - b_lo : min(hi, b_hi) - b_lo])
        return np.concatenate(parts)

    return da.map_blocks(fill, chunks=(sizes,), dtype=float, meta=np.empty(0))


def inputset_to_dask(
    inputs: Any,
    size: int,
    *,
    chunks: Any,
    rng: Any = None,
    block: int | None = None,
    design: str = "random",
) -> dict[str, Any]:
    """``size`` joint draws of an input set as lazy Dask arrays, name → array.

    The arrays are the columns of one 2-D Dask array (computed together, each
    block is drawn once). Block ``k`` is ``inputs.sample(n_k, rng=seed_sequence(root,
    "block", k), design=design)``: the design and the rank dependence hold
    within each block, so the whole run is a set of independent replicates
    (replicated Latin hypercube; independently scrambled Sobol points, best
    with ``block`` a power of two). The draws depend on ``rng``, ``size``,
    ``block`` and ``design`` only.

    Parameters
    ----------
    inputs : InputSet or mapping of name to Sketch
        The inputs (a mapping means independent inputs drawn at random).
    size, chunks, rng, block
        As for :func:`sketch_to_dask`.
    design : {"random", "lhs", "sobol"}
        The sampling design within each block.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> ins = {"a": Sketch([0, 1], [0, 1]), "b": Sketch([5, 9], [0, 1])}
    >>> arrs = inputset_to_dask(ins, 6, chunks=3, rng=1)
    >>> sorted(arrs), arrs["b"].compute(scheduler="synchronous").shape
    (['a', 'b'], (6,))
    """
    da = _dask_array()
    layout, sizes = check_layout(size, chunks, block)
    design = choice(design, field="design", options=DESIGNS)
    root = root_seed(rng)
    names = list(inputs.names if hasattr(inputs, "names") else inputs)

    def fill(block_info: Any = None) -> np.ndarray:
        lo, hi = block_info[None]["array-location"][0]
        out = np.empty((hi - lo, len(names)))
        for k in layout.blocks_between(lo, hi):
            b_lo, b_hi = layout.bounds(k)
            draws = block_inputs(inputs, root, k, b_hi - b_lo, design=design)
            a, b = max(lo, b_lo), min(hi, b_hi)
            for j, name in enumerate(names):
                out[a - lo : b - lo, j] = draws[name][a - b_lo : b - b_lo]
        return out

    table = da.map_blocks(fill, chunks=(sizes, (len(names),)), dtype=float, meta=np.empty((0, 0)))
    return {name: table[:, j] for j, name in enumerate(names)}
