"""The editor: drag monotone knots over the data's ECDF in a notebook.

:class:`Editor` is an ipywidgets ``VBox`` built on bqplot. Its one piece of
state is :attr:`Editor.sketch`, an immutable :class:`~cdfsketch.Sketch` in a
traitlets trait: every mark, the knot table and the readout are derived from
it by one update function (``_render``), so setting it from code updates the
view and a drag (or a typed value, a button) replaces it.

Dragging and the constraint
---------------------------
The knots are a bqplot ``Scatter`` with ``enable_move=True`` (set at
construction; bqplot ignores it when set after display) drawn over the CDF
``Lines`` (a ``Lines`` mark cannot be dragged). We keep bqplot's
``update_on_move=False``, deliberately: the dragged point then follows the
pointer smoothly and the front end sends one message per pointer move (the
``drag`` event, with the pointer's data coordinates) instead of that plus a
full copy of the ``x``/``y`` arrays (about 4× the traffic, and the point
flickers between the pointer and the clamped place while the pointer is
past a neighbour). On each ``drag`` event the kernel clamps the knot with
:meth:`Sketch.move_knot` (it never crosses a neighbour, never leaves
``[0, 1]``, no other knot moves) and replaces :attr:`sketch`, so the curve,
the density and the readout follow live; on ``drag_end`` the clamped
position is written back to the scatter, so the point snaps to where the
knot really is. A gesture from drag start to drag end is one undo step.

Outside a drag, changes to the scatter's ``x``/``y`` that arrive from the
browser are read as "one knot moved" (clamped the same way) or "one point
appended" (a click on the canvas, below); anything else is overwritten from
:attr:`sketch`. Writes from the kernel are guarded so that the observers do
not re-enter. A press and release on a knot without a move in between is a
click: it selects the knot and leaves it exactly where it was (bqplot reports
the pointer's pixel-rounded position, which would move it slightly).

Adding a knot by clicking the canvas
------------------------------------
The knot scatter itself has bqplot's ``interactions={"click": "add"}``: a
click on the plot area's event rectangle (``rect.plotarea_events``, under the
marks) appends the pointer's data position to the scatter's ``x``/``y``; the
kernel inserts it in order with :meth:`Sketch.with_knot` (``p`` clamped
between the neighbours) and writes the knots back. The curves and the band
are made transparent to the pointer by CSS (``pointer-events: none``), so a
click on them reaches the plot area too. An earlier design used a second,
empty scatter to collect the clicks: in the browser its invisible points
could stay behind after the kernel emptied it (seen under rapid input), and
they counted as drawn points; one scatter whose whole state the kernel
rewrites after every click has no such leftovers. bqplot's own "select"
click interaction is not used (it would compete with "add"); clicking a knot
selects it through the drag messages instead.

Scales and what is drawn where
------------------------------
Both position scales have ``allow_padding=False``: bqplot otherwise widens a
scale's pixel range per figure by its marks' padding (half a scatter marker,
plus the figure's ``padding_y``) and expands the axes' domains to match, so
within one figure the dots and the axes agree but the two panels (the
density panel has no scatter) map the same ``x`` to different pixels. With
no padding, the same side margins on both panels and the room for a whole
dot at ``p = 0`` and ``1`` put into the ``p`` domain (``P_ROOM``), a value is
drawn at ``left + (v - min) / (max - min) · width`` in both panels. The x
axes use d3's round tick values (a fixed ``num_ticks`` puts ticks at evenly
spaced values whose labels are rounded, so the labels did not name the tick
positions). bqplot's figure toolbar is hidden: its pan/zoom changes the
scales in the browser only, and the kernel would no longer know where the
knots are drawn (it also covered knots near the top right corner).
"""

from __future__ import annotations

import contextlib
import html
import math
import os
from collections.abc import Iterator, Sequence
from pathlib import Path
from typing import Any

import bqplot as bq
import ipywidgets as w
import numpy as np
import traitlets

from ..knots import KnotError
from ..sketch import Sketch
from ..spec import SpecError
from ..tails import BoundedTail, Tail
from . import palette
from ._editor_data import DataView
from ._editor_readout import CAUTION, readout, readout_html
from ._editor_table import KnotTable, TailControl

__all__ = ["Editor"]

_GRID = 400
#: room below p = 0 and above p = 1 in the CDF panel (a whole knot dot shows at 0 and 1)
P_ROOM = 0.04
#: the same left and right margins on both panels, so that they share x pixel for pixel
_SIDE_MARGINS = {"left": 66, "right": 50}
_EDITED = "edited in the cdfsketch Editor"
_STYLE = """<style>
.cdfsketch-editor .curve, .cdfsketch-editor .curve * { pointer-events: none; }
.cdfsketch-editor .cdfsketch-note { font-size: 11px; color: #6b6b6b; }
.cdfsketch-editor .cdfsketch-selected-row input { background: #e8f1f8; font-weight: 600; }
</style>"""


