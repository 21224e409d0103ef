"""Goodness-of-fit metrics and the comparison table.

Everything here works on any *model* with a ``cdf`` (and, for the quadrature
and the holdout score, a ``ppf`` and a density): a fitted
:class:`~cdfsketch.fit.Candidate`, a :class:`~cdfsketch.Sketch`, an
:class:`~cdfsketch.empirical.ECDF` (the resampled data as a candidate) or,
for instance, a frozen ``scipy.stats`` distribution.

Integrals over ``x`` (the 1-Wasserstein distance, the CRPS) are computed by
Gauss–Legendre quadrature on the pieces between consecutive data points,
split further at the model's own kinks and jumps (knots, atoms, finite
support ends), at the point where the model's CDF crosses the ECDF's level
and, where a piece carries more than 1/64 of the model's probability, at
intermediate quantiles. The unbounded tails are cut at the quantiles
``F(y₁)·2⁻ᵏ`` (and the mirror image above), k = 1…128, so each tail piece
holds half the mass of the previous one (after pieces of 1/64 while the tail
holds more than that); a tail that has not converged by
then (a model without a finite mean, for the W1 distance) gives ``inf``.

scipy is imported inside the functions that need it.
"""

from __future__ import annotations

import csv
import html
import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from ._progress import Progress, ProgressCallback
from .empirical import ECDF, as_data

__all__ = [
    "ComparisonTable",
    "anderson_darling",
    "compare",
    "cramer_von_mises",
    "crps",
    "ks_distance",
    "wasserstein1",
]

ArrayLike = Any
_GL_T, _GL_W = np.polynomial.legendre.leggauss(6)
_TAIL_STEPS = 128


# ====================================================================== adapter
@dataclass
class _Scored:
    """A model seen through what the metrics need."""

    label: str
    kind: str
    cdf: Callable[[np.ndarray], np.ndarray]
    sf: Callable[[np.ndarray], np.ndarray]
    ppf: Callable[[np.ndarray], np.ndarray]
    isf: Callable[[np.ndarray], np.ndarray] | None
    logscore: Callable[[np.ndarray], tuple[np.ndarray, int]] | None
    breakpoints: np.ndarray
    atoms: np.ndarray
    continuous: bool
    source: Any

    def cdf_left(self, x: np.ndarray) -> np.ndarray:
        return np.asarray(self.cdf(np.nextafter(x, -np.inf)), dtype=float)


def _arr(f: Callable[[np.ndarray], Any]) -> Callable[[np.ndarray], np.ndarray]:
    return lambda v: np.asarray(f(np.asarray(v, dtype=float)), dtype=float)


