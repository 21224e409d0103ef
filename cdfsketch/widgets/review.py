"""The review board: candidates for one input side by side, and the group's decision.

:class:`ReviewBoard` is the notebook view of a :class:`cdfsketch.review.Review`
(which holds the candidates, the data, the comparison and the decision).
Every mark is derived from that one state; ``choose`` replaces the decision
and the marks restyle.

Layout: the two panels (CDFs over the data's ECDF and its DKW band; densities
over the histogram, atoms as spikes) take the width; beside them (below them
on a narrow screen) a column holds the legend — one toggle per candidate with
its colour, dash and marker, plus the data layers — and the read-out, so the
values under the pointer are seen next to the curves. Beneath: flags, the
comparison, whether the choice changes the model's answer (with a consequence
run; :mod:`._review_outcome`), the decision form, the caution.

Hover needs no click: an invisible strip of bars over each panel reports the
bar under the pointer, so the read-out follows the mouse (to 1/240 of the
x range).
"""

from __future__ import annotations

import html
from collections.abc import Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

import numpy as np

from .._extras import need
from .._numfmt import significant
from .._validate import InputError, fail, quote
from ..review import palette
from ..review.figures import save_figure
from ..review.layers import (
    curves,
    data_layers,
    density_top,
    flags_text,
    floor_flags,
    nice_ticks,
    span,
    x_range,
)
from ..review.page import save_html
from ..review.record import Review
from ..review.table import QUESTIONS, presentation, table_html
from ..review.texts import CAUTION
from ._review_outcome import BQ_DASH, BQ_MARKER, ConsequenceSection
from ._review_outcome import swatch as _swatch

__all__ = ["ReviewBoard"]

widgets = need("notebook", "ipywidgets")
bqplot = need("notebook", "bqplot")

_MARGIN = {"top": 16, "bottom": 42, "left": 62, "right": 56}
#: Bars in the invisible hover strip (the read-out's x resolution: range / this).
HOVER_BARS = 240
_SIDE_WIDTH = "280px"


