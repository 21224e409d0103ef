"""A sketch or an input set as Dask arrays, one random stream per block (extra: dask).

Each Dask chunk is filled from the stream blocks (the input set's windows of
2¹⁶ points, :mod:`cdfsketch.scale.blocks`) it overlaps: a chunk that cuts a
window in two makes the whole window and keeps its part. So any ``chunks``,
scheduler or worker count give the same draws, equal to ``inputs.sample(size,
rng=rng, ...)``; chunks that are multiples of 2¹⁶ waste nothing.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._extras import need
from .._streams import root_seed
from .._validate import choice, fail, integer, text
from ..inputs import DEPENDENCE, DESIGNS
from .blocks import BlockLayout, as_inputset, from_portable, to_portable, window_uniforms

__all__ = ["check_chunks", "inputset_to_dask", "sketch_to_dask"]


def check_chunks(size: Any, chunks: Any) -> tuple[int, tuple[int, ...]]:
    """Validate ``size`` and ``chunks``; the size and the chunk lengths.

    ``chunks`` is draws per chunk (an int) or the chunk lengths (a tuple
    summing to ``size``).

    Examples
    --------
    >>> check_chunks(10, 4)
    (10, (4, 4, 2))
    """
    n = integer(size, field="size", low=1, example="size=1_000_000")
    if isinstance(chunks, tuple | list):
        sizes = tuple(integer(c, field="chunks", low=1, example="chunks=65_536") for c in chunks)
        if sum(sizes) != n:
            raise fail(
                "chunks must add up to size",
                f"sum {sum(sizes)} for size={n}",
                "Pass one chunk length (an int), or lengths that add up to size.",
                field="chunks",
                value=chunks,
            )
        return n, sizes
    c = integer(chunks, field="chunks", low=1, example="chunks=65_536")
    return n, tuple(min(c, n - lo) for lo in range(0, n, c))


def _dask_array() -> Any:
    need("dask", "dask")
    return need("dask", "dask.array")


def inputset_to_dask(
    inputs: Any,
    size: int,
    *,
    chunks: Any,
    rng: Any = None,
    design: str = "random",
    dependence: str = "iman-conover",
) -> dict[str, Any]:
    """``size`` joint draws of an input set as lazy Dask arrays, name → array.

    The arrays are the columns of one 2-D Dask array (computed together, each
    window is drawn once). They equal ``inputs.sample(size, rng=rng,
    design=design, dependence=dependence)`` bit for bit, whatever ``chunks``,
    scheduler, worker count or task order.

    Parameters
    ----------
    inputs : InputSet or mapping of name to Sketch
        The inputs (a mapping means independent inputs).
    size : int
        Draws per input.
    chunks : int or tuple of int
        Draws per Dask chunk (or the chunk lengths); multiples of 2¹⁶ waste nothing.
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the root of the streams.
    design : {"random", "lhs", "sobol"}
        The sampling design (as in ``InputSet.sample``; the whole run is one
        design, made window by window).
    dependence : {"iman-conover", "gaussian-copula", "independent"}
        How the rank-correlation target is imposed (per window).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> from cdfsketch.inputs import InputSet
    >>> ins = InputSet({"a": Sketch([0, 1], [0, 1]), "b": Sketch([5, 9], [0, 1])})
    >>> arrs = inputset_to_dask(ins, 6, chunks=4, rng=1)
    >>> b = arrs["b"].compute(scheduler="synchronous")
    >>> bool(np.array_equal(b, ins.sample(6, rng=1)["b"]))
    True
    """
    da = _dask_array()
    ins = as_inputset(inputs)
    n, sizes = check_chunks(size, chunks)
    design = choice(design, field="design", options=DESIGNS)
    dependence = choice(dependence, field="dependence", options=DEPENDENCE)
    fill = _Fill(ins, root_seed(rng), n, design, dependence)
    names = ins.names
    table = da.map_blocks(fill, chunks=(sizes, (len(names),)), dtype=float, meta=np.empty((0, 0)))
    return {name: table[:, j] for j, name in enumerate(names)}


class _Fill:
    """Fills one Dask chunk from the windows it overlaps (picklable for worker processes)."""

    def __init__(
        self, inputs: Any, root: np.random.SeedSequence, n: int, design: str, dependence: str
    ) -> None:
        self.inputs, self.root, self.layout = inputs, root, BlockLayout(n)
        self.design, self.dependence = design, dependence

    def __getstate__(self) -> dict[str, Any]:
        return {**self.__dict__, "inputs": to_portable(self.inputs)}

    def __setstate__(self, state: dict[str, Any]) -> None:
        self.__dict__.update({**state, "inputs": from_portable(state["inputs"])})

    def __call__(self, block_info: Any = None) -> np.ndarray:
        lo, hi = block_info[None]["array-location"][0]
        ins, layout = self.inputs, self.layout
        out = np.empty((hi - lo, len(ins.names)))
        for k in layout.blocks_between(lo, hi):
            b_lo, b_hi = layout.bounds(k)
            u = window_uniforms(
                ins, self.root, k, b_hi - b_lo, design=self.design, dependence=self.dependence
            )
            a, b = max(lo, b_lo), min(hi, b_hi)
            for j, name in enumerate(ins.names):
                part = u[name][a - b_lo : b - b_lo]
                out[a - lo : b - lo, j] = ins.sketches[name].sampler().ppf(part)
        return out


def sketch_to_dask(sketch: Any, size: int, *, chunks: Any, rng: Any = None, name: str = "x") -> Any:
    """``size`` draws of one sketch as a lazy :class:`dask.array.Array`.

    The draws are those of the sketch as input ``name`` of an input set:
    ``InputSet({name: sketch}).sample(size, rng=rng)[name]``, bit for bit,
    whatever ``chunks``, scheduler, worker count or task order (window ``k``
    of 2¹⁶ draws comes from the stream keyed by ``name`` and ``k``).

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
    name : str
        The input name the streams are keyed by.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 2, 5], [0, 0.5, 1])
    >>> a = sketch_to_dask(s, 10, chunks=4, rng=7).compute(scheduler="synchronous")
    >>> b = sketch_to_dask(s, 10, chunks=7, rng=7).compute(scheduler="synchronous")
    >>> bool(np.array_equal(a, b)), a.shape
    (True, (10,))
    """
    name = text(name, field="name", empty=False)
    return inputset_to_dask({name: sketch}, size, chunks=chunks, rng=rng)[name]
