"""A sketch through stated quantiles (numpy only).

Every statement ``P(X ≤ x) = p`` becomes a knot; the stated bounds or tails
hold the mass outside. See :func:`from_quantiles`.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterable, Mapping
from typing import Any, Literal

from .._numfmt import significant
from .._validate import JudgementError, KnotError
from ..sketch import Sketch
from ..tails import BoundedTail, ExponentialTail, Tail
from ._common import finite, read_choice, read_labels

__all__ = ["from_quantiles"]


def _fmt(v: float) -> str:
    return significant(v, 6)


def _read_statements(q: Any) -> list[tuple[float, float]]:
    if isinstance(q, Mapping):
        items = list(q.items())
    elif isinstance(q, Iterable) and not isinstance(q, str | bytes):
        items = []
        for i, item in enumerate(q):
            try:
                pp, xx = item
            except (TypeError, ValueError):
                raise JudgementError(
                    f"Statement {i} must be a (probability, value) pair; got {item!r}. Pass a "
                    "dict such as {0.05: 12, 0.5: 20, 0.95: 41}."
                ) from None
            items.append((pp, xx))
    else:
        raise JudgementError(
            f"q must map probabilities to values; got {type(q).__name__}. Pass a dict such as "
            "{0.05: 12, 0.5: 20, 0.95: 41}."
        )
    out = []
    for i, (pp, xx) in enumerate(items):
        p = finite(pp, f"The probability of statement {i}")
        x = finite(xx, f"The value of statement {i} (p={pp!r})")
        if not 0 < p < 1:
            raise JudgementError(
                f"Stated probabilities must lie strictly between 0 and 1; got statement {i} "
                f"(p={pp!r}: {xx!r}). A stated minimum or maximum goes in lower= / upper=."
            )
        out.append((p, x))
    return out


def _check_statements(st: list[tuple[float, float]]) -> list[tuple[float, float]]:
    seen: dict[float, float] = {}
    for p, x in st:
        if p in seen:
            raise JudgementError(
                f"Two statements give the same probability: p={_fmt(p)}: {_fmt(seen[p])} and "
                f"p={_fmt(p)}: {_fmt(x)}. Keep one value per probability."
            )
        seen[p] = x
    st = sorted(st)
    for (p0, x0), (p1, x1) in itertools.pairwise(st):
        if x1 < x0:
            raise JudgementError(
                f"Stated values must increase with probability; the statements "
                f"P(X ≤ {_fmt(x0)}) = {_fmt(p0)} and P(X ≤ {_fmt(x1)}) = {_fmt(p1)} clash "
                f"(a higher probability has a lower value). Revise one of them."
            )
        if x1 == x0:
            raise JudgementError(
                f"The statements P(X ≤ {_fmt(x0)}) = {_fmt(p0)} and P(X ≤ {_fmt(x1)}) = "
                f"{_fmt(p1)} give the same value for two probabilities (a point mass of "
                f"{_fmt(p1 - p0)} at {_fmt(x0)}); values must strictly increase. Revise one, or "
                f"build Sketch([..., {_fmt(x0)}, {_fmt(x0)}, ...], [..., {_fmt(p0)}, {_fmt(p1)}, "
                "...]) if a point mass is intended."
            )
    return st


def _read_bound(
    bound: Any, tail: Any, side: str, st: list[tuple[float, float]]
) -> tuple[float | None, Tail | None]:
    """Return (knot x at p=0/1 or None, tail to pass or None)."""
    p_out, x_out = st[0] if side == "lower" else st[-1]
    below = side == "lower"
    if bound is not None and tail is not None:
        raise JudgementError(
            f"Give either {side}= (a stated {'minimum' if below else 'maximum'}) or "
            f"{side}_tail= (where the unstated mass goes), not both; got {side}={bound!r} and "
            f"{side}_tail={tail!r}."
        )
    if tail is not None and not isinstance(tail, BoundedTail | ExponentialTail):
        raise JudgementError(
            f"{side}_tail must be a BoundedTail, an ExponentialTail or None; got {tail!r}."
        )
    limit: float | None = None
    if isinstance(bound, BoundedTail):
        limit = bound.limit
        tail, bound = bound, None
    elif isinstance(tail, BoundedTail):
        limit = tail.limit
    elif bound is not None:
        limit = finite(bound, f"The {side} bound")
    if limit is not None:
        inside = limit >= x_out if below else limit <= x_out
        if inside:
            word = "below the lowest" if below else "above the highest"
            raise JudgementError(
                f"The {side} bound {_fmt(limit)} must lie {word} stated value; it clashes with "
                f"the statement P(X ≤ {_fmt(x_out)}) = {_fmt(p_out)}. Move the bound outside "
                "the stated range or revise that statement."
            )
    return (limit if bound is not None else None), tail


def from_quantiles(
    q: Mapping[float, float] | Iterable[tuple[float, float]],
    *,
    interpolation: Literal["linear", "pchip"] = "linear",
    lower: float | BoundedTail | None = None,
    upper: float | BoundedTail | None = None,
    lower_tail: Tail | None = None,
    upper_tail: Tail | None = None,
    name: str = "",
    units: str = "",
    author: str = "",
    rationale: str = "",
) -> Sketch:
    """A sketch through stated quantiles.

    Every statement ``P(X ≤ x) = p`` becomes a knot, so the sketch reproduces
    every stated quantile exactly (``cdf(x) == p``). The mass below the lowest
    and above the highest stated probability goes to a stated bound, to the
    chosen tail, or by default to an exponential tail that continues the
    density at the outer knot.

    Parameters
    ----------
    q : mapping or iterable of pairs
        Probability → value, e.g. ``{0.05: 12, 0.5: 20, 0.95: 41}``.
        Probabilities strictly inside (0, 1); values strictly increasing with
        probability.
    interpolation : {"linear", "pchip"}
        Between the stated points: piecewise-uniform density, or smooth.
    lower, upper : float or BoundedTail, optional
        A stated minimum / maximum. A number is a knot at ``p = 0`` (``1``);
        a :class:`~cdfsketch.BoundedTail` holds the outer mass between its
        limit and the outer stated value.
    lower_tail, upper_tail : BoundedTail or ExponentialTail, optional
        Where the unstated outer mass goes when no bound is given. Leaving
        them out uses ``ExponentialTail()`` and the summary warns about it.
    name, units, author, rationale : str
        Recorded on the sketch and in its provenance.

    Returns
    -------
    Sketch
        Provenance ``method="from stated quantiles"`` and
        ``extra["stated_quantiles"] = [[p, x], ...]``.

    Raises
    ------
    JudgementError
        Naming the statements that clash: values not increasing with
        probability, probabilities outside (0, 1), duplicated probabilities or
        values, a bound inside the stated range.

    Examples
    --------
    >>> s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41})
    >>> [float(s.cdf(v)) for v in (12, 20, 41)]
    [0.05, 0.5, 0.95]
    >>> s.tail_mass
    (0.05, 0.050000000000000044)
    >>> from_quantiles({0.05: 12, 0.5: 30, 0.95: 25})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.JudgementError: Stated values must increase with probability; ...
    """
    read_choice(interpolation, ("linear", "pchip"), "interpolation")
    read_labels(name, units, author, rationale)
    st = _check_statements(_read_statements(q))
    if not st:
        raise JudgementError("q is empty; state at least two quantiles, e.g. {0.1: 5, 0.9: 20}.")
    lo_x, lo_tail = _read_bound(lower, lower_tail, "lower", st)
    hi_x, hi_tail = _read_bound(upper, upper_tail, "upper", st)
    xs = [x for _, x in st]
    ps = [p for p, _ in st]
    if lo_x is not None:
        xs.insert(0, lo_x)
        ps.insert(0, 0.0)
    if hi_x is not None:
        xs.append(hi_x)
        ps.append(1.0)
    if len(xs) < 2:
        raise JudgementError(
            f"One statement (p={_fmt(st[0][0])}: {_fmt(st[0][1])}) does not make a sketch; "
            "state at least two quantiles, or add a bound with lower= or upper=."
        )
    extra: dict[str, Any] = {"stated_quantiles": [[p, x] for p, x in st]}
    if lo_x is not None:
        extra["lower_bound"] = lo_x
    if hi_x is not None:
        extra["upper_bound"] = hi_x
    prov: dict[str, Any] = {"method": "from stated quantiles", "extra": extra}
    if author:
        prov["author"] = author
    if rationale:
        prov["rationale"] = rationale
    try:
        return Sketch(
            xs,
            ps,
            interpolation=interpolation,
            lower_tail=lo_tail,
            upper_tail=hi_tail,
            name=name,
            units=units,
            provenance=prov,
        )
    except KnotError as exc:
        raise JudgementError(f"The stated quantiles do not make a valid sketch: {exc}") from None
