"""The usual three-point estimate (PERT or triangular) as a sketch.

scipy (the ``fit`` extra) is imported when :func:`from_three_points` is
called: the exact PERT/triangular CDF and, for ``coverage < 1``, the solved
ends come from it.
"""

from __future__ import annotations

import math
import warnings
from typing import Any, Literal

import numpy as np

from .._extras import need
from .._numfmt import significant
from .._validate import JudgementError, fail
from ..sketch import Sketch
from ._common import (
    DEFAULT_TOLERANCE,
    finite,
    read_choice,
    read_count,
    read_labels,
    read_tolerance,
    warn_short,
)
from .reknot import reknot

__all__ = ["MOMENT_TOLERANCE", "from_three_points"]

#: Largest relative error of the sketch's mean and variance against the exact
#: shape's (the mean's error is measured in standard deviations). Issue: a
#: PERT sketch states the PERT moments it was built from to within 0.1 %; this
#: keeps a twofold margin.
MOMENT_TOLERANCE = 5e-4
#: Refinement stops tightening the |ΔF| tolerance below this.
_FLOOR_TOLERANCE = 1e-7


def _fmt(v: float) -> str:
    return significant(v, 6)


def _moment_matched(
    dist: Any, n0: int, cap: int, tol: float, interpolation: str, pinned: dict[float, float]
) -> tuple[Sketch, float, float, float]:
    """Re-knot ``dist`` at ``tol``, tightening it until mean and variance match.

    Returns the sketch, its measured max |ΔF|, the tolerance used and the
    largest relative moment error (see :data:`MOMENT_TOLERANCE`).
    """
    mean, var = float(dist.mean()), float(dist.var())
    sd = math.sqrt(var)
    best: tuple[Sketch, float, float, float] | None = None
    while True:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)  # reported once, by the caller
            sk = reknot(
                dist, knots=n0, interpolation=interpolation, tolerance=tol, max_knots=cap,
                pinned=pinned,
            )  # fmt: skip
        achieved = float(sk.provenance["extra"]["max_abs_cdf_error"])
        moment_error = max(abs(sk.mean() - mean) / sd, abs(sk.var() / var - 1.0))
        if best is None or moment_error < best[3]:
            best = (sk, achieved, tol, moment_error)
        if moment_error <= MOMENT_TOLERANCE or tol <= _FLOOR_TOLERANCE or achieved > tol:
            return best  # met, or refinement stopped at max_knots: keep the closest
        tol = max(tol / 3.0, _FLOOR_TOLERANCE)


def _three_point_dist(shape: str, a: float, m: float, b: float) -> Any:
    stats = need("fit", "scipy.stats")
    if shape == "pert":
        # Malcolm et al. 1959 with λ = 4: Beta(1 + 4(m−a)/(b−a), 1 + 4(b−m)/(b−a)) on [a, b]
        alpha = 1.0 + 4.0 * (m - a) / (b - a)
        beta = 1.0 + 4.0 * (b - m) / (b - a)
        return stats.beta(alpha, beta, loc=a, scale=b - a)
    return stats.triang((m - a) / (b - a), loc=a, scale=b - a)


