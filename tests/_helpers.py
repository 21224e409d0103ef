"""Helpers shared by test modules (import as ``from _helpers import ...``)."""

from __future__ import annotations

import importlib.util
from pathlib import Path
from types import ModuleType

import numpy as np

from cdfsketch import Sketch


def u_error(sketch: Sketch, u: np.ndarray, x: np.ndarray) -> float:
    """Largest distance of ``u`` from ``[F(x⁻), F(x)]``: zero for an exact generalized inverse.

    At an atom the inverse maps a whole range of ``u`` to one ``x``; there the
    right measure is how far ``u`` lies outside the jump ``[F(x⁻), F(x)]``.
    """
    fx = sketch.cdf(x)
    fminus = sketch.cdf(np.nextafter(x, -np.inf))
    return float(np.max(np.maximum.reduce([np.zeros_like(u), u - fx, fminus - u])))


def load_script(path: Path, name: str | None = None) -> ModuleType:
    """Import a script that is not in a package (a benchmark, a data generator) by its path."""
    spec = importlib.util.spec_from_file_location(name or path.stem, path)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module
