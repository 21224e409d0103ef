"""The editor's readout: numbers about the current sketch, and their HTML."""

from __future__ import annotations

import html
import math
from typing import Any

import numpy as np

from ..sketch import Sketch
from ..tails import BoundedTail
from . import palette
from ._editor_data import DataView

__all__ = ["CAUTION", "readout", "readout_html", "tail_text"]

CAUTION = (
    "A sketch is a judgement, to be reviewed before use; local codes and licensed "
    "practice decide what is acceptable."
)


def _fmt(v: float) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "–"
    if math.isinf(v):
        return "∞" if v > 0 else "−∞"
    return f"{v:.4g}"


def tail_text(sketch: Sketch, side: int) -> str:
    """Which tail model holds the mass beyond the outer knot on ``side`` (0 lower, 1 upper)."""
    tail = (sketch.lower_tail, sketch.upper_tail)[side]
    if isinstance(tail, BoundedTail):
        return f"bounded at {_fmt(tail.limit)} ({tail.density})"
    scale = sketch.tail_scales[side]
    how = "stated" if tail.scale is not None else "derived"
    if scale is None:
        return f"exponential ({how} scale)"
    return f"exponential, scale {_fmt(scale)} ({how})"


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
        "tail_model": (tail_text(sketch, 0), tail_text(sketch, 1)),
        "knots": len(sketch),
    }
    if data is not None:
        out.update(data.fit_numbers(sketch))
        if outside is None:
            outside = data.outside_band(sketch)
        out["knots_outside_band"] = int(np.count_nonzero(outside))
        out["holdout_points"] = 0 if data.held is None else int(data.held.size)
        out["holdout_subsampled"] = data.live_subsampled
    return out


def readout_html(r: dict[str, Any], data: DataView | None, units: str) -> str:
    """Readout as a small HTML block (calm type, warnings in the warning colour)."""
    u = f" {html.escape(units)}" if units else ""
    rows = [
        ("mean", f"{_fmt(r['mean'])}{u}"),
        ("sd", f"{_fmt(r['sd'])}{u}"),
    ]
    qs = ", ".join(f"q{100 * q:g} {_fmt(v)}" for q, v in r["quantiles"].items())
    rows.append(("quantiles", f"{qs}{u}"))
    for side, label in ((0, "lower tail"), (1, "upper tail")):
        rows.append(
            (label, f"mass {r['tail_mass'][side]:.3g}, {html.escape(r['tail_model'][side])}")
        )
    if data is not None:
        tol = r["tolerance"]
        how = "exact" if tol == 0 else f"fast: the exact value is up to {tol:.2g} higher"
        rows.append(("KS distance", f"{r['ks']:.4f} ({how})"))
        exc = r["excursion"]
        inside = exc <= 0
        colour = palette.DATA if inside else palette.KNOT_OUTSIDE_BAND
        where = "inside" if inside else "outside"
        rows.append(
            (
                f"{data.level:.0%} band",
                f"<span style='color:{colour}'>{where}</span> (largest excursion {exc:+.4f})",
            )
        )
        n_out = r["knots_outside_band"]
        if n_out:
            rows.append(
                (
                    "knots",
                    f"<span style='color:{palette.KNOT_OUTSIDE_BAND}'>{n_out} outside the band"
                    "</span>",
                )
            )
        if "logscore" in r:
            sub = (
                f", a seeded subsample of {r['holdout_points']} of {data.held_size}"
                if r["holdout_subsampled"]
                else ""
            )
            extra = f"; {r['n_outside']} at zero density" if r["n_outside"] else ""
            rows.append(
                (
                    "holdout log score",
                    f"{_fmt(r['logscore'])} per point ({data.held_size} held-out points{sub}"
                    f"{extra}; seen while drawing, so optimistic)",
                )
            )
    body = "".join(
        f"<tr><td style='padding:1px 10px 1px 0;color:{palette.DATA}'>{k}</td>"
        f"<td style='padding:1px 0'>{v}</td></tr>"
        for k, v in rows
    )
    return (
        f"<div style='font-family:{palette.FONT};font-size:12.5px;line-height:1.35'>"
        f"<table>{body}</table></div>"
    )
