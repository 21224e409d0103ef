"""Reading the consequence run's arguments (through :mod:`cdfsketch._validate`)."""

from __future__ import annotations

import numbers
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from .._validate import choice, fail, number, quote, text
from .result import qlabel

__all__ = [
    "per_output",
    "read_candidates",
    "read_judge",
    "read_labels",
    "read_numbers",
    "read_quantiles",
]


def read_labels(candidates: Sequence[Any], names: Any) -> list[str]:
    if names is not None:
        if (
            isinstance(names, str)
            or not isinstance(names, Sequence)
            or len(names) != len(candidates)
        ):
            raise fail(
                f"names must be a list of {len(candidates)} labels, one per candidate",
                quote(names),
                "Pass e.g. names=['gamma', 'sketch'], or leave it out.",
                field="names",
                value=names,
            )
        labels = [text(v, field="names", empty=False) for v in names]
        if len(set(labels)) != len(labels):
            raise fail(
                "names must be different from each other",
                quote(labels),
                "Give each candidate its own label.",
                field="names",
                value=names,
            )
        return labels
    labels = []
    for i, cand in enumerate(candidates):
        name = getattr(cand, "name", "")
        label = name if isinstance(name, str) and name.strip() else f"candidate {i + 1}"
        labels.append(label if label not in labels else f"{label} #{i + 1}")
    return labels


def read_candidates(candidates: Any) -> list[Any]:
    if isinstance(candidates, str | bytes) or not isinstance(candidates, Sequence):
        raise fail(
            "candidates must be a list of sketches or fitted candidates",
            type(candidates).__name__,
            "Pass e.g. candidates=[sketch, fits[0]].",
            field="candidates",
            value=candidates,
        )
    if not candidates:
        raise fail(
            "candidates must hold at least one candidate",
            "an empty list",
            "Pass e.g. candidates=[sketch, fits[0]].",
            field="candidates",
        )
    for i, cand in enumerate(candidates):
        if not callable(getattr(cand, "ppf", None)):
            raise fail(
                "every candidate must have a quantile function ppf (a Sketch or a fitted one)",
                f"{type(cand).__name__} {quote(cand)} at index {i}",
                "Pass sketches or results of cdfsketch.fitread_candidates().",
                field="candidates",
                index=i,
                value=cand,
            )
    return list(candidates)


def read_numbers(value: Any, field: str, *, low: float | None = None) -> list[float]:
    if value is None:
        return []
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        return [number(value, field=field, low=low)]
    if isinstance(value, str) or not isinstance(value, Sequence | np.ndarray):
        raise fail(
            f"{field} must be a number or a list of numbers",
            quote(value),
            f"Pass e.g. {field}=[100.0, 200.0].",
            field=field,
            value=value,
        )
    return [number(v, field=field, low=low) for v in value]


def per_output(value: Any, outputs: Sequence[str], field: str, read: Callable) -> dict[str, Any]:
    """``value`` for every output: one setting for all, or a mapping output → setting."""
    if isinstance(value, Mapping):
        unknown = [k for k in value if k not in outputs]
        if unknown:
            raise fail(
                f"{field} must name outputs of the model {list(outputs)}",
                quote(unknown[0]),
                f"Use the model's output names, e.g. {field}={{{outputs[0]!r}: ...}}.",
                field=field,
                value=unknown[0],
            )
        return {o: read(value.get(o)) for o in outputs}
    return {o: read(value) for o in outputs}


def read_quantiles(value: Any) -> tuple[float, ...]:
    qs = read_numbers(value, "quantiles")
    for i, q in enumerate(qs):
        if not 0 < q < 1:
            raise fail(
                "quantiles must be probabilities strictly between 0 and 1",
                f"{q!r} at index {i}",
                "Pass e.g. quantiles=(0.1, 0.5, 0.9).",
                field="quantiles",
                index=i,
                value=q,
            )
    return tuple(qs)


def read_judge(value: Any, quantiles: Sequence[float]) -> tuple[str, ...]:
    options = ("mean", *(qlabel(p) for p in quantiles))
    if value is None:
        return options
    if isinstance(value, str) or not isinstance(value, Sequence) or not value:
        raise fail(
            f"judge must be a non-empty list of statistics from {list(options)}",
            quote(value),
            "Pass e.g. judge=['q0.9'] (quantiles must also be listed in quantiles=).",
            field="judge",
            value=value,
        )
    return tuple(choice(v, field="judge", options=options) for v in value)
