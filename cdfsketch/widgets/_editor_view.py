"""The editor's two plots (bqplot): marks, scales, legend, and drawing a state.

Two figures share one x scale: the CDF panel (band, ECDF, candidate, the
sketch's curve and its knots) and the density panel (data histogram,
sample preview, the sketch's density, atoms). Both take the width they are
given (``width: 100%``), with the same side margins, so they map ``x`` to
the same pixels.

Knots are two scatters: the **movable** knots (``enable_move=True``, and
``click: add`` on the plot area), and the **locked** knots (not movable,
square, black), so a locked knot does not follow the pointer at all. A
third, small mark shows during a drag where the knot really is (the
clamped position), since the dragged dot itself follows the pointer
(``update_on_move=False``, see :mod:`cdfsketch.widgets.editor`).
"""

from __future__ import annotations

import math

import bqplot as bq
import ipywidgets as w
import numpy as np

from ..review import palette
from ..sketch import Sketch
from ..tails import BoundedTail
from ._editor_data import DataView
from ._editor_html import raw, swatch, tag
from ._editor_state import State

__all__ = ["P_ROOM", "Plots", "density_top", "nice_ticks"]

_GRID = 400
#: room below p = 0 and above p = 1 in the CDF panel (a whole knot dot shows at 0 and 1)
P_ROOM = 0.04
#: the same left and right margins on both panels, so that they share x pixel for pixel
_SIDE_MARGINS = {"left": 62, "right": 16}


def nice_ticks(top: float, most: int = 5) -> np.ndarray:
    """At most ``most`` round tick values from 0 to ``top`` (steps of 1, 2 or 5 × 10^k).

    Examples
    --------
    >>> nice_ticks(0.37).tolist()
    [0.0, 0.1, 0.2, 0.3]
    """
    if not top > 0:
        return np.array([0.0])
    raw_step = top / most
    mag = 10.0 ** math.floor(math.log10(raw_step))
    step = next(m * mag for m in (1, 2, 5, 10) if m * mag >= raw_step)
    return np.round(np.arange(0.0, top + 1e-12 * top, step), 12)


def density_top(pdf: np.ndarray, hist_max: float) -> tuple[float, bool]:
    """Top of the density axis, and whether a peak is cut off.

    A nearly vertical stretch of the CDF has an enormous density; letting it
    set the axis would flatten everything else to zero. The axis stops at four
    times the larger of the data histogram's peak and the sketch's 95th
    percentile density (common practice, no source).
    """
    peak = float(pdf.max()) if pdf.size else 0.0
    positive = pdf[pdf > 0]
    typical = float(np.percentile(positive, 95)) if positive.size else 0.0
    cap = 4.0 * max(hist_max, typical)
    if cap > 0 and peak > cap * 1.05:
        return cap * 1.05, True
    return (max(hist_max, peak) * 1.12) or 1.0, False


