"""The consequence run: candidates for one input through the user's model.

One entry point, :func:`consequences`, in memory or — with ``chunks=`` — on
Dask. Both draw the input set's windows of 2¹⁶ points (the stream blocks of
:mod:`cdfsketch.scale.blocks`; the draws equal ``inputs.sample(size, rng=rng,
...)``) and combine the same per-block statistics
(:mod:`cdfsketch.consequences.stats`), so for the same ``rng`` and ``size``
the means, sds, exceedance probabilities and all their differences and
standard errors are bit-identical in memory and on any Dask scheduler, for
any ``chunks``.
Quantiles differ in method: in memory they are the exact sample quantiles; on
Dask they come from a histogram of all draws (a second pass over the blocks)
and are within one bin width of the exact sample quantile (the bound is
reported in the ``quantile_error_bound`` column).
"""

from __future__ import annotations

import numbers
import statistics
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from .._progress import Progress
from .._streams import root_seed
from .._validate import choice, fail, integer, number, quote, text
from ..inputs import DEPENDENCE, DESIGNS
from ..scale.blocks import (
    WINDOW,
    BlockLayout,
    as_inputset,
    from_portable,
    to_portable,
    window_uniforms,
)
from .evaluate import ModelError, evaluate_block
from .result import Consequences, qlabel
from .stats import (
    bad_draws,
    block_stats,
    combine,
    histogram_quantile,
    sections_per_block,
    sorted_quantile,
)

__all__ = ["consequences"]

#: Points of the stored output CDF per candidate (in memory).
CURVE_POINTS = 1025
#: Dask tasks computed per round (progress is reported after each round).
ROUND = 32


# ---------------------------------------------------------------- arguments


def _labels(candidates: Sequence[Any], names: Any) -> list[str]:
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


def _candidates(candidates: Any) -> list[Any]:
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
                "Pass sketches or results of cdfsketch.fit_candidates().",
                field="candidates",
                index=i,
                value=cand,
            )
    return list(candidates)


def _numbers(value: Any, field: str, *, low: float | None = None) -> list[float]:
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


def _per_output(value: Any, outputs: Sequence[str], field: str, read: Callable) -> dict[str, Any]:
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


def _quantiles(value: Any) -> tuple[float, ...]:
    qs = _numbers(value, "quantiles")
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


def _judge(value: Any, quantiles: Sequence[float]) -> tuple[str, ...]:
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


# ---------------------------------------------------------------- one block


class _Plan:
    """Everything a block needs (picklable, so Dask workers can run it)."""

    def __init__(self, **kw: Any) -> None:
        self.__dict__.update(kw)

    # Sketch and InputSet travel to worker processes as their JSON (to_portable).
    def __getstate__(self) -> dict[str, Any]:
        state = dict(self.__dict__)
        state["inputs"] = to_portable(self.inputs)
        state["candidates"] = [to_portable(c) for c in self.candidates]
        return state

    def __setstate__(self, state: dict[str, Any]) -> None:
        state["inputs"] = from_portable(state["inputs"])
        state["candidates"] = [from_portable(c) for c in state["candidates"]]
        self.__dict__.update(state)

    def outputs_of_block(
        self, k: int, u: Mapping[str, np.ndarray] | None = None, step: Any = None
    ) -> dict:
        lo, hi = self.layout.bounds(k)
        if u is None:
            u = window_uniforms(
                self.inputs, self.root, k, hi - lo, design=self.design, dependence=self.dependence
            )
        sketches = self.inputs.sketches
        base = {
            name: sketches[name].sampler().ppf(arr) for name, arr in u.items() if name != self.vary
        }
        where = (
            f"draws {lo}–{hi - 1}"
            if self.layout.n_blocks == 1
            else f"block {k}, draws {lo}–{hi - 1}"
        )
        return evaluate_block(
            self.model, base, self.vary, u[self.vary], self.candidates, self.labels, where, step
        )

    def stats_of(self, table: dict) -> dict:
        thr = _per_output(
            self.thresholds, list(table), "thresholds", lambda v: _numbers(v, "thresholds")
        )
        return {
            o: block_stats(ys, thr[o], self.quantiles, self.sections) for o, ys in table.items()
        }

    def first_pass(self, ks: Sequence[int]) -> list[tuple[int, dict]]:
        return [(k, self.stats_of(self.outputs_of_block(k))) for k in ks]

    def second_pass(self, ks: Sequence[int], edges: Mapping[str, np.ndarray]) -> dict:
        counts: dict[str, np.ndarray] = {}
        for k in ks:
            for o, ys in self.outputs_of_block(k).items():
                h = np.stack([np.histogram(y, bins=edges[o])[0] for y in ys]).astype(np.int64)
                counts[o] = h if o not in counts else counts[o] + h
        return counts


