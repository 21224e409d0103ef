"""Candidate fits for a 1-D sample: parametric families, normal mixtures, a KDE.

:func:`fit_candidates` fits the registered families by maximum likelihood
through ``scipy.stats`` (:mod:`.families`, the one registry), a Gaussian
mixture by EM (:mod:`.mixture`, our own vectorised numpy code, the number of
components chosen by BIC) and a Gaussian kernel density estimate
(:mod:`.kde`). Each result is a :class:`Candidate` (:mod:`.candidate`): a
frozen value with ``cdf``, ``pdf``, ``ppf``, ``sample``, the log-likelihood,
AIC, BIC and ``to_sketch``, satisfying :class:`cdfsketch.protocol.CDFModel`.
Families that do not apply to the data are listed, with the reason, in the
``skipped`` attribute of the returned :class:`CandidateList`.

The metrics and the comparison table live in :mod:`cdfsketch.metrics`, which
does not import this package (and this package does not import it: ``compare``
and ``ComparisonTable`` are reached here only by name, for old code).

scipy is imported inside the functions that need it (the 'fit' extra).
"""

from __future__ import annotations

import importlib
from typing import Any

from .candidate import Candidate, CandidateList
from .candidates import SmallSampleWarning, fit_candidates
from .families import FAMILIES, REGISTRY, Family, fit_family
from .kde import fit_kde
from .mixture import fit_normal_mixture

__all__ = [
    "FAMILIES",
    "REGISTRY",
    "Candidate",
    "CandidateList",
    "Family",
    "SmallSampleWarning",
    "fit_candidates",
    "fit_family",
    "fit_kde",
    "fit_normal_mixture",
]


def __getattr__(name: str) -> Any:
    # compare and ComparisonTable moved to cdfsketch.metrics; import them from there.
    if name in ("compare", "ComparisonTable"):
        return getattr(importlib.import_module("cdfsketch.metrics"), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
