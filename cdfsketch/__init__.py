"""cdfsketch: draw, judge, review and sample custom CDFs for simulation inputs.

The core (knots, sketch, sampler, spec, empirical) needs numpy only:

>>> import cdfsketch
>>> s = cdfsketch.Sketch([0, 2, 5, 9], [0, 0.3, 0.8, 1], name="repair time", units="h")
>>> round(float(cdfsketch.load(s.to_json()).sample(rng=1)), 4)
3.2709

The widgets (``Editor``, ``ReviewBoard``) and the fitting tools load lazily on
first use, so a simulation that only loads specs and samples never imports
them.
"""

from __future__ import annotations

from typing import Any

from ._version import __version__
from .knots import KnotError, check_knots, project_knots
from .sampler import Sampler
from .sketch import Atom, Sketch
from .spec import SpecError, data_fingerprint, load, validate_spec
from .tails import BoundedTail, ExponentialTail

__all__ = [
    "Atom",
    "BoundedTail",
    "ExponentialTail",
    "KnotError",
    "Sampler",
    "Sketch",
    "SpecError",
    "__version__",
    "check_knots",
    "data_fingerprint",
    "load",
    "project_knots",
    "validate_spec",
]

# name -> module; imported on first attribute access (PEP 562)
_LAZY = {
    "ECDF": "empirical",
    "as_data": "empirical",
    "dkw_eps": "empirical",
    "DataError": "empirical",
    "fit_candidates": "fit",
    "compare": "fit",
    "pool": "elicit",
    "Editor": "widgets",
    "ReviewBoard": "widgets",
}


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'cdfsketch' has no attribute {name!r}")
    import importlib

    return getattr(importlib.import_module(f".{module}", __name__), name)


def __dir__() -> list[str]:
    return sorted([*__all__, *_LAZY])