class Plots:
    """The CDF and density figures, and everything drawn in them."""

    def __init__(self, sketch: Sketch, data: DataView | None, domain: tuple[float, float]) -> None:
        units = sketch.units
        xlabel = (sketch.name or "value") + (f" ({units})" if units else "")
        lo, hi = domain
        self.xs = bq.LinearScale(min=lo, max=hi, allow_padding=False)
        self.ys = bq.LinearScale(min=-P_ROOM, max=1.0 + P_ROOM, allow_padding=False)
        self.ds = bq.LinearScale(min=0.0, max=1.0, allow_padding=False)
        self.ms = bq.LinearScale(min=0.0, max=1.0)
        grid = "#e4e4e4"
        ax_x = bq.Axis(scale=self.xs, label=xlabel, grid_color=grid)
        ax_y = bq.Axis(
            scale=self.ys, side="left", label="cumulative probability", tick_format=".1f",
            grid_color=grid, tick_values=np.linspace(0, 1, 6),
        )  # fmt: skip
        ax_x2 = bq.Axis(scale=self.xs, label=xlabel, grid_lines="none")
        per = f"per {units}" if units else "per unit"
        self.ax_d = bq.Axis(
            scale=self.ds, side="left", label=f"density ({per})", grid_lines="none",
            tick_format=".3~g", tick_values=nice_ticks(1.0), label_offset="44px",
        )  # fmt: skip
        self.ax_m = bq.Axis(
            scale=self.ms, side="right", label="atom mass", grid_lines="none",
            tick_format=".2f", visible=False,
        )  # fmt: skip
        sc = {"x": self.xs, "y": self.ys}
        dsc = {"x": self.xs, "y": self.ds}
        cdf_marks: list[bq.Mark] = []
        pdf_marks: list[bq.Mark] = []
        self.hist_max = 0.0
        if data is not None:
            ox, op, eps = data.outline.x, data.outline.p, data.band.eps
            cdf_marks.append(bq.Lines(
                x=ox, y=np.vstack([np.clip(op - eps, 0, 1), np.clip(op + eps, 0, 1)]),
                scales=sc, fill="between", colors=[palette.BAND], fill_colors=[palette.BAND],
                fill_opacities=[0.75], stroke_width=0,
            ))  # fmt: skip
            cdf_marks.append(
                bq.Lines(x=ox, y=op, scales=sc, colors=[palette.DATA], stroke_width=1.2)
            )
            e = data.hist_edges
            pdf_marks.append(bq.Lines(
                x=np.repeat(e, 2), y=np.r_[0.0, np.repeat(data.hist_density, 2), 0.0],
                scales=dsc, colors=[palette.DATA], fill="bottom", fill_colors=["#d9d9d9"],
                fill_opacities=[0.7], stroke_width=0.8,
            ))  # fmt: skip
            self.hist_max = float(data.hist_density.max())
        self.candidate_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 1.0], scales=sc, colors=[palette.candidate_colour(0)],
            line_style="dashed", stroke_width=1.5, visible=False,
        )  # fmt: skip
        self.cdf_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 1.0], scales=sc, colors=[palette.SKETCH], stroke_width=2.2
        )
        self.knots = bq.Scatter(
            x=sketch.x, y=sketch.p, scales=sc, enable_move=True, update_on_move=False,
            colors=[palette.KNOT], stroke="white", default_size=90, stroke_width=1.5,
            interactions={"click": "add"},
            selected_style={"stroke": palette.LOCKED, "stroke-width": 3}, unselected_style={},
        )  # fmt: skip
        self.locked_knots = bq.Scatter(
            x=[], y=[], scales=sc, marker="square", colors=[palette.LOCKED], stroke="white",
            default_size=90, stroke_width=1.5, interactions={"click": "select"},
            selected_style={"stroke": palette.KNOT_OUTSIDE_BAND, "stroke-width": 3},
            unselected_style={},
        )  # fmt: skip
        self.clamped = bq.Scatter(
            x=[0.0], y=[0.0], scales=sc, marker="circle", colors=["white"],
            stroke=palette.SKETCH, stroke_width=2.5, default_size=160, visible=False,
        )  # fmt: skip
        cdf_marks += [self.candidate_line, self.cdf_line, self.clamped]
        cdf_marks += [self.locked_knots, self.knots]
        self.pdf_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 0.0], scales=dsc, colors=[palette.SKETCH], stroke_width=2.0
        )
        self.sample_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 0.0], scales=dsc, colors=[palette.SAMPLE], stroke_width=1.4,
            visible=False,
        )  # fmt: skip
        msc = {"x": self.xs, "y": self.ms}
        self.atom_lines = bq.Lines(
            x=[[0.0, 0.0]], y=[[0.0, 0.0]], scales=msc, colors=[palette.SKETCH], stroke_width=3,
            visible=False,
        )  # fmt: skip
        self.atom_labels = bq.Label(
            x=[0.0], y=[0.0], text=[""], scales=msc, colors=[palette.SKETCH],
            font_weight="normal", default_size=12, x_offset=4, visible=False,
        )  # fmt: skip
        pdf_marks += [self.sample_line, self.pdf_line, self.atom_lines, self.atom_labels]
        common = dict(animation_duration=0, display_toolbar=False)
        self.cdf_figure = bq.Figure(
            marks=cdf_marks, axes=[ax_x, ax_y],
            fig_margin={"top": 8, "bottom": 40, **_SIDE_MARGINS},
            layout=w.Layout(width="100%", height="300px", min_width="320px"),
            background_style={"fill": "white"}, **common,
        )  # fmt: skip
        self.pdf_figure = bq.Figure(
            marks=pdf_marks, axes=[ax_x2, self.ax_d, self.ax_m],
            fig_margin={"top": 8, "bottom": 40, **_SIDE_MARGINS},
            layout=w.Layout(width="100%", height="180px", min_width="320px"), **common,
        )  # fmt: skip
        self.cdf_figure.add_class("cdfsketch-cdf")
        self.pdf_figure.add_class("cdfsketch-pdf")
        self.legend = w.HTML()
        self.legend.add_class("cdfsketch-legend")
        self.density_note = w.HTML()
        self.density_note.add_class("cdfsketch-legend")
        self._data = data
        self._candidate_name = ""
        self.movable = np.arange(len(sketch))
        self.domain = domain

    # ------------------------------------------------------------ drawing
    def set_domain(self, domain: tuple[float, float]) -> None:
        if domain != self.domain:
            self.domain = domain
            with self.xs.hold_sync():
                self.xs.min, self.xs.max = domain

    def grid(self, s: Sketch) -> np.ndarray:
        lo, hi = self.domain
        g = np.concatenate((np.linspace(lo, hi, _GRID), s.x, np.nextafter(s.x, -np.inf)))
        for t in (s.lower_tail, s.upper_tail):
            if isinstance(t, BoundedTail):
                g = np.r_[g, t.limit, np.nextafter(t.limit, -np.inf), np.nextafter(t.limit, np.inf)]
        g = np.unique(g)
        return g[(g >= lo) & (g <= hi)]

    def draw_curves(self, s: Sketch, *, grow_only: bool) -> None:
        """The sketch's CDF and density (the density axis only grows while dragging)."""
        g = self.grid(s)
        cdf, pdf = s.cdf(g), s.pdf(g)
        with self.cdf_line.hold_sync():
            self.cdf_line.x, self.cdf_line.y = g, cdf
        top, clipped = density_top(pdf, self.hist_max)
        if not grow_only or top > (self.ds.max or 0):
            self.ds.max = top
            ticks = nice_ticks(top)
            if not np.array_equal(self.ax_d.tick_values, ticks):
                self.ax_d.tick_values = ticks
            note = (
                f"density axis cut at {top:.3g}: the sketch peaks at {float(pdf.max()):.3g} "
                "where the curve is steepest"
                if clipped
                else ""
            )
            self.density_note.value = tag("span", note) if note else ""
        with self.pdf_line.hold_sync():
            self.pdf_line.x, self.pdf_line.y = g, pdf
        self._draw_atoms(s)

    def draw_knots(self, state: State, outside: np.ndarray) -> None:
        """Both knot scatters, their colours and the selection, from the state."""
        s = state.sketch
        locked = np.array(sorted(state.locked), dtype=int)
        movable = np.setdiff1d(np.arange(len(s)), locked)
        self.movable = movable
        colours = [palette.KNOT_OUTSIDE_BAND if outside[i] else palette.KNOT for i in movable]
        if not (
            self.knots.x.shape == movable.shape
            and np.array_equal(self.knots.x, s.x[movable])
            and np.array_equal(self.knots.y, s.p[movable])
        ):
            with self.knots.hold_sync():
                self.knots.x, self.knots.y = s.x[movable].copy(), s.p[movable].copy()
        if list(self.knots.colors) != colours:
            self.knots.colors = colours or [palette.KNOT]
        with self.locked_knots.hold_sync():
            if not np.array_equal(self.locked_knots.x, s.x[locked]) or not np.array_equal(
                self.locked_knots.y, s.p[locked]
            ):
                self.locked_knots.x, self.locked_knots.y = s.x[locked], s.p[locked]
        sel = state.selected
        want = [int(np.searchsorted(movable, sel))] if sel is not None and sel in movable else None
        cur = None if self.knots.selected is None else list(self.knots.selected)
        if cur != want:
            self.knots.selected = want
        lwant = [int(np.searchsorted(locked, sel))] if sel is not None and sel in locked else None
        lcur = self.locked_knots.selected
        if (None if lcur is None else list(lcur)) != lwant:
            self.locked_knots.selected = lwant
        self.clamped.visible = False

    def show_clamped(self, x: float, p: float) -> None:
        """Mark where the dragged knot really is (the pointer may be past a limit)."""
        with self.clamped.hold_sync():
            self.clamped.x, self.clamped.y = [x], [p]
            self.clamped.visible = True

    def _draw_atoms(self, s: Sketch) -> None:
        atoms = s.atoms
        if not atoms:
            if self.atom_lines.visible:
                self.atom_lines.visible = self.atom_labels.visible = self.ax_m.visible = False
            return
        ax = np.array([a.x for a in atoms])
        am = np.array([a.mass for a in atoms])
        self.ms.max = float(min(1.0, am.max() * 1.25))
        with self.atom_lines.hold_sync():
            self.atom_lines.x = np.repeat(ax[:, None], 2, axis=1)
            self.atom_lines.y = np.c_[np.zeros_like(am), am]
            self.atom_lines.visible = True
        with self.atom_labels.hold_sync():
            self.atom_labels.x, self.atom_labels.y = ax, am
            self.atom_labels.text = [f"mass {m:.3g}" for m in am]
            self.atom_labels.visible = True
        self.ax_m.visible = True

    # ------------------------------------------------------------ overlays
    def show_candidate(self, name: str, cdf: object | None) -> None:
        """Draw a candidate's CDF dashed (``cdf=None`` hides it); the legend names it."""
        if cdf is None:
            self.candidate_line.visible = False
            self._candidate_name = ""
        else:
            lo, hi = self.domain
            g = np.linspace(lo, hi, _GRID)
            with self.candidate_line.hold_sync():
                self.candidate_line.x, self.candidate_line.y = g, cdf(g)  # type: ignore[operator]
                self.candidate_line.visible = True
            self._candidate_name = name
        self.draw_legend()

    def show_sample(self, draws: np.ndarray | None) -> None:
        """The histogram of a sample preview (``None`` hides it)."""
        if draws is None:
            if self.sample_line.visible:
                self.sample_line.visible = False
                self.draw_legend()
            return
        lo, hi = self.domain
        edges = np.linspace(lo, hi, 61)
        counts, _ = np.histogram(draws, edges)
        dens = counts / (draws.size * np.diff(edges))
        with self.sample_line.hold_sync():
            self.sample_line.x = np.repeat(edges, 2)
            self.sample_line.y = np.r_[0.0, np.repeat(dens, 2), 0.0]
            self.sample_line.visible = True
        self._sample_size = int(draws.size)
        self.draw_legend()

    def draw_legend(self) -> None:
        """One line naming every mark that is visible now."""
        items: list[raw] = [tag("span", swatch("line", palette.SKETCH), "sketch")]
        items.append(tag("span", swatch("dot", palette.KNOT), "knot (drag it)"))
        items.append(tag("span", swatch("square", palette.LOCKED), "locked knot"))
        if self._data is not None:
            items.append(tag("span", swatch("dot", palette.KNOT_OUTSIDE_BAND), "outside the band"))
            d = self._data
            what = (
                f"training data, {d.n_shown:,} of {d.n:,} (ECDF, histogram)"
                if d.hidden
                else "data (ECDF, histogram)"
            )
            items.append(tag("span", swatch("line", palette.DATA), what))
            items.append(tag("span", swatch("band", palette.BAND), f"{self._data.level:.0%} band"))
        if self.candidate_line.visible:
            colour = palette.candidate_colour(0)
            items.append(
                tag(
                    "span",
                    swatch("line", colour, dash="4 3"),
                    f"started from: {self._candidate_name}",
                )
            )
        if self.sample_line.visible:
            items.append(
                tag("span", swatch("line", palette.SAMPLE), f"sample of {self._sample_size}")
            )
        html_ = tag("div", *items)
        if self.legend.value != html_:
            self.legend.value = html_