def _solve_ends(shape: str, low: float, mode: float, high: float, coverage: float):
    """Ends ``a < low``, ``b > high`` whose distribution with this mode has
    ``F(low) = (1 − coverage)/2`` and ``F(high) = (1 + coverage)/2``.

    Solved with scipy.optimize.root (Powell hybrid) on ``log((low − a)/w)``
    and ``log((b − high)/w)``, ``w = high − low``, from several starts.
    """
    optimize = need("fit", "scipy.optimize")

    w = high - low
    pl, ph = (1.0 - coverage) / 2.0, (1.0 + coverage) / 2.0

    def ends(theta):
        return low - w * math.exp(theta[0]), high + w * math.exp(theta[1])

    def residual(theta):
        if np.any(np.abs(theta) > 50):
            return np.array([1.0, 1.0])
        a, b = ends(theta)
        d = _three_point_dist(shape, a, mode, b)
        return np.array([float(d.cdf(low)) - pl, float(d.cdf(high)) - ph])

    best = None
    for start in ((-1.0, -1.0), (-2.0, -2.0), (0.0, 0.0), (-3.0, 0.0), (0.0, -3.0), (1.0, 1.0)):
        sol = optimize.root(residual, np.array(start), method="hybr", tol=1e-14)
        r = float(np.max(np.abs(residual(sol.x))))
        if best is None or r < best[0]:
            best = (r, sol.x)
        if r < 1e-11:
            break
    assert best is not None
    if best[0] > 1e-9:
        raise JudgementError(
            f"No {shape} distribution with mode {_fmt(mode)} has {_fmt(low)} and {_fmt(high)} "
            f"as its {pl:.3g} and {ph:.3g} quantiles (best residual {best[0]:.2g}). Check the "
            "three points and the coverage, or state the ends (coverage=1)."
        )
    return ends(best[1])


