"""A fitted candidate: a frozen value satisfying :class:`cdfsketch.protocol.CDFModel`."""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from .._frozen import freeze, thaw
from .._validate import probabilities, quote, values
from ..empirical import as_data
from .engines import Engine

__all__ = ["Candidate", "CandidateList"]

ArrayLike = Any


@dataclass(frozen=True, eq=False)
class Candidate:
    """A fitted distribution: a frozen value with the scipy-style methods.

    It satisfies :class:`cdfsketch.protocol.CDFModel` (``cdf``, ``sf``,
    ``pdf``, ``ppf``, ``support``, ``atoms`` — none —, ``breakpoints``), so
    the metrics read it like any other model.

    Attributes
    ----------
    name : str
        Display name, e.g. ``"gamma"`` or ``"normal mixture (k=2)"``.
    family : str
        ``"normal"``, …, ``"mixture"``, ``"kde"``.
    params : FrozenDict
        The fitted parameters, read-only all the way down (scipy's
        parametrisation for the families: ``shape…, loc, scale``;
        ``weights/means/sds`` for a mixture; ``bandwidth`` and ``rule`` for a
        KDE). Fixed parameters are listed too.
    loglik : float
        Log-likelihood of the data the candidate was fitted to (finite).
    n_params : float
        Number of free parameters (``nan`` for the KDE, which has no finite
        parameter count: compare it by the holdout score instead).
    n : int
        Number of observations fitted.
    support : tuple of float
        ``(low, high)``.
    notes : str
        How it was fitted (fixed parameters, subsampling, choice of k).
    engine : Engine
        What evaluates it (a frozen scipy law, a mixture, a KDE).
    refitter : callable
        ``refitter(data, rng)`` fits the same family (same k, same bandwidth
        rule) to other data; use :meth:`refit`.

    Examples
    --------
    >>> from cdfsketch.fit import fit_family
    >>> c = fit_family("normal", [1.0, 2.0, 3.0, 4.0])
    >>> c.params, round(c.cdf(2.5), 6)
    ({'loc': 2.5, 'scale': 1.118034}, 0.5)
    >>> c.params["loc"] = 99
    Traceback (most recent call last):
    ...
    TypeError: ...
    """

    name: str
    family: str
    params: Mapping[str, Any]
    loglik: float
    n_params: float
    n: int
    support: tuple[float, float]
    notes: str = ""
    engine: Engine = field(default=None, repr=False)  # type: ignore[assignment]
    refitter: Callable[[np.ndarray, Any], Candidate] = field(default=None, repr=False)  # type: ignore[assignment]

    def __post_init__(self) -> None:
        object.__setattr__(self, "params", freeze(dict(self.params)))
        object.__setattr__(self, "support", (float(self.support[0]), float(self.support[1])))

    # ------------------------------------------------------------ protocol
    @property
    def kind(self) -> str:
        """The family (what the comparison table shows as the kind)."""
        return self.family

    @property
    def atoms(self) -> tuple[tuple[float, float], ...]:
        """No point masses: every candidate is continuous."""
        return ()

    @property
    def breakpoints(self) -> np.ndarray:
        """Where the density may jump or kink (finite support ends, a triangle's mode)."""
        return self.engine.breakpoints

    @property
    def aic(self) -> float:
        """Akaike's criterion ``2k - 2 loglik`` (``nan`` for the KDE)."""
        return 2.0 * self.n_params - 2.0 * self.loglik

    @property
    def bic(self) -> float:
        """Schwarz's criterion ``k ln n - 2 loglik`` (``nan`` for the KDE)."""
        return self.n_params * math.log(self.n) - 2.0 * self.loglik

    def _at(self, f: Callable[[np.ndarray], np.ndarray], x: ArrayLike) -> Any:
        v, scalar = values(x, field="x")
        out = np.asarray(f(v), dtype=float)
        return float(out) if scalar else out

    def cdf(self, x: ArrayLike) -> Any:
        """``P(X ≤ x)``."""
        return self._at(self.engine.cdf, x)

    def sf(self, x: ArrayLike) -> Any:
        """``P(X > x)``, accurate in the upper tail."""
        return self._at(self.engine.sf, x)

    def pdf(self, x: ArrayLike) -> Any:
        """Density."""
        return self._at(self.engine.pdf, x)

    def logpdf(self, x: ArrayLike) -> Any:
        """Log density (``-inf`` outside the support)."""
        return self._at(self.engine.logpdf, x)

    def ppf(self, u: ArrayLike) -> Any:
        """Quantile function (inverse of :meth:`cdf`)."""
        v, scalar = probabilities(u, field="u")
        out = np.asarray(self.engine.ppf(v), dtype=float)
        return float(out) if scalar else out

    def isf(self, q: ArrayLike) -> Any:
        """Inverse survival function, accurate for small ``q``."""
        v, scalar = probabilities(q, field="q")
        out = np.asarray(self.engine.isf(v), dtype=float)
        return float(out) if scalar else out

    def sample(self, size: int | tuple[int, ...] | None = None, *, rng: Any = None) -> Any:
        """Draw ``size`` values; ``rng`` is anything ``np.random.default_rng`` takes.

        Examples
        --------
        >>> from cdfsketch.fit import fit_family
        >>> c = fit_family("exponential", [1.0, 2.0, 3.0])
        >>> bool(np.array_equal(c.sample(3, rng=1), c.sample(3, rng=1)))
        True
        """
        gen = np.random.default_rng(rng)
        out = self.engine.rvs(1 if size is None else size, gen)
        return float(np.ravel(out)[0]) if size is None else np.asarray(out, dtype=float)

    def refit(self, data: ArrayLike, *, rng: Any = None) -> Candidate:
        """The same family (same k, same bandwidth rule) fitted to other data."""
        return self.refitter(as_data(data), rng)

    def renote(self, notes: str) -> Candidate:
        """The same candidate with other notes."""
        return Candidate(
            name=self.name,
            family=self.family,
            params=self.params,
            loglik=self.loglik,
            n_params=self.n_params,
            n=self.n,
            support=self.support,
            notes=notes,
            engine=self.engine,
            refitter=self.refitter,
        )

    def to_sketch(
        self,
        *,
        knots: int = 20,
        interpolation: Literal["linear", "pchip"] = "pchip",
        tail_mass: float = 0.01,
        name: str = "",
        units: str = "",
    ) -> Any:
        """This candidate as a :class:`~cdfsketch.Sketch`: knots at its quantiles.

        The package's one target-to-knots function,
        :func:`cdfsketch.elicit.reknot`: it starts from ``knots`` quantiles and
        adds knots until the sketch's CDF is within 1e-3 of the fit's (the
        achieved error is in ``provenance["extra"]["max_abs_cdf_error"]``);
        ``tail_mass`` is left beyond an outer knot on an unbounded side, in an
        exponential tail continuing the density. Provenance:
        ``method="from candidate fit <name>"`` with the family and parameters
        in ``extra``.

        Examples
        --------
        >>> from cdfsketch.fit import fit_family
        >>> s = fit_family("uniform", [0.0, 1.0, 2.0]).to_sketch(knots=3, interpolation="linear")
        >>> s.support, float(s.cdf(1.0))
        ((0.0, 2.0), 0.5)
        """
        from ..elicit import reknot

        sk = reknot(
            self, knots=knots, interpolation=interpolation, tail_mass=tail_mass,
            name=name or self.name, units=units,
        )  # fmt: skip
        prov = thaw(sk.provenance)
        prov["method"] = f"from candidate fit {self.name}"
        prov.setdefault("extra", {}).update({"family": self.family, "params": thaw(self.params)})
        return sk.replace(provenance=prov)


class CandidateList(list):
    """A list of :class:`Candidate` with ``skipped``: ``{family: reason}``."""

    def __init__(self, items: Iterable[Candidate] = (), skipped: Mapping[str, str] | None = None):
        super().__init__(items)
        self.skipped: dict[str, str] = dict(skipped or {})

    def __repr__(self) -> str:
        names = ", ".join(c.name for c in self)
        skipped = "; ".join(f"{k}: {v}" for k, v in self.skipped.items()) or "none"
        return f"CandidateList([{names}]; skipped: {skipped})"

    def by_name(self, name: str) -> Candidate:
        """The candidate called ``name`` (KeyError listing the names otherwise)."""
        for c in self:
            if c.name == name:
                return c
        raise KeyError(f"No candidate named {quote(name)}; have {[c.name for c in self]}.")
