"""Sampling on Dask: one random stream per block, results independent of the scheduler.

Needs the ``dask`` extra (``pip install 'cdfsketch[dask]'``) when a Dask array
is built; importing this package needs numpy only. The block rule is in
:mod:`cdfsketch.scale.blocks`. Candidates run through a model on Dask with
``cdfsketch.consequences(..., chunks=...)``.
"""

from __future__ import annotations

from .blocks import WINDOW, BlockLayout, as_inputset, window_uniforms
from .to_dask import inputset_to_dask, sketch_to_dask

__all__ = [
    "WINDOW",
    "BlockLayout",
    "as_inputset",
    "inputset_to_dask",
    "sketch_to_dask",
    "window_uniforms",
]
