"""The run's engines: in memory, or on Dask in rounds of tasks (Dask loaded lazily).

Both evaluate the same stream blocks (the input set's windows) and reduce them
with the same per-block statistics, so their exact figures agree bit for bit.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from .._blocks import from_portable, to_portable
from .._progress import Progress
from .._validate import fail
from ..inputs.windows import window_uniforms
from ..sketch import Sketch
from .arguments import per_output, read_numbers
from .evaluate import ModelError, evaluate_block
from .stats import bad_draws, block_stats, combine, histogram_quantile, sorted_quantile

__all__ = ["CURVE_POINTS", "ROUND", "Plan", "check_bad", "in_memory", "on_dask"]

#: Points of the stored output CDF per candidate (in memory).
CURVE_POINTS = 1025
#: Dask tasks computed per round (progress is reported after each round).
ROUND = 32


def _pack(obj: Any) -> tuple[Any, Any]:
    return to_portable(obj, shared=isinstance(obj, Sketch))


class Plan:
    """Everything a block needs (picklable, so Dask workers can run it)."""

    def __init__(self, **kw: Any) -> None:
        self.__dict__.update(kw)

    # Sketches and the input set travel pickled once: a worker caches what it read.
    def __getstate__(self) -> dict[str, Any]:
        state = dict(self.__dict__)
        state["inputs"] = to_portable(self.inputs)
        state["candidates"] = [_pack(c) for c in self.candidates]
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
        # the output names are known now: settings naming other outputs fail on the first block
        thr = per_output(
            self.thresholds, list(table), "thresholds", lambda v: read_numbers(v, "thresholds")
        )
        per_output(self.tolerance, list(table), "tolerance", lambda v: v)
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


def check_bad(plan: Plan, blocks: Mapping[str, Sequence[dict]]) -> None:
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


def in_memory(plan: Plan, progress: Any) -> tuple[dict, dict]:
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
    check_bad(plan, blocks)
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


def on_dask(plan: Plan, chunks: Any, scheduler: Any, bins: int, progress: Any) -> tuple[dict, dict]:
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
    # the plan is one node of each round's graph: sent to a worker once, not once per task
    shared = dask.delayed(plan, pure=True, traverse=False)
    first: list[tuple[int, dict]] = []
    for i, rnd in enumerate(rounds):
        tasks = [dask.delayed(Plan.first_pass, pure=False)(shared, g) for g in rnd]
        for part in dask.compute(*tasks, scheduler=scheduler):
            first.extend(part)
        report(i + 1, "statistics")
    first.sort(key=lambda kv: kv[0])
    outputs = list(first[0][1])
    per_output = {o: [st[o] for _, st in first] for o in outputs}
    check_bad(plan, per_output)
    combined = {o: combine(bl) for o, bl in per_output.items()}
    method = {"engine": "dask", "chunks": int(chunks)}
    if not plan.quantiles:
        for s in combined.values():
            s["q"] = s["q_se"] = np.zeros((len(plan.candidates), 0))
            s["q_bound"] = 0.0
            s["curve_x"] = s["curve_p"] = np.zeros((len(plan.candidates), 0))
        method["quantile_method"] = "none requested"
        return combined, method
    edges = {}
    for o, s in combined.items():
        lo, hi = float(np.min(s["min"])), float(np.max(s["max"]))
        edges[o] = np.linspace(lo, hi if hi > lo else lo + 1.0, bins + 1)
    counts: dict[str, np.ndarray] = {}
    for i, rnd in enumerate(rounds):
        tasks = [dask.delayed(Plan.second_pass, pure=False)(shared, g, edges) for g in rnd]
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
