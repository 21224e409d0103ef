"""The block layout on Dask, and the input set a consequence run or a Dask call takes.

The rule itself has one home, :mod:`cdfsketch._blocks`: ``size`` draws are
cut into windows of :data:`WINDOW` (2¹⁶) points; window ``k`` of input
``name`` comes from the stream ``(root, "input", name, "window", k)`` and the
rank dependence is imposed per window (:func:`window_uniforms`). A Dask
chunk is filled from the windows it overlaps, so the draws depend on ``rng``,
``size``, the design and the dependence only — never on how the windows are
grouped into chunks, on the scheduler, on the number of workers or on the
order the blocks run in — and they equal ``inputs.sample(size, rng=rng,
...)`` exactly.

Examples
--------
>>> lay = BlockLayout(10, 4)
>>> lay.n_blocks, [lay.bounds(k) for k in range(lay.n_blocks)]
(3, [(0, 4), (4, 8), (8, 10)])
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from .._blocks import WINDOW, BlockLayout, check_chunks
from .._validate import fail
from ..inputs import InputSet
from ..inputs.windows import window_uniforms

__all__ = [
    "WINDOW",
    "BlockLayout",
    "as_inputset",
    "check_chunks",
    "inputset_to_dask",
    "sketch_to_dask",
    "window_uniforms",
]


def as_inputset(inputs: Any, field: str = "inputs") -> InputSet:
    """An :class:`InputSet` as it is; a mapping name → sketch as independent inputs.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> as_inputset({"a": Sketch([0, 1], [0, 1])}).names
    ('a',)
    """
    if isinstance(inputs, InputSet):
        return inputs
    if isinstance(inputs, Mapping):
        return InputSet(inputs)
    raise fail(
        f"{field} must be a cdfsketch.InputSet (or a mapping name → Sketch)",
        type(inputs).__name__,
        "Pass e.g. InputSet({'hours': hours, 'cost': cost}).",
        field=field,
        value=inputs,
    )


def inputset_to_dask(
    inputs: Any,
    size: int,
    *,
    chunks: Any,
    rng: Any = None,
    design: str = "random",
    dependence: str = "iman-conover",
) -> dict[str, Any]:
    """:meth:`InputSet.to_dask` for an input set or a mapping name → sketch.

    Examples
    --------
    >>> import numpy as np
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 1], [0, 1])
    >>> a = inputset_to_dask({"a": s}, 5, chunks=2, rng=1)["a"].compute(scheduler="synchronous")
    >>> bool(np.array_equal(a, InputSet({"a": s}).sample(5, rng=1)["a"]))
    True
    """
    return as_inputset(inputs).to_dask(
        size, chunks=chunks, rng=rng, design=design, dependence=dependence
    )


def sketch_to_dask(sketch: Any, size: int, *, chunks: Any, rng: Any = None, name: str = "x") -> Any:
    """:meth:`Sketch.to_dask` as a function (the sketch drawn as input ``name``).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 2, 5], [0, 0.5, 1])
    >>> sketch_to_dask(s, 10, chunks=4, rng=7).shape
    (10,)
    """
    from ..sketch import Sketch

    if not isinstance(sketch, Sketch):
        raise fail(
            "sketch must be a cdfsketch.Sketch",
            type(sketch).__name__,
            "Load it first, e.g. cdfsketch.load('hours.json').",
            field="sketch",
            value=sketch,
        )
    return sketch.to_dask(size, chunks=chunks, rng=rng, name=name)
