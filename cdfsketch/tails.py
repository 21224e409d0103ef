"""Tail models: what a sketch does beyond its outer knots.

When the first knot has ``p[0] > 0`` (or the last ``p[-1] < 1``) the mass
that is left, exactly ``p[0]`` (or ``1 - p[-1]``), goes to a tail:

* :class:`BoundedTail` — the support ends at a stated ``limit``; the mass is
  spread uniformly over ``[limit, x[0]]`` (``density="uniform"``) or with a
  density falling linearly to zero at the limit (``density="taper"``).
* :class:`ExponentialTail` — an exponential tail of a stated ``scale``, or,
  with ``scale=None``, the scale that makes the tail continue the density at
  the outer knot: ``scale = tail_mass / f(x_outer)`` (the tail's density at
  the knot equals the sketch's density there; REFERENCES: "exponential
  λ = f_n / (1 − p_n) continues density").

A tail setting is kept on the sketch even while its mass is zero, so dragging
an outer knot off 0 or 1 always has a defined tail.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

from .knots import MAX_ABS_X

__all__ = ["BoundedTail", "ExponentialTail", "Tail", "as_tail"]

TAIL_DENSITIES = ("uniform", "taper")


@dataclass(frozen=True)
class BoundedTail:
    """Tail mass on ``[limit, outer knot]``.

    Parameters
    ----------
    limit : float
        Where the support ends on this side.
    density : {"uniform", "taper"}
        ``"uniform"`` spreads the mass evenly; ``"taper"`` lets the density
        fall linearly to zero at the limit.

    Examples
    --------
    >>> BoundedTail(0.0)
    BoundedTail(limit=0.0, density='uniform')
    """

    limit: float
    density: Literal["uniform", "taper"] = field(default="uniform", kw_only=True)

    def __post_init__(self) -> None:
        try:
            limit = float(self.limit)
        except (TypeError, ValueError):
            raise ValueError(
                f"BoundedTail limit must be a number; got {self.limit!r}. Pass the x where "
                "the support ends."
            ) from None
        if not math.isfinite(limit):
            raise ValueError(
                f"BoundedTail limit must be finite; got {limit!r}. For an unbounded side use "
                "ExponentialTail()."
            )
        if abs(limit) > MAX_ABS_X:
            raise ValueError(
                f"BoundedTail limit must satisfy |limit| ≤ {MAX_ABS_X:g}, like knot positions; "
                f"got {limit!r}. Rescale the quantity (e.g. other units)."
            )
        if self.density not in TAIL_DENSITIES:
            raise ValueError(
                f"BoundedTail density must be one of {TAIL_DENSITIES}; got {self.density!r}."
            )
        object.__setattr__(self, "limit", limit)


@dataclass(frozen=True)
class ExponentialTail:
    """Exponential tail beyond the outer knot.

    Parameters
    ----------
    scale : float or None
        The tail's scale (mean excess beyond the knot). ``None`` derives it so
        that the tail's density at the knot continues the sketch's density.

    Examples
    --------
    >>> ExponentialTail(scale=2.5)
    ExponentialTail(scale=2.5)
    """

    scale: float | None = None

    def __post_init__(self) -> None:
        if self.scale is None:
            return
        try:
            scale = float(self.scale)
        except (TypeError, ValueError):
            raise ValueError(
                f"ExponentialTail scale must be a positive number or None; got {self.scale!r}."
            ) from None
        if not (math.isfinite(scale) and scale > 0):
            raise ValueError(
                f"ExponentialTail scale must be positive and finite; got {scale!r}. Pass None "
                "to derive it from the density at the outer knot."
            )
        if scale > MAX_ABS_X:
            raise ValueError(
                f"ExponentialTail scale must be at most {MAX_ABS_X:g}, like knot positions; got "
                f"{scale!r}. Rescale the quantity (e.g. other units)."
            )
        object.__setattr__(self, "scale", scale)


Tail = BoundedTail | ExponentialTail


def as_tail(value: object, side: str) -> Tail:
    """Read a tail setting: a tail object, ``None`` (exponential, derived scale).

    Examples
    --------
    >>> as_tail(None, "lower")
    ExponentialTail(scale=None)
    """
    if value is None:
        return ExponentialTail()
    if isinstance(value, BoundedTail | ExponentialTail):
        return value
    raise ValueError(
        f"The {side} tail must be a BoundedTail, an ExponentialTail or None; got {value!r}. "
        f"For example {side}_tail=BoundedTail(0.0) or {side}_tail=ExponentialTail()."
    )
