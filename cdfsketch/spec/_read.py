"""Reading a single-input spec into a checked plain dict, and the Sketch's arguments from it.

:func:`check_spec` holds every rule of the spec format that the JSON Schema
states, with the same limits (:mod:`cdfsketch._limits`), checked cheapest
first: sizes before values, so a million knots are refused in
milliseconds. The rules of a valid CDF (order of knots, jumps, tails beyond
the knots) belong to the sketch's constructor; :mod:`cdfsketch.loading`
builds the sketch and reports those as :class:`SpecError` too.

Examples
--------
>>> spec = read_spec('{"format": "cdfsketch-spec", "version": 1, "interpolation": "linear",'
...                  ' "knots": {"x": [0, 1], "p": [0, 1]},'
...                  ' "tails": {"lower": {"kind": "bounded", "limit": 0, "density": "uniform"},'
...                  '           "upper": {"kind": "bounded", "limit": 1, "density": "uniform"}}}')
>>> kw = spec_to_kwargs(spec)
>>> kw["x"], kw["lower_tail"]
([0.0, 1.0], BoundedTail(limit=0.0, density='uniform'))
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .._validate import SpecError, choice, fail, mapping, quote, text
from ..tails import BoundedTail, ExponentialTail
from ._format import (
    DENSITIES,
    FORMAT,
    INTERPOLATIONS,
    MAX_ABS_X,
    MAX_KNOTS,
    MAX_NAME_CHARS,
    MAX_SCALE,
    MAX_UNITS_CHARS,
    REQUIRED,
    SCALE_RTOL,
    SCALE_RULES,
    TOP_KEYS,
)
from ._json import read_json, real
from ._migrate import migrate
from ._provenance import check_keys, check_provenance

__all__ = ["check_spec", "check_stored_scales", "read_spec", "spec_to_kwargs"]


def read_spec(obj: Any) -> dict[str, Any]:
    """A checked spec dict from a path, JSON text, bytes or a mapping.

    How text is told apart from a path: see :func:`cdfsketch.spec.source`.
    """
    return check_spec(read_json(obj)[0])


def check_spec(data: Mapping[str, Any]) -> dict[str, Any]:
    """Check a plain spec dict against the format's rules; return it (migrated).

    Every rule of ``spec-v1.schema.json`` is here, with its limits; ``data``
    must already be plain JSON data (:func:`cdfsketch.spec.read_json` makes it so).

    Examples
    --------
    >>> check_spec({"format": "cdfsketch-spec", "version": 1, "interpolation": "cubic"})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: A spec must have the key 'knots'; got only 'format', ...
    """
    spec = dict(mapping(data, field="the spec", error=SpecError))
    fmt = spec.get("format")
    if fmt != FORMAT:
        raise fail(
            f"format must be {FORMAT!r}",
            quote(fmt) if "format" in spec else "no format",
            "This is not a cdfsketch spec; write specs with Sketch.to_json().",
            error=SpecError,
            field="format",
            value=fmt,
        )
    check_keys(spec, TOP_KEYS, "the spec")
    for key in REQUIRED:
        if key not in spec:
            raise fail(
                f"A spec must have the key {key!r}",
                f"only {', '.join(map(repr, spec))}",
                "Write the spec with Sketch.to_json(), or add the key "
                "(see cdfsketch.spec.schema()).",
                error=SpecError,
                field=key,
            )
    spec = migrate(spec)
    if "name" in spec:
        text(spec["name"], field="name", max_len=MAX_NAME_CHARS, error=SpecError)
    if "units" in spec:
        text(spec["units"], field="units", max_len=MAX_UNITS_CHARS, error=SpecError)
    choice(spec["interpolation"], field="interpolation", options=INTERPOLATIONS, error=SpecError)
    _check_knots(spec["knots"])
    tails = mapping(spec["tails"], field="tails", error=SpecError)
    check_keys(tails, ("lower", "upper"), "tails")
    for side in ("lower", "upper"):
        _check_tail(tails.get(side), side)
    if "provenance" in spec:
        check_provenance(spec["provenance"])
    return spec


def _check_knots(knots: Any) -> None:
    mapping(knots, field="knots", error=SpecError)
    check_keys(knots, ("x", "p"), "knots")
    arrays = {}
    for key in ("x", "p"):
        values = knots.get(key)
        field = f"knots.{key}"
        if not isinstance(values, list):
            raise fail(
                f"{field} must be an array of numbers",
                quote(values) if key in knots else "nothing (the key is missing)",
                'Write e.g. "knots": {"x": [0, 1], "p": [0, 1]}.',
                error=SpecError,
                field=field,
                value=values,
            )
        if not 2 <= len(values) <= MAX_KNOTS:
            raise fail(
                f"{field} must hold 2 to {MAX_KNOTS:,} numbers",
                f"{len(values):,}",
                "Thin the knots; a sketch rarely needs more than a few hundred.",
                error=SpecError,
                field=field,
            )
        arrays[key] = values
    if len(arrays["x"]) != len(arrays["p"]):
        raise fail(
            "knots.x and knots.p must have the same length",
            f"{len(arrays['x'])} x values and {len(arrays['p'])} p values",
            "Give one probability per knot.",
            error=SpecError,
            field="knots",
        )
    for key, (low, high) in (("x", (-MAX_ABS_X, MAX_ABS_X)), ("p", (0.0, 1.0))):
        values = arrays[key]
        if all(type(v) is float for v in values):  # the fast path: plain floats in range
            arr = np.fromiter(values, float, len(values))
            if np.all((arr >= low) & (arr <= high)):
                continue
        for i, v in enumerate(values):
            real(v, field=f"knots.{key}[{i}]", low=low, high=high)


def _check_tail(tail: Any, side: str) -> None:
    where = f"tails.{side}"
    mapping(tail, field=where, error=SpecError)
    kind = choice(
        tail.get("kind"), field=f"{where}.kind", options=("bounded", "exponential"), error=SpecError
    )
    stated = tail.get("stated", True)
    if not isinstance(stated, bool):
        raise fail(
            f"{where}.stated must be true or false",
            quote(stated),
            "Leave it out for a stated tail.",
            error=SpecError,
            field=f"{where}.stated",
            value=stated,
        )
    if kind == "bounded":
        check_keys(tail, ("kind", "limit", "density", "stated"), where)
        if not stated:
            raise fail(
                f"{where}: only the default tail (exponential, continue-density) can be unstated",
                "a bounded tail with stated=false",
                "Set stated to true.",
                error=SpecError,
                field=f"{where}.stated",
            )
        if "density" not in tail:
            raise fail(
                f"{where} must have a density",
                "none",
                'Add "density": "uniform" or "taper".',
                error=SpecError,
                field=f"{where}.density",
            )
        choice(tail["density"], field=f"{where}.density", options=DENSITIES, error=SpecError)
        real(tail.get("limit"), field=f"{where}.limit", low=-MAX_ABS_X, high=MAX_ABS_X)
        return
    check_keys(tail, ("kind", "scale", "scale_rule", "stated"), where)
    rule = choice(
        tail.get("scale_rule"), field=f"{where}.scale_rule", options=SCALE_RULES, error=SpecError
    )
    if not stated and rule != "continue-density":
        raise fail(
            f"{where}: an unstated (default) tail derives its scale",
            f"scale_rule {rule!r} with stated=false",
            "Set stated to true or the rule to 'continue-density'.",
            error=SpecError,
            field=f"{where}.scale_rule",
        )
    scale = tail.get("scale")
    if rule == "stated" or scale is not None:
        high = MAX_SCALE if rule == "stated" else None
        real(scale, field=f"{where}.scale", low=0, low_open=True, high=high)


def stored_scales(spec: Mapping[str, Any]) -> tuple[float | None, float | None]:
    """The scales a spec stores for its ``continue-density`` tails (``None`` when absent).

    Examples
    --------
    >>> tail = {"kind": "exponential", "scale_rule": "continue-density"}
    >>> stored_scales({"tails": {"lower": tail, "upper": {**tail, "scale": 2}}})
    (None, 2.0)
    """
    out = []
    for side in ("lower", "upper"):
        tail = spec["tails"][side]
        rule = tail.get("scale_rule")
        out.append(
            float(tail["scale"])
            if rule == "continue-density" and tail.get("scale") is not None
            else None
        )
    return out[0], out[1]


def check_stored_scales(spec: Mapping[str, Any], resolved: Sequence[float | None]) -> None:
    """Refuse a stored derived scale that disagrees with the one the knots give.

    Examples
    --------
    >>> tail = {"kind": "exponential", "scale": 2.0, "scale_rule": "continue-density"}
    >>> check_stored_scales({"tails": {"lower": tail, "upper": tail}}, (2.0, 2.0 + 1e-12))
    >>> check_stored_scales({"tails": {"lower": tail, "upper": tail}}, (2.0, 3.0))
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: tails.upper.scale must match the scale the knots give ...
    """
    for side, stored, got in zip(("lower", "upper"), stored_scales(spec), resolved, strict=True):
        if (
            stored is not None
            and got is not None
            and not math.isclose(stored, got, rel_tol=SCALE_RTOL)
        ):
            raise fail(
                f"tails.{side}.scale must match the scale the knots give under "
                "scale_rule 'continue-density'",
                f"{stored!r}, but the knots give {got!r}",
                "Set scale_rule to 'stated' to keep the stored scale, or remove the scale.",
                error=SpecError,
                field=f"tails.{side}.scale",
                value=stored,
            )


def _tail(tail: Mapping[str, Any]) -> BoundedTail | ExponentialTail | None:
    if tail["kind"] == "bounded":
        return BoundedTail(float(tail["limit"]), density=tail["density"])
    if not tail.get("stated", True):
        return None
    return ExponentialTail(float(tail["scale"]) if tail["scale_rule"] == "stated" else None)


def spec_to_kwargs(spec: Mapping[str, Any]) -> dict[str, Any]:
    """Keyword arguments of ``Sketch(**kwargs)`` for a checked spec (:func:`check_spec`).

    An unstated tail gives ``None`` (the sketch's default tail).
    """
    return {
        "x": [float(v) for v in spec["knots"]["x"]],
        "p": [float(v) for v in spec["knots"]["p"]],
        "interpolation": spec["interpolation"],
        "lower_tail": _tail(spec["tails"]["lower"]),
        "upper_tail": _tail(spec["tails"]["upper"]),
        "name": spec.get("name", ""),
        "units": spec.get("units", ""),
        "provenance": spec.get("provenance", {}),
    }
