"""The input set: a simulation model's uncertain inputs together, and how they are sampled.

The streams rule
----------------
One public call takes ``root = root_seed(rng)`` once. Its points are cut into
windows of :data:`~cdfsketch._blocks.WINDOW` (2¹⁶) points in stream
coordinates; window ``k`` of an input comes from its own stream keyed by
(input name, ``k``) (:mod:`cdfsketch.inputs.designs`). Dependence is imposed
per window on the dependent group only (the inputs named in ``rank_corr``,
in sorted name order). Hence, for the same ``rng``:

* adding, removing or reordering inputs leaves the draws of every other
  independent input unchanged (``"random"`` and ``"lhs"`` designs; a Sobol
  point is joint over all names, so there only reordering is free);
* :meth:`InputSet.blocks` gives exactly the values of one big
  :meth:`InputSet.sample` call, whatever the block size, and
  :meth:`InputSet.to_dask` gives them as Dask arrays, whatever the chunks;
* Iman–Conover and Latin hypercube strata act per window: for sizes above
  2¹⁶ the target is met in each window of 2¹⁶ points and each window is its
  own Latin hypercube.
"""

from __future__ import annotations

import json
from collections.abc import Iterator, Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from .._frozen import FrozenDict, freeze, thaw
from .._limits import MAX_INPUTS, MAX_NAME_CHARS, MAX_SPEC_BYTES
from .._validate import choice, fail, integer, mapping, quote, text
from ..sketch import Sketch
from .dependence import check_rank_corr
from .draws import Draws
from .windows import DEPENDENCE, check_call, collect, cut, inputset_to_dask
from .writing import dump_inputset, inputset_to_dict

if TYPE_CHECKING:
    from pathlib import Path

__all__ = ["DEPENDENCE", "MAX_INPUTS", "InputSet"]


