"""Sampling designs in windows of stream coordinates: random, Latin hypercube, Sobol.

The points of one call are cut into fixed *windows* of
:data:`~cdfsketch._blocks.WINDOW` points (the last window holds what is
left; the rule's one home is :mod:`cdfsketch._blocks`). Window ``k`` of
input ``name`` is drawn from the stream ``generator(root, "input", name,
"window", k)``, so

* an input's draws do not depend on which other independent inputs exist,
  on their order, or on how the caller cuts the result into blocks;
* any window can be made on its own (blocks, parallel workers).

Designs:

``"random"``
    independent uniforms (numpy only);
``"lhs"``
    a one-dimensional Latin hypercube per input and window
    (``scipy.stats.qmc.LatinHypercube``; McKay, Beckman & Conover 1979):
    one point in each of the window's ``m`` equal strata;
``"sobol"``
    one scrambled Sobol sequence (``scipy.stats.qmc.Sobol``, Joe & Kuo 2008
    direction numbers) over all inputs in sorted-name order, scrambled from
    the stream ``generator(root, "sobol")``; window ``k`` holds the points
    ``[k W, k W + m)`` of that one sequence. Its draws depend on the full set
    of names (a Sobol point is joint), never on their order.

Every point lies strictly inside (0, 1): a value that comes out exactly 0 is
moved to 2⁻⁵⁴ and one that comes out 1 to ``1 - 2⁻⁵³``.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from typing import Any

import numpy as np

from .._blocks import U_MAX, U_MIN, WINDOW, clip_open, random_window
from .._streams import generator

__all__ = ["DESIGNS", "SOBOL_MAX", "U_MAX", "U_MIN", "WINDOW", "clip_open", "design_uniforms"]

DESIGNS = ("random", "lhs", "sobol")
#: Most points of one Sobol sequence (scipy's 30-bit engine).
SOBOL_MAX = 1 << 30


def _qmc() -> Any:
    from .._extras import need

    return need("fit", "scipy.stats.qmc")


def design_uniforms(
    design: str,
    names: Sequence[str],
    root: np.random.SeedSequence,
    window: int,
    m: int,
    *,
    scramble: bool = True,
) -> dict[str, np.ndarray]:
    """The ``m`` design points of ``window`` for each input, strictly inside (0, 1).

    Examples
    --------
    >>> from cdfsketch._streams import root_seed
    >>> u = design_uniforms("random", ["a", "b"], root_seed(1), 0, 4)
    >>> v = design_uniforms("random", ["b"], root_seed(1), 0, 4)
    >>> bool(np.array_equal(u["b"], v["b"]))
    True
    """
    out: dict[str, np.ndarray] = {}
    if design == "random":
        for name in names:
            out[name] = random_window(root, name, window, m)
    elif design == "lhs":
        qmc = _qmc()
        for name in names:
            gen = generator(root, "input", name, "window", window)
            out[name] = clip_open(qmc.LatinHypercube(d=1, rng=gen).random(m)[:, 0])
    elif design == "sobol":
        qmc = _qmc()
        order = sorted(names)
        engine = qmc.Sobol(d=len(order), scramble=scramble, rng=generator(root, "sobol"))
        if window:
            engine.fast_forward(window * WINDOW)
        with warnings.catch_warnings():  # the balance warning is given once, by the caller
            warnings.simplefilter("ignore", UserWarning)
            pts = engine.random(m)
        for j, name in enumerate(order):
            out[name] = clip_open(np.ascontiguousarray(pts[:, j]))
    else:  # checked by the caller
        raise AssertionError(design)
    return out
