"""``compare``: judge candidates against data, on all of it and on a held-out part."""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any, Literal

import numpy as np

from .. import _streams
from .._extras import need
from .._progress import Progress, ProgressCallback
from .._validate import InputError, fail
from ..empirical import ECDF, as_data, dkw_eps
from ..empirical.band import check_level
from ..holdout import holdout_counts, holdout_fraction, holdout_split
from ..protocol import Model, as_model
from .integrals import integrals
from .sample import Evaluated, SortedSample
from .scores import ad_of, cvm_of, ks_of
from .table import COLUMNS, ComparisonTable

__all__ = ["DEFAULT_SEED", "compare"]

ArrayLike = Any
#: the seed of the holdout split and the refits when ``compare(rng=None)``
DEFAULT_SEED = 0
#: held-out points scored at a time
_BLOCK = 1 << 18


def _holdout_model(m: Model, train: np.ndarray, seed: int) -> tuple[Model | None, str, bool]:
    """The model used for the held-out score, how it was made, and whether p is valid."""
    if m.refit is not None:
        try:
            return as_model(m.refit(train, rng=seed)), "refit on training split", True
        except ValueError as err:
            return None, f"refit failed: {err}", False
    if m.kind == "sketch":
        return m, "not refit (judgement)", False
    if m.kind == "ecdf":
        return as_model(ECDF(train)), "resampled training split", False
    return m, "not refit (fixed)", False


def _held_out(n: int, holdout: Any, rng: Any) -> np.ndarray:
    """Indices of the held-out observations (empty when nothing is held out)."""
    frac = holdout_fraction(holdout)
    if frac == 0.0:
        return np.empty(0, dtype=np.intp)
    holdout_counts(n, fraction=frac)
    return holdout_split(n, fraction=frac, rng=rng)[1]


def _score_row(ev: Evaluated, eps: float) -> dict[str, Any]:
    m = ev.model
    src = m.source
    w1, l2 = integrals(ev)
    fitted = m.kind not in ("sketch", "ecdf")
    return {
        "name": m.name,
        "kind": m.kind,
        "n_params": getattr(src, "n_params", None) if fitted else None,
        "aic": getattr(src, "aic", None) if hasattr(src, "loglik") else None,
        "bic": getattr(src, "bic", None) if hasattr(src, "loglik") else None,
        "ks": ks_of(ev),
        "ad": ad_of(ev),
        "cvm": cvm_of(ev),
        "w1": w1,
        "crps": l2 + ev.sample.spread,
        "dkw_excursion": ev.dkw_excursion(eps),
    }


def _holdout_scores(hm: Model, test: SortedSample, p_ok: bool) -> dict[str, Any]:
    row: dict[str, Any] = {}
    if hm.scorable:
        total, outside, hits = 0.0, 0, 0
        for i0 in range(0, test.n, _BLOCK):  # in blocks: a model's temporaries stay small
            s, h = hm.log_score(test.ys[i0 : i0 + _BLOCK])
            outside += int(np.sum(~(s > -np.inf)))
            hits += h
            total += float(np.sum(s))
        row["log_score"] = -math.inf if outside else total / test.n
        row["n_outside"] = outside
        row["n_at_atoms"] = hits
    ev = Evaluated(hm, test)
    _, h2 = integrals(ev)
    row["crps_holdout"] = h2 + test.spread
    d = ks_of(ev)
    row["ks_holdout"] = d
    if p_ok and hm.continuous:
        # the exact two-sided KS distribution, as scipy.stats.ks_1samp(method="exact") uses
        row["ks_holdout_pvalue"] = float(need("fit", "scipy.stats").kstwo.sf(d, test.n))
    return row


