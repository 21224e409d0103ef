"""Random streams keyed by purpose (numpy only).

Every draw in cdfsketch comes from a :class:`numpy.random.SeedSequence` child
keyed by what it is for — an input's name, a block index, a purpose such as
``"holdout"`` — never from global state and never from a generator stored on
a value. So the draws of an input do not depend on which other inputs exist,
on their order, on how the work is cut into blocks, or on the scheduler that
runs the blocks.

The rule: ``root = root_seed(rng)`` once per public call, then
``generator(root, "input", name, "block", k)`` for each stream. The same
``rng`` (a seed, a ``SeedSequence``) and the same keys give the same draws.
A ``Generator`` passed as ``rng`` is advanced once (128 bits are drawn from it
to seed the root), so passing the same generator twice gives different draws,
as numpy users expect.

Examples
--------
>>> root = root_seed(2026)
>>> a = generator(root, "input", "hours").random(3)
>>> b = generator(root_seed(2026), "input", "hours").random(3)
>>> bool((a == b).all())
True
>>> bool((a == generator(root, "input", "cost").random(3)).any())
False
"""

from __future__ import annotations

import hashlib
from typing import Any

import numpy as np

__all__ = ["generator", "key_words", "root_seed", "seed_sequence"]


def root_seed(rng: Any = None) -> np.random.SeedSequence:
    """The root :class:`~numpy.random.SeedSequence` for anything ``default_rng`` takes.

    ``None`` gives fresh OS entropy; an int or a sequence of ints is the
    entropy; a ``SeedSequence`` is used as it is; a ``Generator`` or a
    ``BitGenerator`` is asked for 128 random bits (it advances).
    """
    if isinstance(rng, np.random.SeedSequence):
        return rng
    if isinstance(rng, np.random.Generator | np.random.BitGenerator):
        gen = rng if isinstance(rng, np.random.Generator) else np.random.Generator(rng)
        words = gen.integers(0, 2**32, size=4, dtype=np.uint64)
        return np.random.SeedSequence([int(w) for w in words])
    if rng is None:
        return np.random.SeedSequence()
    # anything else default_rng takes (int, array of ints); it raises the usual errors
    np.random.default_rng(rng)
    return np.random.SeedSequence(rng)


def key_words(*keys: str | int) -> tuple[int, ...]:
    """Keys as non-negative integers for a ``spawn_key``: ints as they are, text hashed.

    Text is hashed with SHA-256 (first 8 bytes), so the words do not depend
    on Python's per-process string hashing.

    Examples
    --------
    >>> key_words("block", 3) == key_words("block", 3)
    True
    """
    out: list[int] = []
    for k in keys:
        if isinstance(k, bool) or not isinstance(k, int | str | np.integer):
            raise TypeError(f"stream keys must be str or int; got {type(k).__name__} {k!r}.")
        if isinstance(k, str):
            out.append(int.from_bytes(hashlib.sha256(k.encode("utf-8")).digest()[:8], "little"))
        else:
            if k < 0:
                raise ValueError(f"integer stream keys must be ≥ 0; got {k}.")
            out.append(int(k))
    return tuple(out)


def seed_sequence(root: np.random.SeedSequence, *keys: str | int) -> np.random.SeedSequence:
    """The child of ``root`` keyed by ``keys`` (independent of every other key path)."""
    return np.random.SeedSequence(
        entropy=root.entropy,
        spawn_key=(*root.spawn_key, *key_words(*keys)),
        pool_size=root.pool_size,
    )


def generator(root: np.random.SeedSequence, *keys: str | int) -> np.random.Generator:
    """A fresh PCG64 ``Generator`` on the child stream of ``root`` keyed by ``keys``."""
    return np.random.default_rng(seed_sequence(root, *keys))
