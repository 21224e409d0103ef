"""An input set's draws window by window: in memory, in blocks, and on Dask.

One rule makes window ``k`` of every input (:func:`window_uniforms`): the
design's uniforms from the streams keyed by (input name, ``k``), then the
rank dependence imposed on the dependent group. ``InputSet.sample``,
``InputSet.blocks``, ``InputSet.to_dask`` and the consequence runs all call
it, so they give the same draws bit for bit. The window and chunk rules are
in :mod:`cdfsketch._blocks`.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterator
from typing import Any

import numpy as np

from .._blocks import WINDOW, clip_open, from_portable, to_portable, windows_to_dask
from .._streams import root_seed
from .._validate import choice, fail, integer
from .dependence import copula_correlation, gaussian_copula, iman_conover
from .designs import DESIGNS, SOBOL_MAX, design_uniforms
from .draws import Draws

__all__ = [
    "DEPENDENCE",
    "check_call",
    "collect",
    "cut",
    "inputset_to_dask",
    "window_uniforms",
]

DEPENDENCE = ("iman-conover", "gaussian-copula", "independent")


def check_call(
    size: Any, design: Any, dependence: Any, *, low: int = 0, stacklevel: int = 3
) -> int:
    """Validate a sampling call's ``size``, ``design`` and ``dependence``; the size.

    ``stacklevel`` points the Sobol balance warning at the user's line (3: the
    caller of the public method that calls this).

    Examples
    --------
    >>> check_call(10, "random", "independent")
    10
    """
    n = integer(size, field="size", low=low, example="size=10_000")
    choice(design, field="design", options=DESIGNS)
    choice(dependence, field="dependence", options=DEPENDENCE)
    if design == "sobol":
        if n > SOBOL_MAX:
            raise fail(
                f"size must be at most {SOBOL_MAX:,} with design='sobol'",
                f"{n:,}",
                "Draw fewer points, or use design='lhs' or 'random'.",
                field="size",
                value=size,
            )
        if n & (n - 1):
            warnings.warn(
                f"Sobol points are balanced only in runs of a power of two; size={n:,} is "
                f"not one. Use e.g. size={1 << max(n.bit_length() - 1, 0):,} or "
                f"{1 << n.bit_length():,}.",
                UserWarning,
                stacklevel=stacklevel,
            )
    return n


def window_uniforms(
    inputs: Any,
    root: np.random.SeedSequence,
    k: int,
    m: int,
    *,
    design: str = "random",
    dependence: str = "iman-conover",
) -> dict[str, np.ndarray]:
    """Uniforms of window ``k`` (``m`` points) for every input, dependence applied.

    The window's slice of ``inputs.uniforms(size, rng=root, design=design,
    dependence=dependence)`` for any ``size`` that leaves ``m`` points in
    window ``k``: that call is made of these windows.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> from cdfsketch.inputs import InputSet
    >>> ins = InputSet({"a": Sketch([0, 1], [0, 1])})
    >>> u = window_uniforms(ins, root_seed(3), 0, 5)["a"]
    >>> bool(np.array_equal(u, ins.uniforms(5, rng=3)["a"]))
    True
    """
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


def _values(
    inputs: Any, n: int, rng: Any, design: str, dependence: str, transform: bool
) -> Iterator[tuple[int, dict[str, np.ndarray]]]:
    """(start, name → uniforms or values) for each window of the ``n`` points, in order."""
    root = root_seed(rng)
    sketches = inputs.sketches
    samplers = {name: sketches[name].sampler() for name in inputs.names} if transform else {}
    for k in range(math.ceil(n / WINDOW)):
        start = k * WINDOW
        m = min(WINDOW, n - start)
        u = window_uniforms(inputs, root, k, m, design=design, dependence=dependence)
        if transform:
            u = {name: samplers[name].ppf(v) for name, v in u.items()}
        yield start, u


def collect(inputs: Any, n: int, rng: Any, design: str, dependence: str, transform: bool) -> Draws:
    """All ``n`` draws (or uniforms) of a checked call, as :class:`Draws`."""
    out = {name: np.empty(n) for name in inputs.names}
    for start, vals in _values(inputs, n, rng, design, dependence, transform):
        for name, v in vals.items():
            out[name][start : start + v.size] = v
    return Draws(out, inputs.rank_corr)


def cut(
    inputs: Any, n: int, b: int, rng: Any, design: str, dependence: str, transform: bool
) -> Iterator[Draws]:
    """The draws of a checked call in consecutive blocks of ``b``."""
    pending: list[dict[str, np.ndarray]] = []
    have = 0
    for _, vals in _values(inputs, n, rng, design, dependence, transform):
        m = next(iter(vals.values())).size
        pos = 0
        while pos < m:
            take = min(b - have, m - pos)
            whole = take == m  # a whole window: passed on without a copy
            pending.append({k: v if whole else v[pos : pos + take] for k, v in vals.items()})
            have += take
            pos += take
            if have == b:
                yield _join(inputs, pending)
                pending, have = [], 0
    if have:
        yield _join(inputs, pending)


def _join(inputs: Any, parts: list[dict[str, np.ndarray]]) -> Draws:
    names = inputs.names
    if len(parts) == 1 and all(v.base is None for v in parts[0].values()):
        return Draws({k: parts[0][k] for k in names}, inputs.rank_corr)
    return Draws({k: np.concatenate([p[k] for p in parts]) for k in names}, inputs.rank_corr)


# ---------------------------------------------------------------- workers and Dask
class InputSetWindows:
    """Window ``k`` of an input set's draws, one column per input (picklable)."""

    def __init__(self, inputs: Any, design: str, dependence: str) -> None:
        self.inputs, self.design, self.dependence = inputs, design, dependence

    def __getstate__(self) -> dict[str, Any]:
        return {**self.__dict__, "inputs": to_portable(self.inputs)}

    def __setstate__(self, state: dict[str, Any]) -> None:
        self.__dict__.update({**state, "inputs": from_portable(state["inputs"])})

    def __call__(self, root: Any, k: int, m: int) -> list[np.ndarray]:
        ins = self.inputs
        u = window_uniforms(ins, root, k, m, design=self.design, dependence=self.dependence)
        return [ins.sketches[name].sampler().ppf(u[name]) for name in ins.names]


def inputset_to_dask(
    inputs: Any,
    size: Any,
    *,
    chunks: Any,
    rng: Any = None,
    design: str = "random",
    dependence: str = "iman-conover",
) -> dict[str, Any]:
    """``size`` joint draws of an input set as lazy Dask arrays (see ``InputSet.to_dask``)."""
    n = check_call(size, design, dependence, low=1, stacklevel=4)
    draw = InputSetWindows(inputs, design, dependence)
    table = windows_to_dask(draw, len(inputs.names), n, chunks=chunks, rng=rng)
    return {name: table[:, j] for j, name in enumerate(inputs.names)}
