"""Review records, static figures and the standalone review page.

A :class:`Review` holds what a review meeting looks at — the candidates for
one input (experts' sketches, their pool, fitted families, the resampled
data), the data they are judged against, the comparison table — and, once
the group has decided, the decision. :class:`cdfsketch.ReviewBoard` is the
notebook view of a Review; this module needs no widgets:

* :func:`save_html` writes ONE self-contained HTML file (no network access:
  the page's script, the spec reader and the data are inline, and a
  Content-Security-Policy forbids every fetch). The page draws each
  candidate by evaluating its spec with ``js/spec-reader.mjs`` — the same
  arithmetic as the Python package — so fitted families travel as sketches
  with many knots, labelled as such, with the largest CDF difference stated.
* :func:`save_figure` writes PNG, SVG or PDF through matplotlib (the
  ``report`` extra, imported inside the function).

All text from users (names, units, rationale, notes) reaches the page as
JSON data and is inserted with ``textContent``, never as markup.

Only numpy is imported at module level (plus the core).
"""

from __future__ import annotations

import base64
import hashlib
import html
import json
import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np

from ._progress import check_progress
from ._version import __version__
from .empirical import ECDF, as_data
from .sketch import Atom, Sketch
from .spec import data_fingerprint, validate_spec
from .widgets import palette

__all__ = [
    "CAUTION",
    "Review",
    "ReviewCandidate",
    "page_html",
    "save_figure",
    "save_html",
    "table_html",
]

#: The usual caution about judgement-based inputs, shown on every page and figure.
CAUTION = (
    "A sketch is judgement, to be reviewed. Where it feeds safety- or money-critical "
    "decisions, local codes and licensed practice decide what is acceptable."
)
#: Knots used when a fitted family is written as a sketch (the page, the chosen spec).
FIT_KNOTS = 201
#: Tail mass beyond the outer knots of such a sketch on an unbounded side.
FIT_TAIL_MASS = 0.001
_KINDS = {
    "sketch": "judgement (sketch)",
    "pool": "pool of judgements",
    "fit": "fitted family",
    "data": "resampled data",
}
_JS_DIR = Path(__file__).resolve().parents[1] / "js"
_FIGURE_SUFFIXES = (".png", ".svg", ".pdf")


# ====================================================================== candidates
@dataclass(frozen=True, eq=False)
class ReviewCandidate:
    """One candidate as the review sees it.

    Attributes
    ----------
    name : str
        Unique name on the board.
    kind : {"sketch", "pool", "fit", "data"}
        Judgement, a pool of judgements, a fitted family, the resampled data.
    source : object
        What was given (a Sketch, a fit Candidate or an ECDF).
    sketch : Sketch
        Its sketch form: the sketch itself; for a fit ``to_sketch`` with
        :data:`FIT_KNOTS` knots; for an ECDF the exact step CDF (jumps at
        every distinct value). This is what the page draws and what
        :meth:`Review.chosen_spec` writes.
    note : str
        How the sketch form was made (for fits: knots and the largest CDF
        difference from the fitted family on a fine grid).
    """

    name: str
    kind: str
    source: Any
    sketch: Sketch
    note: str = ""

    @property
    def description(self) -> str:
        """The kind in words, e.g. ``"fitted family"``."""
        return _KINDS[self.kind]

    @property
    def atoms(self) -> tuple[Atom, ...]:
        """Point masses ``(x, mass)`` of the candidate."""
        return self.sketch.atoms

    def cdf(self, x: Any) -> np.ndarray:
        """The candidate's own CDF (a fit's exact CDF, not its sketch form)."""
        v = np.asarray(x, dtype=float)
        if self.kind in ("fit", "data"):
            return np.asarray(self.source.cdf(v), dtype=float)
        return np.asarray(self.sketch.cdf(v), dtype=float)

    def pdf(self, x: Any) -> np.ndarray:
        """The candidate's density (continuous part; zero for the resampled data)."""
        v = np.asarray(x, dtype=float)
        if self.kind == "fit":
            return np.asarray(self.source.pdf(v), dtype=float)
        if self.kind == "data":
            return np.zeros(v.shape)
        return np.asarray(self.sketch.pdf(v), dtype=float)

    def ppf(self, u: Any) -> np.ndarray:
        """The candidate's quantile function."""
        if self.kind in ("fit", "data"):
            return np.asarray(self.source.ppf(u), dtype=float)
        return np.asarray(self.sketch.ppf(u), dtype=float)


