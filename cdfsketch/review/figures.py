"""Static figures of a review (PNG, SVG, PDF) through matplotlib, the ``review`` extra.

matplotlib is imported inside :func:`save_figure` (never pyplot); the rest
of the package never needs it.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

import numpy as np

from .._extras import need
from .._files import check_output_path, write_bytes
from .._validate import number
from .._version import __version__
from .layers import curves, data_layers, density_top, flags_text, floor_flags, nice_ticks, x_range
from .palette import BAND, DATA
from .record import Review
from .texts import CAUTION

__all__ = ["save_figure"]

_SUFFIXES = (".png", ".svg", ".pdf")
#: matplotlib's dash patterns for the palette's dash names.
_MPL_DASH = {"solid": "-", "dashed": "--", "dotted": ":", "dash-dot": "-."}
#: matplotlib's marker codes for the palette's marker names.
_MPL_MARKER = {"circle": "o", "square": "s", "triangle-up": "^", "diamond": "D",
               "cross": "x", "triangle-down": "v", "star": "*"}  # fmt: skip


def save_figure(
    review: Review, path: Any, *, width: float = 9.0, height: float = 7.0, dpi: int = 150
) -> Path:
    """Write the two overlay panels as PNG, SVG or PDF (by the suffix), atomically.

    Upper panel: each candidate's CDF over the ECDF and its DKW band; lower:
    densities over the data histogram, atoms as spikes (right axis: mass).
    Each candidate keeps its style (colour, dash, marker); the chosen one is
    drawn thicker. The legend sits outside the plot area, right; the caution
    and any flag for mass where the data never go are printed beneath.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from cdfsketch import Sketch
    >>> r = Review(None, [Sketch([0, 4, 10], [0, 0.5, 1], name="expert A")])
    >>> save_figure(r, pathlib.Path(tempfile.mkdtemp()) / "fig.svg", dpi=50).suffix
    '.svg'
    """
    target = check_output_path(path, suffixes=_SUFFIXES, what="figure")
    suffix = target.suffix.lower()
    for label, v in (("width", width), ("height", height), ("dpi", dpi)):
        number(v, field=label, low=0, low_open=True, high=1000, example=f"{label}=8")
    figure_mod = need("review", "matplotlib.figure")
    cs = curves(review)
    layers = data_layers(review)
    lo, hi = x_range(review)
    fig = figure_mod.Figure(figsize=(width, height), layout="constrained")
    up, down = fig.subplots(2, 1, sharex=True, height_ratios=[3, 2])
    units = f" ({review.units})" if review.units else ""
    if layers is not None:
        up.fill_between(
            layers["band_x"], layers["band_lower"], layers["band_upper"],
            color=BAND, lw=0, label=f"{review.level:.0%} DKW band",
        )  # fmt: skip
        up.plot(layers["steps_x"], layers["steps_p"], color=DATA, lw=1.2, label="ECDF")
        e = layers["edges"]
        down.bar(e[:-1], layers["density"], width=np.diff(e), align="edge",
                 color=DATA, alpha=0.35, label="data histogram")  # fmt: skip
    spikes = None
    for c, cv in zip(review.candidates, cs, strict=True):
        st = review.style(c.name)
        chosen = c.name == review.chosen
        kw = {
            "color": st.colour,
            "lw": 3.2 if chosen else 1.5,
            "ls": _MPL_DASH[st.dash],
            "marker": _MPL_MARKER[st.marker],
            "markevery": max(1, cv.x.size // 8),
            "ms": 5,
        }
        up.plot(cv.x, cv.cdf, label=f"{c.name} (chosen)" if chosen else c.name, **kw)
        if np.any(cv.pdf > 0):
            down.plot(cv.pdf_x, cv.pdf, **kw)
        if cv.spikes:
            if spikes is None:
                spikes = down.twinx()
                spikes.set_ylabel("atom mass")
            ax_ = [a.x for a in cv.spikes]
            m = [a.mass for a in cv.spikes]
            spikes.vlines(ax_, 0, m, color=st.colour, lw=1.0)
            spikes.plot(ax_, m, _MPL_MARKER[st.marker], color=st.colour, ms=3)
    if spikes is not None:
        spikes.set_ylim(0, None)
    down.set_ylim(0, density_top(review, cs, layers))
    up.set_xlim(lo, hi)
    up.set_xticks(nice_ticks(lo, hi, 7))
    up.set_ylim(-0.02, 1.02)
    up.set_ylabel("cumulative probability")
    down.set_ylabel(f"density (per {review.units})" if review.units else "density")
    down.set_xlabel(f"{review.name or 'x'}{units}")
    up.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize="small", frameon=False)
    title = review.name or "Candidates"
    if review.chosen is not None:
        title += f" — chosen: {review.chosen}"
    up.set_title(title)
    notes = [CAUTION, flags_text(floor_flags(review))]
    fig.supxlabel("\n".join(notes), fontsize=6.5, color="#444444")
    buf = io.BytesIO()
    fig.savefig(buf, format=suffix[1:], dpi=dpi, metadata=_metadata(suffix))
    return write_bytes(target, buf.getvalue())


def _metadata(suffix: str) -> dict[str, Any]:
    key = "Software" if suffix == ".png" else "Creator"
    return {key: f"cdfsketch {__version__}"}