def _check_bad(plan: _Plan, blocks: Mapping[str, Sequence[dict]]) -> None:
    """Raise, naming the candidate and the count, if any output draw is NaN or infinite."""
    for o, bl in blocks.items():
        bad, first = bad_draws(bl)
        for c, count in enumerate(bad):
            if count:
                raise fail(
                    f"The model must return finite numbers for candidate {plan.labels[c]!r}",
                    f"{int(count)} of {plan.layout.size} draws NaN or infinite in output {o!r} "
                    f"(first at draw {int(first[c])})",
                    "Guard the model against those inputs (the draws are reproducible with the "
                    "same rng); no result was made.",
                    error=ModelError,
                    field="model",
                    index=int(first[c]),
                    value=int(count),
                )


# ---------------------------------------------------------------- engines


def _in_memory(plan: _Plan, progress: Any) -> tuple[dict, dict]:
    n_c = len(plan.candidates)
    report = Progress(progress, plan.layout.n_blocks * n_c, title="consequences")
    done = 0

    def step(label: str) -> None:
        nonlocal done
        done += 1
        report(done, label)

    blocks: dict[str, list] = {}
    values: dict[str, list] = {}
    windows = plan.inputs.blocks(
        plan.layout.size,
        block=plan.layout.block,
        rng=plan.root,
        design=plan.design,
        dependence=plan.dependence,
        uniforms=True,
    )
    for k, u in enumerate(windows):
        table = plan.outputs_of_block(k, u, step)
        for o, st in plan.stats_of(table).items():
            blocks.setdefault(o, []).append(st)
            values.setdefault(o, []).append(table[o])
    _check_bad(plan, blocks)
    combined = {o: combine(b) for o, b in blocks.items()}
    grid = np.linspace(0.0, 1.0, CURVE_POINTS)
    for o, s in combined.items():
        ys = np.sort(np.concatenate(values.pop(o), axis=1), axis=1)
        n = ys.shape[1]
        q = [[sorted_quantile(y, p, plan.z) for p in plan.quantiles] for y in ys]
        s["q"] = np.array([[v for v, _ in row] for row in q]).reshape(n_c, len(plan.quantiles))
        s["q_se"] = np.array([[e for _, e in row] for row in q]).reshape(n_c, len(plan.quantiles))
        s["q_bound"] = 0.0
        ranks = np.clip(np.ceil(grid * n - 1e-9).astype(int), 1, n) - 1
        s["curve_x"] = ys[:, ranks]
        s["curve_p"] = np.tile(grid, (n_c, 1))
    return combined, {"engine": "in memory", "quantile_method": "exact sample quantiles"}


def _on_dask(
    plan: _Plan, chunks: Any, scheduler: Any, bins: int, progress: Any
) -> tuple[dict, dict]:
    from .._extras import need

    dask = need("dask", "dask")
    per_task = chunks // plan.layout.block
    groups = [
        list(range(i, min(i + per_task, plan.layout.n_blocks)))
        for i in range(0, plan.layout.n_blocks, per_task)
    ]
    rounds = [groups[i : i + ROUND] for i in range(0, len(groups), ROUND)]
    two = 2 if plan.quantiles else 1
    report = Progress(progress, two * len(rounds), title="consequences on Dask")
    first: list[tuple[int, dict]] = []
    for i, rnd in enumerate(rounds):
        tasks = [dask.delayed(plan.first_pass, pure=False)(g) for g in rnd]
        for part in dask.compute(*tasks, scheduler=scheduler):
            first.extend(part)
        report(i + 1, "statistics")
    first.sort(key=lambda kv: kv[0])
    outputs = list(first[0][1])
    per_output = {o: [st[o] for _, st in first] for o in outputs}
    _check_bad(plan, per_output)
    combined = {o: combine(bl) for o, bl in per_output.items()}
    method = {"engine": "dask", "chunks": int(chunks)}
    if not plan.quantiles:
        for s in combined.values():
            s["q"] = s["q_se"] = np.zeros((len(plan.candidates), 0))
            s["q_bound"] = 0.0
            s["curve_x"] = np.stack([s["min"], s["max"]], axis=1)
            s["curve_p"] = np.tile([0.0, 1.0], (len(plan.candidates), 1))
        method["quantile_method"] = "none requested"
        return combined, method
    edges = {}
    for o, s in combined.items():
        lo, hi = float(np.min(s["min"])), float(np.max(s["max"]))
        edges[o] = np.linspace(lo, hi if hi > lo else lo + 1.0, bins + 1)
    counts: dict[str, np.ndarray] = {}
    for i, rnd in enumerate(rounds):
        tasks = [dask.delayed(plan.second_pass, pure=False)(g, edges) for g in rnd]
        for part in dask.compute(*tasks, scheduler=scheduler):
            for o, h in part.items():
                counts[o] = h if o not in counts else counts[o] + h
        report(len(rounds) + i + 1, "quantiles")
    for o, s in combined.items():
        e = edges[o]
        q = [[histogram_quantile(h, e, p, plan.z) for p in plan.quantiles] for h in counts[o]]
        s["q"] = np.array([[v for v, _ in row] for row in q])
        s["q_se"] = np.array([[se for _, se in row] for row in q])
        s["q_bound"] = float(e[1] - e[0]) if s["max"].max() > s["min"].min() else 0.0
        s["curve_x"] = np.tile(e, (len(plan.candidates), 1))
        s["curve_p"] = np.concatenate(
            [np.zeros((len(plan.candidates), 1)), np.cumsum(counts[o], axis=1) / s["n"]], axis=1
        )
    method["quantile_method"] = (
        f"histogram of all draws, {bins} equal bins between the smallest and largest output; "
        "within one bin width (quantile_error_bound) of the exact sample quantile"
    )
    return combined, method