def _as_scored(obj: Any, index: int | None = None) -> _Scored:
    from .fit import Candidate
    from .sketch import Sketch

    where = "" if index is None else f"candidates[{index}] "
    if isinstance(obj, Candidate):
        mdl = obj._model
        bp = np.asarray(getattr(mdl, "breakpoints", np.empty(0)), dtype=float)

        def logscore_c(y: np.ndarray) -> tuple[np.ndarray, int]:
            return np.asarray(mdl.logpdf(y), dtype=float), 0

        return _Scored(
            obj.name,
            obj.family,
            _arr(mdl.cdf),
            _arr(mdl.sf),
            _arr(mdl.ppf),
            _arr(mdl.isf),
            logscore_c,
            bp,
            np.empty(0),
            True,
            obj,
        )
    if isinstance(obj, Sketch):
        atoms = np.array([a.x for a in obj.atoms], dtype=float)
        masses = np.array([a.mass for a in obj.atoms], dtype=float)
        lo, hi = obj.support
        bp = np.unique(np.r_[obj.x, [v for v in (lo, hi) if math.isfinite(v)]])

        def logscore_s(y: np.ndarray) -> tuple[np.ndarray, int]:
            with np.errstate(divide="ignore"):
                out = np.log(np.asarray(obj.pdf(y), dtype=float))
            hits = 0
            for a, m in zip(atoms, masses, strict=True):
                at = y == a
                hits += int(at.sum())
                out[at] = math.log(m)
            return out, hits

        return _Scored(
            obj.name or "sketch",
            "sketch",
            _arr(obj.cdf),
            _arr(obj.sf),
            _arr(obj.ppf),
            None,
            logscore_s,
            bp,
            atoms,
            atoms.size == 0,
            obj,
        )
    if isinstance(obj, ECDF):
        xs = np.asarray(obj.x, dtype=float)
        mass = np.diff(np.r_[0.0, obj.p])

        def logscore_e(y: np.ndarray) -> tuple[np.ndarray, int]:
            i = np.clip(np.searchsorted(xs, y), 0, xs.size - 1)
            hit = xs[i] == y
            with np.errstate(divide="ignore"):
                out = np.where(hit, np.log(mass[i]), -np.inf)
            return out, int(hit.sum())

        return _Scored(
            "resampled data",
            "ecdf",
            _arr(obj.cdf),
            _arr(lambda v: 1.0 - obj.cdf(v)),
            _arr(obj.ppf),
            None,
            logscore_e,
            xs,
            xs,
            False,
            obj,
        )
    if not (callable(getattr(obj, "cdf", None)) and callable(getattr(obj, "ppf", None))):
        raise TypeError(
            f"{where}must be a Candidate, a Sketch, an ECDF or an object with cdf() and ppf() "
            f"methods; got {type(obj).__name__}. Fit one with fit_candidates() or wrap it."
        )
    bp: list[float] = []
    support = getattr(obj, "support", None)
    if callable(support):
        try:
            bp = [float(v) for v in support() if math.isfinite(float(v))]
        except (TypeError, ValueError):
            bp = []
    logscore_o = None
    if callable(getattr(obj, "logpdf", None)) or callable(getattr(obj, "pdf", None)):

        def logscore_o(y: np.ndarray) -> tuple[np.ndarray, int]:
            with np.errstate(divide="ignore"):
                if callable(getattr(obj, "logpdf", None)):
                    return np.asarray(obj.logpdf(y), dtype=float), 0
                return np.log(np.asarray(obj.pdf(y), dtype=float)), 0

    sf = obj.sf if callable(getattr(obj, "sf", None)) else (lambda v: 1.0 - obj.cdf(v))
    isf = obj.isf if callable(getattr(obj, "isf", None)) else None
    dist = getattr(obj, "dist", None)
    label = str(getattr(obj, "name", "") or getattr(dist, "name", "") or type(obj).__name__)
    return _Scored(
        label,
        "other",
        _arr(obj.cdf),
        _arr(sf),
        _arr(obj.ppf),
        _arr(isf) if isf else None,
        logscore_o,
        np.asarray(bp, dtype=float),
        np.empty(0),
        logscore_o is not None,
        obj,
    )


def _observations(y: ArrayLike, name: str = "data") -> np.ndarray:
    """A finite, non-empty 1-D float array (a single value is allowed here)."""
    try:
        v = np.asarray(y, dtype=float)
    except (TypeError, ValueError):
        raise TypeError(f"{name} must be numbers; got {type(y).__name__}.") from None
    if v.ndim == 0:
        v = v.reshape(1)
    if v.ndim != 1:
        raise ValueError(
            f"{name} must be one-dimensional; got shape {v.shape}. Pass one column, e.g. "
            "data[:, 0]."
        )
    if v.size == 0:
        raise ValueError(f"{name} is empty; pass at least one observation.")
    bad = np.flatnonzero(~np.isfinite(v))
    if bad.size:
        i = int(bad[0])
        raise ValueError(
            f"{name} must be finite; found {name}[{i}]={float(v[i])!r}. Drop missing or infinite "
            "values first (cdfsketch.empirical.as_data drops NaN with a warning)."
        )
    return v


# ====================================================================== statistics
def _ks(m: _Scored, y: np.ndarray) -> float:
    ys = np.sort(y)
    ux = np.unique(ys)
    fm = np.searchsorted(ys, ux, side="right") / ys.size
    fm_left = np.searchsorted(ys, ux, side="left") / ys.size
    d = max(
        float(np.max(np.abs(fm - m.cdf(ux)))),
        float(np.max(np.abs(fm_left - m.cdf_left(ux)))),
    )
    if m.atoms.size:
        a = m.atoms
        d = max(
            d,
            float(np.max(np.abs(np.searchsorted(ys, a, side="right") / ys.size - m.cdf(a)))),
            float(np.max(np.abs(np.searchsorted(ys, a, side="left") / ys.size - m.cdf_left(a)))),
        )
    return d


