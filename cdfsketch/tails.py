"""Tail models: what a sketch does beyond its outer knots.

When the first knot has ``p[0] > 0`` (or the last ``p[-1] < 1``) the mass
that is left, exactly ``p[0]`` (or ``1 - p[-1]``), goes to a tail:

* :class:`BoundedTail` — the support ends at a stated ``limit``; the mass is
  spread uniformly over ``[limit, x[0]]`` (``density="uniform"``) or with a
  density falling linearly to zero at the limit (``density="taper"``). It is
  one polynomial piece of the CDF (:meth:`BoundedTail.piece`).
* :class:`ExponentialTail` — an exponential tail of a stated ``scale``, or,
  with ``scale=None``, the scale that makes the tail continue the density at
  the outer knot: ``scale = tail_mass / f(x_outer)`` (the tail's density at
  the knot equals the sketch's density there; REFERENCES: "exponential
  λ = f_n / (1 − p_n) continues density"). How ``f(x_outer)`` is found, and
  the one case where the density must jump, is stated in
  :func:`cdfsketch._pieces.knot_slopes`. Once its edge, mass and scale are
  known it becomes a :class:`ResolvedExponentialTail`, which holds the one
  formula each for its cdf, sf, pdf, ppf, isf and moments.

A tail setting is kept on the sketch even while its mass is zero, so dragging
an outer knot off 0 or 1 always has a defined tail.

Only numpy is imported here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from ._limits import MAX_ABS_X, MAX_SCALE
from ._validate import InputError, choice, fail, number, quote

__all__ = ["BoundedTail", "ExponentialTail", "ResolvedExponentialTail", "Tail", "as_tail"]

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
        limit = number(
            self.limit,
            field="BoundedTail limit",
            low=-MAX_ABS_X,
            high=MAX_ABS_X,
            example="BoundedTail(0.0) (for an unbounded side use ExponentialTail())",
        )
        choice(self.density, field="BoundedTail density", options=TAIL_DENSITIES)
        object.__setattr__(self, "limit", limit)

    def piece(self, side: str, start: float, mass: float) -> tuple[float, float, float, float]:
        """The tail's CDF as one polynomial piece ``c0 + c1 t + c2 t² + c3 t³``.

        ``t`` runs from 0 at the piece's left end to 1 at its right end (the
        limit and the first knot below; the last knot and the limit above).
        ``start`` is the probability at the left end, ``mass`` the tail mass.

        Examples
        --------
        >>> BoundedTail(0.0, density="taper").piece("upper", 0.9, 0.1)
        (0.9, 0.2, -0.1, 0.0)
        """
        if side == "lower":
            return (start, mass, 0.0, 0.0) if self.density == "uniform" else (start, 0.0, mass, 0.0)
        if self.density == "uniform":
            return (start, mass, 0.0, 0.0)
        return (start, 2 * mass, -mass, 0.0)


@dataclass(frozen=True)
class ExponentialTail:
    """Exponential tail beyond the outer knot.

    Parameters
    ----------
    scale : float or None
        The tail's scale (mean excess beyond the knot), at most
        ``cdfsketch._limits.MAX_SCALE``. ``None`` derives it so that the
        tail's density at the knot continues the sketch's density.

    Examples
    --------
    >>> ExponentialTail(scale=2.5)
    ExponentialTail(scale=2.5)
    """

    scale: float | None = None

    def __post_init__(self) -> None:
        if self.scale is None:
            return
        scale = number(
            self.scale,
            field="ExponentialTail scale",
            low=0.0,
            low_open=True,
            high=MAX_SCALE,
            example="ExponentialTail(scale=2.5), or scale=None to derive it",
        )
        object.__setattr__(self, "scale", scale)


Tail = BoundedTail | ExponentialTail


@dataclass(frozen=True)
class ResolvedExponentialTail:
    """An exponential tail with everything known: it leaves ``edge`` with ``mass`` and ``scale``.

    ``side`` is ``"lower"`` (the tail lies below ``edge``; ``F(x) = mass·e^{(x-edge)/scale}``)
    or ``"upper"`` (above ``edge``; ``1 - F(x) = mass·e^{-(x-edge)/scale}``).
    The methods take points on the tail's side of ``edge`` only; the piece
    table routes the others.

    Examples
    --------
    >>> t = ResolvedExponentialTail(edge=10.0, mass=0.2, scale=5.0, side="upper")
    >>> float(t.sf(np.array([15.0]))[0]) == 0.2 * math.exp(-1)
    True
    >>> float(t.ppf(np.array([0.9]))[0]) == 10 + 5 * math.log(2)
    True
    """

    edge: float
    mass: float
    scale: float
    side: Literal["lower", "upper"]
    #: Probability where the tail meets the body: 0 below; above, the last knot's ``p``
    #: (given exactly, as ``1 - mass`` may differ from it in the last bit).
    start: float | None = None

    def __post_init__(self) -> None:
        if self.start is None:
            object.__setattr__(self, "start", 0.0 if self.side == "lower" else 1.0 - self.mass)

    @property
    def edge_density(self) -> float:
        """Density at the edge, ``mass / scale``."""
        return self.mass / self.scale

    def _z(self, x: np.ndarray) -> np.ndarray:
        """Distance from the edge in scales (≥ 0 on the tail's side)."""
        return (self.edge - x if self.side == "lower" else x - self.edge) / self.scale

    @np.errstate(over="ignore", under="ignore")
    def cdf(self, x: np.ndarray) -> np.ndarray:
        """``F(x)``; above, ``start - mass·expm1(-z)`` (continuous with the body at the edge)."""
        if self.side == "lower":
            return self.mass * np.exp(-self._z(x))
        return self.start - self.mass * np.expm1(-self._z(x))  # type: ignore[operator]

    @np.errstate(over="ignore", under="ignore")
    def sf(self, x: np.ndarray) -> np.ndarray:
        """``1 - F(x)``; above, ``mass·e^{-z}`` without cancellation."""
        if self.side == "lower":
            return 1.0 - self.cdf(x)
        return self.mass * np.exp(-self._z(x))

    @np.errstate(over="ignore", under="ignore")
    def pdf(self, x: np.ndarray) -> np.ndarray:
        """Density ``mass/scale · e^{-z}``."""
        return self.edge_density * np.exp(-self._z(x))

    @np.errstate(divide="ignore", invalid="ignore")
    def ppf(self, u: np.ndarray) -> np.ndarray:
        """Inverse of :meth:`cdf` for ``u`` in the tail (never on the body's side of the edge)."""
        if self.side == "lower":
            return np.minimum(self.edge + self.scale * np.log(u / self.mass), self.edge)
        return np.maximum(self.edge - self.scale * np.log((1.0 - u) / self.mass), self.edge)

    @np.errstate(divide="ignore", invalid="ignore")
    def isf(self, q: np.ndarray) -> np.ndarray:
        """Inverse of :meth:`sf` (upper tail): exact for ``q`` far below ``2⁻⁵³``."""
        if self.side == "lower":
            return self.ppf(1.0 - q)
        return np.maximum(self.edge + self.scale * np.log(self.mass / q), self.edge)

    def moment(self, k: int, about: float) -> float:
        """``∫ (x - about)^k dF`` over the tail: ``X = edge ± scale·E`` with ``E[E^j] = j!``."""
        a = self.edge - about
        s = -self.scale if self.side == "lower" else self.scale
        return self.mass * sum(
            math.comb(k, i) * a ** (k - i) * s**i * math.factorial(i) for i in range(k + 1)
        )


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
    raise fail(
        f"{side}_tail must be a BoundedTail, an ExponentialTail or None",
        f"{type(value).__name__} {quote(value)}",
        f"For example {side}_tail=BoundedTail(0.0) or {side}_tail=ExponentialTail().",
        error=InputError,
        field=f"{side}_tail",
        value=value,
    )