def _step_sketch(ecdf: ECDF, where: str) -> Sketch:
    """The ECDF as an exact sketch: two knots (a jump) at every distinct value."""
    if ecdf.censoring:
        raise ValueError(
            f"{where} is a Kaplan–Meier estimate (censored data); the review takes an "
            "uncensored ECDF as 'resampled data'. Pass the uncensored data, or sketch the "
            "censored tail and review that sketch."
        )
    xs, ps = np.asarray(ecdf.x, dtype=float), np.asarray(ecdf.p, dtype=float)
    if xs.size < 2:
        raise ValueError(f"{where} has a single distinct value; resampling it is not a CDF.")
    x = np.repeat(xs, 2)
    p = np.empty(x.size)
    p[0::2] = np.r_[0.0, ps[:-1]]
    p[1::2] = ps
    p[-1] = 1.0
    return Sketch(
        x,
        p,
        name="resampled data",
        provenance={"method": "ECDF (resampled data)", "extra": {"distinct_values": xs.size}},
    )


def _fit_sketch(cand: Any, units: str) -> tuple[Sketch, str]:
    sk = cand.to_sketch(
        knots=FIT_KNOTS, interpolation="pchip", tail_mass=FIT_TAIL_MASS, units=units
    )
    lo, hi = (float(v) for v in cand.ppf(np.array([1e-5, 1 - 1e-5])))
    grid = np.linspace(lo, hi, 4001)
    err = float(np.max(np.abs(np.asarray(cand.cdf(grid)) - sk.cdf(grid))))
    prov = dict(sk.provenance)
    extra = dict(prov.get("extra", {}))
    extra.update({"knots_from_fit": int(sk.x.size), "max_abs_cdf_error_vs_fit": err})
    prov["extra"] = extra
    note = (
        f"fitted {cand.family} written as a sketch with {sk.x.size} knots "
        f"(monotone cubic; largest |ΔF| from the fit {err:.1e})"
    )
    return sk.replace(provenance=prov), note


def _as_candidate(obj: Any, i: int, units: str) -> ReviewCandidate:
    from .fit import Candidate

    where = f"candidates[{i}]"
    if isinstance(obj, Sketch):
        if not obj.name:
            raise ValueError(
                f"{where} is a sketch without a name; every candidate needs a unique name to "
                "be chosen by. Give it one: sketch.replace(name='expert A')."
            )
        if units and obj.units and obj.units != units:
            raise ValueError(
                f"{where} ({obj.name!r}) is in units {obj.units!r} but the review is in "
                f"{units!r}. Convert the sketch to {units!r} (or give matching units)."
            )
        method = str(obj.provenance.get("method", ""))
        kind = "pool" if method in ("linear pool", "quantile average") else "sketch"
        return ReviewCandidate(obj.name, kind, obj, obj, method)
    if isinstance(obj, Candidate):
        sk, note = _fit_sketch(obj, units)
        return ReviewCandidate(obj.name, "fit", obj, sk, note)
    if isinstance(obj, ECDF):
        sk = _step_sketch(obj, where)
        note = f"ECDF of {obj.n} values: each value drawn with its observed frequency"
        return ReviewCandidate("resampled data", "data", obj, sk, note)
    raise TypeError(
        f"{where} must be a Sketch, a fit Candidate (cdfsketch.fit.fit_candidates) or an ECDF "
        f"(the resampled data); got {type(obj).__name__}. Wrap other distributions with "
        "Sketch.from_distribution(dist)."
    )


def _plain_number(v: Any) -> Any:
    """JSON-safe value: NaN → None, ±inf → "inf"/"-inf", numpy scalars → Python."""
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float):
        if math.isnan(v):
            return None
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
    return v


def _text(value: Any, what: str, *, required: bool = False) -> str:
    if not isinstance(value, str):
        raise TypeError(f"{what} must be a str; got {type(value).__name__} {value!r}.")
    if required and not value.strip():
        raise ValueError(f"{what} must not be empty; say who decided / why, in words.")
    return value


