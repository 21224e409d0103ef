"""The block layout: the input set's windows, each made on its own (numpy; scipy for designs).

An :class:`~cdfsketch.InputSet` cuts the points of one call into windows of
:data:`~cdfsketch.inputs.designs.WINDOW` (2¹⁶) points; window ``k`` of input
``name`` comes from the stream ``(root, "input", name, "window", k)`` (a
Sobol window is the slice ``[k W, k W + m)`` of one scrambled sequence) and
the rank dependence is imposed per window. Any window can therefore be made
on its own, which is what a Dask task does: the *stream blocks* here are
those windows. So the draws depend on ``rng``, ``size``, the design and the
dependence only — never on how the windows are grouped into Dask chunks, on
the scheduler, on the number of workers or on the order the blocks run in —
and they equal ``inputs.sample(size, rng=rng, ...)`` exactly. "The same
block layout" means the same ``size`` (the last window's length is what
``size`` leaves).

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
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._validate import fail
from ..inputs import InputSet
from ..inputs.dependence import copula_correlation, gaussian_copula, iman_conover
from ..inputs.designs import WINDOW, clip_open, design_uniforms

__all__ = [
    "WINDOW",
    "BlockLayout",
    "as_inputset",
    "from_portable",
    "to_portable",
    "window_uniforms",
]


@dataclass(frozen=True)
class BlockLayout:
    """``size`` draws cut into stream blocks of ``block`` draws (the input set's windows)."""

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


def window_uniforms(
    inputs: InputSet,
    root: np.random.SeedSequence,
    k: int,
    m: int,
    *,
    design: str = "random",
    dependence: str = "iman-conover",
) -> dict[str, np.ndarray]:
    """Uniforms of window ``k`` (``m`` points) for every input, dependence applied.

    Equal to the window's slice of ``inputs.uniforms(size, rng=root, design=design,
    dependence=dependence)`` for any ``size`` that leaves ``m`` points in
    window ``k`` (the tests check it).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> from cdfsketch._streams import root_seed
    >>> ins = InputSet({"a": Sketch([0, 1], [0, 1])})
    >>> u = window_uniforms(ins, root_seed(3), 0, 5)["a"]
    >>> bool(np.array_equal(u, ins.uniforms(5, rng=3)["a"]))
    True
    """
    # The same steps as InputSet's own window loop (a test checks they agree);
    # to be replaced by a public per-window call on InputSet when it has one.
    u = design_uniforms(design, inputs.names, root, k, m)
    group, target = inputs.target_matrix()
    if group and dependence != "independent":
        table = np.vstack([u[g] for g in group])  # one row per input
        normal = copula_correlation(target)
        if dependence == "iman-conover":
            table = iman_conover(table, normal)
        else:
            table = clip_open(gaussian_copula(table, normal))
        for j, g in enumerate(group):
            u[g] = table[j]
    return u


def to_portable(obj: Any) -> tuple[str, Any]:
    """``obj`` in a form pickle can carry to a worker process.

    Sketch and InputSet travel as their spec / input-set JSON (exact: numbers
    are written with ``repr``, so the draws are the same bit for bit). They
    would pickle too; the text is the key of the worker's cache, so the tasks
    on one worker share one value and its compiled sampler instead of
    compiling it again for every block.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = Sketch([0, 2, 5], [0, 0.5, 1])
    >>> from_portable(to_portable(s)).ppf(0.3) == s.ppf(0.3)
    True
    """
    from ..sketch import Sketch

    if isinstance(obj, Sketch):
        return ("sketch", obj.to_json())
    if isinstance(obj, InputSet):
        return ("inputset", obj.to_json())
    return ("object", obj)


def from_portable(item: tuple[str, Any]) -> Any:
    """The value :func:`to_portable` packed (a worker keeps the last few it read)."""
    kind, obj = item
    return _read_portable(kind, obj) if kind in ("sketch", "inputset") else obj


@functools.lru_cache(maxsize=32)
def _read_portable(kind: str, text: str) -> Any:
    # Values are immutable, so tasks on one worker share them and their compiled samplers.
    from ..loading import load

    return load(text)
