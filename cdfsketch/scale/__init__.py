"""Sampling on Dask: one random stream per block, results independent of the scheduler.

``Sketch.to_dask`` and ``InputSet.to_dask`` build the arrays; this package
adds the function forms (an input set may be a mapping name → sketch) and
the block layout the consequence runs on Dask use
(``cdfsketch.consequences(..., chunks=...)``). Needs the ``dask`` extra
(``pip install 'cdfsketch[dask]'``) when a Dask array is built; importing
this package needs numpy only. The block rule is in :mod:`cdfsketch._blocks`.
"""

from __future__ import annotations

from .blocks import (
    WINDOW,
    BlockLayout,
    as_inputset,
    check_chunks,
    inputset_to_dask,
    sketch_to_dask,
    window_uniforms,
)

__all__ = [
    "WINDOW",
    "BlockLayout",
    "as_inputset",
    "check_chunks",
    "inputset_to_dask",
    "sketch_to_dask",
    "window_uniforms",
]