# ====================================================================== review
class Review:
    """Candidates for one input, the data they are judged against, and the decision.

    Parameters
    ----------
    data : array_like, optional
        Observations (NaN dropped with a warning). Without data there is no
        ECDF, band, histogram or comparison table.
    candidates : sequence
        Sketches (judgements, pools), fit Candidates and ECDFs (the
        resampled data), named by their ``.name`` (an ECDF is "resampled
        data"); names must be unique.
    level : float
        Coverage of the simultaneous DKW band.
    units, name : str
        Units of the quantity and its name (the chosen spec's name).
    holdout : float or None
        Fraction of the data held out by :func:`cdfsketch.fit.compare`.
    rng : optional
        Seed for the holdout split and refits (``np.random.default_rng``).
    progress : None, False or callable
        Progress of scoring the candidates against the data; see
        :func:`cdfsketch.fit.compare`.

    Examples
    --------
    >>> a = Sketch([0, 4, 10], [0, 0.5, 1], name="expert A", units="h")
    >>> b = Sketch([0, 6, 12], [0, 0.5, 1], name="expert B", units="h")
    >>> r = Review(None, [a, b], units="h", name="repair time")
    >>> r.names
    ('expert A', 'expert B')
    >>> _ = r.choose("expert B", by="review group", rationale="matches the logs",
    ...              when="2026-01-05T10:00:00+00:00")
    >>> r.chosen_spec()["provenance"]["decision"]["chosen"]
    'expert B'
    """

    def __init__(
        self,
        data: Any = None,
        candidates: Sequence[Any] = (),
        *,
        level: float = 0.95,
        units: str = "",
        name: str = "",
        holdout: float | None = 0.3,
        rng: Any = None,
        progress: Any = None,
    ) -> None:
        _text(units, "units")
        _text(name, "name")
        check_progress(progress)
        if isinstance(level, bool) or not isinstance(level, int | float) or not 0 < level < 1:
            raise ValueError(f"level must be a number strictly between 0 and 1; got {level!r}.")
        if isinstance(candidates, str | bytes) or not isinstance(candidates, Iterable):
            raise TypeError(
                f"candidates must be a list of Sketches, fit Candidates or ECDFs; got "
                f"{type(candidates).__name__}."
            )
        items = list(candidates)
        if not items:
            raise ValueError("candidates is empty; pass at least one candidate to review.")
        self.data: np.ndarray | None = None if data is None else as_data(data)
        self.level = float(level)
        self.units = units
        self.name = name
        self.candidates: tuple[ReviewCandidate, ...] = tuple(
            _as_candidate(c, i, units) for i, c in enumerate(items)
        )
        seen: dict[str, int] = {}
        for i, c in enumerate(self.candidates):
            if c.name in seen:
                raise ValueError(
                    f"Candidate names must be unique; candidates[{i}] and "
                    f"candidates[{seen[c.name]}] are both called {c.name!r}. Rename one "
                    "(sketch.replace(name=...)); a decision names the candidate it chose."
                )
            seen[c.name] = i
        self._table = None
        if self.data is not None:
            from .fit import compare

            table = compare(
                self.data,
                [c.source for c in self.candidates],
                holdout=holdout,
                level=self.level,
                rng=rng,
                progress=progress,
            )
            for row, c in zip(table.rows, self.candidates, strict=True):
                row["name"] = c.name
            self._table = table
        self.decision: dict[str, Any] | None = None

    # ------------------------------------------------------------ look-ups
    @property
    def names(self) -> tuple[str, ...]:
        """The candidates' names, in order."""
        return tuple(c.name for c in self.candidates)

    def candidate(self, name: str) -> ReviewCandidate:
        """The candidate called ``name``."""
        for c in self.candidates:
            if c.name == name:
                return c
        raise KeyError(f"No candidate named {name!r}; the candidates are {list(self.names)}.")

    def table(self) -> Any:
        """The :class:`~cdfsketch.fit.ComparisonTable` (needs data)."""
        if self._table is None:
            raise ValueError(
                "This review has no data, so there is no comparison table. Pass data= to "
                "judge the candidates against observations."
            )
        return self._table

    @property
    def chosen(self) -> str | None:
        """Name of the chosen candidate, or None."""
        return None if self.decision is None else self.decision["chosen"]

    # ------------------------------------------------------------ decision
    def _metrics(self, name: str) -> dict[str, Any]:
        if self._table is None:
            return {}
        row = next(r for r in self._table.rows if r["name"] == name)
        return {k: _plain_number(v) for k, v in row.items() if k != "name"}

    def choose(
        self, name: str, *, by: str, rationale: str, when: str | datetime | None = None
    ) -> dict[str, Any]:
        """Record that the group chose ``name``, who decided, when and why.

        Parameters
        ----------
        name : str
            One of :attr:`names`.
        by : str
            Who decided (a person or a group).
        rationale : str
            Why, in words.
        when : str or datetime, optional
            When (UTC); default now. A naive datetime is taken as UTC.

        Returns
        -------
        dict
            The decision (also stored in :attr:`decision`).
        """
        _text(name, "name")
        if name not in self.names:
            raise KeyError(
                f"No candidate named {name!r} to choose; the candidates are {list(self.names)}."
            )
        _text(by, "by", required=True)
        _text(rationale, "rationale", required=True)
        if when is None:
            stamp = datetime.now(UTC).isoformat(timespec="seconds")
        elif isinstance(when, datetime):
            stamp = (when if when.tzinfo else when.replace(tzinfo=UTC)).astimezone(UTC)
            stamp = stamp.isoformat(timespec="seconds")
        elif isinstance(when, str):
            try:
                parsed = datetime.fromisoformat(when)
            except ValueError:
                raise ValueError(
                    f"when must be an ISO 8601 time such as '2026-01-05T10:00:00+00:00'; got "
                    f"{when!r}."
                ) from None
            parsed = parsed if parsed.tzinfo else parsed.replace(tzinfo=UTC)
            stamp = parsed.astimezone(UTC).isoformat(timespec="seconds")
        else:
            raise TypeError(f"when must be an ISO string or a datetime; got {when!r}.")
        chosen = self.candidate(name)
        competitors = [
            {"name": c.name, **self._metrics(c.name)} for c in self.candidates if c.name != name
        ]
        if self._table is None:
            for item, c in zip(
                competitors, [c for c in self.candidates if c.name != name], strict=True
            ):
                item["kind"] = c.kind
        self.decision = {
            "chosen": name,
            "kind": chosen.kind,
            "by": by,
            "when": stamp,
            "rationale": rationale,
            "level": self.level,
            "data": None if self.data is None else data_fingerprint(self.data),
            "metrics": self._metrics(name),
            "competitors": competitors,
            "how_written": chosen.note,
        }
        return self.decision

    def chosen_spec(self) -> dict[str, Any]:
        """The chosen candidate's spec, with the decision in ``provenance.decision``.

        A fit is written through ``to_sketch`` (:data:`FIT_KNOTS` knots), the
        resampled data as its exact step CDF. The spec's name is the review's
        ``name`` (else the candidate's), its units the review's (else the
        candidate's); ``provenance.data`` is the data's fingerprint. The spec
        passes :func:`cdfsketch.validate_spec`.
        """
        if self.decision is None:
            raise ValueError(
                "Nothing has been chosen yet, so there is no chosen spec. Record the decision "
                "first: choose(name, by='...', rationale='...')."
            )
        c = self.candidate(self.decision["chosen"])
        sk = c.sketch.replace(name=self.name or c.name, units=self.units or c.sketch.units)
        extra: dict[str, Any] = {"decision": json.loads(json.dumps(self.decision))}
        if self.data is not None:
            extra["data"] = data_fingerprint(self.data)
        spec = sk.to_spec(**extra)
        validate_spec(spec)
        return spec

    # ------------------------------------------------------------ outputs
    def save_html(self, path: Any, *, include_data: bool = False) -> Path:
        """Write the standalone review page; see :func:`save_html`."""
        return save_html(self, path, include_data=include_data)

    def save_figure(self, path: Any, **options: Any) -> Path:
        """Write a static figure; see :func:`save_figure`."""
        return save_figure(self, path, **options)


