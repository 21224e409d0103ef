"""The distribution methods of a CDF held as a piece table (numpy only).

:class:`PiecewiseDistribution` gives :class:`cdfsketch.Sketch` the shared
"something with a CDF" protocol — ``cdf``, ``sf``, ``pdf``, ``ppf``,
``support``, ``atoms``, ``breakpoints`` — and the exact moments, all read
from the piece table (:mod:`cdfsketch._pieces`) that the class keeps in
``_pieces``. The value itself (knots, tails, editing, conversion) is
:mod:`cdfsketch.sketch`.
"""

from __future__ import annotations

import math
from typing import Any, NamedTuple

import numpy as np

from . import _inverse, _pieces
from ._validate import fail, integer, number, probabilities, values

__all__ = ["Atom", "PiecewiseDistribution"]

ArrayLike = Any


class Atom(NamedTuple):
    """A point mass: ``mass`` of probability at ``x``."""

    x: float
    mass: float


def _out(arr: np.ndarray, scalar: bool) -> Any:
    return float(arr) if scalar else arr


class PiecewiseDistribution:
    """Distribution methods over the piece table in ``self._pieces`` (see the module)."""

    __slots__ = ()
    _pieces: _pieces.Pieces
    _x: np.ndarray

    @property
    def support(self) -> tuple[float, float]:
        """``(low, high)``: where the mass lies; infinite with exponential tails."""
        return _pieces.support(self._pieces)

    @property
    def breakpoints(self) -> np.ndarray:
        """Sorted x where the density may jump or kink: knots and bounded-tail limits.

        Examples
        --------
        >>> from cdfsketch import BoundedTail, Sketch
        >>> Sketch([0, 1, 1, 3], [0, 0.2, 0.5, 0.9], upper_tail=BoundedTail(5.0)).breakpoints
        array([0., 1., 3., 5.])
        """
        return _pieces.breakpoints(self._pieces)

    @property
    def atoms(self) -> tuple[Atom, ...]:
        """Point masses, one :class:`Atom` per pair of knots sharing an ``x``."""
        pc = self._pieces
        return tuple(Atom(float(a), float(m)) for a, m in zip(pc.atom_x, pc.atom_mass, strict=True))

    # ------------------------------------------------------------ evaluation
    def cdf(self, x: ArrayLike) -> Any:
        """``P(X ≤ x)``, right-continuous at atoms.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 0, 1], [0, 0.25, 1]).cdf([-1, 0, 0.5])
        array([0.   , 0.25 , 0.625])
        """
        v, scalar = values(x, field="x")
        return _out(_pieces.cdf(self._pieces, v.ravel()).reshape(v.shape), scalar)

    def sf(self, x: ArrayLike) -> Any:
        """``P(X > x) = 1 - cdf(x)``, accurate far into an exponential upper tail.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).sf(2.5)
        0.75
        """
        v, scalar = values(x, field="x")
        return _out(_pieces.sf(self._pieces, v.ravel()).reshape(v.shape), scalar)

    def pdf(self, x: ArrayLike) -> Any:
        """Density of the continuous part; atoms are reported by :attr:`atoms`.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10, 30], [0, 0.5, 1]).pdf([5, 20])
        array([0.05 , 0.025])
        """
        v, scalar = values(x, field="x")
        return _out(_pieces.pdf(self._pieces, v.ravel()).reshape(v.shape), scalar)

    def ppf(self, u: ArrayLike) -> Any:
        """Generalized inverse: the smallest ``x`` with ``cdf(x) ≥ u``.

        Exact: closed form for linear pieces and tails; for cubic pieces the
        smallest double with ``cdf(x) ≥ u`` as :meth:`cdf` computes it
        (bisection over the doubles). Non-decreasing in ``u`` by construction,
        on every pair of doubles. ``ppf(0)`` and ``ppf(1)`` are the support's
        ends. For fast evaluation of many points use :meth:`sampler`.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 0, 1], [0, 0.25, 1]).ppf([0.1, 0.25, 0.625])
        array([0. , 0. , 0.5])
        """
        v, scalar = probabilities(u, field="u")
        return _out(_inverse.ppf(self._pieces, v.ravel()).reshape(v.shape), scalar)

    def quantile(self, q: ArrayLike) -> Any:
        """Quantiles at probabilities ``q`` (the same as :meth:`ppf`)."""
        return self.ppf(q)

    def median(self) -> float:
        """The 50 % quantile."""
        return float(self.ppf(0.5))

    def isf(self, q: ArrayLike) -> Any:
        """Inverse survival function ``ppf(1 - q)``, exact deep in an exponential upper tail.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).isf(0.25)
        7.5
        """
        v, scalar = probabilities(q, field="q")
        return _out(_inverse.isf(self._pieces, v.ravel()).reshape(v.shape), scalar)

    def prob_between(self, a: float, b: float) -> float:
        """``P(a < X ≤ b)``.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).prob_between(2, 5)
        0.3
        """
        lo = number(a, field="a", finite=False)
        hi = number(b, field="b", finite=False)
        if hi < lo:
            raise fail("prob_between needs a ≤ b", f"a={lo!r} > b={hi!r}", "Swap them.", field="b")
        return float(self.cdf(hi)) - float(self.cdf(lo))

    def prob_above(self, t: float) -> float:
        """``P(X > t)``.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 10], [0, 1]).prob_above(8)
        0.2
        """
        return float(self.sf(number(t, field="t", finite=False)))

    # ------------------------------------------------------------ moments
    def moment(self, k: int) -> float:
        """Raw moment ``E[X^k]``, exact (closed form per piece).

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> round(Sketch([0, 1], [0, 1]).moment(2), 12)
        0.333333333333
        """
        k = integer(k, field="moment order k", low=0, example="k=2")
        return _pieces.central_moment(self._pieces, k, 0.0)

    def mean(self) -> float:
        """Mean, exact.

        Examples
        --------
        >>> from cdfsketch import Sketch
        >>> Sketch([0, 1, 3], [0, 0.5, 1]).mean()
        1.25
        """
        # shift by a representative point first for accuracy far from zero
        c = float(np.median(self._x))
        return c + _pieces.central_moment(self._pieces, 1, c)

    def var(self) -> float:
        """Variance, exact (computed about the mean, not as E[X²] − E[X]²)."""
        return max(_pieces.central_moment(self._pieces, 2, self.mean()), 0.0)

    def std(self) -> float:
        """Standard deviation, exact."""
        return math.sqrt(self.var())
