"""The one "something with a CDF" protocol, and the one adapter to it (numpy only).

Everything that judges a distribution — the metrics, the comparison table,
the band check — reads it through :class:`CDFModel`: ``cdf``, ``sf``,
``pdf``, ``ppf``, ``support``, ``atoms`` and ``breakpoints``. A fitted
:class:`~cdfsketch.fit.Candidate` and an :class:`~cdfsketch.empirical.ECDF`
satisfy it as they are; :func:`as_model` brings a :class:`~cdfsketch.Sketch`,
a ``FrozenSketch``, a frozen ``scipy.stats`` distribution (continuous or
discrete) or any object that already satisfies the protocol to one
:class:`Model`, the only adapter in the package.

What the members mean:

* ``cdf(x)`` ``P(X ≤ x)`` (right-continuous), ``sf(x)`` ``P(X > x)``,
  ``pdf(x)`` the density of the continuous part (0 at and between atoms of a
  purely discrete law), ``ppf(u)`` the generalised inverse (smallest ``x``
  with ``F(x) ≥ u``).
* ``support`` ``(low, high)``; ``atoms`` the point masses as ``(x, mass)``
  pairs; ``breakpoints`` the sorted ``x`` where the density may jump or kink
  (knots, support ends, a mode of a triangle, the atoms): between two
  breakpoints the CDF is smooth, so quadrature there is accurate.

scipy is never imported here: a frozen scipy distribution is recognised by
what it has (``dist``, ``support()``, ``pmf`` for a discrete one).

Examples
--------
>>> class Flat:
...     support, atoms, breakpoints = (0.0, 2.0), (), np.array([0.0, 2.0])
...     def cdf(self, x): return np.clip(np.asarray(x) / 2, 0, 1)
...     def sf(self, x): return 1 - self.cdf(x)
...     def pdf(self, x): return np.where((np.asarray(x) >= 0) & (np.asarray(x) <= 2), 0.5, 0.0)
...     def ppf(self, u): return 2 * np.asarray(u)
>>> isinstance(Flat(), CDFModel)
True
>>> m = as_model(Flat(), name="flat")
>>> m.name, float(m.cdf(1.0)), m.breakpoints.tolist()
('flat', 0.5, [0.0, 2.0])
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any, Protocol, runtime_checkable

import numpy as np

from ._distribution import Atom
from ._validate import InputError, fail, quote

__all__ = ["CDFModel", "Model", "as_model"]

#: A discrete scipy law lists its support points as atoms between its
#: ``ppf(_DISCRETE_EPS)`` and ``isf(_DISCRETE_EPS)``; beyond, the tail is
#: integrated piecewise by its quantiles (exact: the CDF is flat between them).
_DISCRETE_EPS = 1e-16
#: ... unless that would list more support points than this (then refused).
_DISCRETE_MAX_ATOMS = 2_000_000


@runtime_checkable
class CDFModel(Protocol):
    """Something with a CDF: what every judged model offers.

    ``support`` is ``(low, high)``; ``atoms`` a tuple of ``(x, mass)`` pairs;
    ``breakpoints`` a sorted float array of the ``x`` where the density may
    jump or kink (empty if none).
    """

    @property
    def support(self) -> tuple[float, float]: ...

    @property
    def atoms(self) -> tuple[tuple[float, float], ...]: ...

    @property
    def breakpoints(self) -> np.ndarray: ...

    def cdf(self, x: Any) -> Any: ...

    def sf(self, x: Any) -> Any: ...

    def pdf(self, x: Any) -> Any: ...

    def ppf(self, u: Any) -> Any: ...


Fn = Callable[[np.ndarray], Any]


class Model:
    """A model seen through the protocol, with what judging needs on top.

    Built by :func:`as_model` only. Besides the protocol it has ``name``,
    ``kind`` (``"sketch"``, ``"ecdf"``, a family name, ``"scipy"``…),
    ``source`` (the object adapted), ``continuous`` (no atoms),
    :meth:`cdf_left`, :meth:`isf`, :meth:`log_score` and :meth:`refit`
    (``None`` when the source cannot be refit).
    """

    __slots__ = (
        "_atom_mass",
        "_atom_x",
        "_cdf",
        "_discrete",
        "_isf",
        "_logmass",
        "_logpdf",
        "_pdf",
        "_ppf",
        "_sf",
        "breakpoints",
        "kind",
        "name",
        "refit",
        "source",
        "support",
    )

    def __init__(
        self,
        *,
        name: str,
        kind: str,
        source: Any,
        cdf: Fn,
        sf: Fn | None,
        pdf: Fn | None,
        ppf: Fn,
        support: tuple[float, float],
        atom_x: np.ndarray,
        atom_mass: np.ndarray,
        breakpoints: np.ndarray,
        isf: Fn | None = None,
        logpdf: Fn | None = None,
        logmass: Fn | None = None,
        refit: Callable[..., Any] | None = None,
        discrete: bool | None = None,
    ) -> None:
        self._discrete = discrete
        self.name, self.kind, self.source = name, kind, source
        self._cdf, self._sf, self._pdf, self._ppf = cdf, sf, pdf, ppf
        self._isf, self._logpdf, self._logmass = isf, logpdf, logmass
        self.support = (float(support[0]), float(support[1]))
        order = np.argsort(atom_x, kind="stable")
        self._atom_x = np.asarray(atom_x, dtype=float)[order]
        self._atom_mass = np.asarray(atom_mass, dtype=float)[order]
        bp = np.asarray(breakpoints, dtype=float)
        bp = np.unique(np.concatenate((bp[np.isfinite(bp)], self._atom_x)))
        bp.setflags(write=False)
        self.breakpoints = bp
        self.refit = refit

    def renamed(self, name: str) -> Model:
        """The same model under another label."""
        out = object.__new__(Model)
        for slot in Model.__slots__:
            object.__setattr__(out, slot, getattr(self, slot))
        out.name = name
        return out

    def __repr__(self) -> str:
        return f"Model({self.name!r}, kind={self.kind!r}, support={self.support})"

    # ------------------------------------------------------------ protocol
    @property
    def atoms(self) -> tuple[Atom, ...]:
        """Point masses as :class:`~cdfsketch.Atom` ``(x, mass)`` pairs, sorted by ``x``."""
        return tuple(
            Atom(x, m) for x, m in zip(self._atom_x.tolist(), self._atom_mass.tolist(), strict=True)
        )

    def atom_table(self) -> tuple[np.ndarray, np.ndarray]:
        """The atoms as two arrays ``(x, mass)`` (sorted by ``x``)."""
        return self._atom_x, self._atom_mass

    @property
    def discrete(self) -> bool:
        """Whether all the mass is in the atoms (the CDF is flat between them)."""
        if self._discrete is None:
            total = float(self.cdf(np.array([np.inf]))[0]) if self._atom_x.size else 0.0
            self._discrete = bool(
                self._atom_x.size and abs(float(self._atom_mass.sum()) - total) <= 1e-12
            )
        return self._discrete

    @property
    def continuous(self) -> bool:
        """Whether the model has no atoms (a density everywhere)."""
        return self._atom_x.size == 0

    def cdf(self, x: Any) -> np.ndarray:
        """``P(X ≤ x)`` as a float array."""
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return np.asarray(self._cdf(np.asarray(x, dtype=float)), dtype=float)

    def cdf_left(self, x: Any) -> np.ndarray:
        """``P(X < x)``: the CDF one floating-point step below ``x``."""
        return self.cdf(np.nextafter(np.asarray(x, dtype=float), -np.inf))

    def sf(self, x: Any) -> np.ndarray:
        """``P(X > x)`` as a float array."""
        if self._sf is None:
            return 1.0 - self.cdf(x)
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return np.asarray(self._sf(np.asarray(x, dtype=float)), dtype=float)

    def pdf(self, x: Any) -> np.ndarray:
        """Density of the continuous part (``nan`` when the source has none)."""
        v = np.asarray(x, dtype=float)
        if self._pdf is None:
            return np.full(v.shape, np.nan)
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return np.asarray(self._pdf(v), dtype=float)

    def ppf(self, u: Any) -> np.ndarray:
        """Generalised inverse of the CDF as a float array."""
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return np.asarray(self._ppf(np.asarray(u, dtype=float)), dtype=float)

    def isf(self, q: Any) -> np.ndarray:
        """Inverse survival function; accurate for small ``q`` when the source has one."""
        if self._isf is None:
            return self.ppf(1.0 - np.asarray(q, dtype=float))
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return np.asarray(self._isf(np.asarray(q, dtype=float)), dtype=float)

    @property
    def has_isf(self) -> bool:
        """Whether :meth:`isf` is the source's own (accurate in the far upper tail)."""
        return self._isf is not None

    @property
    def scorable(self) -> bool:
        """Whether :meth:`log_score` is defined (a density or atoms are known)."""
        return self._pdf is not None or self._logpdf is not None or self._logmass is not None

    def log_score(self, y: np.ndarray) -> tuple[np.ndarray, int]:
        """Log density at ``y`` (log of the atom's mass at an atom) and how many hit atoms.

        A mixed density: counting measure at the atoms, Lebesgue elsewhere.
        """
        y = np.asarray(y, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore", under="ignore"):
            if self._logpdf is not None:
                out = np.asarray(self._logpdf(y), dtype=float).copy()
            elif self._pdf is not None:
                out = np.log(np.asarray(self._pdf(y), dtype=float))
            else:
                out = np.full(y.shape, -np.inf)
            if self._logmass is not None:
                lm = np.asarray(self._logmass(y), dtype=float)
                hit = lm > -np.inf
                out = np.where(hit, lm, out)
                return out, int(hit.sum())
            if self._atom_x.size == 0:
                return out, 0
            ax = self._atom_x
            i = np.clip(np.searchsorted(ax, y), 0, ax.size - 1)
            hit = ax[i] == y
            out = np.where(hit, np.log(self._atom_mass[i]), out)
        return out, int(hit.sum())


# ---------------------------------------------------------------- adapter


def _refuse(obj: Any, what: str) -> InputError:
    return fail(
        f"{what} must be a Sketch, a fitted Candidate, an ECDF, a frozen scipy.stats "
        "distribution or an object with cdf, sf, pdf, ppf, support, atoms and breakpoints",
        f"{type(obj).__name__} {quote(obj)}",
        "Fit candidates with cdfsketch.fit_candidates(data), build an ECDF(data), or "
        "freeze a scipy distribution, e.g. scipy.stats.norm(0, 1).",
        field=what,
        value=obj,
    )


def _is_sketch(obj: Any) -> bool:
    return all(hasattr(obj, a) for a in ("x", "p", "interpolation", "atoms", "tail_mass"))


def _sketch_model(s: Any, name: str | None) -> Model:
    lo, hi = s.support
    atoms = tuple(s.atoms)
    bp = s.breakpoints  # knots and bounded-tail limits: where the density jumps or kinks
    return Model(
        name=name or s.name or "sketch",
        kind="sketch",
        source=s,
        cdf=s.cdf,
        sf=s.sf,
        pdf=s.pdf,
        ppf=s.ppf,
        isf=getattr(s, "isf", None),
        support=(lo, hi),
        atom_x=np.array([a[0] for a in atoms], dtype=float),
        atom_mass=np.array([a[1] for a in atoms], dtype=float),
        breakpoints=np.asarray(bp, dtype=float),
    )


def _scipy_model(d: Any, name: str | None) -> Model:
    lo, hi = (float(v) for v in d.support())
    dist = getattr(d, "dist", None)
    label = name or str(getattr(dist, "name", "") or type(d).__name__)
    if callable(getattr(d, "pmf", None)):
        return _scipy_discrete(d, label, lo, hi)
    return Model(
        name=label,
        kind="scipy",
        source=d,
        cdf=d.cdf,
        sf=d.sf,
        pdf=d.pdf,
        ppf=d.ppf,
        isf=d.isf,
        logpdf=d.logpdf,
        support=(lo, hi),
        atom_x=np.empty(0),
        atom_mass=np.empty(0),
        breakpoints=np.array([v for v in (lo, hi) if math.isfinite(v)]),
    )


def _scipy_discrete(d: Any, label: str, lo: float, hi: float) -> Model:
    xk = getattr(getattr(d, "dist", None), "xk", None)
    if xk is not None:  # scipy.stats.rv_discrete(values=...): the points are listed
        kwds = getattr(d, "kwds", {}) or {}
        pts = np.asarray(xk, dtype=float) + float(kwds.get("loc", 0.0))
    else:  # integer lattice shifted by loc
        a = float(d.ppf(_DISCRETE_EPS))
        b = float(d.isf(_DISCRETE_EPS))
        if math.isnan(b):  # scipy's isf gives up this far out for some laws
            b = float(d.isf(1e3 * _DISCRETE_EPS))
        a = max(a, lo) if math.isfinite(lo) else a
        b = min(b, hi) if math.isfinite(hi) else b
        if not (math.isfinite(a) and math.isfinite(b)) or b - a > _DISCRETE_MAX_ATOMS:
            raise fail(
                "a discrete scipy distribution must have its mass on at most "
                f"{_DISCRETE_MAX_ATOMS:,} support points",
                f"{label} from {a!r} to {b!r}",
                "Approximate it by a continuous distribution or a sketch.",
                field="model",
                value=d,
            )
        pts = np.arange(a, b + 1.0)
    mass = np.asarray(d.pmf(pts), dtype=float)
    keep = mass > 0
    pts, mass = pts[keep], mass[keep]

    def logmass(y: np.ndarray) -> np.ndarray:
        return np.asarray(d.logpmf(y), dtype=float)

    return Model(
        name=label,
        kind="scipy",
        source=d,
        cdf=d.cdf,
        sf=d.sf,
        pdf=lambda v: np.zeros(np.shape(v)),
        ppf=d.ppf,
        isf=d.isf,
        logmass=logmass,
        support=(lo, hi),
        atom_x=pts,
        atom_mass=mass,
        breakpoints=pts,
        discrete=True,
    )


def _protocol_model(obj: Any, name: str | None) -> Model:
    table = getattr(obj, "atom_table", None)
    if callable(table):
        ax, am = table()
    else:
        atoms = tuple(obj.atoms)
        ax = np.array([a[0] for a in atoms], dtype=float)
        am = np.array([a[1] for a in atoms], dtype=float)
    label = name or str(getattr(obj, "name", "") or type(obj).__name__)
    logpdf = getattr(obj, "logpdf", None)
    refit = getattr(obj, "refit", None)
    return Model(
        name=label,
        kind=str(getattr(obj, "kind", "") or "other"),
        source=obj,
        cdf=obj.cdf,
        sf=obj.sf,
        pdf=obj.pdf,
        ppf=obj.ppf,
        isf=getattr(obj, "isf", None) if callable(getattr(obj, "isf", None)) else None,
        logpdf=logpdf if callable(logpdf) else None,
        support=tuple(obj.support),
        atom_x=ax,
        atom_mass=am,
        breakpoints=np.asarray(obj.breakpoints, dtype=float),
        refit=refit if callable(refit) else None,
    )


def as_model(obj: Any, *, name: str | None = None, field: str = "model") -> Model:
    """Read ``obj`` through the :class:`CDFModel` protocol.

    Parameters
    ----------
    obj : Sketch, FrozenSketch, Candidate, ECDF, frozen scipy distribution or CDFModel
        The model. A discrete scipy distribution (one with ``pmf``) gets its
        support points as atoms and breakpoints, so integrals over ``x`` split
        exactly at its jumps.
    name : str, optional
        Label to show (default: the object's own name).
    field : str
        What to call the argument in an error message (e.g. ``"candidates[2]"``).

    Returns
    -------
    Model

    Raises
    ------
    InputError
        For anything that is none of the above.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> m = as_model(Sketch([0, 1, 1, 2], [0, 0.25, 0.5, 1], name="s"))
    >>> m.kind, m.atoms, m.breakpoints.tolist()
    ('sketch', (Atom(x=1.0, mass=0.25),), [0.0, 1.0, 2.0])
    """
    if isinstance(obj, Model):
        return obj if name is None or name == obj.name else obj.renamed(name)
    inner = getattr(obj, "sketch", None)
    if inner is not None and _is_sketch(inner) and callable(getattr(obj, "support", None)):
        return _sketch_model(inner, name)  # a FrozenSketch: judge the sketch itself
    if _is_sketch(obj):
        return _sketch_model(obj, name)
    if isinstance(obj, CDFModel) and not callable(obj.support):
        return _protocol_model(obj, name)
    has = all(callable(getattr(obj, a, None)) for a in ("cdf", "sf", "ppf", "support"))
    if has and getattr(obj, "dist", None) is not None:
        return _scipy_model(obj, name)
    raise _refuse(obj, field)