# ====================================================================== shared geometry
def x_range(review: Review) -> tuple[float, float]:
    """The shared x range, padded 3 %.

    It covers the data and each candidate's 1–99 % range; with data, a
    long-tailed candidate extends it by at most half the data's span on each
    side (its far tail stays readable in the table and the read-outs).
    """
    lows, highs = [], []
    for c in review.candidates:
        q = c.ppf(np.array([0.01, 0.99]))
        lows.append(float(q[0]))
        highs.append(float(q[1]))
    lo, hi = min(lows), max(highs)
    if review.data is not None:
        dlo, dhi = float(review.data.min()), float(review.data.max())
        half = 0.5 * (dhi - dlo)
        lo, hi = max(min(lo, dlo), dlo - half), min(max(hi, dhi), dhi + half)
    pad = 0.03 * (hi - lo) if hi > lo else 1.0
    return lo - pad, hi + pad


@dataclass(frozen=True)
class Curve:
    """Polylines of one candidate over the shared range."""

    x: np.ndarray
    cdf: np.ndarray
    pdf_x: np.ndarray
    pdf: np.ndarray
    atoms: tuple[Atom, ...] = field(default=())


def curves(review: Review, *, points: int = 400) -> list[Curve]:
    """Each candidate's CDF (with vertical jumps at atoms) and density over the range."""
    lo, hi = x_range(review)
    grid = np.linspace(lo, hi, points)
    out = []
    for c in review.candidates:
        inside = c.sketch.x[(c.sketch.x > lo) & (c.sketch.x < hi)] if c.kind != "fit" else []
        xs = np.unique(np.r_[grid, inside])
        ys = c.cdf(xs)
        atoms = tuple(a for a in c.atoms if lo <= a.x <= hi)
        for a in atoms:  # a jump: the left limit just before the value at the atom
            j = int(np.searchsorted(xs, a.x))
            xs = np.insert(xs, j, a.x)
            ys = np.insert(ys, j, float(c.cdf(a.x)) - a.mass)
        if c.kind == "data":
            px, py = np.array([lo, hi]), np.zeros(2)
        else:
            left = np.nextafter(inside, -np.inf) if len(inside) else []
            px = np.unique(np.r_[grid, inside, left])
            py = c.pdf(px)
        out.append(Curve(xs, ys, px, py, atoms))
    return out


