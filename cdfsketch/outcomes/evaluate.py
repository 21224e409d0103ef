"""Push one block of draws through the user's model, once per candidate (numpy only).

Common random numbers: every candidate of the varied input is the ppf of the
same uniforms, and every other input takes the same draws for every
candidate, so what differs between the candidates' outputs comes from the
choice, not from noise. The arrays handed to the model are read-only, so a
model that edits its inputs in place cannot leak one candidate's draws into
the next one's.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from .._validate import InputError, fail, quote

__all__ = ["ModelError", "candidate_ppf", "evaluate_block"]


class ModelError(InputError):
    """The model raised, or returned something other than one finite value per draw."""


def candidate_ppf(candidate: Any) -> Callable[[np.ndarray], np.ndarray]:
    """The quantile function used for a candidate (a sketch's fast table, else ``ppf``)."""
    sampler = getattr(candidate, "sampler", None)
    return sampler().ppf if callable(sampler) else candidate.ppf


def _read_only(a: np.ndarray) -> np.ndarray:
    a = np.asarray(a, dtype=float)
    a.flags.writeable = False
    return a


def _outputs(result: Any, n: int, label: str, where: str) -> dict[str, np.ndarray]:
    items = result.items() if isinstance(result, Mapping) else [("output", result)]
    out: dict[str, np.ndarray] = {}
    for key, value in items:
        name = str(key)
        try:
            arr = np.asarray(value, dtype=float)
        except (TypeError, ValueError):
            raise fail(
                f"The model must return numbers (an array, or a mapping of named arrays) "
                f"for candidate {label!r}",
                f"{type(value).__name__} {quote(value)} for output {name!r} ({where})",
                "Return one float per draw, e.g. an array of the same length as the inputs.",
                error=ModelError,
                field="model",
                value=value,
            ) from None
        if arr.shape != (n,):
            raise fail(
                f"The model must return one value per draw (shape ({n},)) for candidate {label!r}",
                f"shape {arr.shape} for output {name!r} ({where})",
                "Compute element-wise on the input arrays (they are 1-D, one entry per draw).",
                error=ModelError,
                field="model",
                value=arr.shape,
            )
        out[name] = arr
    if not out:
        raise fail(
            f"The model must return at least one output for candidate {label!r}",
            "an empty mapping",
            "Return an array, or a mapping name → array.",
            error=ModelError,
            field="model",
        )
    return out


def evaluate_block(
    model: Callable[[Mapping[str, np.ndarray]], Any] | None,
    base: Mapping[str, np.ndarray],
    vary: str,
    u: np.ndarray,
    candidates: Sequence[Any],
    labels: Sequence[str],
    where: str,
    step: Callable[[str], None] | None = None,
) -> dict[str, np.ndarray]:
    """Outputs of every candidate on one block: output name → array (candidates, draws).

    ``base`` holds the other inputs' draws, ``u`` the varied input's uniforms;
    ``model=None`` is the identity (the output is the varied input itself).
    ``where`` says which draws these are, for error messages.
    """
    n = u.shape[0]
    fixed = {name: _read_only(a) for name, a in base.items()}
    names: tuple[str, ...] | None = None
    table: dict[str, np.ndarray] = {}
    for c, (cand, label) in enumerate(zip(candidates, labels, strict=True)):
        x = _read_only(candidate_ppf(cand)(u))
        if model is None:
            result: Any = {vary: x}
        else:
            try:
                result = model({**fixed, vary: x})
            except Exception as exc:
                raise ModelError(
                    f"The model raised {type(exc).__name__}: {quote(str(exc), limit=200)} "
                    f"for candidate {label!r} ({where}); no result was made. Fix the model "
                    f"(it receives a mapping input name → 1-D array, one entry per draw).",
                    field="model",
                ) from exc
        outs = _outputs(result, n, label, where)
        if names is None:
            names = tuple(outs)
            table = {o: np.empty((len(candidates), n)) for o in names}
        elif tuple(outs) != names:
            raise fail(
                "The model must return the same outputs for every candidate",
                f"{list(outs)} for candidate {label!r} but {list(names)} for {labels[0]!r}",
                "Return the same named outputs whatever the inputs.",
                error=ModelError,
                field="model",
            )
        for o in names:
            table[o][c] = outs[o]
        if step is not None:
            step(label)
    return table