def from_three_points(
    low: float,
    mode: float,
    high: float,
    *,
    shape: Literal["pert", "triangular"] = "pert",
    coverage: float = 1.0,
    knots: int = 21,
    interpolation: Literal["linear", "pchip"] = "pchip",
    tolerance: float | None = None,
    max_knots: int = 400,
    name: str = "",
    units: str = "",
    author: str = "",
    rationale: str = "",
) -> Sketch:
    """The usual three-point estimate (PERT or triangular) as a sketch.

    ``shape="pert"`` is the PERT distribution of Malcolm et al. (1959) with
    the standard λ = 4: a Beta on ``[a, b]`` with ``α = 1 + 4(m − a)/(b − a)``,
    ``β = 1 + 4(b − m)/(b − a)`` (mean ``(a + 4m + b)/6``).
    ``shape="triangular"`` is the triangular distribution on ``[a, b]`` with
    mode ``m``.

    With ``coverage=1`` (the default) ``low`` and ``high`` are the ends
    ``a, b``. With ``coverage < 1`` they are the ``(1 − coverage)/2`` and
    ``(1 + coverage)/2`` quantiles (``coverage=0.9``: the 5 % and 95 %
    points), and the ends are solved: ``a < low`` and ``b > high`` such that
    the shape with the given mode has those two quantiles
    (``scipy.optimize.root``, Powell hybrid method; residual ≤ 1e-9 or a
    :class:`JudgementError`). The mass beyond ``low`` / ``high`` is then held
    by the shape's own tails down to the solved ends — a model choice not
    stated by the expert, which the summary flags.

    Knots sit at quantiles of the exact distribution (denser in the tails,
    plus the mode and the stated points exactly), refined until the check
    grid finds ``|ΔF| ≤ tolerance`` (:func:`~cdfsketch.elicit.reknot`); the
    achieved value is ``provenance["extra"]["max_abs_cdf_error"]``. Then the
    sketch's mean and variance are compared with the exact shape's
    (``scipy.stats.beta`` / ``triang``); while either is off by more than
    :data:`MOMENT_TOLERANCE` (relative; the mean in standard deviations) the
    tolerance is divided by 3 and the sketch rebuilt, so the summary states
    the moments the estimate was built from to within 0.1 %. The exact
    moments and the error reached are in ``extra["moments"]`` and
    ``extra["max_moment_error"]``; ``extra["tolerance"]`` is the tolerance
    finally used.

    Parameters
    ----------
    low, mode, high : float
        ``low ≤ mode ≤ high``, ``low < high``.
    shape : {"pert", "triangular"}
        PERT (Beta, λ = 4) or triangular.
    coverage : float
        Probability between ``low`` and ``high``, in (0, 1].
    knots : int
        Initial number of knots (≥ 3).
    interpolation : {"linear", "pchip"}
        How the sketch runs between knots.
    tolerance : float, optional
        Largest accepted ``|ΔF|``; ``None`` means ``1e-3``.
    max_knots : int
        Stop refining at this many knots.
    name, units, author, rationale : str
        Recorded on the sketch and in its provenance.

    Returns
    -------
    Sketch
        Provenance ``method="three-point estimate (pert)"`` or
        ``"... (triangular)"``; ``extra`` holds the three points, coverage,
        solved ends and achieved error.

    Examples
    --------
    >>> s = from_three_points(2, 5, 14)
    >>> round(s.mean(), 2)  # (2 + 4·5 + 14)/6
    6.0
    >>> s = from_three_points(2, 5, 14, coverage=0.9)
    >>> round(float(s.cdf(2)), 12), round(float(s.cdf(14)), 12)
    (0.05, 0.95)
    """
    lo = finite(low, "low")
    m = finite(mode, "mode")
    hi = finite(high, "high")
    if not lo < hi:
        raise JudgementError(
            f"A three-point estimate needs low < high; got low={_fmt(lo)}, high={_fmt(hi)}. "
            "Swap them or widen the range."
        )
    if not lo <= m <= hi:
        raise JudgementError(
            f"The mode must lie between low and high; got low={_fmt(lo)}, mode={_fmt(m)}, "
            f"high={_fmt(hi)}. Revise the mode or the range."
        )
    read_choice(shape, ("pert", "triangular"), "shape")
    read_choice(interpolation, ("linear", "pchip"), "interpolation")
    cov = finite(coverage, "coverage")
    if not 0 < cov <= 1:
        raise fail(
            "coverage must lie in (0, 1]: the probability between low and high",
            repr(cov),
            "Use 0.9 when low and high are the 5 % and 95 % points.",
            error=JudgementError,
            field="coverage",
            value=cov,
        )
    n0 = read_count(knots, "knots", 3)
    cap = read_count(max_knots, "max_knots", n0)
    tol = read_tolerance(tolerance, DEFAULT_TOLERANCE)
    read_labels(name, units, author, rationale)
    if cov < 1:
        a, b = _solve_ends(shape, lo, m, hi, cov)
    else:
        a, b = lo, hi
    dist = _three_point_dist(shape, a, m, b)
    pl, ph = (1.0 - cov) / 2.0, (1.0 + cov) / 2.0
    pinned = {0.0: a, 1.0: b}
    pm = float(dist.cdf(m))
    if cov < 1:
        pinned.update({pl: lo, ph: hi})
    if 0 < pm < 1:
        pinned[pm] = m
    sk, achieved, used_tol, moment_error = _moment_matched(
        dist, n0, cap, tol, interpolation, pinned
    )
    warn_short(achieved, used_tol, cap, "from_three_points")
    extra: dict[str, Any] = {
        "low": lo,
        "mode": m,
        "high": hi,
        "coverage": cov,
        "shape": shape,
        "ends": [a, b],
        "tolerance": used_tol,
        "max_abs_cdf_error": achieved,
        "moments": {
            "mean": float(dist.mean()),
            "variance": float(dist.var()),
            "source": f"scipy.stats.{'beta' if shape == 'pert' else 'triang'} on the ends",
        },
        "max_moment_error": moment_error,
    }
    if cov < 1:
        extra["stated_quantiles"] = [[pl, lo], [ph, hi]]
        extra["ends_method"] = (
            "ends solved so that the shape with the stated mode has the stated points as its "
            f"{pl:.3g} and {ph:.3g} quantiles (scipy.optimize.root, hybr)"
        )
        extra["ends_stated"] = [False, False]
    prov: dict[str, Any] = {"method": f"three-point estimate ({shape})", "extra": extra}
    if author:
        prov["author"] = author
    if rationale:
        prov["rationale"] = rationale
    return sk.replace(name=name, units=units, provenance=prov)
