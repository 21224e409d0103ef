"""cdfsketch: draw, judge, review and sample custom CDFs for simulation inputs.

The core (knots, sketch, sampler, spec, inputs, empirical) needs numpy only:

>>> import cdfsketch
>>> s = cdfsketch.Sketch([0, 2, 5, 9], [0, 0.3, 0.8, 1], name="repair time", units="h")
>>> round(float(cdfsketch.load(s.to_json()).sample(rng=1)), 4)
3.2709

Everything else loads on first use, so a simulation that only loads specs
and samples never imports scipy or the notebook stack. Subpackages are
reached the same way (``cdfsketch.fit.fit_candidates`` works after
``import cdfsketch``); a feature whose optional extra is missing raises one
error naming the extra to install.
"""

from __future__ import annotations

import importlib
from typing import Any

from ._validate import DataError, InputError, JudgementError, KnotError, SpecError
from ._version import __version__
from .knots import check_knots, project_knots
from .loading import load, validate_spec
from .sampler import Sampler
from .sketch import Atom, Sketch
from .spec import data_fingerprint
from .tails import BoundedTail, ExponentialTail

__all__ = [
    "Atom",
    "BoundedTail",
    "DataError",
    "ExponentialTail",
    "InputError",
    "JudgementError",
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

# name -> module that defines it; imported on first attribute access (PEP 562)
_LAZY = {
    "InputSet": "inputs",
    "ECDF": "empirical",
    "as_data": "empirical",
    "dkw_eps": "empirical",
    "CDFModel": "protocol",
    "as_model": "protocol",
    "holdout_split": "holdout",
    "from_quantiles": "elicit",
    "from_three_points": "elicit",
    "from_distribution": "elicit",
    "from_data": "elicit",
    "reknot": "elicit",
    "pool": "elicit",
    "fit_candidates": "fit",
    "SmallSampleWarning": "fit",
    "compare": "metrics",
    "ComparisonTable": "metrics",
    "consequences": "outcomes",
    "Consequences": "outcomes",
    "ModelError": "outcomes",
    "Review": "review",
    "Editor": "widgets",
    "ReviewBoard": "widgets",
}

#: subpackages and modules reachable as attributes without an explicit import
_SUBMODULES = frozenset(
    {
        "cli", "demo", "elicit", "empirical", "fit", "holdout", "inputs", "knots", "loading",
        "metrics", "outcomes", "protocol", "review", "sampler", "scale", "sketch", "spec",
        "summary", "tails", "widgets",
    }
)  # fmt: skip


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is not None:
        return getattr(importlib.import_module(f".{module}", __name__), name)
    if name in _SUBMODULES:
        return importlib.import_module(f".{name}", __name__)
    raise AttributeError(f"module 'cdfsketch' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted([*__all__, *_LAZY, *_SUBMODULES])
