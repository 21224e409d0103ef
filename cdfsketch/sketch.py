"""The CDF value: :class:`Sketch`, an immutable CDF drawn through knots.

Only numpy is imported at module level. Sketches are built from judgements
and data by the functions of :mod:`cdfsketch.elicit` (``from_quantiles``,
``from_three_points``, ``from_distribution``, ``from_data``); this module
imports none of them. The sampler, the summary and the scipy adapter are
imported when first used; the spec writer and the provenance check
(:mod:`cdfsketch.spec`, which never imports this module) likewise.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import TYPE_CHECKING, Any, Literal

import numpy as np

from . import _pieces
from ._distribution import Atom, PiecewiseDistribution
from ._frozen import freeze, thaw
from ._limits import MAX_NAME_CHARS, MAX_UNITS_CHARS
from ._pieces import INTERPOLATIONS
from ._validate import (
    KnotError,
    SpecError,
    choice,
    fail,
    integer,
    mapping,
    number,
    text,
)
from .knots import check_knots, clamp_knot, insert_knot, min_gap, step_from
from .tails import BoundedTail, Tail, as_tail

if TYPE_CHECKING:
    from .sampler import Sampler
    from .scipy_adapter import FrozenSketch
    from .summary import SketchSummary

__all__ = ["Atom", "Sketch"]

ArrayLike = Any


class Sketch(PiecewiseDistribution):
    """An immutable CDF drawn through knots.

    Parameters
    ----------
    x, p : array_like
        Knots: ``F(x[i]) = p[i]``. ``x`` non-decreasing (two knots sharing an
        ``x`` make a jump, a point mass of ``p[i+1] - p[i]``), ``p``
        non-decreasing in ``[0, 1]``; see :func:`cdfsketch.check_knots`.
    interpolation : {"linear", "pchip"}
        ``"linear"``: F linear between knots (a piecewise-uniform density, the
        maximum-entropy choice between stated quantiles). ``"pchip"``: monotone
        cubic through the knots (Fritsch–Carlson), a smooth density.
    lower_tail, upper_tail : BoundedTail or ExponentialTail, optional
        Where the mass beyond the outer knots goes when ``p[0] > 0`` or
        ``p[-1] < 1``. Default: ``ExponentialTail()`` (scale derived so the tail
        continues the density at the outer knot). Kept even when the tail holds
        no mass.
    name, units : str
        What the quantity is and its units; they travel in the spec.
    provenance : mapping, optional
        Who made the sketch and why (author, rationale, …); see
        :mod:`cdfsketch.spec`.

    Examples
    --------
    >>> s = Sketch([0, 10, 30], [0, 0.5, 1])
    >>> s.cdf(10), s.ppf(0.75), round(s.mean(), 6)
    (0.5, 20.0, 12.5)
    >>> s.sample(3, rng=42).round(3)
    array([20.958,  8.778, 24.344])
    """

    __slots__ = (
        "_interpolation",
        "_name",
        "_p",
        "_pieces",
        "_provenance",
        "_sampler",
        "_tails",
        "_tails_given",
        "_units",
        "_x",
    )

    def __init__(
        self,
        x: ArrayLike,
        p: ArrayLike,
        *,
        interpolation: Literal["linear", "pchip"] = "linear",
        lower_tail: Tail | None = None,
        upper_tail: Tail | None = None,
        name: str = "",
        units: str = "",
        provenance: Mapping[str, Any] | None = None,
    ) -> None:
        from .spec import check_provenance  # below this module: never imports it

        xa, pa = check_knots(x, p)
        choice(interpolation, field="interpolation", options=INTERPOLATIONS)
        name = text(name, field="name", max_len=MAX_NAME_CHARS)
        units = text(units, field="units", max_len=MAX_UNITS_CHARS)
        if provenance is not None:
            mapping(provenance, field="provenance")
        if provenance:
            check_provenance(thaw(provenance))
        lower = as_tail(lower_tail, "lower")
        upper = as_tail(upper_tail, "upper")
        xa.setflags(write=False)
        pa.setflags(write=False)
        pieces = _pieces.build_pieces(xa, pa, interpolation, lower, upper)
        set_ = object.__setattr__
        set_(self, "_x", xa)
        set_(self, "_p", pa)
        set_(self, "_interpolation", interpolation)
        set_(self, "_tails", (lower, upper))
        set_(self, "_tails_given", (lower_tail is not None, upper_tail is not None))
        set_(self, "_name", name)
        set_(self, "_units", units)
        set_(self, "_provenance", freeze(dict(provenance or {})))
        set_(self, "_pieces", pieces)
        set_(self, "_sampler", None)

    def __setattr__(self, key: str, value: object) -> None:
        raise AttributeError(
            "Sketch is immutable; use replace(), move_knot(), with_knot() or without_knot() "
            "to get a new one."
        )

    # ------------------------------------------------------------ attributes
    @property
    def x(self) -> np.ndarray:
        """Knot positions (read-only)."""
        return self._x

    @property
    def p(self) -> np.ndarray:
        """Knot probabilities (read-only)."""
        return self._p

    @property
    def interpolation(self) -> str:
        """``"linear"`` or ``"pchip"``."""
        return self._interpolation

    @property
    def lower_tail(self) -> Tail:
        """Tail setting below the first knot."""
        return self._tails[0]

    @property
    def upper_tail(self) -> Tail:
        """Tail setting above the last knot."""
        return self._tails[1]

    @property
    def tails_given(self) -> tuple[bool, bool]:
        """Whether the lower and upper tails were stated (not left at the default)."""
        return self._tails_given

    @property
    def tail_mass(self) -> tuple[float, float]:
        """Mass beyond the first and the last knot: ``(p[0], 1 - p[-1])``."""
        return float(self._p[0]), float(1.0 - self._p[-1])

    @property
    def tail_scales(self) -> tuple[float | None, float | None]:
        """Resolved exponential scales (``None`` where no exponential tail holds mass)."""
        pc = self._pieces
        return (pc.lower.scale if pc.lower else None, pc.upper.scale if pc.upper else None)

    @property
    def name(self) -> str:
        """Name of the quantity."""
        return self._name

    @property
    def units(self) -> str:
        """Units of the quantity."""
        return self._units

    @property
    def provenance(self) -> Mapping[str, Any]:
        """The provenance record, read-only all the way down (``dict(...)`` for a copy).

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1], provenance={"extra": {"runs": [1, 2]}})
        >>> s.provenance["extra"]["runs"]
        (1, 2)
        """
        return self._provenance

    def __len__(self) -> int:
        return int(self._x.size)

    def __repr__(self) -> str:
        label = f"{self._name!r}, " if self._name else ""
        return (
            f"Sketch({label}{self._x.size} knots, {self._interpolation}, "
            f"support={self.support}, tail mass={self.tail_mass})"
        )

    def _key(self) -> tuple:
        return (
            self._x.tobytes(),
            self._p.tobytes(),
            self._interpolation,
            self._tails,
            self._name,
            self._units,
        )

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Sketch):
            return NotImplemented
        return self._key() == other._key() and self._provenance == other._provenance

    def __reduce__(self) -> tuple[Any, ...]:
        """Pickle by the constructor's arguments (for worker processes), rebuilt and checked."""
        return (_rebuild, (self._x, self._p, self._constructor_args()))

    def _constructor_args(self) -> dict[str, Any]:
        return {
            "interpolation": self._interpolation,
            "lower_tail": self._tails[0] if self._tails_given[0] else None,
            "upper_tail": self._tails[1] if self._tails_given[1] else None,
            "name": self._name,
            "units": self._units,
            "provenance": thaw(self._provenance),
        }

    def __hash__(self) -> int:
        return hash(self._key())

    def summary(
        self, *, probabilities: tuple[float, ...] = (0.05, 0.25, 0.5, 0.75, 0.95)
    ) -> SketchSummary:
        """What an expert needs to check a judgement: see :func:`cdfsketch.summary.summary`.

        Examples
        --------
        >>> print(Sketch([0, 10], [0, 1]).summary().mean)
        5.0
        """
        from .summary import summary

        return summary(self, probabilities=probabilities)

    # ------------------------------------------------------------ sampling
    def sampler(self) -> Sampler:
        """The compiled inverse-transform sampler (built once, then cached).

        Examples
        --------
        >>> fast = Sketch([0, 10, 30], [0, 0.5, 1]).sampler()
        >>> float(fast.ppf(0.75))
        20.0
        """
        if self._sampler is None:
            from .sampler import Sampler

            object.__setattr__(self, "_sampler", Sampler(self))
        return self._sampler  # type: ignore[return-value]

    def sample(
        self, size: int | tuple[int, ...] | None = None, *, rng: Any = None, out: Any = None
    ) -> Any:
        """Draw ``size`` values by inverse transform with the compiled sampler.

        Parameters
        ----------
        size : int or tuple of ints, optional
            Output shape; ``None`` gives one float.
        rng : optional
            Anything :func:`numpy.random.default_rng` takes (a seed, a
            ``Generator``, ``None``). Never global state.
        out : ndarray, optional
            A float64 array to fill in place (see :meth:`Sampler.sample`).

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1])
        >>> bool(np.array_equal(s.sample(5, rng=1), s.sample(5, rng=1)))
        True
        """
        return self.sampler().sample(size, rng=rng, out=out)

    def to_dask(
        self, size: int, *, chunks: int | tuple[int, ...], rng: Any = None, name: str = "x"
    ) -> Any:
        """``size`` draws as a lazy :class:`dask.array.Array` (extra: ``dask``).

        Bit for bit ``InputSet({name: self}).sample(size, rng=rng)[name]``
        whatever ``chunks``, scheduler, worker count or task order: each chunk
        is filled from the windows of 2¹⁶ draws it overlaps, window ``k`` from
        the stream keyed by (``name``, ``k``). ``chunks`` is draws per chunk
        (or the chunk lengths); multiples of 2¹⁶ waste nothing.

        Examples
        --------
        >>> s = Sketch([0, 2, 5], [0, 0.5, 1])
        >>> a = s.to_dask(10, chunks=4, rng=7).compute(scheduler="synchronous")
        >>> b = s.to_dask(10, chunks=7, rng=7).compute(scheduler="synchronous")
        >>> bool(np.array_equal(a, b)), a.shape
        (True, (10,))
        """
        from ._blocks import sketch_to_dask

        return sketch_to_dask(self, size, chunks=chunks, rng=rng, name=name)

    # ------------------------------------------------------------ editing
    def replace(self, **changes: Any) -> Sketch:
        """A copy with some constructor arguments changed (validated again).

        Examples
        --------
        >>> Sketch([0, 1], [0, 1]).replace(interpolation="pchip").interpolation
        'pchip'
        """
        allowed = (
            "x",
            "p",
            "interpolation",
            "lower_tail",
            "upper_tail",
            "name",
            "units",
            "provenance",
        )
        unknown = sorted(set(changes) - set(allowed))
        if unknown:
            raise TypeError(
                f"replace() takes only {', '.join(allowed)}; got {', '.join(unknown)}. "
                "Check the spelling."
            )
        args: dict[str, Any] = {"x": self._x, "p": self._p, **self._constructor_args()}
        args.update(changes)
        x, p = args.pop("x"), args.pop("p")
        return Sketch(x, p, **args)

    def _x_limits(self) -> tuple[float, float]:
        lo = self.lower_tail.limit if isinstance(self.lower_tail, BoundedTail) else -np.inf
        hi = self.upper_tail.limit if isinstance(self.upper_tail, BoundedTail) else np.inf
        return lo, hi

    def move_knot(
        self,
        i: int,
        *,
        x: float | None = None,
        p: float | None = None,
        min_dx: float = 0.0,
        min_dp: float = 0.0,
    ) -> Sketch:
        """Move knot ``i`` towards ``(x, p)``, clamped inside every rule the constructor enforces.

        No other knot moves and the call never raises for finite input: ``x``
        stays between the neighbours (by ``min_dx`` when there is room, else
        by the smallest gap a drag keeps, :func:`cdfsketch.knots.min_gap`) and
        inside a bounded tail's limit, ``p`` within ``[p[i-1], p[i+1]]`` (by
        ``min_dp`` when there is room). An editor passes a visible gap as
        ``min_dx`` (e.g. a fraction of its axis span).

        Examples
        --------
        >>> s = Sketch([0, 1, 2], [0, 0.5, 1]).move_knot(1, x=9, p=0.7)
        >>> bool(s.x[1] < 2), float(s.p[1])
        (True, 0.7)
        >>> float(Sketch([0, 1, 2], [0, 0.5, 1]).move_knot(1, x=9, min_dx=0.25).x[1])
        1.75
        """
        lo, hi = self._x_limits()
        gap = min_gap(self._x)
        x_low = step_from(lo, gap, up=True) if np.isfinite(lo) else lo
        x_high = step_from(hi, gap, up=False) if np.isfinite(hi) else hi
        nx, np_ = clamp_knot(
            self._x,
            self._p,
            i,
            new_x=x,
            new_p=p,
            x_low=x_low,
            x_high=x_high,
            min_dx=min_dx,
            min_dp=min_dp,
        )
        # an end knot sitting on its bounded tail's limit keeps the tail empty
        if nx[0] <= lo:
            np_[0] = 0.0
        if nx[-1] >= hi:
            np_[-1] = 1.0
        return self.replace(x=nx, p=np_)

    def with_knot(self, x: float, p: float) -> Sketch:
        """A new sketch with a knot added at ``(x, p)``.

        ``p`` is clamped between the neighbouring knots' probabilities so the
        result stays valid; a knot at an existing ``x`` makes a jump (at most
        two knots may share an ``x``).

        Examples
        --------
        >>> Sketch([0, 2], [0, 1]).with_knot(1, 0.9).p.tolist()
        [0.0, 0.9, 1.0]
        """
        xv = number(x, field="x", error=KnotError)
        pv = number(p, field="p", error=KnotError)
        nx, np_ = insert_knot(self._x, self._p, xv, pv, limits=self._x_limits())
        return self.replace(x=nx, p=np_)

    def without_knot(self, i: int) -> Sketch:
        """A new sketch without knot ``i`` (a sketch keeps at least 2 knots).

        Examples
        --------
        >>> Sketch([0, 1, 2], [0, 0.5, 1]).without_knot(1).x.tolist()
        [0.0, 2.0]
        """
        n = self._x.size
        j = integer(i, field="Knot index", low=-n, high=n - 1, error=KnotError, example="i=1") % n
        if n <= 2:
            raise fail(
                "A sketch keeps at least 2 knots",
                f"this one has {n}",
                "Add a knot before removing this one.",
                error=KnotError,
                field="x",
            )
        return self.replace(x=np.delete(self._x, j), p=np.delete(self._p, j))

    # ------------------------------------------------------------ conversion
    def to_spec(self, **provenance: Any) -> dict[str, Any]:
        """The JSON-ready spec (a dict); keyword arguments add to provenance.

        Examples
        --------
        >>> Sketch([0, 1], [0, 1]).to_spec()["format"]
        'cdfsketch-spec'
        """
        from .spec import sketch_to_spec

        return sketch_to_spec(self, **provenance)

    def to_json(self, path: Any = None, **provenance: Any) -> str:
        """The spec as JSON text; written to ``path`` when given.

        Examples
        --------
        >>> '"version": 1' in Sketch([0, 1], [0, 1]).to_json()
        True
        """
        from .spec import dump_spec

        return dump_spec(self.to_spec(**provenance), path)

    def to_scipy(self) -> FrozenSketch:
        """An object with the scipy frozen-distribution protocol.

        Examples
        --------
        >>> d = Sketch([0, 10], [0, 1]).to_scipy()
        >>> d.mean(), d.interval(0.5)
        (5.0, (2.5, 7.5))
        """
        from .scipy_adapter import FrozenSketch

        return FrozenSketch(self)

    @classmethod
    def from_spec(cls, spec: Mapping[str, Any]) -> Sketch:
        """The sketch a parsed single-input spec describes (every loader rule applies).

        Files and text go through :func:`cdfsketch.load`; this takes the JSON
        object itself. Anything wrong is a :class:`~cdfsketch.SpecError`
        naming the field.

        Examples
        --------
        >>> s = Sketch([0, 1, 3], [0, 0.5, 1], name="delay")
        >>> t = Sketch.from_spec(s.to_spec())
        >>> t.name, t.x.tolist() == s.x.tolist(), t.p.tolist() == s.p.tolist()
        ('delay', True, True)
        """
        from .spec import check_spec, check_stored_scales, spec_to_kwargs

        checked = check_spec(spec)
        try:
            sketch = cls(**spec_to_kwargs(checked))
        except ValueError as exc:
            field = getattr(exc, "field", None)
            where = f"knots.{field}" if field in ("x", "p") else (field or "knots")
            raise SpecError(
                f"The spec's knots or tails must describe a valid CDF; {exc}",
                field=where,
                index=getattr(exc, "index", None),
                found=getattr(exc, "found", None),
            ) from None
        check_stored_scales(checked, sketch.tail_scales)
        return sketch


def _rebuild(x: np.ndarray, p: np.ndarray, options: dict[str, Any]) -> Sketch:
    """Unpickle a :class:`Sketch` (see ``Sketch.__reduce__``)."""
    return Sketch(x, p, **options)