class InputSet:
    """Several named sketches and an optional Spearman rank-correlation target between them.

    An immutable value, like :class:`~cdfsketch.Sketch`. Pairs not named in
    ``rank_corr`` are independent.

    Parameters
    ----------
    sketches : mapping of str to Sketch
        Input name → its distribution (names unique and non-empty; valid
        Python identifiers are recommended).
    rank_corr : mapping of (str, str) to float, optional
        Spearman targets, e.g. ``{("hours", "cost"): 0.6}``. They must form a
        valid correlation matrix; if not, the error quotes the nearest one.
    name : str, optional
        The set's name (e.g. the model's).
    provenance : mapping, optional
        Free JSON-ready notes (author, rationale, …); stored read-only.

    Examples
    --------
    >>> hours = Sketch([1, 3, 9], [0, 0.6, 1], name="repair time", units="h")
    >>> cost = Sketch([100, 250, 900], [0, 0.5, 1], name="part cost", units="EUR")
    >>> ins = InputSet({"hours": hours, "cost": cost}, rank_corr={("hours", "cost"): 0.6})
    >>> ins.names
    ('hours', 'cost')
    >>> draws = ins.sample(4, rng=7, dependence="independent")
    >>> draws["hours"].round(3)
    array([1.845, 1.03 , 2.134, 2.563])
    """

    __slots__ = ("_group", "_matrix", "_name", "_names", "_provenance", "_rank_corr", "_sketches")

    def __init__(
        self,
        sketches: Mapping[str, Sketch],
        *,
        rank_corr: Mapping[tuple[str, str], float] | None = None,
        name: str = "",
        provenance: Mapping[str, Any] | None = None,
    ) -> None:
        mapping(sketches, field="sketches")
        if not sketches or len(sketches) > MAX_INPUTS:
            raise fail(
                f"sketches must hold 1 to {MAX_INPUTS:,} inputs",
                f"{len(sketches)}",
                "Pass e.g. {'hours': Sketch(...), 'cost': Sketch(...)}.",
                field="sketches",
            )
        for key, sk in sketches.items():
            text(key, field="input name", max_len=MAX_NAME_CHARS, empty=False)
            if not isinstance(sk, Sketch):
                raise fail(
                    f"sketches[{quote(key)}] must be a cdfsketch.Sketch",
                    type(sk).__name__,
                    "Load it first, e.g. cdfsketch.load('hours.json').",
                    field="sketches",
                    index=key,
                    value=sk,
                )
        names = tuple(sketches)
        pairs, group, matrix = check_rank_corr(rank_corr, names)
        text(name, field="name", max_len=MAX_NAME_CHARS)
        prov = _check_provenance(provenance)
        set_ = object.__setattr__
        set_(self, "_sketches", FrozenDict(sketches))
        set_(self, "_names", names)
        set_(self, "_rank_corr", FrozenDict(pairs))
        set_(self, "_group", group)
        matrix.setflags(write=False)
        set_(self, "_matrix", matrix)
        set_(self, "_name", name)
        set_(self, "_provenance", prov)

    def __setattr__(self, key: str, value: object) -> None:
        raise AttributeError(
            "InputSet is immutable; use with_sketch(), without() or replace() to get a new one."
        )

    # ------------------------------------------------------------ properties
    @property
    def names(self) -> tuple[str, ...]:
        """The input names, in the order given."""
        return self._names

    @property
    def sketches(self) -> Mapping[str, Sketch]:
        """Input name → Sketch (read-only)."""
        return self._sketches

    @property
    def rank_corr(self) -> Mapping[tuple[str, str], float]:
        """The Spearman targets, keyed ``(a, b)`` with ``a < b`` (read-only)."""
        return self._rank_corr

    @property
    def dependent(self) -> tuple[str, ...]:
        """The inputs named in ``rank_corr``, in sorted order (the dependent group)."""
        return self._group

    def target_matrix(self) -> tuple[tuple[str, ...], np.ndarray]:
        """The dependent group and its Spearman target matrix.

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1])
        >>> InputSet({"b": s, "a": s}, rank_corr={("b", "a"): 0.3}).target_matrix()[1].tolist()
        [[1.0, 0.3], [0.3, 1.0]]
        """
        return self._group, self._matrix

    @property
    def name(self) -> str:
        """The set's name."""
        return self._name

    @property
    def provenance(self) -> Mapping[str, Any]:
        """Free notes (read-only)."""
        return self._provenance

    def __len__(self) -> int:
        return len(self._names)

    def __repr__(self) -> str:
        shown = ", ".join(repr(n) for n in self._names[:6])
        more = f", … ({len(self._names) - 6} more)" if len(self._names) > 6 else ""
        pairs = f"; {len(self._rank_corr)} rank correlations" if self._rank_corr else ""
        return f"InputSet({shown}{more}{pairs})"

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, InputSet):
            return NotImplemented
        return (
            self._names == other._names
            and all(self._sketches[n] == other._sketches[n] for n in self._names)
            and self._rank_corr == other._rank_corr
            and self._name == other._name
            and self._provenance == other._provenance
        )

    __hash__ = None  # type: ignore[assignment]

    def __reduce__(self) -> Any:  # for Dask workers and multiprocessing
        return (
            _rebuild,
            (dict(self._sketches), dict(self._rank_corr), self._name, thaw(self._provenance)),
        )

    # ------------------------------------------------------------ changed copies
    def with_sketch(self, name: str, sketch: Sketch) -> InputSet:
        """A copy with input ``name`` set to ``sketch`` (added at the end if new).

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1])
        >>> InputSet({"a": s}).with_sketch("b", s).names
        ('a', 'b')
        """
        return self.replace(sketches={**self._sketches, name: sketch})

    def without(self, name: str) -> InputSet:
        """A copy without input ``name`` (and without its rank correlations).

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1])
        >>> InputSet({"a": s, "b": s}, rank_corr={("a", "b"): 0.2}).without("b").rank_corr
        {}
        """
        if name not in self._sketches:
            raise fail(
                "without() needs an input of the set",
                quote(name),
                f"Use one of {quote(list(self._names))}.",
                field="name",
                value=name,
            )
        return self.replace(
            sketches={n: s for n, s in self._sketches.items() if n != name},
            rank_corr={k: v for k, v in self._rank_corr.items() if name not in k},
        )

    def replace(self, *args: Any, **changes: Any) -> InputSet:
        """A copy with constructor arguments changed; ``replace(name, sketch)`` sets one input.

        Examples
        --------
        >>> s = Sketch([0, 1], [0, 1])
        >>> InputSet({"a": s}).replace(name="pump model").name
        'pump model'
        >>> InputSet({"a": s}).replace("a", Sketch([0, 2], [0, 1])).sketches["a"].support
        (0.0, 2.0)
        """
        if args:
            if len(args) != 2 or changes:
                raise TypeError("replace() takes (name, sketch) or keyword arguments, not both.")
            return self.with_sketch(*args)
        allowed = ("sketches", "rank_corr", "name", "provenance")
        for key in changes:
            choice(key, field="replace() argument", options=allowed)
        kwargs = {
            "sketches": self._sketches,
            "rank_corr": self._rank_corr,
            "name": self._name,
            "provenance": thaw(self._provenance),
            **changes,
        }
        return InputSet(kwargs.pop("sketches"), **kwargs)

    # ------------------------------------------------------------ sampling
    def uniforms(
        self,
        size: int,
        *,
        rng: Any = None,
        design: str = "random",
        dependence: str = "iman-conover",
    ) -> Draws:
        """The design's uniforms, strictly inside (0, 1), with the dependence applied.

        ``sample(...)[name]`` equals ``sketches[name].sampler().ppf(uniforms(...)[name])``
        exactly for the same arguments. Use it to push the same points through
        several candidate distributions (common random numbers).

        Examples
        --------
        >>> s = Sketch([0, 10], [0, 1])
        >>> ins = InputSet({"a": s})
        >>> u = ins.uniforms(5, rng=3)["a"]
        >>> bool(np.array_equal(s.sampler().ppf(u), ins.sample(5, rng=3)["a"]))
        True
        """
        n = check_call(size, design, dependence)
        return collect(self, n, rng, design, dependence, transform=False)

    def sample(
        self,
        size: int,
        *,
        rng: Any = None,
        design: str = "random",
        dependence: str = "iman-conover",
    ) -> Draws:
        """Draw ``size`` values of every input together.

        Parameters
        ----------
        size : int
            Draws per input.
        rng : optional
            Anything :func:`numpy.random.default_rng` takes; the root of every
            stream (see the module's streams rule).
        design : {"random", "lhs", "sobol"}
            Plain random draws, a Latin hypercube, or a scrambled Sobol
            sequence (warns unless ``size`` is a power of two). ``lhs`` and
            ``sobol`` need scipy.
        dependence : {"iman-conover", "gaussian-copula", "independent"}
            How ``rank_corr`` is imposed: Iman–Conover reordering (each
            input keeps exactly its own draws), a Gaussian copula
            (``ρ = 2 sin(π ρ_S / 6)``), or ignored. Both need scipy when the
            set has targets.

        Returns
        -------
        Draws
            A read-only mapping name → array; ``rank_corr_report()`` gives each
            target beside the achieved Spearman value, ``to_pandas()`` a table.

        Examples
        --------
        >>> s = Sketch([0, 10], [0, 1])
        >>> ins = InputSet({"a": s, "b": s}, rank_corr={("a", "b"): 0.8})
        >>> row = ins.sample(20_000, rng=1).rank_corr_report()[0]
        >>> row.target, round(row.achieved, 2)
        (0.8, 0.8)
        """
        n = check_call(size, design, dependence)
        return collect(self, n, rng, design, dependence, transform=True)

    def blocks(
        self,
        size: int,
        *,
        block: int,
        rng: Any = None,
        design: str = "random",
        dependence: str = "iman-conover",
        uniforms: bool = False,
    ) -> Iterator[Draws]:
        """The values of ``sample(size, ...)`` in consecutive blocks of ``block`` draws.

        Bit-identical to one :meth:`sample` call with the same arguments;
        memory is O(``block`` + 2¹⁶) per input. ``uniforms=True`` gives the
        blocks of :meth:`uniforms` instead.

        Examples
        --------
        >>> s = Sketch([0, 10], [0, 1])
        >>> ins = InputSet({"a": s})
        >>> parts = [d["a"] for d in ins.blocks(10, block=4, rng=2)]
        >>> [p.size for p in parts], bool(np.array_equal(np.concatenate(parts),
        ...                                              ins.sample(10, rng=2)["a"]))
        ([4, 4, 2], True)
        """
        n = check_call(size, design, dependence)
        b = integer(block, field="block", low=1, example="block=100_000")
        return cut(self, n, b, rng, design, dependence, not uniforms)

    def to_dask(
        self,
        size: int,
        *,
        chunks: int | tuple[int, ...],
        rng: Any = None,
        design: str = "random",
        dependence: str = "iman-conover",
    ) -> dict[str, Any]:
        """``size`` joint draws as lazy Dask arrays, name → array (extra: ``dask``).

        Bit for bit ``sample(size, rng=rng, design=design,
        dependence=dependence)``, whatever ``chunks``, scheduler, worker count
        or task order: each chunk is filled from the windows of 2¹⁶ draws it
        overlaps, window ``k`` of an input from the stream keyed by (input
        name, ``k``), with the dependence imposed per window. The arrays are
        columns of one 2-D array, so computing them together draws each
        window once. Latin hypercube and Sobol designs work too (window by
        window, as in memory).

        Parameters
        ----------
        size : int
            Draws per input (at least 1).
        chunks : int or tuple of int
            Draws per Dask chunk, or the chunk lengths; multiples of 2¹⁶
            waste nothing.
        rng : optional
            Anything :func:`numpy.random.default_rng` takes; the streams' root.
        design, dependence : str
            As in :meth:`sample`.

        Examples
        --------
        >>> s = Sketch([0, 10], [0, 1])
        >>> ins = InputSet({"a": s, "b": s})
        >>> b = ins.to_dask(6, chunks=4, rng=1)["b"].compute(scheduler="synchronous")
        >>> bool(np.array_equal(b, ins.sample(6, rng=1)["b"]))
        True
        """
        return inputset_to_dask(
            self, size, chunks=chunks, rng=rng, design=design, dependence=dependence
        )

    # ------------------------------------------------------------ files
    def to_dict(self) -> dict[str, Any]:
        """The input-set file's content as a JSON-ready dict (sketches inline).

        Examples
        --------
        >>> InputSet({"a": Sketch([0, 1], [0, 1])}).to_dict()["format"]
        'cdfsketch-inputs'
        """
        return inputset_to_dict(self)

    def to_json(self, path: str | Path | None = None) -> str:
        """The input-set file as JSON text; written (atomically) to ``path`` when given.

        Examples
        --------
        >>> text = InputSet({"a": Sketch([0, 1], [0, 1])}).to_json()
        >>> '"cdfsketch-inputs"' in text
        True
        """
        return dump_inputset(self, path)


def _rebuild(sketches: dict[str, Sketch], rank_corr: dict, name: str, provenance: dict) -> InputSet:
    return InputSet(sketches, rank_corr=rank_corr, name=name, provenance=provenance)


def _check_provenance(provenance: Any) -> Mapping[str, Any]:
    if provenance is None:
        return FrozenDict()
    mapping(provenance, field="provenance")
    try:
        body = json.dumps(thaw(provenance), allow_nan=False, ensure_ascii=False)
        body.encode("utf-8")
    except (TypeError, ValueError) as exc:
        raise fail(
            "provenance must be plain JSON data (text, numbers, lists, mappings with text keys)",
            quote(str(exc)),
            "Store other objects as text.",
            field="provenance",
            value=provenance,
        ) from None
    if len(body) > MAX_SPEC_BYTES:
        raise fail(
            f"provenance must be at most {MAX_SPEC_BYTES:,} characters as JSON",
            f"{len(body):,}",
            "Keep long material in a separate file and refer to it.",
            field="provenance",
        )
    return freeze(provenance)
