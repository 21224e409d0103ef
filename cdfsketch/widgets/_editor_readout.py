"""The editor's readout: numbers about the current sketch, its warnings, and their HTML.

Every line of the readout has a fixed height (one line, no wrapping: long
text scrolls sideways inside the side column), so a changing value never
moves the knot table below it. Numbers in data units are shown to the
data's resolution (:func:`cdfsketch._numfmt.at_resolution`), probabilities
and scores to a few significant digits.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._numfmt import at_resolution, significant
from ..review.texts import CAUTION
from ..sketch import Sketch
from ..tails import BoundedTail
from ._editor_data import DataView
from ._editor_html import raw, tag

#: what the holdout score's mark means (its tooltip)
IN_VIEW_NOTE = (
    "Mean log density at the held-out points. They are drawn in the plot too, so a curve "
    "shaped to them scores well: optimistic. Editor(..., hide_held_out=True) draws the "
    "training part only, for an honest out-of-sample check."
)
HIDDEN_NOTE = (
    "Mean log density at the held-out points, which the plot does not show (it draws the "
    "training part only): an out-of-sample check of the curve you shaped."
)

__all__ = ["CAUTION", "checks_html", "readout", "readout_html", "tail_text", "warnings"]


def _x(v: float, data: DataView | None) -> str:
    return at_resolution(v, None if data is None else data.resolution)


def tail_text(sketch: Sketch, side: int, data: DataView | None = None) -> str:
    """The tail beyond the outer knot on ``side`` (0 lower, 1 upper), in words with units."""
    mass = sketch.tail_mass[side]
    u = f" {sketch.units}" if sketch.units else ""
    if mass <= 0:
        edge = _x(sketch.x[-1 if side else 0], data)
        return f"none: ends at {edge}{u}"
    tail = (sketch.lower_tail, sketch.upper_tail)[side]
    if isinstance(tail, BoundedTail):
        shape = "uniform" if tail.density == "uniform" else "tapering"
        return f"bounded at {_x(tail.limit, data)}{u}, {shape}"
    scale = sketch.tail_scales[side]
    how = "stated" if tail.scale is not None else "derived"
    return f"exp. scale {_x(scale, data)}{u}, {how}"


def _mass_beyond(sketch: Sketch, data: DataView | None) -> tuple[float, float]:
    """Mass below the data's natural floor and above its ceiling (0 when there is none)."""
    if data is None:
        return 0.0, 0.0
    below = float(sketch.cdf(data.floor)) if data.floor is not None else 0.0
    above = float(sketch.sf(data.ceiling)) if data.ceiling is not None else 0.0
    return below, above


def readout(
    sketch: Sketch,
    data: DataView | None,
    quantiles: tuple[float, ...],
    outside: np.ndarray | None = None,
) -> dict[str, Any]:
    """The readout's numbers as a dict (what :attr:`Editor.readout` returns)."""
    out: dict[str, Any] = {
        "mean": float(sketch.mean()),
        "sd": float(sketch.std()),
        "quantiles": dict(
            zip(quantiles, np.atleast_1d(sketch.ppf(quantiles)).tolist(), strict=True)
        ),
        "tail_mass": tuple(float(m) for m in sketch.tail_mass),
        "tail_model": (tail_text(sketch, 0, data), tail_text(sketch, 1, data)),
        "knots": len(sketch),
    }
    if data is not None:
        out.update(data.fit_numbers(sketch))
        if outside is None:
            outside = data.outside_band(sketch)
        out["knots_outside_band"] = int(np.count_nonzero(outside))
        out["holdout_points"] = 0 if data.held is None else int(data.held.size)
        out["holdout_subsampled"] = data.live_subsampled
        out["mass_below_floor"], out["mass_above_ceiling"] = _mass_beyond(sketch, data)
    out["warnings"] = warnings(sketch, data, out)
    return out


def warnings(sketch: Sketch, data: DataView | None, r: dict[str, Any]) -> list[str]:
    """Plain-language warnings about the sketch (each one line), most serious first."""
    u = f" {sketch.units}" if sketch.units else ""
    out = []
    if r.get("mass_below_floor", 0) > 0:
        out.append(
            f"{significant(100 * r['mass_below_floor'], 2)} % of the mass is below 0, "
            "though every observation is ≥ 0"
        )
    if r.get("mass_above_ceiling", 0) > 0:
        out.append(
            f"{significant(100 * r['mass_above_ceiling'], 2)} % of the mass is above 1, "
            "though every observation is ≤ 1"
        )
    if r.get("knots_outside_band"):
        out.append(f"{r['knots_outside_band']} knot(s) outside the band (drawn in red)")
    if data is not None and sketch.tail_mass[1] <= 0:
        top = _x(sketch.x[-1], data)
        out.append(f"no upper tail: a simulation never draws above {top}{u}; add one under 'tails'")
    return out


def readout_html(r: dict[str, Any], data: DataView | None, sketch: Sketch) -> str:
    """The readout's numbers as a small HTML table: short rows of one fixed-height line."""
    u = f" {sketch.units}" if sketch.units else ""
    qs = r["quantiles"]
    rows: list[tuple[str, str | raw]] = [
        ("mean · sd", f"{_x(r['mean'], data)} · {_x(r['sd'], data)}{u}"),
        (
            " · ".join(f"q{100 * q:g}" for q in qs),
            " · ".join(_x(v, data) for v in qs.values()) + u,
        ),
    ]
    for side, label in ((0, "lower tail"), (1, "upper tail")):
        mass = r["tail_mass"][side]
        text = r["tail_model"][side]
        rows.append((label, text if mass <= 0 else f"{significant(100 * mass, 2)} %, {text}"))
    if data is not None:
        tol = r["tolerance"]
        how = "exact" if tol == 0 else f"≤ {significant(tol, 2)} low"
        rows.append(("KS distance", f"{significant(r['ks'], 3)} ({how})"))
        exc = r["excursion"]
        where = (
            tag("span", "inside", cls="cdfsketch-ok")
            if exc <= 0
            else tag("span", f"outside by {significant(exc, 2)}", cls="cdfsketch-warn")
        )
        rows.append((f"{data.level:.0%} band", where))
        if "logscore" in r:
            zero = f", {r['n_outside']} at density 0" if r["n_outside"] else ""
            key = tag(
                "span",
                "holdout (hidden)" if data.hidden else "holdout (in view)",
                title=HIDDEN_NOTE if data.hidden else IN_VIEW_NOTE,
            )
            rows.append((key, f"{significant(r['logscore'], 4)} /point{zero}"))
    cells = [
        tag(
            "tr",
            tag("td", k, cls="cdfsketch-key"),
            tag("td", v, title=None if isinstance(v, raw) else v),
        )
        for k, v in rows
    ]
    return tag("table", *cells, cls="cdfsketch-readout-table")


def checks_html(r: dict[str, Any]) -> str:
    """The readout's warnings, one per line (empty when there is none)."""
    lines = [tag("div", f"check: {text}", cls="cdfsketch-warn") for text in r["warnings"]]
    return tag("div", *lines, cls="cdfsketch-checks") if lines else ""