# ---------------------------------------------------------------- public


def consequences(
    model: Callable[[Mapping[str, np.ndarray]], Any] | None,
    inputs: Any,
    *,
    vary: str,
    candidates: Sequence[Any],
    size: int,
    rng: Any = None,
    design: str = "random",
    thresholds: Any = None,
    tolerance: Any = None,
    dependence: str = "iman-conover",
    quantiles: Sequence[float] = (0.1, 0.5, 0.9),
    judge: Sequence[str] | None = None,
    reference: Any = None,
    names: Sequence[str] | None = None,
    confidence: float = 0.95,
    chunks: int | None = None,
    scheduler: Any = None,
    bins: int = 4096,
    progress: Any = None,
) -> Consequences:
    """Would the decision change if another candidate were chosen for one input?

    Each candidate for input ``vary`` is pushed through ``model`` with common
    random numbers: the varied input is ``candidate.ppf(u)`` of the *same*
    uniforms ``u`` for every candidate, and every other input takes the same
    draws (from its sketch in ``inputs``) for every candidate. So the
    differences between the candidates' outputs come from the choice, not from
    noise, and their standard errors come from the paired draws.

    Parameters
    ----------
    model : callable or None
        The user's vectorised model: takes a mapping input name → 1-D array
        (one entry per draw; read-only) and returns an array of the same
        length, or a mapping output name → such arrays. ``None``: the identity
        model (the output is the varied input itself).
    inputs : InputSet or mapping of name to Sketch
        The model's inputs (a plain mapping means independent inputs).
    vary : str
        The input whose candidates are compared.
    candidates : list
        Sketches or fitted candidates (anything with ``ppf``) for ``vary``.
    size : int
        Draws per candidate (at least 20).
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the root of the streams.
    design : {"random", "lhs", "sobol"}
        The sampling design (as ``InputSet.sample``).
    thresholds : float, list of float or mapping, optional
        Report ``P(output > t)`` for these thresholds (a mapping gives them per output).
    tolerance : float or mapping, optional
        The difference (in the output's units) that would matter, for the
        verdicts on the mean and the quantiles; a mapping gives it per output.
        ``None`` means 0: any difference the draws can detect counts.
    dependence : {"iman-conover", "gaussian-copula", "independent"}
        How the input set's rank-correlation target is imposed.
    quantiles : sequence of float
        Quantile levels to report.
    judge : list of str, optional
        The statistics the verdicts weigh: ``"mean"`` and quantile labels such
        as ``"q0.9"`` (default: the mean and every reported quantile). A
        verdict says "changes" when any of them differs by more than the
        tolerance, "within" when all are clearly within it.
    reference : str or int, optional
        The candidate the differences are taken from (default: the first).
    names : list of str, optional
        Labels for the candidates (default: their ``name``, else "candidate i").
    confidence : float
        Confidence level of the verdicts (two-sided normal interval).
    chunks : int, optional
        Run on Dask, with tasks of ``chunks`` draws (a multiple of 2¹⁶ =
        65536, the input set's window; or at least ``size``). The results do
        not depend on it.
    scheduler : optional
        Passed to :func:`dask.compute` (default: the active Dask scheduler or client).
    bins : int
        Histogram bins per output for quantiles on Dask.
    progress : None, False or callable
        ``None``: a bar in a notebook for runs over a second; ``False``: silent;
        a callable gets ``(done, total, label)``.

    Returns
    -------
    Consequences
        Figures per candidate and output, differences to the reference with
        their standard errors, the gain of common random numbers, and a
        verdict per output. ``to_pandas()`` gives the table.

    Raises
    ------
    ModelError
        The model raised, returned the wrong shape, or NaN/inf (the message
        names the candidate and how many draws were bad); no result is made.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> ins = {"hours": Sketch([1, 3, 8], [0, 0.6, 1]), "rate": Sketch([40, 60], [0, 1])}
    >>> alt = Sketch([1, 4, 10], [0, 0.6, 1], name="longer")
    >>> res = consequences(lambda d: d["hours"] * d["rate"], ins, vary="hours",
    ...                    candidates=[ins["hours"], alt], size=4000, rng=1, tolerance=5.0)
    >>> res.candidates, res.outputs
    (('candidate 1', 'longer'), ('output',))
    >>> res.verdicts()["output"]
    'the choice changes this output by more than the tolerance you set'
    """
    if model is not None and not callable(model):
        raise fail(
            "model must be a function (or None for the identity model)",
            f"{type(model).__name__} {quote(model)}",
            "Pass a function taking a mapping name → array and returning an array.",
            field="model",
            value=model,
        )
    ins = as_inputset(inputs)
    sketches = ins.sketches
    vary = text(vary, field="vary", empty=False)
    if vary not in sketches:
        raise fail(
            f"vary must name one of the inputs {list(sketches)}",
            quote(vary),
            f"Pass e.g. vary={next(iter(sketches), 'x')!r}.",
            field="vary",
            value=vary,
        )
    cands = _candidates(candidates)
    labels = _labels(cands, names)
    n = integer(size, field="size", low=20, example="size=100_000")
    design = choice(design, field="design", options=DESIGNS)
    dependence = choice(dependence, field="dependence", options=DEPENDENCE)
    qs = _quantiles(quantiles)
    judged = _judge(judge, qs)
    level = number(confidence, field="confidence", low=0, high=1, low_open=True, high_open=True)
    ref = labels[0] if reference is None else None
    if reference is not None:
        if isinstance(reference, str) and reference in labels:
            ref = reference
        elif (
            isinstance(reference, int)
            and not isinstance(reference, bool)
            and 0 <= reference < len(labels)
        ):
            ref = labels[reference]
        else:
            raise fail(
                f"reference must name a candidate {labels} or give its index",
                quote(reference),
                f"Pass e.g. reference={labels[0]!r}.",
                field="reference",
                value=reference,
            )
    _per_output(
        thresholds,
        list(thresholds) if isinstance(thresholds, Mapping) else [""],
        "thresholds",
        lambda v: _numbers(v, "thresholds"),
    )
    if isinstance(tolerance, Mapping):
        for v in tolerance.values():
            number(v, field="tolerance", low=0)
    elif tolerance is not None:
        number(tolerance, field="tolerance", low=0)
    layout = BlockLayout(n, WINDOW)
    if chunks is not None:
        chunks = integer(chunks, field="chunks", low=1, example=f"chunks={4 * WINDOW}")
        if chunks % WINDOW and chunks < n:
            raise fail(
                f"chunks must be a multiple of {WINDOW} (the input set's window: each task "
                "runs whole windows) or at least size",
                f"chunks={chunks}",
                f"Pass e.g. chunks={WINDOW * max(1, chunks // WINDOW)}.",
                field="chunks",
                value=chunks,
            )
        chunks = max(WINDOW, chunks - chunks % WINDOW)
    bins = integer(bins, field="bins", low=16, high=10**7, example="bins=4096")
    root = root_seed(rng)
    ins.blocks(n, block=n, rng=root, design=design, dependence=dependence)  # checks, warns
    plan = _Plan(
        model=model,
        inputs=ins,
        vary=vary,
        candidates=cands,
        labels=labels,
        layout=layout,
        root=root,
        design=design,
        dependence=dependence,
        thresholds=thresholds,
        quantiles=qs,
        sections=sections_per_block(layout.n_blocks),
        z=statistics.NormalDist().inv_cdf(0.5 + level / 2),
    )
    if chunks is None:
        combined, method = _in_memory(plan, progress)
    else:
        combined, method = _on_dask(plan, chunks, scheduler, bins, progress)
    outputs = list(combined)
    thr = _per_output(thresholds, outputs, "thresholds", lambda v: _numbers(v, "thresholds"))
    tol = _per_output(tolerance, outputs, "tolerance", lambda v: 0.0 if v is None else float(v))
    method.update(
        {
            "dependence": dependence,
            "block": WINDOW,
            "n_blocks": layout.n_blocks,
            "confidence": level,
            "z": plan.z,
            "sections": plan.sections * layout.n_blocks,
            "seed_entropy": str(root.entropy),
            "seed_spawn_key": list(root.spawn_key),
            "common_random_numbers": True,
        }
    )
    return Consequences(
        vary=vary,
        candidates=labels,
        outputs=outputs,
        size=n,
        design=design,
        quantiles=qs,
        thresholds=thr,
        tolerance=tol,
        judge=judged,
        reference=ref,
        method=method,
        stats=combined,
    )