def data_layers(review: Review) -> dict[str, Any] | None:
    """ECDF staircase, DKW band polygon and density histogram of the data (None without data)."""
    if review.data is None:
        return None
    lo, hi = x_range(review)
    e = ECDF(review.data)
    st = e.steps(max_points=2000)
    band = e.band(level=review.level)
    bx = np.r_[lo, st.x, hi]
    bp = np.r_[0.0, st.p, 1.0]
    edges = np.histogram_bin_edges(review.data, bins="auto")
    if edges.size > 51:
        edges = np.linspace(review.data.min(), review.data.max(), 51)
    dens, _ = np.histogram(review.data, bins=edges, density=True)
    return {
        "steps_x": np.r_[lo, st.x, hi],
        "steps_p": np.r_[0.0, st.p, 1.0],
        "band_x": bx,
        "band_lower": np.clip(bp - band.eps, 0.0, 1.0),
        "band_upper": np.clip(bp + band.eps, 0.0, 1.0),
        "eps": float(band.eps),
        "edges": edges,
        "density": dens,
    }


def colours(review: Review) -> list[str]:
    """One colour per candidate (Okabe–Ito); the chosen one is the sketch blue."""
    return [
        palette.SKETCH if c.name == review.chosen else palette.candidate_colour(i)
        for i, c in enumerate(review.candidates)
    ]


