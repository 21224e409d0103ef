"""A consequence run as part of a review: checked against the review, or run for it.

A review shows whether the choice changes the model's answer only for its own
candidates: a :class:`~cdfsketch.outcomes.Consequences` result is accepted when
its candidates carry exactly the review's candidate names (:func:`check_result`);
:func:`run_for_review` runs :func:`cdfsketch.consequences` on the review's
candidates under the review's names, so they match by construction. What the
run pushes through the model is each candidate's sketch form — the very spec a
decision writes — so the check travels with the spec it describes.

The review keeps only the result (numbers); the model itself is never stored,
so nothing of it reaches a saved page or spec.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

from .._frozen import freeze
from .._limits import MAX_UNITS_CHARS
from .._validate import fail, mapping, quote, text
from ..outcomes import Consequences, consequences

__all__ = [
    "RUN_OPTIONS",
    "check_result",
    "output_units_for",
    "read_options",
    "run_for_review",
    "setup_consequences",
]

#: Options of :func:`cdfsketch.consequences` a review passes on (the rest it sets itself).
RUN_OPTIONS = (
    "bins",
    "chunks",
    "confidence",
    "dependence",
    "design",
    "judge",
    "quantiles",
    "scheduler",
    "thresholds",
    "tolerance",
)


def check_result(result: Any, names: Sequence[str]) -> Consequences:
    """``result`` if it is a consequence run over exactly the candidates called ``names``.

    Examples
    --------
    >>> check_result("table", ["a"])
    Traceback (most recent call last):
    ...
    cdfsketch._validate.InputError: consequences must be the result of ...
    """
    if not isinstance(result, Consequences):
        raise fail(
            "consequences must be the result of cdfsketch.consequences(...)",
            f"{type(result).__name__} {quote(result)}",
            "Pass what consequences() returned, or give model=, inputs=, vary= and size= "
            "so the review runs it on its own candidates.",
            field="consequences",
            value=result,
        )
    run, review = list(result.candidates), list(names)
    if sorted(run) != sorted(review):
        missing = [n for n in review if n not in run]
        extra = [n for n in run if n not in review]
        parts = []
        if missing:
            parts.append(f"not run: {quote(missing)}")
        if extra:
            parts.append(f"not in the review: {quote(extra)}")
        raise fail(
            f"the consequence run's candidates must be the review's candidates {quote(review)}",
            f"{quote(run)} ({'; '.join(parts)})",
            "Run consequences() with the review's candidates and names=list(review.names), "
            "or let the review run it: Review(..., model=..., inputs=..., vary=..., size=...).",
            field="consequences",
            value=run,
        )
    return result


def output_units_for(units: Any, result: Consequences, review_units: str) -> Any:
    """Output → units (a frozen dict): one text for every output, or a mapping.

    By default an output named like the varied input (the identity model) has
    the review's units, and any other output none.
    """
    default = {o: (review_units if o == result.vary else "") for o in result.outputs}
    if units is None:
        return freeze(default)
    if isinstance(units, str):
        one = text(units, field="output_units", max_len=MAX_UNITS_CHARS)
        return freeze(dict.fromkeys(result.outputs, one))
    given = mapping(units, field="output_units")
    for key in given:
        if key not in result.outputs:
            raise fail(
                f"output_units must name outputs of the model {quote(list(result.outputs))}",
                quote(key),
                "Use the model's output names, e.g. "
                f"output_units={{{result.outputs[0]!r}: 'EUR'}}.",
                field="output_units",
                value=key,
            )
    for key, value in given.items():
        default[key] = text(value, field=f"output_units[{key!r}]", max_len=MAX_UNITS_CHARS)
    return freeze(default)


def read_options(options: Any) -> dict[str, Any]:
    """The options passed on to :func:`cdfsketch.consequences` (only :data:`RUN_OPTIONS`)."""
    if options is None:
        return {}
    given = dict(mapping(options, field="consequence_options"))
    for key in given:
        if key not in RUN_OPTIONS:
            raise fail(
                f"consequence_options may set only {', '.join(RUN_OPTIONS)}",
                quote(key),
                "The review sets the candidates, their names, rng and progress itself; pass "
                "model, inputs, vary and size as their own arguments.",
                field="consequence_options",
                value=key,
            )
    return given


def run_for_review(
    model: Callable[[Mapping[str, Any]], Any] | None,
    inputs: Any,
    *,
    candidates: Sequence[Any],
    names: Sequence[str],
    vary: Any,
    size: Any,
    rng: Any,
    progress: Any,
    options: Any,
) -> Consequences:
    """:func:`cdfsketch.consequences` on the review's candidates (their sketch forms)."""
    missing = [k for k, v in (("inputs", inputs), ("vary", vary), ("size", size)) if v is None]
    if missing:
        raise fail(
            "a consequence run needs model, inputs, vary and size together",
            f"no {', '.join(missing)}",
            "Pass e.g. model=cost, inputs=input_set, vary='hours', size=100_000.",
            field=missing[0],
        )
    return consequences(
        model,
        inputs,
        vary=vary,
        size=size,
        candidates=list(candidates),
        names=list(names),
        rng=rng,
        progress=progress,
        **read_options(options),
    )


def setup_consequences(
    review: Any,
    result: Any,
    *,
    model: Any,
    inputs: Any,
    vary: Any,
    size: Any,
    rng: Any,
    options: Any,
    output_units: Any,
) -> None:
    """What a review's constructor does with its consequence arguments: attach, run or nothing."""
    asked = [
        k for k, v in (("model", model), ("inputs", inputs), ("vary", vary), ("size", size),
                       ("consequence_options", options)) if v is not None
    ]  # fmt: skip
    if result is not None and asked:
        raise fail(
            "consequences= (a finished run) and a run to make (model=, inputs=, vary=, size=) "
            "exclude each other",
            f"consequences= and {asked[0]}=",
            "Pass either the result, or what the review needs to run it.",
            field="consequences",
        )
    if result is not None:
        review.attach_consequences(result, output_units=output_units)
    elif asked:
        if not callable(model):
            raise fail(
                "model must be a function for the review to run the consequences",
                "no model" if model is None else f"{type(model).__name__} {quote(model)}",
                "Pass model=your_model (a function taking a mapping name → array), or run "
                "cdfsketch.consequences yourself and pass consequences=.",
                field="model",
                value=model,
            )
        review.run_consequences(
            model, inputs, vary=vary, size=size, rng=rng, output_units=output_units,
            **read_options(options),
        )  # fmt: skip
    elif output_units is not None:
        raise fail(
            "output_units needs a consequence run",
            quote(output_units),
            "Pass consequences= or model=, inputs=, vary= and size= as well.",
            field="output_units",
            value=output_units,
        )