class ReviewBoard(ConsequenceSection, widgets.VBox):
    """Overlay candidates for one input, compare them, and record the decision.

    Parameters
    ----------
    data : array_like, optional
        Observations; without them there is no ECDF, band, histogram or table.
    candidates : sequence
        Sketches (an expert's judgement, a pool), fit Candidates
        (:func:`cdfsketch.fit.fit_candidates`) and an ECDF (shown as
        "resampled data"), named by their ``.name``; names must be unique.
    level : float
        Coverage of the DKW band.
    units, name : str
        The quantity's units (axis labels, chosen spec) and name (title,
        chosen spec's name).
    holdout : float or None
        Fraction held out by :func:`cdfsketch.fit.compare` for the table.
    rng : optional
        Seed for the holdout split (``np.random.default_rng``).
    progress : None, False or callable
        Progress of scoring the candidates against the data; see
        :func:`cdfsketch.fit.compare`.
    consequences, model, inputs, vary, size, consequence_options, output_units
        Whether the choice changes the model's answer: a finished
        :func:`cdfsketch.consequences` run, or what the review needs to run
        one; see :class:`cdfsketch.review.Review`. The board then shows the
        output's CDF per candidate and the table of output figures.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> a = Sketch([0, 4, 10], [0, 0.5, 1], name="expert A")
    >>> b = Sketch([0, 6, 12], [0, 0.5, 1], name="expert B")
    >>> board = ReviewBoard(candidates=[a, b], units="h")
    >>> _ = board.choose("expert A", by="review group", rationale="closest to the logs")
    >>> board.chosen_spec()["provenance"]["decision"]["chosen"]
    'expert A'
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
        consequences: Any = None,
        model: Any = None,
        inputs: Any = None,
        vary: str | None = None,
        size: int | None = None,
        consequence_options: Any = None,
        output_units: Any = None,
    ) -> None:
        self._review = Review(
            data, candidates, level=level, units=units, name=name, holdout=holdout, rng=rng,
            progress=progress, consequences=consequences, model=model, inputs=inputs, vary=vary,
            size=size, consequence_options=consequence_options, output_units=output_units,
        )  # fmt: skip
        r = self._review
        self._lo, self._hi = x_range(r)
        self._curves = curves(r)
        self._layers = data_layers(r)
        self._pres = presentation(r)
        self.x_scale = bqplot.LinearScale(min=self._lo, max=self._hi)
        self._build_panels()
        self._build_side()
        self._build_table()
        self._build_decision()
        self._build_outcome()
        self._restyle()
        self._show_table()
        self._show_decision()
        plots = widgets.VBox(
            [self.cdf_figure, self.pdf_figure],
            layout={"flex": "1 1 460px", "min_width": "0", "overflow": "hidden"},
        )
        main = widgets.HBox(
            [plots, self.side], layout={"flex_flow": "row wrap", "align_items": "flex-start"}
        )
        head = widgets.HTML(
            f'<div style="font-family:{html.escape(palette.FONT)};line-height:1.35">'
            "<b style='font-size:15px'>"
            f"{html.escape(r.name or 'Review of candidate distributions')}</b><br>"
            "<span style='font-size:12.5px'>Untick a candidate to hide it; move the mouse "
            "over a plot to read each candidate's values at that point. "
            f"<i>{html.escape(CAUTION)}</i></span></div>"
        )
        self.flags_view = widgets.HTML(self._flags_html())
        super().__init__(
            [head, self.flags_view, main, *self._table_box, self.outcome_box, *self._decision_box],
            layout={"width": "100%", "max_width": "1400px"},
        )
        self.add_class("cdfsketch-review")

    # ------------------------------------------------------------ building
    def _build_panels(self) -> None:
        r, lay = self._review, self._layers
        y_cdf = bqplot.LinearScale(min=0.0, max=1.0)
        y_pdf = bqplot.LinearScale(min=0.0, max=density_top(r, self._curves, lay))
        masses = [a.mass for cv in self._curves for a in cv.spikes]
        y_mass = bqplot.LinearScale(min=0.0, max=1.1 * max(masses) if masses else 1.0)
        xs, ps = {"x": self.x_scale, "y": y_cdf}, {"x": self.x_scale, "y": y_pdf}
        ms = {"x": self.x_scale, "y": y_mass}
        upper: list[Any] = []
        lower: list[Any] = []
        if lay is not None:
            upper.append(bqplot.Lines(
                x=lay["band_x"], y=[lay["band_lower"], lay["band_upper"]], scales=xs,
                fill="between", colors=[palette.BAND], fill_colors=[palette.BAND],
                fill_opacities=[0.8],
            ))  # fmt: skip
            upper.append(bqplot.Lines(x=lay["steps_x"], y=lay["steps_p"], scales=xs,
                                      colors=[palette.DATA], stroke_width=1.4))  # fmt: skip
            e, d = lay["edges"], lay["density"]
            lower.append(bqplot.Lines(
                x=np.repeat(e, 2), y=np.r_[0.0, np.repeat(d, 2), 0.0], scales=ps,
                fill="bottom", colors=[palette.DATA], fill_colors=[palette.DATA],
                fill_opacities=[0.3],
            ))  # fmt: skip
        self.cdf_lines: dict[str, Any] = {}
        self.pdf_lines: dict[str, Any] = {}
        self.markers: dict[str, Any] = {}
        self.spikes: dict[str, Any] = {}
        for c, cv in zip(r.candidates, self._curves, strict=True):
            self.cdf_lines[c.name] = bqplot.Lines(x=cv.x, y=cv.cdf, scales=xs, labels=[c.name])
            upper.append(self.cdf_lines[c.name])
            shift = (r.names.index(c.name) % 5) / 60  # markers of neighbours apart
            mx = span(self._lo, self._hi, 9)[1:-1] * (1 - shift) + self._hi * shift
            self.markers[c.name] = bqplot.Scatter(
                x=mx, y=np.interp(mx, cv.x, cv.cdf), scales=xs, default_size=18, stroke="white"
            )
            upper.append(self.markers[c.name])
            if np.any(cv.pdf > 0):
                self.pdf_lines[c.name] = bqplot.Lines(x=cv.pdf_x, y=cv.pdf, scales=ps)
                lower.append(self.pdf_lines[c.name])
            if cv.spikes:
                ax_ = [[a.x, a.x] for a in cv.spikes]
                ay = [[0.0, a.mass] for a in cv.spikes]
                self.spikes[c.name] = bqplot.Lines(x=ax_, y=ay, scales=ms, stroke_width=2)
                lower.append(self.spikes[c.name])
        self.guides = []
        self.hover_strips = []
        for marks in (upper, lower):
            unit = bqplot.LinearScale(min=0.0, max=1.0)
            guide = bqplot.Lines(x=[self._lo, self._lo], y=[0.0, 1.0], visible=False,
                                 scales={"x": self.x_scale, "y": unit}, colors=["#333333"],
                                 line_style="dashed", stroke_width=1)  # fmt: skip
            centres = span(self._lo, self._hi, HOVER_BARS)
            strip = bqplot.Bars(x=centres, y=np.ones(HOVER_BARS), scales={"x": self.x_scale,
                                "y": unit}, padding=0.0, opacities=[0.0] * HOVER_BARS,
                                colors=["#ffffff"], base=0.0)  # fmt: skip
            strip.on_hover(self._on_hover)
            marks.extend([guide, strip])
            self.guides.append(guide)
            self.hover_strips.append(strip)
        label = f"{r.name or 'x'}" + (f" ({r.units})" if r.units else "")
        ticks = {"tick_values": nice_ticks(self._lo, self._hi, 6), "tick_format": ".4~g"}
        self.cdf_figure = bqplot.Figure(
            marks=upper,
            axes=[bqplot.Axis(scale=self.x_scale, label=label, **ticks),
                  bqplot.Axis(scale=y_cdf, side="left", label="cumulative probability",
                              tick_values=[0, 0.25, 0.5, 0.75, 1], tick_format=".2~f")],
            fig_margin=_MARGIN, layout={"width": "100%", "height": "330px"},
        )  # fmt: skip
        dens = f"density (per {r.units})" if r.units else "density"
        lower_axes = [bqplot.Axis(scale=self.x_scale, label=label, **ticks),
                      bqplot.Axis(scale=y_pdf, side="left", label=dens, tick_format=".3~g",
                                  tick_values=nice_ticks(0.0, y_pdf.max / 1.15, 4))]  # fmt: skip
        if masses:
            lower_axes.append(bqplot.Axis(scale=y_mass, side="right", label="atom mass",
                                          tick_values=nice_ticks(0.0, y_mass.max / 1.1, 3),
                                          tick_format=".2~g"))  # fmt: skip
        self.pdf_figure = bqplot.Figure(
            marks=lower, axes=lower_axes, fig_margin=_MARGIN,
            layout={"width": "100%", "height": "240px"},
        )  # fmt: skip
        self.cdf_figure.add_class("cdfsketch-review-cdf")
        self.pdf_figure.add_class("cdfsketch-review-pdf")

    def _build_side(self) -> None:
        r = self._review
        self.toggles: dict[str, Any] = {}
        rows = [widgets.HTML("<b>Candidates</b> <small>(untick to hide)</small>")]
        for c in r.candidates:
            box = widgets.Checkbox(value=True, indent=False, layout={"width": "22px"})
            box.observe(self._on_toggle, names="value")
            self.toggles[c.name] = box
            label = widgets.HTML(layout={"width": "240px", "overflow": "hidden"})
            label.add_class("cdfsketch-legend-label")
            rows.append(
                widgets.HBox([box, label], layout={"align_items": "center", "height": "24px"})
            )
        self._legend_labels = [row.children[1] for row in rows[1:]]
        data_keys = []
        if self._layers is not None:
            data_keys.append(_swatch(palette.DATA, "solid") + " data (ECDF, histogram)")
            data_keys.append(
                f'<span style="display:inline-block;width:26px;height:10px;background:'
                f'{palette.BAND}"></span> {r.level:.0%} DKW band'
            )
        rows.append(
            widgets.HTML(
                "<div style='line-height:1.4'><small>" + "<br>".join(data_keys) + "</small></div>"
            )
        )
        self.readout = widgets.HTML(
            "<div style='line-height:1.3;font-size:12.5px'><i>Move the mouse over a plot to "
            "read x, F(x) and f(x).</i></div>",
            layout={"min_height": "60px"},
        )
        self.readout.add_class("cdfsketch-review-readout")
        self.side = widgets.VBox(
            [self.readout, *rows],
            layout={"width": _SIDE_WIDTH, "flex": f"0 0 {_SIDE_WIDTH}", "padding": "0 0 0 8px"},
        )
        self.side.add_class("cdfsketch-review-side")

    def _build_table(self) -> None:
        self.table_view = widgets.HTML(layout={"max_width": "100%", "overflow": "hidden"})
        self.table_view.add_class("cdfsketch-review-table")
        if self._pres is None:
            self.sort_column = None
            self.sort_descending = None
            self._table_box = [widgets.HTML("<i>No data: no comparison.</i>")]
            return
        options = [("as given", "")] + [(label, key) for key, label, *_ in QUESTIONS]
        self.sort_column = widgets.Dropdown(options=options, description="sort by",
                                            layout={"width": "280px"})  # fmt: skip
        self.sort_descending = widgets.Checkbox(value=False, description="descending")
        for w in (self.sort_column, self.sort_descending):
            w.observe(lambda _change: self._show_table(), names="value")
        self._table_box = [
            widgets.HTML("<b>How the candidates compare</b>"),
            widgets.HBox([self.sort_column, self.sort_descending]),
            self.table_view,
        ]

    def _build_decision(self) -> None:
        r = self._review
        self.choice = widgets.Dropdown(options=list(r.names), description="choose")
        self.decided_by = widgets.Text(description="by", placeholder="who decided")
        self.rationale = widgets.Textarea(description="why", placeholder="the rationale",
                                          layout={"width": "min(100%, 640px)"})  # fmt: skip
        self.record = widgets.Button(description="Record decision", button_style="primary")
        self.record.on_click(self._on_record)
        self.decision_view = widgets.HTML()
        self._decision_box = [
            widgets.HTML("<b>Decision</b>"),
            widgets.HBox([self.choice, self.decided_by], layout={"flex_flow": "row wrap"}),
            self.rationale,
            self.record,
            self.decision_view,
        ]

    # ------------------------------------------------------------ state
    @property
    def review(self) -> Review:
        """The :class:`~cdfsketch.review.Review` this board shows."""
        return self._review

    @property
    def names(self) -> tuple[str, ...]:
        """The candidates' names."""
        return self._review.names

    @property
    def chosen(self) -> str | None:
        """The chosen candidate's name, or None."""
        return self._review.chosen

    @property
    def visible(self) -> dict[str, bool]:
        """Which candidates are shown."""
        return {n: box.value for n, box in self.toggles.items()}

    def set_visible(self, name: str, visible: bool = True) -> None:
        """Show or hide one candidate (the same as its toggle)."""
        self._review.candidate(name)
        if not isinstance(visible, bool):
            raise fail("visible must be True or False", quote(visible),
                       "Pass visible=False to hide.", field="visible", value=visible)  # fmt: skip
        self.toggles[name].value = visible

    # ------------------------------------------------------------ decision
    def choose(
        self, name: str, *, by: str, rationale: str, when: str | datetime | None = None
    ) -> Any:
        """Record the decision; see :meth:`cdfsketch.review.Review.choose`."""
        decision = self._review.choose(name, by=by, rationale=rationale, when=when)
        self.choice.value = name
        self._pres = presentation(self._review)
        self._restyle()
        self._show_table()
        self._show_decision()
        self._show_outcome()
        return decision

    def chosen_spec(self) -> dict[str, Any]:
        """The chosen candidate's spec with the decision; see :meth:`Review.chosen_spec`."""
        return self._review.chosen_spec()

    def table(self) -> Any:
        """The comparison table with every raw score (``to_pandas()``, ``to_csv()``)."""
        return self._review.table()

    def save_html(self, path: str | Path, *, include_data: bool = False) -> Path:
        """Write the standalone review page; see :func:`cdfsketch.review.save_html`."""
        return save_html(self._review, path, include_data=include_data)

    def save_figure(self, path: str | Path, **options: Any) -> Path:
        """Write PNG, SVG or PDF; see :func:`cdfsketch.review.save_figure`."""
        return save_figure(self._review, path, **options)

    # ------------------------------------------------------------ read-out
    def readout_at(self, x: float) -> list[dict[str, Any]]:
        """x, p and density of each shown candidate at ``x`` (what the read-out shows)."""
        v = float(x)
        if not np.isfinite(v):
            raise fail("x must be a finite number", quote(x), "Pass a point on the x axis.",
                       field="x", value=x)  # fmt: skip
        out = []
        for c in self._review.candidates:
            if not self.toggles[c.name].value:
                continue
            has_density = c.name in self.pdf_lines
            out.append({
                "name": c.name, "x": v, "p": float(c.cdf(v)),
                "density": float(c.pdf(v)) if has_density else None,
            })  # fmt: skip
        return out

    def _on_hover(self, _mark: Any, content: dict[str, Any]) -> None:
        data = content.get("data") or {}
        i = data.get("index")
        if i is None:
            return
        x = float(span(self._lo, self._hi, HOVER_BARS)[int(i)])
        self.show_readout(x)

    def show_readout(self, x: float) -> None:
        """Show the read-out and the guide line at ``x`` (what hovering at ``x`` does)."""
        rows = self.readout_at(x)
        units = f" {self._review.units}" if self._review.units else ""
        body = "".join(
            f"<tr><td style='max-width:150px;overflow:hidden;text-overflow:ellipsis;"
            f"white-space:nowrap'>{_swatch(*self._style_bits(r['name']), width=16)} "
            f"{html.escape(r['name'])}</td><td style='text-align:right'>{r['p']:.3f}</td>"
            f"<td style='text-align:right'>"
            f"{'atoms' if r['density'] is None else significant(r['density'], 3)}</td></tr>"
            for r in rows
        )
        self.readout.value = (
            f"<div style='font-size:12.5px;line-height:1.3'><b>x = "
            f"{html.escape(significant(x, 4) + units)}</b>"
            "<table style='border-collapse:collapse;width:100%;font-variant-numeric:"
            "tabular-nums'><tr><th style='text-align:left'>candidate</th><th>F(x)</th>"
            f"<th>f(x)</th></tr>{body}</table></div>"
        )
        for g in self.guides:
            with g.hold_sync():
                g.x = [x, x]
                g.visible = True

    def _style_bits(self, name: str) -> tuple[str, str]:
        st = self._review.style(name)
        return st.colour, st.dash

    # ------------------------------------------------------------ views
    def _restyle(self) -> None:
        r = self._review
        for c, label in zip(r.candidates, self._legend_labels, strict=True):
            st = r.style(c.name)
            chosen = c.name == r.chosen
            width = 3.6 if chosen else 1.8
            for marks in (self.cdf_lines, self.pdf_lines):
                if c.name in marks:
                    with marks[c.name].hold_sync():
                        marks[c.name].colors = [st.colour]
                        marks[c.name].stroke_width = width
                        marks[c.name].line_style = BQ_DASH[st.dash]
            sc = self.markers[c.name]
            with sc.hold_sync():
                sc.colors = [st.colour]
                sc.marker = BQ_MARKER[st.marker]
            if c.name in self.spikes:
                self.spikes[c.name].colors = [st.colour]
            mark = " <b>(chosen)</b>" if chosen else ""
            label.value = (
                f"<span title='{html.escape(c.name)} — {html.escape(c.description)}' "
                "style='white-space:nowrap;overflow:hidden;text-overflow:ellipsis;display:block'>"
                f"{_swatch(st.colour, st.dash)} {html.escape(c.name)}{mark}</span>"
            )

    def _on_toggle(self, _change: dict[str, Any]) -> None:
        for name, box in self.toggles.items():
            for marks in (self.cdf_lines, self.pdf_lines, self.spikes, self.markers,
                          self.outcome_lines, self.outcome_markers):  # fmt: skip
                if name in marks:
                    marks[name].visible = box.value

    def _flags_html(self) -> str:
        text = flags_text(floor_flags(self._review))
        if not text:
            return ""
        return (
            f"<div style='color:#a33f00;border-left:4px solid {palette.KNOT_OUTSIDE_BAND};"
            f"padding:1px 8px;font-size:12.5px;line-height:1.35'>{html.escape(text)}</div>"
        )

    def _show_table(self) -> None:
        if self._pres is None or self.sort_column is None or self.sort_descending is None:
            return
        self.table_view.value = table_html(
            self._pres,
            sort_by=self.sort_column.value or None,
            ascending=not self.sort_descending.value,
        )

    def _show_decision(self) -> None:
        d = self._review.decision
        if d is None:
            self.decision_view.value = "<i>No decision recorded yet.</i>"
            return
        self.decision_view.value = (
            f"<b>Chosen:</b> {html.escape(d['chosen'])} — by {html.escape(d['by'])}, "
            f"{html.escape(d['when'])}<br><b>Rationale:</b> "
            f'<span style="white-space:pre-wrap">{html.escape(d["rationale"])}</span>'
        )

    def _on_record(self, _button: Any) -> None:
        try:
            self.choose(self.choice.value, by=self.decided_by.value, rationale=self.rationale.value)
        except (InputError, KeyError) as err:
            self.decision_view.value = (
                f'<span style="color:{palette.KNOT_OUTSIDE_BAND}">{html.escape(str(err))}</span>'
            )