def compare(
    data: ArrayLike,
    candidates: Iterable[Any],
    *,
    holdout: float | None = 0.3,
    level: float = 0.95,
    rng: Any = None,
    progress: ProgressCallback | Literal[False] | None = None,
) -> ComparisonTable:
    """Judge candidates against data: distances, scores and a held-out check.

    For each candidate (a :class:`~cdfsketch.fit.Candidate`, a
    :class:`~cdfsketch.Sketch`, an :class:`~cdfsketch.empirical.ECDF` used
    as "the resampled data", a frozen scipy distribution — discrete ones
    included — or anything satisfying :class:`cdfsketch.protocol.CDFModel`):

    * on all the data: KS distance, Anderson–Darling and Cramér–von Mises
      statistics, 1-Wasserstein distance, mean CRPS, and the largest
      excursion outside the DKW band at ``level`` (≤ 0: inside). These are
      reported as distances: no p-value, since the candidates were fitted or
      tuned on these same data and the usual null distributions do not hold.
    * on a holdout split (``holdout`` of the points, drawn by
      :func:`cdfsketch.holdout.holdout_split`; ``None`` or 0 to skip): a
      Candidate is refit on the training part (same family, same k, same
      bandwidth rule) and the held-out part is scored — mean log density,
      mean CRPS, KS distance and, because the refit never saw those points
      and is continuous, the exact KS p-value (labelled
      ``ks_holdout_pvalue``). The mixture's k and the list of families were
      chosen on all the data; that small selection effect is not corrected.
    * a Sketch is not refit: it is scored as is, marked "not refit
      (judgement)". If it was drawn while looking at all the data it has
      seen the held-out points, so its held-out score is optimistic and no
      p-value is given. Draw the sketch over a training split if you want an
      honest held-out score.
    * an ECDF stands for resampling the data: it is rebuilt from the
      training split, and as a purely atomic law it gives ``-inf`` log score
      to every held-out value not seen in training (counted in
      ``n_outside``).

    Held-out points where a candidate has zero density (outside its
    support) make the log score ``-inf`` and are counted in ``n_outside``,
    never dropped. For a model with atoms the log score of a point at an
    atom is the log of the atom's mass (a mixed density: counting measure at
    atoms, Lebesgue elsewhere), counted in ``n_at_atoms``; such values are
    not comparable with a continuous candidate's density.

    The data are sorted once per call; every score is then linear in the
    number of points plus the model's breakpoints. Memory: all the data are
    scored first (their sorted copy and each candidate's CDF at them, the
    other scores' temporaries in blocks of 2^18 points), then that copy is
    freed and the candidates are refit on the sorted training part and scored
    on the sorted held-out part (refits keep their sums over the data in
    blocks too: see :func:`cdfsketch.fit.fit_candidates`). On 10^7 points the
    peak stays within about 6× the data's bytes, the data included
    (``tests/bench/bench_memory.py``).

    Parameters
    ----------
    data : array_like
        Observations.
    candidates : iterable
        The models to judge.
    holdout : float or None
        Fraction held out, in (0, 1).
    level : float
        Coverage of the DKW band.
    rng : optional
        Seed for the split and the refits. ``None`` means the fixed seed
        :data:`DEFAULT_SEED` (0), so the same call gives the same table; pass
        another seed to see another split. The table's ``info`` records it.
    progress : None, False or callable
        ``None``: a progress bar in a Jupyter kernel once the work has taken
        more than a second (ipywidgets, only if importable); ``False``: none;
        a callable is called as ``progress(done, total, label)`` after each
        candidate is scored.

    Returns
    -------
    ComparisonTable

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> x = np.random.default_rng(1).uniform(0, 10, 200)
    >>> t = compare(x, [Sketch([0, 10], [0, 1], name="flat")], rng=0)
    >>> t.rows[0]["holdout_fit"], t.rows[0]["n_outside"], t.rows[0]["dkw_excursion"] < 0
    ('not refit (judgement)', 0, True)
    """
    y = as_data(data)
    n = y.size
    level = check_level(level)
    if isinstance(candidates, str | bytes) or not isinstance(candidates, Iterable):
        raise fail(
            "candidates must be an iterable of models",
            type(candidates).__name__,
            "Pass a list, e.g. [sketch] or fit_candidates(data).",
            field="candidates",
            value=candidates,
        )
    models = [as_model(c, field=f"candidates[{i}]") for i, c in enumerate(candidates)]
    if not models:
        raise InputError(
            "candidates must hold at least one model; got none. Pass e.g. [sketch].",
            field="candidates",
        )
    seed_given = rng is not None
    rng = DEFAULT_SEED if rng is None else rng
    root = _streams.root_seed(rng)
    test_idx = _held_out(n, holdout, root)
    n_test = int(test_idx.size)
    whole = SortedSample(np.sort(y), presorted=True)  # the one sort of all the data
    if n_test:
        in_train = np.ones(n, dtype=bool)
        in_train[test_idx] = False
        if (
            np.min(y, where=in_train, initial=np.inf) == np.max(y, where=in_train, initial=-np.inf)
            or whole.ux.size < 3
        ):
            raise fail(
                "the training split must hold at least two distinct values",
                f"{np.unique(y[in_train]).size} distinct in {n - n_test} points",
                "Use more data or holdout=None.",
                field="holdout",
                value=holdout,
            )
    eps = dkw_eps(n, level=level)
    seed = int(_streams.generator(root, "refit").integers(2**63 - 1))
    report = Progress(progress, len(models), title="scoring")
    rows = []
    for m in models:  # first all the data, then (its sorted copy freed) the holdout
        row = _score_row(Evaluated(m, whole), eps)
        row.update(dict.fromkeys(COLUMNS[11:], None))
        rows.append(row)
        if not n_test:
            report(len(rows), m.name)
    del whole
    if n_test:
        held = y[test_idx]
        held.sort()
        test = SortedSample(held, presorted=True)
        train = y[in_train]
        train.sort()
        del held, in_train, test_idx
        for i, (m, row) in enumerate(zip(models, rows, strict=True)):
            hm, how, p_ok = _holdout_model(m, train, seed)
            row["holdout_fit"] = how
            if hm is not None:
                row.update(_holdout_scores(hm, test, p_ok))
            del hm
            report(i + 1, m.name)
    info = {
        "n": n,
        "n_train": n - n_test,
        "n_test": n_test,
        "level": level,
        "eps": round(dkw_eps(n, level=level), 6),
        "seed": rng if seed_given else f"{DEFAULT_SEED} (default: pass rng= for another split)",
    }
    return ComparisonTable(rows, info=info)
