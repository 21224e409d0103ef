"""Pieces shared by the judgement constructors: argument readers and knot repair (numpy only)."""

from __future__ import annotations

import warnings
from typing import Any

import numpy as np

from .._validate import JudgementError, choice, integer, number, text

#: Default largest |ΔF| for re-knotted sketches (from_distribution, reknot).
DEFAULT_TOLERANCE = 1e-3
#: Default largest |ΔF| for pools that need re-knotting.
POOL_TOLERANCE = 1e-4


def finite(value: Any, what: str) -> float:
    """A finite number stated by the user (a :class:`JudgementError` otherwise)."""
    return number(value, field=what, error=JudgementError, example="12.5")


def read_text(value: Any, what: str) -> str:
    return text(value, field=what)


def read_choice(value: Any, allowed: tuple[str, ...], what: str) -> str:
    return choice(value, field=what, options=allowed)


def read_tolerance(value: Any, default: float) -> float:
    if value is None:
        return default
    return number(
        value,
        field="tolerance",
        low=0.0,
        high=0.5,
        low_open=True,
        high_open=True,
        example="tolerance=1e-3 (a largest |ΔF|)",
    )


def read_count(value: Any, what: str, minimum: int) -> int:
    return integer(value, field=what, low=minimum)


def read_labels(name: str, units: str, author: str = "", rationale: str = "") -> None:
    for label, value in (("name", name), ("units", units), ("author", author)):
        read_text(value, label)
    read_text(rationale, "rationale")


def atom_mass_at(sk: Any, x: np.ndarray) -> np.ndarray:
    """The point mass of ``sk`` at each of ``x`` (0 where it has none)."""
    out = np.zeros(np.shape(x))
    for a in sk.atoms:
        out[x == a.x] += a.mass
    return out


def clean_knots(x: np.ndarray, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Repair rounding: monotone x and p, at most two knots per x, no empty jumps."""
    x = np.maximum.accumulate(np.asarray(x, dtype=float))
    p = np.clip(np.maximum.accumulate(np.asarray(p, dtype=float)), 0.0, 1.0)
    same_prev = np.r_[False, x[1:] == x[:-1]]
    same_next = np.r_[x[1:] == x[:-1], False]
    keep = ~(same_prev & same_next)
    x, p = x[keep], p[keep]
    dup = np.r_[False, (x[1:] == x[:-1]) & (p[1:] == p[:-1])]
    return x[~dup], p[~dup]


def warn_short(achieved: float, tolerance: float, max_knots: int, what: str) -> None:
    """Warn when refinement stopped at ``max_knots`` above the tolerance."""
    if achieved > tolerance:
        warnings.warn(
            f"{what}: reached max_knots={max_knots} with max |ΔF| = {achieved:.3g}, above the "
            f"tolerance {tolerance:.3g}. Raise max_knots or loosen tolerance.",
            UserWarning,
            stacklevel=3,
        )


def spread(lo: float, hi: float, n: int) -> np.ndarray:
    """``n`` probabilities from ``lo`` to ``hi``, denser towards both ends."""
    k = np.arange(n)
    return lo + (hi - lo) * 0.5 * (1.0 - np.cos(np.pi * k / (n - 1)))
