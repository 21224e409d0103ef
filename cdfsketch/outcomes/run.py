"""The consequence run: candidates for one input through the user's model.

One entry point, :func:`consequences`, in memory or — with ``chunks=`` — on
Dask. Both draw the input set's windows of 2¹⁶ points (the stream blocks of
:mod:`cdfsketch._blocks`; the draws equal ``inputs.sample(size, rng=rng,
...)``) and combine the same per-block statistics
(:mod:`cdfsketch.outcomes.stats`), so for the same ``rng`` and ``size``
the means, sds, exceedance probabilities and all their differences and
standard errors are bit-identical in memory and on any Dask scheduler, for
any ``chunks``.
Quantiles differ in method: in memory they are the exact sample quantiles; on
Dask they come from a histogram of all draws (a second pass over the blocks)
and are within one bin width of the exact sample quantile (the bound is
reported in the ``quantile_error_bound`` column).
"""

from __future__ import annotations

import statistics
from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np

from .._blocks import WINDOW, BlockLayout
from .._streams import root_seed
from .._validate import choice, fail, integer, number, quote, text
from ..inputs import DEPENDENCE, DESIGNS
from ..scale.blocks import as_inputset
from .arguments import (
    per_output,
    read_candidates,
    read_judge,
    read_labels,
    read_numbers,
    read_quantiles,
)
from .engines import Plan, in_memory, on_dask
from .result import Consequences
from .stats import sections_per_block

__all__ = ["consequences"]


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

    Notes
    -----
    The model must be deterministic given its inputs: on Dask each block is
    evaluated twice when quantiles are asked for (statistics, then a
    histogram between the smallest and largest output).

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
    cands = read_candidates(candidates)
    labels = read_labels(cands, names)
    n = integer(size, field="size", low=20, example="size=100_000")
    design = choice(design, field="design", options=DESIGNS)
    dependence = choice(dependence, field="dependence", options=DEPENDENCE)
    qs = read_quantiles(quantiles)
    judged = read_judge(judge, qs)
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
    per_output(
        thresholds,
        list(thresholds) if isinstance(thresholds, Mapping) else [""],
        "thresholds",
        lambda v: read_numbers(v, "thresholds"),
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
    plan = Plan(
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
        tolerance=tolerance,
        quantiles=qs,
        sections=sections_per_block(layout.n_blocks),
        z=statistics.NormalDist().inv_cdf(0.5 + level / 2),
    )
    if chunks is None:
        combined, method = in_memory(plan, progress)
    else:
        combined, method = on_dask(plan, chunks, scheduler, bins, progress)
    outputs = list(combined)
    thr = per_output(thresholds, outputs, "thresholds", lambda v: read_numbers(v, "thresholds"))
    tol = per_output(tolerance, outputs, "tolerance", lambda v: 0.0 if v is None else float(v))
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