def dashed(review: Review) -> list[bool]:
    """Whether each candidate's line is dashed: once the colours repeat, and never the chosen."""
    n = len(palette.CANDIDATES)
    return [(i // n) % 2 == 1 and c.name != review.chosen for i, c in enumerate(review.candidates)]


def density_top(review: Review, cs: list[Curve], layers: dict[str, Any] | None) -> float:
    """Top of the density axis: histogram and the typical candidate peak, not a spike."""
    peaks = [float(np.max(c.pdf)) for c, r in zip(cs, review.candidates, strict=True)
             if r.kind != "data" and np.max(c.pdf) > 0]  # fmt: skip
    top = float(np.median(peaks)) if peaks else 0.0
    if layers is not None:
        top = max(top, float(np.max(layers["density"])))
    return 1.15 * top if top > 0 else 1.0


# ====================================================================== table html


def table_html(
    table: Any, *, chosen: str | None = None, sort_by: str | None = None, ascending: bool = True
) -> str:
    """The comparison table as escaped HTML, the chosen row marked, optionally sorted."""
    from .metrics import format_cell

    if sort_by is not None:
        table = table.sort_by(sort_by, ascending=ascending)
    head = "".join(
        f'<th title="{html.escape(table.notes.get(c, ""))}">{html.escape(c)}</th>'
        for c in table.columns
    )
    rows = []
    for r in table.rows:
        mark = ' style="font-weight:bold;background:#e8f0f8"' if r["name"] == chosen else ""
        cells = "".join(f"<td>{html.escape(format_cell(r[c]))}</td>" for c in table.columns)
        rows.append(f"<tr{mark}>{cells}</tr>")
    info = ", ".join(f"{html.escape(str(k))}={html.escape(str(v))}" for k, v in table.info.items())
    return (
        '<table class="cdfsketch-comparison" style="border-collapse:collapse;font-size:90%">'
        f"<thead><tr>{head}</tr></thead><tbody>{''.join(rows)}</tbody></table>"
        f"<p>{info}. Distances on all data carry no p-value: the candidates were fitted or "
        "tuned on these data.</p>"
    )


# ====================================================================== the page
def _list(a: Any) -> list[float]:
    return [float(v) for v in np.asarray(a, dtype=float)]


def page_payload(review: Review, *, include_data: bool = False) -> dict[str, Any]:
    """The JSON the page is built from (everything the page shows)."""
    lo, hi = x_range(review)
    cols = colours(review)
    cands = []
    for c, col, dash in zip(review.candidates, cols, dashed(review), strict=True):
        cands.append(
            {
                "dashed": dash,
                "name": c.name,
                "kind": c.kind,
                "description": c.description,
                "note": c.note,
                "colour": col,
                "chosen": c.name == review.chosen,
                "spec": c.sketch.to_spec(),
            }
        )
    data = None
    if review.data is not None:
        layers = data_layers(review)
        assert layers is not None
        fp = data_fingerprint(review.data)
        data = {
            "n": fp["n"],
            "min": float(review.data.min()),
            "max": float(review.data.max()),
            "median": float(np.median(review.data)),
            "sha256": fp["sha256"],
            "steps": {"x": _list(layers["steps_x"]), "p": _list(layers["steps_p"])},
            "band": {
                "eps": layers["eps"],
                "x": _list(layers["band_x"]),
                "lower": _list(layers["band_lower"]),
                "upper": _list(layers["band_upper"]),
            },
            "hist": {"edges": _list(layers["edges"]), "density": _list(layers["density"])},
            "values": _list(review.data) if include_data else None,
        }
    table = None
    if review._table is not None:
        t = review._table
        table = {
            "columns": list(t.columns),
            "rows": [{k: _plain_number(v) for k, v in r.items()} for r in t.rows],
            "notes": dict(t.notes),
            "info": {k: _plain_number(v) for k, v in t.info.items()},
        }
    chosen_spec = review.chosen_spec() if review.decision is not None else None
    stem = re.sub(r"[^A-Za-z0-9_.-]+", "-", review.name or review.chosen or "chosen").strip("-")
    return {
        "format": "cdfsketch-review-page",
        "version": 1,
        "title": review.name or "Review of candidate distributions",
        "name": review.name,
        "units": review.units,
        "level": review.level,
        "generated": datetime.now(UTC).isoformat(timespec="seconds"),
        "packageVersion": __version__,
        "caution": CAUTION,
        "xRange": [lo, hi],
        "data": data,
        "candidates": cands,
        "table": table,
        "decision": review.decision,
        "chosenSpec": chosen_spec,
        "chosenFile": f"{stem or 'chosen'}.spec.json",
    }


def safe_json(obj: Any) -> str:
    """JSON text safe inside a ``<script>`` element: ``< > &`` and U+2028/9 escaped.

    Examples
    --------
    >>> safe_json({"a": "</script>"})
    '{"a": "\\\\u003c/script\\\\u003e"}'
    """
    text = json.dumps(obj, ensure_ascii=False, allow_nan=False)
    for ch, esc in (("<", "\\u003c"), (">", "\\u003e"), ("&", "\\u0026")):
        text = text.replace(ch, esc)
    return text.replace("\u2028", "\\u2028").replace("\u2029", "\\u2029")


_EXPORT = re.compile(r"^export (const|function|class|let) ", re.MULTILINE)


def page_script() -> str:
    """The page's script: js/spec-reader.mjs wrapped in a scope, then js/review-page.mjs."""
    reader = (_JS_DIR / "spec-reader.mjs").read_text(encoding="utf-8")
    page = (_JS_DIR / "review-page.mjs").read_text(encoding="utf-8")
    body = _EXPORT.sub(r"\1 ", reader)
    if re.search(r"^\s*(export|import)\b", body, re.MULTILINE):
        raise RuntimeError(
            "js/spec-reader.mjs has an export or import form the page writer cannot inline "
            "(only `export const|function|class|let` at line start are supported)."
        )
    reader_block = (
        "const specReader = (() => {\n"
        + body
        + "\nreturn { readSpec, validateSpec, SpecError };\n})();\n"
    )
    imp = 'import { readSpec } from "./spec-reader.mjs";'
    if imp not in page:
        raise RuntimeError(f"js/review-page.mjs must import the reader with exactly: {imp}")
    page = page.replace(imp, "const { readSpec } = specReader;")
    script = (
        reader_block
        + page
        + '\nmain(document, JSON.parse(document.getElementById("review-data").textContent));\n'
    )
    if re.search(r"</script|<!--", script, re.IGNORECASE):
        raise RuntimeError("The page's script contains '</script' or '<!--'; it cannot be inlined.")
    return script


def _page_from_payload(payload: Mapping[str, Any]) -> str:
    script = "\n" + page_script()
    css = (_JS_DIR / "review-page.css").read_text(encoding="utf-8")
    if re.search(r"</style", css, re.IGNORECASE):
        raise RuntimeError("js/review-page.css contains '</style'; it cannot be inlined.")
    digest = base64.b64encode(hashlib.sha256(script.encode("utf-8")).digest()).decode("ascii")
    csp = (
        f"default-src 'none'; script-src 'sha256-{digest}'; style-src 'unsafe-inline'; "
        "img-src data:; base-uri 'none'; form-action 'none'"
    )
    title = html.escape(str(payload.get("title", "")))
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f'<meta http-equiv="Content-Security-Policy" content="{csp}">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f'<meta name="generator" content="cdfsketch {html.escape(__version__)}">\n'
        f"<title>{title}</title>\n<style>\n{css}\n</style>\n</head>\n<body>\n"
        '<main id="review-root"></main>\n'
        "<noscript><p>This page draws its curves with JavaScript; allow scripts for this "
        "local file to see the review.</p></noscript>\n"
        f'<script type="application/json" id="review-data">{safe_json(payload)}</script>\n'
        f'<script type="module">{script}</script>\n</body>\n</html>\n'
    )


def page_html(review: Review, *, include_data: bool = False) -> str:
    """The standalone review page as HTML text (see :func:`save_html`)."""
    if not isinstance(review, Review):
        raise TypeError(f"review must be a cdfsketch.report.Review; got {type(review).__name__}.")
    if not isinstance(include_data, bool):
        raise TypeError(f"include_data must be True or False; got {include_data!r}.")
    return _page_from_payload(page_payload(review, include_data=include_data))


def save_html(review: Review, path: Any, *, include_data: bool = False) -> Path:
    """Write one self-contained HTML page for a review meeting.

    The page needs no network (no CDN, nothing external; a
    Content-Security-Policy forbids fetches) and works from ``file://``. It
    shows the CDF overlays over the ECDF and its DKW band, the densities
    over the data histogram with atoms as spikes, a toggle per candidate,
    hover read-outs of x, p and density, the comparison table (sortable),
    the decision and rationale, the data summary (n, range, SHA-256 digest)
    and a download of the chosen spec.

    Parameters
    ----------
    review : Review
        What to show.
    path : str or path-like
        Where to write (``.html``).
    include_data : bool
        Also embed the raw values in the order given. Note that the ECDF
        overlay, and a "resampled data" candidate, always show the distinct
        values and their frequencies; leave those out of the review if the
        values themselves must not travel.

    Returns
    -------
    Path
    """
    target = Path(path)
    if target.suffix.lower() not in (".html", ".htm"):
        raise ValueError(f"The review page is HTML; path must end in .html; got {str(path)!r}.")
    text = page_html(review, include_data=include_data)
    target.write_text(text, encoding="utf-8")
    return target


# ====================================================================== the figure
def save_figure(
    review: Review, path: Any, *, width: float = 8.0, height: float = 7.0, dpi: int = 150
) -> Path:
    """Write the two overlay panels as PNG, SVG or PDF (by the suffix) via matplotlib.

    Upper panel: each candidate's CDF over the ECDF and its DKW band; lower:
    densities over the data histogram, atoms as spikes (right axis: mass).
    The chosen candidate is drawn blue and thick; the caution is printed
    beneath. matplotlib is the ``report`` extra (``pip install
    cdfsketch[report]``); it is imported here and pyplot is not used.
    """
    target = Path(path)
    suffix = target.suffix.lower()
    if suffix not in _FIGURE_SUFFIXES:
        raise ValueError(
            f"save_figure writes {', '.join(_FIGURE_SUFFIXES)} (chosen by the suffix); got "
            f"{str(path)!r}. Use a path ending in .png, .svg or .pdf."
        )
    for label, v in (("width", width), ("height", height), ("dpi", dpi)):
        if isinstance(v, bool) or not isinstance(v, int | float) or not v > 0:
            raise ValueError(f"{label} must be a positive number; got {v!r}.")
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ImportError(
            "save_figure needs matplotlib, an optional extra of cdfsketch. Install it with "
            "`pip install cdfsketch[report]` (or `pip install matplotlib`)."
        ) from None
    cs = curves(review)
    layers = data_layers(review)
    cols = colours(review)
    lo, hi = x_range(review)
    fig = Figure(figsize=(width, height), layout="constrained")
    up, down = fig.subplots(2, 1, sharex=True, height_ratios=[3, 2])
    units = f" ({review.units})" if review.units else ""
    if layers is not None:
        up.fill_between(
            layers["band_x"], layers["band_lower"], layers["band_upper"],
            color=palette.BAND, lw=0, label=f"{review.level:.0%} DKW band",
        )  # fmt: skip
        up.plot(layers["steps_x"], layers["steps_p"], color=palette.DATA, lw=1.2, label="ECDF")
        e = layers["edges"]
        down.bar(e[:-1], layers["density"], width=np.diff(e), align="edge",
                 color=palette.DATA, alpha=0.35, label="data histogram")  # fmt: skip
    spikes = None
    for c, cv, col, dash in zip(review.candidates, cs, cols, dashed(review), strict=True):
        chosen = c.name == review.chosen
        lw = 3.0 if chosen else 1.5
        ls = "--" if dash else "-"
        label = f"{c.name} (chosen)" if chosen else c.name
        up.plot(cv.x, cv.cdf, color=col, lw=lw, ls=ls, label=label)
        if c.kind != "data":
            down.plot(cv.pdf_x, cv.pdf, color=col, lw=lw, ls=ls)
        if cv.atoms:
            if spikes is None:
                spikes = down.twinx()
                spikes.set_ylabel("atom mass")
            ax_ = [a.x for a in cv.atoms]
            m = [a.mass for a in cv.atoms]
            spikes.vlines(ax_, 0, m, color=col, lw=1.0)
            spikes.plot(ax_, m, "o", color=col, ms=3)
    if spikes is not None:
        spikes.set_ylim(0, None)
    down.set_ylim(0, density_top(review, cs, layers))
    up.set_xlim(lo, hi)
    up.set_ylim(-0.02, 1.02)
    up.set_ylabel("cumulative probability")
    down.set_ylabel("density")
    down.set_xlabel(f"{review.name or 'x'}{units}")
    up.legend(loc="lower right", fontsize="small")
    title = review.name or "Candidates"
    if review.chosen is not None:
        title += f" — chosen: {review.chosen}"
    up.set_title(title)
    fig.supxlabel(CAUTION, fontsize=6.5, color="#444444")  # constrained layout makes room
    fig.savefig(target, format=suffix[1:], dpi=dpi, metadata=_figure_metadata(suffix))
    return target


def _figure_metadata(suffix: str) -> dict[str, Any]:
    if suffix == ".png":
        return {"Software": f"cdfsketch {__version__}"}
    if suffix == ".svg":
        return {"Creator": f"cdfsketch {__version__}"}
    return {"Creator": f"cdfsketch {__version__}"}
