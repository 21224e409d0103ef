"""The driver: :func:`fit_candidates` fits every applicable family, mixtures and a KDE."""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from typing import Any, Literal

import numpy as np

from .._progress import Progress, ProgressCallback
from .._validate import choice, fail, integer
from ..empirical import as_data
from .candidate import Candidate, CandidateList
from .families import FAMILIES, check_bounds, check_family, fit_registered, not_applicable
from .kde import fit_kde_to
from .mixture import fit_mixture

__all__ = ["SmallSampleWarning", "fit_candidates"]

ArrayLike = Any
#: a candidate is judged from at least this many points per free parameter (a rule of
#: thumb, common practice, no source); a KDE from at least _KDE_MIN points
_PER_PARAM = 5
_KDE_MIN = 10


class SmallSampleWarning(UserWarning):
    """Too few data points to judge some of the fitted candidates; the message names them."""


def _warn_if_few(n: int, cands: CandidateList) -> None:
    weak = [
        c.name
        for c in cands
        if (n < _KDE_MIN if c.family == "kde" else n < _PER_PARAM * max(c.n_params, 1.0))
    ]
    if weak:
        warnings.warn(
            f"Only {n} data points: too few to judge {', '.join(weak)} (fewer than "
            f"{_PER_PARAM} points per free parameter; {_KDE_MIN} for a KDE). They are fitted, "
            "but their scores say little; gather more data or state the distribution by "
            "judgement.",
            SmallSampleWarning,
            stacklevel=3,
        )


def fit_candidates(
    data: ArrayLike,
    *,
    families: Sequence[str] | None = None,
    mixtures: Sequence[int] = (1, 2, 3, 4),
    kde: bool | Literal["scott", "silverman"] = True,
    bounds: tuple[float, float] | None = None,
    rng: Any = None,
    progress: ProgressCallback | Literal[False] | None = None,
) -> CandidateList:
    """Fit the usual candidate distributions to a 1-D sample.

    Parameters
    ----------
    data : array_like
        Observations (lists, arrays, pandas Series; NaN dropped with a warning).
    families : sequence of str, optional
        Families to fit (default: all of :data:`FAMILIES`); see
        :func:`fit_family` for the parametrisations and fixed locations.
    mixtures : sequence of int
        Numbers of normal-mixture components to try; the one with the lowest
        BIC is returned (see :func:`fit_normal_mixture`; the BIC of each is in
        its ``notes``). Empty: no mixture.
    kde : bool or {"scott", "silverman"}
        Add a Gaussian KDE (``True`` means Scott's rule); see :func:`fit_kde`.
    bounds : (float, float), optional
        A stated support: used by ``beta`` (required), ``uniform`` and
        ``triangular``.
    rng : optional
        Seed for the mixture starts (anything ``np.random.default_rng`` takes).
    progress : None, False or callable
        ``None``: a progress bar in a Jupyter kernel once the work has taken
        more than a second (ipywidgets, only if importable); ``False``: none;
        a callable is called as ``progress(done, total, label)`` after each
        step.

    Returns
    -------
    CandidateList
        The candidates in the order fitted; ``.skipped`` maps each family
        that does not apply to the reason. When ``families`` was given
        explicitly, a skipped family also raises a ``UserWarning``.

    Notes
    -----
    Large samples: the mixture's EM runs on linearly binned data above 5000
    points, the KDE uses linear binning above 2000 points, the triangular
    law's end search uses at most 20 000 order statistics; all fits' final
    parameters and log-likelihoods use every point.

    Memory: every fit uses every point, but its sums over the data run in
    blocks of 2^18 points (log-likelihoods, the Gumbel and Weibull likelihood
    equations, the triangular profile, the binning), so a fit holds at most a
    few copies of the data (scipy's own ``gumbel_r.fit`` holds about seven).
    Adding block sums instead of summing once changes results only by
    rounding: on data of at most 2^18 points nothing changes, and on more
    the parameters agree with scipy's fit on the whole array to a relative
    1e-12 (``tests/judging/test_fit.py``).

    Examples
    --------
    >>> x = np.random.default_rng(3).gamma(4.0, 2.0, 500)
    >>> cands = fit_candidates(x, rng=0)
    >>> sorted(cands.skipped)
    ['beta']
    >>> best = min(cands, key=lambda c: c.aic)
    >>> best.name
    'gamma'
    """
    x = as_data(data)
    bnd = check_bounds(bounds, x)
    explicit = families is not None
    if families is None:
        fams: list[str] = list(FAMILIES)
    else:
        if isinstance(families, str):
            raise fail(
                "families must be a sequence of names",
                f"the string {families!r}",
                f"Wrap it in a list: families=[{families!r}].",
                field="families",
                value=families,
            )
        fams = [check_family(f, field=f"families[{i}]") for i, f in enumerate(families)]
    ks = [
        integer(kk, field=f"mixtures[{i}]", low=1, example="mixtures=(1, 2, 3)")
        for i, kk in enumerate(mixtures)
    ]
    kde_rule = choice(kde, field="kde", options=(True, False, None, "scott", "silverman"))
    rule = "scott" if kde_rule is True else (kde_rule or None)
    gen = np.random.default_rng(rng)
    total = len(fams) + len(ks) + (rule is not None)
    report = Progress(progress, total, title="fitting")
    out = CandidateList()
    done = 0
    for f in fams:
        reason = not_applicable(f, x, bnd)
        if reason is None:
            try:
                out.append(fit_registered(f, x, bnd))
            except (ValueError, RuntimeError, FloatingPointError, OverflowError) as err:
                out.skipped[f] = f"fit failed: {err}"
        else:
            out.skipped[f] = reason
        done += 1
        report(done, f)
    mix: list[Candidate] = []
    for kk in ks:
        label = f"mixture k={kk}"
        if kk > x.size // 2:
            out.skipped[label] = f"needs at least {2 * kk} observations; got {x.size}"
        else:
            try:
                mix.append(fit_mixture(x, kk, starts=10, gen=gen, tol=1e-10, max_iter=2000))
            except (ValueError, FloatingPointError, OverflowError) as err:
                out.skipped[label] = f"fit failed: {err}"
        done += 1
        report(done, label)
    if mix:
        best = min(mix, key=lambda c: c.bic)
        table = ", ".join(f"k={int((c.n_params + 1) // 3)}: {c.bic:.2f}" for c in mix)
        out.append(best.renote(f"{best.notes}; k chosen by BIC ({table})"))
    if rule is not None:
        try:
            out.append(fit_kde_to(x, rule))
        except (ValueError, FloatingPointError, OverflowError) as err:
            out.skipped["kde"] = f"fit failed: {err}"
        done += 1
        report(done, "kde")
    _warn_if_few(x.size, out)
    if explicit and out.skipped:
        warnings.warn(
            "Skipped: " + "; ".join(f"{k}: {v}" for k, v in out.skipped.items()),
            UserWarning,
            stacklevel=2,
        )
    return out