def _check_sketch(value: Any) -> Sketch:
    if not isinstance(value, Sketch):
        raise traitlets.TraitError(
            f"Editor.sketch must be a cdfsketch.Sketch; got {type(value).__name__}. "
            "Build one with Sketch(x, p), Sketch.from_quantiles(...) or cdfsketch.load(path)."
        )
    return value


class Editor(w.VBox):
    """Drag, type and judge a sketch over the data's ECDF (an ipywidgets widget).

    Parameters
    ----------
    data : array_like, optional
        The sample to draw over (ECDF, DKW band, histogram, KS distance, band
        excursion and a holdout score). Without data the editor still works.
    sketch : Sketch, optional
        Where to start. Default: the automatic knots
        (:func:`cdfsketch.autoknots.from_data`) when data are given; one of
        ``sketch`` or ``data`` is required.
    level : float
        Coverage of the simultaneous DKW band.
    quantiles : sequence of float
        Quantiles shown in the readout.
    holdout : float or None
        Fraction of the points in the seeded holdout split (``None``: none).
    seed : int
        Seed of the holdout split and of the sample previews.
    autosave : str or path, optional
        Write the spec there after every committed change (atomic).
    candidates : sequence of Candidate, optional
        Fitted candidates (:func:`cdfsketch.fit.fit_candidates`) offered as
        starting points and drawn for comparison; the "fit candidates" button
        fits them on request otherwise.
    name, units : str, optional
        Override the sketch's name and units (units label the axes).

    Examples
    --------
    >>> import numpy as np
    >>> from cdfsketch import Sketch
    >>> ed = Editor(sketch=Sketch([0, 2, 5, 9], [0, 0.3, 0.8, 1], units="h"))
    >>> ed.sketch = ed.sketch.move_knot(1, x=3.0)
    >>> ed.knots.x.tolist(), ed.undo().sketch.x.tolist()
    ([0.0, 3.0, 5.0, 9.0], [0.0, 2.0, 5.0, 9.0])
    """

    sketch = traitlets.Any()
    selected = traitlets.Int(None, allow_none=True)
    autosave = traitlets.Unicode(None, allow_none=True)

    @traitlets.validate("sketch")
    def _valid_sketch(self, proposal: dict) -> Sketch:
        return _check_sketch(proposal["value"])

    def __init__(
        self,
        data: Any = None,
        sketch: Sketch | None = None,
        *,
        level: float = 0.95,
        quantiles: Sequence[float] = (0.05, 0.5, 0.95),
        holdout: float | None = 0.3,
        seed: int = 0,
        autosave: str | os.PathLike[str] | None = None,
        candidates: Sequence[Any] | None = None,
        name: str | None = None,
        units: str | None = None,
    ) -> None:
        if data is None and sketch is None:
            raise ValueError(
                "Editor needs data, a sketch, or both; got neither. Start without data from "
                "Sketch.from_quantiles({0.05: ..., 0.5: ..., 0.95: ...}) or "
                "Sketch.from_three_points(low, mode, high)."
            )
        if sketch is not None:
            _check_sketch(sketch)
        qs = tuple(float(q) for q in quantiles)
        for i, q in enumerate(qs):
            if not 0 < q < 1:
                raise ValueError(f"quantiles must lie in (0, 1); got quantiles[{i}]={q!r}.")
        if isinstance(seed, bool) or not isinstance(seed, int | np.integer):
            raise TypeError(f"seed must be an int; got {seed!r}.")
        self._quantiles = qs
        self._seed = int(seed)
        self._data = (
            None if data is None else DataView(data, level=level, holdout=holdout, seed=seed)
        )
        self._auto: Sketch | None = None
        if sketch is None:
            sketch = self._auto_knots()
        changes = {k: v for k, v in (("name", name), ("units", units)) if v is not None}
        if changes:
            sketch = sketch.replace(**changes)
        self._initial = sketch
        self._candidates = list(candidates or [])
        self._undo: list[Sketch] = []
        self._redo: list[Sketch] = []
        self._locked: frozenset[int] = frozenset()
        self._writing = False
        self._undoing = False
        self._gesture: tuple[int, Sketch] | None = None
        self._moved = False  # whether a drag message arrived since drag_start
        self._samples = 0
        self._readout: dict[str, Any] = {}
        self._domain = self._initial_domain(sketch)
        self._build_marks(sketch)
        self._build_controls()
        super().__init__(self._layout())
        self.add_class("cdfsketch-editor")
        self.sketch = sketch
        self._undo.clear()
        if autosave is not None:
            self.autosave = os.fspath(autosave)
        self.observe(self._on_sketch, names="sketch")
        self.observe(lambda _c: self._render(), names="selected")
        self.observe(lambda _c: self._save_if_asked(), names="autosave")
        self._render()
        self._save_if_asked()

    # ================================================================ building
    def _initial_domain(self, s: Sketch) -> tuple[float, float]:
        lo, hi = float(s.ppf(0.002)), float(s.ppf(0.998))
        lo, hi = min(lo, float(s.x[0])), max(hi, float(s.x[-1]))
        if self._data is not None:
            lo, hi = min(lo, self._data.ecdf.support[0]), max(hi, self._data.ecdf.support[1])
        pad = 0.04 * (hi - lo or 1.0)
        return lo - pad, hi + pad

    def _build_marks(self, s: Sketch) -> None:
        units = s.units
        xlabel = (s.name or "value") + (f" ({units})" if units else "")
        lo, hi = self._domain
        # no mark padding on the position scales: both panels map x to the same pixels and
        # the p room for a whole knot dot at 0 and 1 is in the domain (see "Scales" above)
        self._xs = bq.LinearScale(min=lo, max=hi, allow_padding=False)
        ys = bq.LinearScale(min=-P_ROOM, max=1.0 + P_ROOM, allow_padding=False)
        self._ys = ys
        self._ds = bq.LinearScale(min=0.0, allow_padding=False)
        self._ms = bq.LinearScale(min=0.0, max=1.0)
        grid = {"stroke": "#e4e4e4"}
        ax_x = bq.Axis(scale=self._xs, label=xlabel, grid_color="#e4e4e4")
        ax_y = bq.Axis(
            scale=ys, side="left", label="cumulative probability",
            tick_format="0.1f", grid_color=grid["stroke"], tick_values=np.linspace(0, 1, 11),
        )  # fmt: skip
        ax_x2 = bq.Axis(scale=self._xs, label=xlabel, grid_lines="none")
        per = f"per {units}" if units else "per unit"
        ax_d = bq.Axis(
            scale=self._ds, side="left", label=f"density ({per})", grid_lines="none",
            tick_format=".2g", label_offset="46px",
        )  # fmt: skip
        ax_m = bq.Axis(
            scale=self._ms, side="right", label="atom mass",
            grid_lines="none", tick_format="0.2f", visible=False,
        )  # fmt: skip
        self._ax_m = ax_m
        sc = {"x": self._xs, "y": ys}
        marks_cdf: list[bq.Mark] = []
        marks_pdf: list[bq.Mark] = []
        d = self._data
        if d is not None:
            ox, op = d.outline.x, d.outline.p
            eps = d.band.eps
            band = bq.Lines(
                x=ox, y=np.vstack([np.clip(op - eps, 0, 1), np.clip(op + eps, 0, 1)]),
                scales=sc, fill="between", colors=[palette.BAND], fill_colors=[palette.BAND],
                fill_opacities=[0.75], stroke_width=0, labels=[f"{d.level:.0%} band"],
            )  # fmt: skip
            ecdf = bq.Lines(x=ox, y=op, scales=sc, colors=[palette.DATA], stroke_width=1.2)
            marks_cdf += [band, ecdf]
            e = d.hist_edges
            hx = np.repeat(e, 2)
            hy = np.r_[0.0, np.repeat(d.hist_density, 2), 0.0]
            hist = bq.Lines(
                x=hx, y=hy, scales={"x": self._xs, "y": self._ds}, colors=[palette.DATA],
                fill="bottom", fill_colors=["#d9d9d9"], fill_opacities=[0.7], stroke_width=0.8,
            )  # fmt: skip
            marks_pdf.append(hist)
            self._hist_max = float(d.hist_density.max())
        else:
            self._hist_max = 0.0
        self._candidate_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 1.0], scales=sc, colors=[palette.candidate_colour(0)],
            line_style="dashed", stroke_width=1.5, visible=False,
        )  # fmt: skip
        self.cdf_line = bq.Lines(x=[0.0, 1.0], y=[0.0, 1.0], scales=sc, colors=[palette.SKETCH])
        self.cdf_line.stroke_width = 2.2
        self.knots = bq.Scatter(
            x=s.x, y=s.p, scales=sc, enable_move=True, update_on_move=False,
            colors=[palette.KNOT], stroke="white", default_size=90, stroke_width=1.5,
            interactions={"click": "add"},
            selected_style={"stroke": palette.LOCKED, "stroke-width": 3},
            unselected_style={},
        )  # fmt: skip
        marks_cdf += [self._candidate_line, self.cdf_line, self.knots]
        self.pdf_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 0.0], scales={"x": self._xs, "y": self._ds},
            colors=[palette.SKETCH], stroke_width=2.0,
        )  # fmt: skip
        self._sample_line = bq.Lines(
            x=[0.0, 1.0], y=[0.0, 0.0], scales={"x": self._xs, "y": self._ds},
            colors=[palette.SAMPLE], stroke_width=1.4, visible=False,
        )  # fmt: skip
        self._atom_lines = bq.Lines(
            x=[[0.0, 0.0]], y=[[0.0, 0.0]], scales={"x": self._xs, "y": self._ms},
            colors=[palette.SKETCH], stroke_width=3, visible=False,
        )  # fmt: skip
        self._atom_labels = bq.Label(
            x=[0.0], y=[0.0], text=[""], scales={"x": self._xs, "y": self._ms},
            colors=[palette.SKETCH], font_weight="normal", default_size=12, x_offset=4,
            visible=False,
        )  # fmt: skip
        marks_pdf += [self._sample_line, self.pdf_line, self._atom_lines, self._atom_labels]
        self.cdf_figure = bq.Figure(
            marks=marks_cdf, axes=[ax_x, ax_y], title="CDF: drag the knots",
            fig_margin={"top": 36, "bottom": 44, **_SIDE_MARGINS},
            layout=w.Layout(width="640px", height="360px"), title_style={"font-size": "14px"},
            background_style={"fill": "white"}, animation_duration=0, display_toolbar=False,
        )  # fmt: skip
        self.pdf_figure = bq.Figure(
            marks=marks_pdf, axes=[ax_x2, ax_d, ax_m], title="implied density",
            fig_margin={"top": 30, "bottom": 44, **_SIDE_MARGINS},
            layout=w.Layout(width="640px", height="230px"), title_style={"font-size": "13px"},
            animation_duration=0, display_toolbar=False,
        )  # fmt: skip
        self.cdf_figure.add_class("cdfsketch-cdf")
        self.pdf_figure.add_class("cdfsketch-pdf")
        self.knots.on_drag_start(self._on_drag_start)
        self.knots.on_drag(self._on_drag)
        self.knots.on_drag_end(self._on_drag_end)
        self.knots.observe(self._on_knots_synced, names=["x", "y"])

    def _auto_knots(self) -> Sketch:
        """:func:`cdfsketch.autoknots.from_data` on the data, reusing the ECDF built once."""
        if self._auto is None:
            from ..autoknots import _from_ecdf

            d = self._data
            assert d is not None
            self._auto = _from_ecdf(
                d.ecdf, d.fingerprint, level=d.level, interpolation="linear", budget=None,
                lower_tail=None, upper_tail=None, name="", units="",
            )  # fmt: skip
        return self._auto

    def _button(self, label: str, css: str, action: Any, tip: str = "") -> w.Button:
        b = w.Button(description=label, tooltip=tip, layout=w.Layout(width="auto"))
        b.add_class(f"cdfsketch-{css}")
        b.on_click(lambda _b: action())
        return b

    def _build_controls(self) -> None:
        self.message = w.HTML()
        self.message.add_class("cdfsketch-message")
        self._readout_html = w.HTML()
        self._readout_html.add_class("cdfsketch-readout")
        self.table = KnotTable(on_edit=self._on_cell)
        self._interp = w.ToggleButtons(
            options=[("linear", "linear"), ("monotone cubic", "pchip")],
            style={"button_width": "132px"},
        )
        self._interp.add_class("cdfsketch-interpolation")
        self._interp.observe(self._on_interp, names="value")
        self._tails = (TailControl("lower", self._on_tail), TailControl("upper", self._on_tail))
        self._pick = w.Dropdown(
            options=[("none", -1)], value=-1, description="selected knot",
            layout=w.Layout(width="190px"), style={"description_width": "90px"},
        )  # fmt: skip
        self._pick.add_class("cdfsketch-pick")
        self._pick.observe(self._on_pick, names="value")
        self._buttons = [
            self._pick,
            self._button("add knot", "add", self.add_knot, "add a knot after the selected one"),
            self._button("remove selected", "remove", self.remove_selected),
            self._button("lock / unlock selected", "lock", self._toggle_lock),
            self._button("undo", "undo", self.undo),
            self._button("redo", "redo", self.redo),
            self._button("reset", "reset", self.reset, "back to the sketch the editor opened"),
        ]
        opts = [("as opened", "opened")]
        if self._data is not None:
            opts.append(("automatic knots", "auto"))
        self._start = w.Dropdown(
            options=opts, description="start from", layout=w.Layout(width="330px")
        )
        self._start.add_class("cdfsketch-start")
        self._refresh_candidates()
        start_row = [self._start, self._button("start over", "start", self._start_from_choice)]
        if self._data is not None:
            start_row.append(self._button("fit candidates", "fit", self._fit_candidates))
        self._start_row = w.HBox(start_row)
        self._sample_n = w.BoundedIntText(
            value=10_000, min=10, max=10_000_000, layout=w.Layout(width="110px")
        )
        self._sample_row = w.HBox(
            [
                w.HTML("sample preview, n ="),
                self._sample_n,
                self._button("draw", "sample", self._draw_sample_button),
                self._button("hide", "sample-hide", self.hide_sample),
            ]
        )
        default = f"{(self._initial.name or 'sketch').replace(' ', '_')}.json"
        self._path = w.Text(value=default, description="spec path", layout=w.Layout(width="380px"))
        self._path.add_class("cdfsketch-path")
        self._snippet = w.HTML()
        self._save_row = w.VBox(
            [
                w.HBox([self._path, self._button("save spec", "save", self._save_button)]),
                self._snippet,
            ]
        )

    def _layout(self) -> list[w.Widget]:
        s = self._initial
        title = html.escape(s.name or "sketch") + (f" ({html.escape(s.units)})" if s.units else "")
        head = w.HTML(
            f"{_STYLE}<div style='font-family:{palette.FONT}'><span style='font-size:15px'>"
            f"{title}</span><br><span class='cdfsketch-note'>{html.escape(CAUTION)}</span></div>"
        )
        left = w.VBox([self.cdf_figure, self.pdf_figure])
        right = w.VBox(
            [self._readout_html, self.message, self.table.box],
            layout=w.Layout(width="330px", margin="0 0 0 8px"),
        )
        return [
            head,
            w.HBox([left, right]),
            w.HBox([w.HTML("interpolation"), self._interp]),
            self._tails[0].box,
            self._tails[1].box,
            w.HBox(self._buttons),
            self._start_row,
            self._sample_row,
            self._save_row,
        ]

    # ================================================================ the one update
    @contextlib.contextmanager
    def _quiet(self) -> Iterator[None]:
        was, self._writing = self._writing, True
        try:
            yield
        finally:
            self._writing = was

    def _grid(self, s: Sketch) -> np.ndarray:
        lo, hi = self._domain
        g = np.concatenate(
            (np.linspace(lo, hi, _GRID), s.x, np.nextafter(s.x, -np.inf)),
        )
        for t in (s.lower_tail, s.upper_tail):
            if isinstance(t, BoundedTail):
                g = np.r_[g, t.limit, np.nextafter(t.limit, -np.inf), np.nextafter(t.limit, np.inf)]
        g = np.unique(g)
        return g[(g >= lo) & (g <= hi)]

    def _render(self) -> None:
        """Derive every mark, the table and the readout from :attr:`sketch`."""
        s = self.sketch
        drag = self._gesture is not None
        if not drag:
            self._widen_domain(s)
        d = self._data
        outside = d.outside_band(s) if d is not None else np.zeros(len(s), dtype=bool)
        g = self._grid(s)
        cdf = s.cdf(g)
        pdf = s.pdf(g)
        with self._quiet():
            with self.cdf_line.hold_sync():
                self.cdf_line.x, self.cdf_line.y = g, cdf
            top, clipped = _density_top(pdf, self._hist_max)
            if not drag or top > (self._ds.max or 0):
                self._ds.max = top
                title = "implied density"
                if clipped:
                    title += f" (axis cut at {top:.3g}; peak {float(pdf.max()):.3g})"
                if self.pdf_figure.title != title:
                    self.pdf_figure.title = title
            with self.pdf_line.hold_sync():
                self.pdf_line.x, self.pdf_line.y = g, pdf
            self._draw_atoms(s)
            colours = [
                palette.LOCKED if i in self._locked
                else palette.KNOT_OUTSIDE_BAND if outside[i] else palette.KNOT
                for i in range(len(s))
            ]  # fmt: skip
            if self.knots.colors != colours:
                self.knots.colors = colours
            if not drag:
                self._write_knots(s)
                sel = None if self.selected is None else [self.selected]
                cur = self.knots.selected
                if (None if cur is None else list(cur)) != sel:
                    self.knots.selected = sel
            if not drag:
                n = len(s)
                if len(self._pick.options) != n + 1:
                    self._pick.options = [("none", -1), *((str(i), i) for i in range(n))]
                self._pick.value = -1 if self.selected is None else self.selected
            only = self._gesture[0] if drag else None
            self.table.show(s, locked=self._locked, selected=self.selected, only=only)
            if not drag:
                for tc in self._tails:
                    tc.show(s, self._default_limit(tc.side))
                self._interp.value = s.interpolation
            r = readout(s, d, self._quantiles, outside)
            self._readout = r
            self._readout_html.value = readout_html(r, d, s.units)

    def _write_knots(self, s: Sketch) -> None:
        if not (
            self.knots.x.shape == s.x.shape
            and np.array_equal(self.knots.x, s.x)
            and np.array_equal(self.knots.y, s.p)
        ):
            with self.knots.hold_sync():
                self.knots.x, self.knots.y = s.x.copy(), s.p.copy()

    def _draw_atoms(self, s: Sketch) -> None:
        atoms = s.atoms
        if not atoms:
            if self._atom_lines.visible:
                self._atom_lines.visible = self._atom_labels.visible = self._ax_m.visible = False
            return
        ax = np.array([a.x for a in atoms])
        am = np.array([a.mass for a in atoms])
        self._ms.max = float(min(1.0, am.max() * 1.25))
        with self._atom_lines.hold_sync():
            self._atom_lines.x = np.repeat(ax[:, None], 2, axis=1)
            self._atom_lines.y = np.c_[np.zeros_like(am), am]
            self._atom_lines.visible = True
        with self._atom_labels.hold_sync():
            self._atom_labels.x, self._atom_labels.y = ax, am
            self._atom_labels.text = [f"mass {m:.3g}" for m in am]
            self._atom_labels.visible = True
        self._ax_m.visible = True

    def _widen_domain(self, s: Sketch) -> None:
        lo, hi = self._domain
        if s.x[0] < lo or s.x[-1] > hi:
            pad = 0.04 * (max(hi, s.x[-1]) - min(lo, s.x[0]))
            self._domain = (min(lo, s.x[0] - pad), max(hi, s.x[-1] + pad))
            self._xs.min, self._xs.max = self._domain

    def _default_limit(self, side: str) -> float:
        s = self.sketch
        span = float(s.x[-1] - s.x[0]) or 1.0
        if side == "lower":
            base = float(s.x[0])
            if self._data is not None:
                base = min(base, self._data.ecdf.support[0])
            return base - 0.1 * span
        base = float(s.x[-1])
        if self._data is not None:
            base = max(base, self._data.ecdf.support[1])
        return base + 0.1 * span

    # ================================================================ state changes
    def _on_sketch(self, change: dict) -> None:
        if self._gesture is None and not self._undoing:
            self._undo.append(change["old"])
            self._redo.clear()
            self._remap_locks(change["old"], change["new"])
        self._render()
        if self._gesture is None:
            self._save_if_asked()

    def _remap_locks(self, old: Sketch, new: Sketch) -> None:
        if len(old) != len(new):
            keep = set()
            for i in self._locked:
                hit = np.flatnonzero((new.x == old.x[i]) & (new.p == old.p[i]))
                if hit.size:
                    keep.add(int(hit[0]))
            self._locked = frozenset(keep)
            if self.selected is not None and self.selected >= len(new):
                self.selected = None

    def _apply(self, make: Any) -> bool:
        """Replace the sketch by ``make(sketch)``; show the error instead of raising."""
        try:
            new = make(self.sketch)
        except (KnotError, SpecError, ValueError, TypeError) as err:
            self._error(str(err))
            return False
        self.message.value = ""
        self.sketch = new
        return True

    def _error(self, text: str) -> None:
        self.message.value = (
            f"<div style='font-family:{palette.FONT};font-size:12px;"
            f"color:{palette.KNOT_OUTSIDE_BAND}'>{html.escape(text)}</div>"
        )

    # ---------------------------------------------------------------- dragging
    def _on_drag_start(self, _mark: Any, content: dict) -> None:
        i = int(content["index"])
        self._gesture = (i, self.sketch)
        self._moved = False

    def _drag_target(self, content: dict) -> tuple[int, Sketch] | None:
        i = int(content["index"])
        if self._gesture is None or self._gesture[0] != i:
            self._gesture = (i, self.sketch)
        start = self._gesture[1]
        if i in self._locked or not 0 <= i < len(start):
            return None
        pt = content["point"]
        try:
            return i, start.move_knot(i, x=float(pt["x"]), p=float(pt["y"]))
        except (KnotError, ValueError, TypeError):
            return None

    def _on_drag(self, _mark: Any, content: dict) -> None:
        self._moved = True
        target = self._drag_target(content)
        if target is not None:
            self.sketch = target[1]

    def _on_drag_end(self, _mark: Any, content: dict) -> None:
        # a press and release without a move in between is a click (it selects the knot):
        # the knot stays exactly where it is, not at the pixel-rounded pointer position
        target = self._drag_target(content) if self._moved else None
        start = self._gesture[1] if self._gesture is not None else self.sketch
        self._gesture = None
        self._moved = False
        final = start if target is None else target[1]
        i = int(content["index"])
        if 0 <= i < len(start):
            self.selected = i
        if final != start:
            self._undo.append(start)
            self._redo.clear()
        if final != self.sketch:
            self._undoing = True
            try:
                self.sketch = final  # renders and autosaves
            finally:
                self._undoing = False
        else:
            self._render()  # snaps the dragged point to the clamped place
            self._save_if_asked()

    def _on_knots_synced(self, change: dict) -> None:
        if self._writing or self._gesture is not None:
            return
        s = self.sketch
        kx = np.asarray(self.knots.x, dtype=float)
        ky = np.asarray(self.knots.y, dtype=float)
        if (
            kx.shape == ky.shape
            and kx.size == len(s) + 1
            and np.array_equal(kx[:-1], s.x)
            and np.array_equal(ky[:-1], s.p)
        ):
            # a click on the canvas: bqplot's "add" interaction appended the pointer's point
            self._add_at(float(kx[-1]), float(ky[-1]))
            with self._quiet():
                self._write_knots(self.sketch)
            return
        if kx.shape == s.x.shape == ky.shape:
            moved = np.flatnonzero((kx != s.x) | (ky != s.p))
            if moved.size == 1 and int(moved[0]) not in self._locked:
                i = int(moved[0])
                if self._apply(lambda sk: sk.move_knot(i, x=kx[i], p=ky[i])):
                    self._render()
                    return
        with self._quiet():
            self._write_knots(s)

    # ---------------------------------------------------------------- controls
    def _on_cell(self, i: int, field: str, value: float) -> None:
        s = self.sketch
        v = float(value)
        if not math.isfinite(v):
            self._error(f"Knot {i}: {field} must be a finite number; got {value!r}.")
            self.table.revert(s, i)
            return
        x, p = s.x.copy(), s.p.copy()
        (x if field == "x" else p)[i] = v
        if not self._apply(lambda sk: sk.replace(x=x, p=p)):
            self.table.revert(s, i)

    def _on_pick(self, change: dict) -> None:
        if not self._writing:
            self.selected = None if change["new"] < 0 else int(change["new"])

    def _toggle_lock(self) -> None:
        if self.selected is None:
            self._error("Select a knot first (click it, or its number in the table).")
            return
        self.lock(self.selected, locked=self.selected not in self._locked)

    def _on_interp(self, change: dict) -> None:
        if not self._writing:
            self._apply(lambda s: s.replace(interpolation=change["new"]))

    def _on_tail(self, side: str, tail: Tail | ValueError) -> None:
        if self._writing:
            return
        if isinstance(tail, ValueError):
            self._error(str(tail))
            self._render()
            return
        if not self._apply(lambda s: s.replace(**{f"{side}_tail": tail})):
            with self._quiet():
                for tc in self._tails:
                    tc.show(self.sketch, self._default_limit(tc.side))

    def _refresh_candidates(self) -> None:
        opts = [o for o in self._start.options if o[1] in ("opened", "auto")]
        opts += [(f"fit: {c.name}", f"cand:{i}") for i, c in enumerate(self._candidates)]
        self._start.options = opts

    def _fit_candidates(self) -> None:
        from ..fit import fit_candidates

        assert self._data is not None
        try:
            self._candidates = list(
                fit_candidates(self._data.values, rng=self._seed, progress=False)
            )
        except ValueError as err:
            self._error(str(err))
            return
        self._refresh_candidates()
        self.message.value = (
            f"<span class='cdfsketch-note'>{len(self._candidates)} candidates fitted; choose one "
            "under 'start from' (its CDF is drawn dashed).</span>"
        )

    def _start_from_choice(self) -> None:
        self.start_from(self._start.value)

    def _draw_sample_button(self) -> None:
        self._samples += 1
        self.preview_sample(int(self._sample_n.value), rng=[self._seed, self._samples])

    def _save_button(self) -> None:
        try:
            self.save(self._path.value)
        except (OSError, SpecError, ValueError) as err:
            self._error(f"Could not save the spec to {self._path.value!r}: {err}")

    def _save_if_asked(self) -> None:
        if self.autosave:
            try:
                self.sketch.to_json(self.autosave, **self._provenance())
            except (OSError, SpecError, ValueError) as err:
                self._error(f"Autosave to {self.autosave!r} failed: {err}")

    def _provenance(self) -> dict[str, Any]:
        method = str(self.sketch.provenance.get("method", "") or "")
        if not method.startswith(_EDITED):
            method = _EDITED + (f", starting from {method}" if method else "")
        prov: dict[str, Any] = {"method": method}
        if self._data is not None:
            prov["data"] = self._data.fingerprint
        return prov

    def _add_at(self, x: float, p: float) -> None:
        if self._apply(lambda s: s.with_knot(x, p)):
            hit = np.flatnonzero(self.sketch.x == x)
            if hit.size:
                self.selected = int(hit[-1])

    # ================================================================ public API
    @property
    def readout(self) -> dict[str, Any]:
        """The readout's numbers (mean, sd, quantiles, tails, fit numbers) for the sketch."""
        return dict(self._readout)

    @property
    def data(self) -> DataView | None:
        """What the editor computed from the data (ECDF, band, split), or ``None``."""
        return self._data

    @property
    def locked(self) -> frozenset[int]:
        """Indices of the locked knots (they do not move when dragged)."""
        return self._locked

    @property
    def can_undo(self) -> bool:
        """Whether :meth:`undo` has a step to go back to."""
        return bool(self._undo)

    def lock(self, i: int, *, locked: bool = True) -> Editor:
        """Lock (or unlock) knot ``i``: it then ignores drags and table edits."""
        n = len(self.sketch)
        if isinstance(i, bool) or not isinstance(i, int | np.integer) or not 0 <= i < n:
            raise KnotError(f"Knot index must be an integer in [0, {n - 1}]; got {i!r}.")
        self._locked = self._locked | {int(i)} if locked else self._locked - {int(i)}
        self._render()
        return self

    def undo(self) -> Editor:
        """Go back one change (a whole drag gesture is one change)."""
        if self._undo:
            self._step(self._undo, self._redo)
        return self

    def redo(self) -> Editor:
        """Redo the last undone change."""
        if self._redo:
            self._step(self._redo, self._undo)
        return self

    def _step(self, source: list[Sketch], target: list[Sketch]) -> None:
        target.append(self.sketch)
        self._undoing = True
        try:
            old = self.sketch
            self.sketch = source.pop()
            self._remap_locks(old, self.sketch)
        finally:
            self._undoing = False

    def reset(self) -> Editor:
        """Back to the sketch the editor opened with (undoable)."""
        self.sketch = self._initial
        return self

    def add_knot(self, x: float | None = None, p: float | None = None) -> Editor:
        """Add a knot at ``(x, p)``; by default halfway to the next knot after the selected one.

        Without a selection the knot goes into the middle of the widest step in
        ``p``. Errors are shown in the editor (the sketch is unchanged).
        """
        s = self.sketch
        if x is None or p is None:
            i = self.selected
            if i is None or i >= len(s) - 1:
                i = int(np.argmax(np.diff(s.p) + 1e-12 * np.diff(s.x)))
            x = 0.5 * (float(s.x[i]) + float(s.x[i + 1])) if x is None else x
            p = 0.5 * (float(s.p[i]) + float(s.p[i + 1])) if p is None else p
        self._add_at(float(x), float(p))
        return self

    def remove_selected(self) -> Editor:
        """Remove the selected knot (errors, e.g. keeping 2 knots, are shown)."""
        i = self.selected
        if i is None:
            self._error("Select a knot first (click it, or its number in the table).")
            return self
        if i in self._locked:
            self._error(f"Knot {i} is locked; unlock it before removing it.")
            return self
        if self._apply(lambda s: s.without_knot(i)):
            self.selected = None
        return self

    def start_from(self, choice: str | Sketch | Any) -> Editor:
        """Start over from ``"auto"`` (automatic knots), ``"opened"``, a candidate or a sketch.

        A candidate (:class:`cdfsketch.fit.Candidate`, or ``"cand:<i>"`` for
        the i-th offered one) becomes a sketch with
        ``Candidate.to_sketch(knots=12)`` and its CDF is drawn dashed for
        comparison. Undoable.
        """
        s = self.sketch
        cand = None
        if isinstance(choice, Sketch):
            new = choice
        elif choice == "opened":
            new = self._initial
        elif choice == "auto":
            if self._data is None:
                self._error("Automatic knots need data; this editor has none.")
                return self
            new = self._auto_knots().replace(name=s.name, units=s.units)
        elif isinstance(choice, str) and choice.startswith("cand:"):
            cand = self._candidates[int(choice[5:])]
            new = cand.to_sketch(knots=12, name=s.name, units=s.units)
        elif hasattr(choice, "to_sketch"):
            cand = choice
            new = cand.to_sketch(knots=12, name=s.name, units=s.units)
        else:
            raise ValueError(
                f"start_from takes 'auto', 'opened', a Candidate, 'cand:<i>' or a Sketch; got "
                f"{choice!r}."
            )
        self.show_candidate(cand)
        self.selected = None
        self.sketch = new
        return self

    def show_candidate(self, candidate: Any | None) -> Editor:
        """Draw a candidate's CDF dashed over the sketch (``None`` hides it)."""
        if candidate is None:
            self._candidate_line.visible = False
            return self
        lo, hi = self._domain
        g = np.linspace(lo, hi, _GRID)
        with self._candidate_line.hold_sync():
            self._candidate_line.x, self._candidate_line.y = g, candidate.cdf(g)
            self._candidate_line.visible = True
        return self

    def preview_sample(self, size: int = 10_000, *, rng: Any = None) -> np.ndarray:
        """Draw ``size`` values from the compiled sampler and show their histogram.

        Returns the draws. ``rng`` is anything ``np.random.default_rng`` takes.
        """
        if isinstance(size, bool) or not isinstance(size, int | np.integer) or size < 1:
            raise ValueError(f"size must be a positive integer; got {size!r}.")
        draws = self.sketch.sample(int(size), rng=rng)
        lo, hi = self._domain
        edges = np.linspace(lo, hi, 61)
        counts, _ = np.histogram(draws, edges)
        dens = counts / (draws.size * np.diff(edges))
        with self._sample_line.hold_sync():
            self._sample_line.x = np.repeat(edges, 2)
            self._sample_line.y = np.r_[0.0, np.repeat(dens, 2), 0.0]
            self._sample_line.visible = True
        self._sample_line.labels = [f"sample of {size}"]
        return draws

    def hide_sample(self) -> Editor:
        """Hide the sample preview."""
        self._sample_line.visible = False
        return self

    def save(self, path: str | os.PathLike[str], **provenance: Any) -> Path:
        """Write the spec to ``path`` (atomic) and show the snippet that loads it.

        Keyword arguments add to the provenance (``author=``, ``rationale=``…).
        """
        prov = {**self._provenance(), **provenance}
        target = Path(path)
        self.sketch.to_json(target, **prov)
        self._snippet.value = (
            f"<div style='font-family:{palette.FONT};font-size:12px'>saved "
            f"<code>{html.escape(str(target))}</code>; load it anywhere with:<pre>"
            f"{html.escape(self.snippet(target))}</pre></div>"
        )
        return target

    @staticmethod
    def snippet(path: str | os.PathLike[str]) -> str:
        """Python that loads the spec at ``path`` and samples it (no widgets needed)."""
        return (
            "import cdfsketch\n"
            f"sketch = cdfsketch.load({os.fspath(path)!r})\n"
            "values = sketch.sample(10_000, rng=1)"
        )


def _density_top(pdf: np.ndarray, hist_max: float) -> tuple[float, bool]:
    """Top of the density axis, and whether a peak is cut off.

    A nearly vertical stretch of the CDF has an enormous density; letting it
    set the axis would flatten everything else to zero. The axis stops at four
    times the larger of the data histogram's peak and the sketch's 95th
    percentile density, and the panel title says where it was cut (common
    practice, no source).
    """
    peak = float(pdf.max()) if pdf.size else 0.0
    positive = pdf[pdf > 0]
    typical = float(np.percentile(positive, 95)) if positive.size else 0.0
    cap = 4.0 * max(hist_max, typical)
    if cap > 0 and peak > cap:
        return cap * 1.05, True
    return (max(hist_max, peak) * 1.12) or 1.0, False
