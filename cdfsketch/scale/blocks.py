"""The block layout: which random stream each draw comes from (numpy only).

A run of ``size`` draws is cut into *stream blocks* of ``block`` draws (the
last one may be shorter). Block ``k`` holds draws ``k*block`` to
``min((k+1)*block, size) - 1`` and takes its randomness from the
:class:`~numpy.random.SeedSequence` child ``(root, "block", k)``; an input set
derives one child per input name from it. So the draws depend on ``rng``,
``size``, ``block`` and the design only — never on how the blocks are grouped
into Dask chunks, on the scheduler, on the number of workers or on the order
the blocks run in. "The same block layout" means the same ``size`` and
``block``.

Examples
--------
>>> lay = BlockLayout(10, 4)
>>> lay.n_blocks, [lay.bounds(k) for k in range(lay.n_blocks)]
(3, [(0, 4), (4, 8), (8, 10)])
>>> lay.blocks_between(3, 9)
range(0, 3)
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._streams import generator, seed_sequence

__all__ = ["BlockLayout", "block_inputs", "block_sketch", "block_uniforms"]


@dataclass(frozen=True)
class BlockLayout:
    """``size`` draws cut into stream blocks of ``block`` draws."""

    size: int
    block: int

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


def block_sketch(sketch: Any, root: np.random.SeedSequence, k: int, n: int) -> np.ndarray:
    """The ``n`` draws of stream block ``k`` of one sketch (stream ``(root, "block", k)``).

    Equal to ``sketch.sample(n, rng=generator(root, "block", k))``.
    """
    return np.asarray(sketch.sampler().sample(n, rng=generator(root, "block", k)), dtype=float)


def block_uniforms(
    inputs: Any, root: np.random.SeedSequence, k: int, n: int, *, design: str = "random"
) -> dict[str, np.ndarray]:
    """Uniforms of stream block ``k`` for every input of ``inputs`` (name → array).

    ``inputs`` is an input set (its ``uniforms`` applies the design and the
    dependence within the block, one stream per input name below the block's
    stream) or a mapping name → sketch (independent inputs, plain random
    draws, stream ``(root, "block", k, "input", name)``).
    """
    seq = seed_sequence(root, "block", k)
    if hasattr(inputs, "uniforms"):
        return {
            name: np.asarray(u, dtype=float)
            for name, u in inputs.uniforms(n, rng=seq, design=design).items()
        }
    if design != "random":  # a plain mapping has no designs; InputSet has
        raise ValueError(
            f"design={design!r} needs an InputSet; a mapping of sketches draws at random."
        )
    return {name: generator(seq, "input", name).random(n) for name in inputs}


def block_inputs(
    inputs: Any, root: np.random.SeedSequence, k: int, n: int, *, design: str = "random"
) -> dict[str, np.ndarray]:
    """Draws of stream block ``k`` for every input (each sketch's ppf of its uniforms)."""
    sketches: Mapping[str, Any] = inputs.sketches if hasattr(inputs, "sketches") else inputs
    u = block_uniforms(inputs, root, k, n, design=design)
    return {name: np.asarray(sketches[name].sampler().ppf(u[name]), dtype=float) for name in u}