def ks_distance(data: ArrayLike, model: Any) -> float:
    """Kolmogorov–Smirnov distance ``sup_x |F_n(x) - F(x)|``.

    Exact for any model: both sides of every data point and of every known
    atom of the model are checked. A distance only: its usual p-value does
    not hold when ``model`` was fitted or tuned on ``data``.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> ks_distance([0.5, 1.5], Sketch([0, 2], [0, 1]))
    0.25
    """
    return _ks(_as_scored(model), _observations(data))


def _pit(m: _Scored, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    ys = np.sort(y)
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        u = np.asarray(m.cdf(ys), dtype=float)
        logu = np.log(u)
        log1u = np.log(np.asarray(m.sf(ys), dtype=float))
    return u, logu, log1u


def anderson_darling(data: ArrayLike, model: Any) -> float:
    """Anderson–Darling statistic ``A² = -n - Σ (2i-1)/n [ln u_i + ln(1 - u_{n+1-i})]``.

    ``u_i = F(y_(i))``; ``inf`` when a data point lies where ``F`` is 0 or 1
    (outside the model's support). The formula is the continuous-case one; for
    a model with atoms it is a distance without a null distribution.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(anderson_darling([0.25, 0.75], Sketch([0, 1], [0, 1])), 6)
    0.249341
    """
    return _ad_raw(_as_scored(model), _observations(data))


def cramer_von_mises(data: ArrayLike, model: Any) -> float:
    """Cramér–von Mises statistic ``T = 1/(12n) + Σ (u_i - (2i-1)/(2n))²``.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(cramer_von_mises([0.25, 0.75], Sketch([0, 1], [0, 1])), 6)
    0.041667
    """
    return _cvm_raw(_as_scored(model), _observations(data))


# ====================================================================== quadrature
def _gl(
    m: _Scored, a: np.ndarray, b: np.ndarray, level: np.ndarray, upper: bool = False
) -> tuple[np.ndarray, np.ndarray]:
    """∫_a^b |G - level| and ∫_a^b (G - level)² per piece; ``G`` is F (or 1 - F above)."""
    half = 0.5 * (b - a)
    x = (0.5 * (a + b))[:, None] + half[:, None] * _GL_T
    g = m.sf(x) if upper else m.cdf(x)
    d = np.asarray(g, dtype=float) - level[:, None]
    return half * (np.abs(d) @ _GL_W), half * ((d * d) @ _GL_W)


def _split(m: _Scored, pts: np.ndarray, level: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Add crossing points and intermediate quantiles inside the pieces ``[pts_j, pts_j+1)``."""
    a, b = pts[:-1], pts[1:]
    fa = m.cdf(a)
    fb = m.cdf_left(b)
    extra = []
    cross = (fa - level) * (fb - level) < 0
    if cross.any():
        c = np.asarray(m.ppf(level[cross]), dtype=float)
        extra.append(np.clip(c, a[cross], b[cross]))
    wide = np.flatnonzero(fb - fa > 1.0 / 64)
    for j in wide:
        k = math.ceil((fb[j] - fa[j]) * 64)
        q = np.asarray(m.ppf(np.linspace(fa[j], fb[j], k + 1)[1:-1]), dtype=float)
        extra.append(q[(q > a[j]) & (q < b[j])])
    if extra:
        allp = np.unique(np.concatenate([pts, *extra]))
        allp = allp[np.isfinite(allp)]
        idx = np.searchsorted(pts, allp, side="right") - 1
        return allp, level[np.clip(idx, 0, level.size - 1)][:-1]
    return pts, level


def _tail(m: _Scored, edge: float, mass: float, upper: bool) -> tuple[float, float]:
    """∫ of G and G² over the tail beyond ``edge`` (G = F below, 1 - F above)."""
    if mass <= 0:
        return 0.0, 0.0
    step = 1.0 / 64
    coarse = np.arange(mass - step, step, -step) if mass > 2 * step else np.empty(0)
    start = min(mass, step)
    q = np.concatenate((coarse, start * 0.5 ** np.arange(1, _TAIL_STEPS + 1)))
    if upper:
        if m.isf is not None:
            xs = np.asarray(m.isf(q), dtype=float)
        else:
            qq = q[1.0 - q < 1.0]
            xs = np.asarray(m.ppf(1.0 - qq), dtype=float)
        bp = m.breakpoints[m.breakpoints > edge]
    else:
        xs = np.asarray(m.ppf(q), dtype=float)
        bp = m.breakpoints[m.breakpoints < edge]
    pts = np.unique(np.concatenate(([edge], xs[np.isfinite(xs)], bp)))
    if upper:
        pts = pts[pts >= edge]
    else:
        pts = pts[pts <= edge][::-1]
    if pts.size < 2:
        return 0.0, 0.0
    a, b = np.minimum(pts[:-1], pts[1:]), np.maximum(pts[:-1], pts[1:])
    i1, i2 = _gl(m, a, b, np.zeros(a.size), upper)
    tot1, tot2 = float(i1.sum()), float(i2.sum())
    far = pts[-1]
    rest = float(m.sf(far)) if upper else float(m.cdf_left(np.array([far]))[0])
    if rest > 0:
        # not at the support's end: the last pieces must have become negligible
        if i1[-4:].sum() > 1e-6 * tot1:
            tot1 = math.inf
        if i2[-4:].sum() > 1e-6 * tot2:
            tot2 = math.inf
    return tot1, tot2


def _integrals(m: _Scored, y: np.ndarray, w: np.ndarray | None = None) -> tuple[float, float]:
    """``∫|F - F_n| dx`` and ``∫(F - F_n)² dx`` for the (weighted) ECDF ``F_n`` of ``y``."""
    order = np.argsort(y, kind="stable")
    ys = y[order]
    ws = np.ones(ys.size) if w is None else w[order]
    ux, start = np.unique(ys, return_index=True)
    cum = np.cumsum(ws) / ws.sum()
    levels = cum[np.r_[start[1:] - 1, ys.size - 1]]
    levels[-1] = 1.0
    inner = m.breakpoints[(m.breakpoints > ux[0]) & (m.breakpoints < ux[-1])]
    pts = np.unique(np.r_[ux, inner])
    lev = levels[np.searchsorted(ux, pts, side="right") - 1]
    tot1 = tot2 = 0.0
    if pts.size > 1:
        pts, lev_int = _split(m, pts, lev[:-1])
        i1, i2 = _gl(m, pts[:-1], pts[1:], lev_int)
        tot1, tot2 = float(i1.sum()), float(i2.sum())
    lo = float(m.cdf_left(ux[:1])[0])
    hi = float(m.sf(ux[-1:])[0])
    l1, l2 = _tail(m, float(ux[0]), lo, upper=False)
    u1, u2 = _tail(m, float(ux[-1]), hi, upper=True)
    return tot1 + l1 + u1, tot2 + l2 + u2


def _spread(y: np.ndarray, w: np.ndarray | None = None) -> float:
    """``∫ F_n (1 - F_n) dx`` for the (weighted) ECDF of ``y`` (exact)."""
    order = np.argsort(y, kind="stable")
    ys = y[order]
    ws = np.ones(ys.size) if w is None else w[order]
    cum = np.cumsum(ws) / ws.sum()
    return float(np.sum(np.diff(ys) * cum[:-1] * (1.0 - cum[:-1])))


def wasserstein1(data: ArrayLike, model: Any, *, weights: ArrayLike | None = None) -> float:
    """1-Wasserstein distance ``∫ |F_n(x) - F(x)| dx`` between the data's ECDF and a model.

    Parameters
    ----------
    data : array_like
        Observations.
    model : Candidate, Sketch, ECDF or object with cdf/ppf
        The model (an :class:`~cdfsketch.empirical.ECDF` gives the distance
        between two samples).
    weights : array_like, optional
        Non-negative weights of the observations.

    Examples
    --------
    >>> from cdfsketch.empirical import ECDF
    >>> wasserstein1([0, 1, 3], ECDF([5, 6, 8]))
    5.0
    """
    y = _observations(data)
    w = None
    if weights is not None:
        w = _observations(weights, "weights")
        if w.size != y.size:
            raise ValueError(
                f"weights must match data in length; got {w.size} weights for {y.size} values."
            )
        if (w < 0).any() or w.sum() <= 0:
            i = int(np.flatnonzero(w < 0)[0]) if (w < 0).any() else 0
            raise ValueError(
                f"weights must be ≥ 0 with a positive sum; found weights[{i}]={float(w[i])!r}."
            )
    return _integrals(_as_scored(model), y, w)[0]


def crps(data: ArrayLike, model: Any) -> float:
    """Mean continuous ranked probability score of ``model`` over the observations ``data``.

    The argument order ``(data, model)`` is the same as for the other metrics.

    ``CRPS(F, y) = ∫ (F(x) - 1{x ≥ y})² dx`` (Gneiting & Raftery 2007);
    averaged over the observations it equals ``∫ (F - F_n)² dx + ∫ F_n(1 - F_n) dx``
    with ``F_n`` their ECDF, which is what is computed (the second term
    exactly, the first by the quadrature described in the module notes).
    Finite for models with atoms and gaps; lower is better.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> round(crps(0.5, Sketch([0, 1], [0, 1])), 6)
    0.083333
    """
    v = _observations(data, "data")
    return _integrals(_as_scored(model), v)[1] + _spread(v)


# ====================================================================== table
_COLUMNS = (
    "name",
    "kind",
    "n_params",
    "aic",
    "bic",
    "ks",
    "ad",
    "cvm",
    "w1",
    "crps",
    "dkw_excursion",
    "holdout_fit",
    "log_score",
    "n_outside",
    "n_at_atoms",
    "crps_holdout",
    "ks_holdout",
    "ks_holdout_pvalue",
)

_COLUMN_NOTES = {
    "ks": "Kolmogorov–Smirnov distance to all the data (a distance: no p-value, the "
    "candidates were fitted or tuned on these data)",
    "ad": "Anderson–Darling statistic on all the data (distance only)",
    "cvm": "Cramér–von Mises statistic on all the data (distance only)",
    "w1": "1-Wasserstein distance ∫|F - F_n| dx",
    "crps": "mean CRPS on all the data (Gneiting & Raftery 2007)",
    "dkw_excursion": "largest distance outside the DKW band (≤ 0: inside)",
    "holdout_fit": "how the held-out score was made",
    "log_score": "mean log density of the held-out points under the training fit "
    "(-inf if any held-out point has zero density; see n_outside)",
    "n_outside": "held-out points with zero density (outside the support, in a gap, or, for "
    "the resampled data, not equal to a training value)",
    "n_at_atoms": "held-out points scored by an atom's mass (mixed density: counting measure "
    "at atoms, Lebesgue elsewhere; not comparable with a density value)",
    "crps_holdout": "mean CRPS of the held-out points under the training fit",
    "ks_holdout": "KS distance of the held-out points to the training fit",
    "ks_holdout_pvalue": "exact KS p-value (scipy.stats.ks_1samp) of the held-out points "
    "against a continuous candidate refit on the training split only; empty where "
    "not valid",
}


def format_cell(v: Any) -> str:
    """A table cell as text: 6 significant digits, ``inf``/``-inf``, blank for missing.

    Examples
    --------
    >>> format_cell(0.123456789), format_cell(float("-inf")), format_cell(None)
    ('0.123457', '-inf', '')
    """
    if v is None:
        return ""
    if isinstance(v, float):
        if math.isnan(v):
            return ""
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return f"{v:.6g}"
    return str(v)


class ComparisonTable:
    """Rows of metrics, one per candidate; renders as HTML in a notebook.

    Attributes
    ----------
    rows : list of dict
        One dict per candidate, keyed by :attr:`columns`.
    columns : tuple of str
        Column names.
    notes : dict
        What each column means and when its p-value is valid.
    info : dict
        ``n``, ``n_train``, ``n_test``, ``level``, ``eps`` (the DKW half-width).
    """

    def __init__(
        self,
        rows: Iterable[dict[str, Any]],
        *,
        columns: Sequence[str] = _COLUMNS,
        info: dict[str, Any] | None = None,
    ) -> None:
        self.columns = tuple(columns)
        self.rows = [dict(r) for r in rows]
        self.notes = {k: v for k, v in _COLUMN_NOTES.items() if k in self.columns}
        self.info = dict(info or {})

    def __len__(self) -> int:
        return len(self.rows)

    def column(self, name: str) -> list[Any]:
        """The values of one column."""
        self._check_column(name)
        return [r[name] for r in self.rows]

    def _check_column(self, name: str) -> None:
        if name not in self.columns:
            raise KeyError(f"No column {name!r}; the columns are {list(self.columns)}.")

    def sort_by(self, column: str, *, ascending: bool = True) -> ComparisonTable:
        """A new table sorted by ``column``; missing values (None, NaN) go last.

        Examples
        --------
        >>> t = ComparisonTable([{"name": "a", "ks": 0.3}, {"name": "b", "ks": 0.1}],
        ...                     columns=("name", "ks"))
        >>> [r["name"] for r in t.sort_by("ks").rows]
        ['b', 'a']
        """
        self._check_column(column)

        def missing(v: Any) -> bool:
            return v is None or (isinstance(v, float) and math.isnan(v))

        have = [r for r in self.rows if not missing(r[column])]
        rest = [r for r in self.rows if missing(r[column])]
        have.sort(key=lambda r: r[column], reverse=not ascending)
        return ComparisonTable(have + rest, columns=self.columns, info=self.info)

    def __repr__(self) -> str:
        body = [[format_cell(r[c]) for c in self.columns] for r in self.rows]
        cells = [list(self.columns), *body]
        widths = [max(len(row[j]) for row in cells) for j in range(len(self.columns))]
        lines = ["  ".join(s.ljust(wd) for s, wd in zip(row, widths, strict=True)) for row in cells]
        return "\n".join(lines)

    def _repr_html_(self) -> str:
        head = "".join(
            f'<th title="{html.escape(self.notes.get(c, ""))}">{html.escape(c)}</th>'
            for c in self.columns
        )
        body = "".join(
            "<tr>"
            + "".join(f"<td>{html.escape(format_cell(r[c]))}</td>" for c in self.columns)
            + "</tr>"
            for r in self.rows
        )
        info = ", ".join(
            f"{html.escape(str(k))}={html.escape(str(v))}" for k, v in self.info.items()
        )
        return (
            f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"
            f"<p>{info}. Hover a column name for its meaning; p-values appear only where "
            "valid.</p>"
        )

    def to_pandas(self) -> Any:
        """A ``pandas.DataFrame`` (pandas must be installed; it is not a dependency)."""
        try:
            import pandas as pd
        except ImportError:
            raise ImportError(
                "to_pandas() needs pandas, which is not a dependency of cdfsketch. Install it "
                "with `pip install pandas`, or use .rows / .to_csv()."
            ) from None
        return pd.DataFrame(self.rows, columns=list(self.columns))

    def to_csv(self, path: Any) -> None:
        """Write the table as CSV (``inf``/``-inf`` as text, missing values empty)."""
        with open(path, "w", newline="", encoding="utf-8") as fh:
            out = csv.writer(fh)
            out.writerow(self.columns)
            for r in self.rows:
                out.writerow(
                    [
                        format_cell(r[c])
                        if isinstance(r[c], float)
                        else ("" if r[c] is None else r[c])
                        for c in self.columns
                    ]
                )


# ====================================================================== compare
def _holdout_model(m: _Scored, train: np.ndarray, seed: int) -> tuple[_Scored | None, str, bool]:
    """The model used for the held-out score, how it was made, and whether p is valid."""
    from .fit import Candidate

    src = m.source
    if isinstance(src, Candidate):
        try:
            return _as_scored(src.refit(train, rng=seed)), "refit on training split", True
        except ValueError as err:
            return None, f"refit failed: {err}", False
    if m.kind == "sketch":
        return m, "not refit (judgement)", False
    if m.kind == "ecdf":
        return _as_scored(ECDF(train)), "resampled training split", False
    return m, "not refit (fixed)", False


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
    as "the resampled data", or anything with ``cdf`` and ``ppf``):

    * on all the data: KS distance, Anderson–Darling and Cramér–von Mises
      statistics, 1-Wasserstein distance, mean CRPS, and the largest
      excursion outside the DKW band at ``level`` (≤ 0: inside). These are
      reported as distances: no p-value, since the candidates were fitted or
      tuned on these same data and the usual null distributions do not hold.
    * on a seeded holdout split (``holdout`` of the points; ``None`` or 0 to
      skip): a Candidate is refit on the training part (same family, same
      k, same bandwidth rule) and the held-out part is scored — mean log
      density, mean CRPS, KS distance and, because the refit never saw those
      points and is continuous, the exact KS p-value (labelled
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
    never dropped. For a Sketch with atoms the log score of a point at an
    atom is the log of the atom's mass (a mixed density: counting measure at
    atoms, Lebesgue elsewhere), counted in ``n_at_atoms``; such values are
    not comparable with a continuous candidate's density.

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
        Seed for the split and the refits.
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
    import scipy.stats as st

    from .empirical import dkw_eps

    y = as_data(data)
    n = y.size
    if isinstance(candidates, str) or not isinstance(candidates, Iterable):
        raise TypeError(
            f"candidates must be an iterable of models; got {type(candidates).__name__}. "
            "Pass a list, e.g. [sketch] or fit_candidates(data)."
        )
    models = [_as_scored(c, i) for i, c in enumerate(candidates)]
    if not models:
        raise ValueError("candidates is empty; pass at least one model to compare.")
    report = Progress(progress, len(models), title="scoring")
    band = ECDF(y).band(level=level)
    gen = np.random.default_rng(rng)
    n_test = 0
    if holdout is not None and holdout != 0:
        if isinstance(holdout, bool) or not isinstance(holdout, int | float):
            raise TypeError(f"holdout must be a fraction in (0, 1) or None; got {holdout!r}.")
        if not 0 < holdout < 1:
            raise ValueError(
                f"holdout must be a fraction strictly between 0 and 1 (or None to skip); got "
                f"{holdout!r}."
            )
        n_test = round(holdout * n)
        if n_test < 1 or n - n_test < 2 or np.unique(y).size < 3:
            raise ValueError(
                f"holdout={holdout!r} of {n} points leaves {n - n_test} for training and "
                f"{n_test} held out; need at least 2 and 1 (and 3 distinct values). Use more "
                "data or holdout=None."
            )
    perm = gen.permutation(n)
    test, train = y[perm[:n_test]], y[perm[n_test:]]
    if n_test and np.unique(train).size < 2:
        raise ValueError("The training split holds a single distinct value; use holdout=None.")
    seed = int(gen.integers(2**63 - 1))
    rows = []
    for m in models:
        src = m.source
        w1, l2 = _integrals(m, y)
        row: dict[str, Any] = {
            "name": m.label,
            "kind": m.kind,
            "n_params": getattr(src, "n_params", None)
            if m.kind not in ("sketch", "ecdf")
            else None,
            "aic": getattr(src, "aic", None) if hasattr(src, "loglik") else None,
            "bic": getattr(src, "bic", None) if hasattr(src, "loglik") else None,
            "ks": _ks(m, y),
            "ad": _ad_raw(m, y),
            "cvm": _cvm_raw(m, y),
            "w1": w1,
            "crps": l2 + _spread(y),
            "dkw_excursion": band.excursion(m.cdf, left_cdf=m.cdf_left),
        }
        row.update(dict.fromkeys(_COLUMNS[11:], None))
        if n_test:
            hm, how, p_ok = _holdout_model(m, train, seed)
            row["holdout_fit"] = how
            if hm is not None:
                if hm.logscore is not None:
                    s, hits = hm.logscore(test)
                    outside = int(np.sum(~(s > -np.inf)))
                    row["log_score"] = -math.inf if outside else float(np.mean(s))
                    row["n_outside"] = outside
                    row["n_at_atoms"] = hits
                _, h2 = _integrals(hm, test)
                row["crps_holdout"] = h2 + _spread(test)
                row["ks_holdout"] = _ks(hm, test)
                if p_ok and hm.continuous:
                    row["ks_holdout_pvalue"] = float(st.ks_1samp(test, hm.cdf).pvalue)
        rows.append(row)
        report(len(rows), m.label)
    info = {
        "n": n,
        "n_train": n - n_test,
        "n_test": n_test,
        "level": level,
        "eps": round(dkw_eps(n, level=level), 6),
    }
    return ComparisonTable(rows, info=info)


def _ad_raw(m: _Scored, y: np.ndarray) -> float:
    n = y.size
    _, logu, log1u = _pit(m, y)
    i = np.arange(1, n + 1)
    return float(-n - np.sum((2 * i - 1) * (logu + log1u[::-1])) / n)


def _cvm_raw(m: _Scored, y: np.ndarray) -> float:
    n = y.size
    u, _, _ = _pit(m, y)
    i = np.arange(1, n + 1)
    return float(1.0 / (12 * n) + np.sum((u - (2 * i - 1) / (2 * n)) ** 2))
