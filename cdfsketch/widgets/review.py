"""The review board: candidates for one input side by side, and the group's decision.

:class:`ReviewBoard` is the notebook view of a :class:`cdfsketch.report.Review`
(which holds the candidates, the data, the comparison table and the
decision). Every mark is derived from that one state; ``choose`` replaces
the decision and the marks restyle.

Upper panel: each candidate's CDF over the data's ECDF staircase and its
simultaneous DKW band. Lower panel: the densities over the data histogram,
atoms as spikes (right axis: their mass). A toggle per candidate, the
chosen candidate drawn blue and thick, one x scale shared by both panels,
a hover read-out (x, p and density of each shown candidate) from a bqplot
IndexSelector, the comparison table with a sort control, and a form to
record the decision.
"""

from __future__ import annotations

import html
from collections.abc import Sequence
from datetime import datetime
from pathlib import Path
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np
from bqplot import interacts

from ..report import Review, curves, dashed, data_layers, density_top, table_html, x_range
from . import palette

__all__ = ["ReviewBoard"]

_FIG_LAYOUT = {"width": "100%", "height": "340px"}
_FIG_MARGIN = {"top": 30, "bottom": 45, "left": 60, "right": 60}


def _fmt(v: float, digits: int = 4) -> str:
    return f"{v:.{digits}g}"


class ReviewBoard(widgets.VBox):
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
        The quantity's units (axis label, chosen spec) and name (title,
        chosen spec's name).
    holdout : float or None
        Fraction held out by :func:`cdfsketch.fit.compare` for the table.
    rng : optional
        Seed for the holdout split (``np.random.default_rng``).
    progress : None, False or callable
        Progress of scoring the candidates against the data; see
        :func:`cdfsketch.fit.compare`.

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
    ) -> None:
        self._review = Review(
            data,
            candidates,
            level=level,
            units=units,
            name=name,
            holdout=holdout,
            rng=rng,
            progress=progress,
        )
        r = self._review
        lo, hi = x_range(r)
        self._curves = curves(r)
        layers = data_layers(r)
        self.x_scale = bqplot.LinearScale(min=lo, max=hi)
        y_cdf = bqplot.LinearScale(min=0.0, max=1.0)
        y_pdf = bqplot.LinearScale(min=0.0, max=density_top(r, self._curves, layers))
        masses = [a.mass for cv in self._curves for a in cv.atoms]
        y_mass = bqplot.LinearScale(min=0.0, max=1.1 * max(masses) if masses else 1.0)
        xs = {"x": self.x_scale, "y": y_cdf}
        ps = {"x": self.x_scale, "y": y_pdf}
        ms = {"x": self.x_scale, "y": y_mass}
        upper_marks: list[Any] = []
        lower_marks: list[Any] = []
        if layers is not None:
            upper_marks.append(
                bqplot.Lines(
                    x=layers["band_x"],
                    y=[layers["band_lower"], layers["band_upper"]],
                    scales=xs,
                    fill="between",
                    colors=[palette.BAND],
                    fill_colors=[palette.BAND],
                    fill_opacities=[0.8],
                    labels=[f"{r.level:.0%} DKW band"],
                )
            )
            upper_marks.append(
                bqplot.Lines(
                    x=layers["steps_x"],
                    y=layers["steps_p"],
                    scales=xs,
                    colors=[palette.DATA],
                    labels=["ECDF"],
                    display_legend=True,
                )
            )
            e, d = layers["edges"], layers["density"]
            lower_marks.append(
                bqplot.Lines(
                    x=np.repeat(e, 2),
                    y=np.r_[0.0, np.repeat(d, 2), 0.0],
                    scales=ps,
                    fill="bottom",
                    colors=[palette.DATA],
                    fill_colors=[palette.DATA],
                    fill_opacities=[0.3],
                    labels=["data histogram"],
                )
            )
        self.cdf_lines: dict[str, bqplot.Lines] = {}
        self.pdf_lines: dict[str, bqplot.Lines] = {}
        self.spikes: dict[str, bqplot.Lines] = {}
        for c, cv in zip(r.candidates, self._curves, strict=True):
            self.cdf_lines[c.name] = bqplot.Lines(
                x=cv.x, y=cv.cdf, scales=xs, labels=[c.name], display_legend=True
            )
            upper_marks.append(self.cdf_lines[c.name])
            if c.kind != "data":
                self.pdf_lines[c.name] = bqplot.Lines(x=cv.pdf_x, y=cv.pdf, scales=ps)
                lower_marks.append(self.pdf_lines[c.name])
            if cv.atoms:
                ax_ = [[a.x, a.x] for a in cv.atoms]
                ay = [[0.0, a.mass] for a in cv.atoms]
                self.spikes[c.name] = bqplot.Lines(x=ax_, y=ay, scales=ms, stroke_width=2)
                lower_marks.append(self.spikes[c.name])
        label = f"{r.name or 'x'}" + (f" ({r.units})" if r.units else "")
        x_axis = bqplot.Axis(scale=self.x_scale, label=label)
        self.cdf_figure = bqplot.Figure(
            marks=upper_marks,
            axes=[
                bqplot.Axis(scale=self.x_scale, label=label),
                bqplot.Axis(scale=y_cdf, side="left", label="cumulative probability"),
            ],
            title=r.name,
            legend_location="bottom-right",
            fig_margin=_FIG_MARGIN,
            layout=dict(_FIG_LAYOUT),
        )
        lower_axes = [x_axis, bqplot.Axis(scale=y_pdf, side="left", label="density")]
        if masses:
            lower_axes.append(bqplot.Axis(scale=y_mass, side="right", label="atom mass"))
        self.pdf_figure = bqplot.Figure(
            marks=lower_marks, axes=lower_axes, fig_margin=_FIG_MARGIN,
            layout={"width": "100%", "height": "260px"},
        )  # fmt: skip
        self.cdf_figure.add_class("cdfsketch-review-cdf")
        self.pdf_figure.add_class("cdfsketch-review-pdf")
        # hover: an index selector on each panel follows the mouse's x
        self.selectors = []
        for fig in (self.cdf_figure, self.pdf_figure):
            sel = interacts.IndexSelector(scale=self.x_scale, marks=[])
            sel.observe(self._on_hover, names="selected")
            fig.interaction = sel
            self.selectors.append(sel)
        self.readout = widgets.HTML(value="<i>Move the mouse over a panel to read x, p, f.</i>")
        # toggles
        self.toggles: dict[str, widgets.Checkbox] = {}
        for c in r.candidates:
            box = widgets.Checkbox(value=True, description=c.name, indent=False)
            box.layout.width = "auto"
            box.observe(self._on_toggle, names="value")
            self.toggles[c.name] = box
        # table and its sort control
        self.table_view = widgets.HTML()
        if r._table is not None:
            cols = list(r._table.columns)
            self.sort_column = widgets.Dropdown(
                options=["(as given)", *cols], description="sort by"
            )
            self.sort_descending = widgets.Checkbox(value=False, description="descending")
            for w in (self.sort_column, self.sort_descending):
                w.observe(lambda _change: self._show_table(), names="value")
            table_box: list[Any] = [
                widgets.HBox([self.sort_column, self.sort_descending]),
                self.table_view,
            ]
        else:
            self.sort_column = None
            self.sort_descending = None
            table_box = [widgets.HTML("<i>No data: no comparison table.</i>")]
        # decision form
        self.choice = widgets.Dropdown(options=list(r.names), description="choose")
        self.decided_by = widgets.Text(description="by", placeholder="who decided")
        self.rationale = widgets.Textarea(description="why", placeholder="the rationale")
        self.record = widgets.Button(description="Record decision", button_style="primary")
        self.record.on_click(self._on_record)
        self.decision_view = widgets.HTML()
        caution = widgets.HTML(f"<small>{html.escape(_caution())}</small>")
        self._restyle()
        self._show_table()
        self._show_decision()
        super().__init__(
            [
                widgets.HBox(list(self.toggles.values()), layout={"flex_flow": "row wrap"}),
                self.cdf_figure,
                self.pdf_figure,
                self.readout,
                *table_box,
                widgets.HBox([self.choice, self.decided_by]),
                self.rationale,
                self.record,
                self.decision_view,
                caution,
            ]
        )

    # ------------------------------------------------------------ state
    @property
    def review(self) -> Review:
        """The :class:`~cdfsketch.report.Review` this board shows."""
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
            raise TypeError(f"visible must be True or False; got {visible!r}.")
        self.toggles[name].value = visible

    # ------------------------------------------------------------ decision
    def choose(
        self, name: str, *, by: str, rationale: str, when: str | datetime | None = None
    ) -> dict[str, Any]:
        """Record the decision; see :meth:`cdfsketch.report.Review.choose`."""
        decision = self._review.choose(name, by=by, rationale=rationale, when=when)
        self.choice.value = name
        self._restyle()
        self._show_table()
        self._show_decision()
        return decision

    def chosen_spec(self) -> dict[str, Any]:
        """The chosen candidate's spec with the decision; see :meth:`Review.chosen_spec`."""
        return self._review.chosen_spec()

    def table(self) -> Any:
        """The comparison table (:class:`cdfsketch.fit.ComparisonTable`)."""
        return self._review.table()

    def save_html(self, path: str | Path, *, include_data: bool = False) -> Path:
        """Write the standalone review page; see :func:`cdfsketch.report.save_html`."""
        return self._review.save_html(path, include_data=include_data)

    def save_figure(self, path: str | Path, **options: Any) -> Path:
        """Write PNG, SVG or PDF; see :func:`cdfsketch.report.save_figure`."""
        return self._review.save_figure(path, **options)

    # ------------------------------------------------------------ read-out
    def readout_at(self, x: float) -> list[dict[str, Any]]:
        """x, p and density of each shown candidate at ``x`` (what the read-out shows)."""
        v = float(x)
        if not np.isfinite(v):
            raise ValueError(f"x must be a finite number; got {x!r}.")
        out = []
        for c in self._review.candidates:
            if not self.toggles[c.name].value:
                continue
            out.append(
                {
                    "name": c.name,
                    "x": v,
                    "p": float(c.cdf(v)),
                    "density": None if c.kind == "data" else float(c.pdf(v)),
                }
            )
        return out

    def _on_hover(self, change: dict[str, Any]) -> None:
        sel = change["new"]
        if sel is None or len(sel) == 0:
            return
        self.show_readout(float(np.asarray(sel, dtype=float).ravel()[0]))

    def show_readout(self, x: float) -> None:
        """Show the read-out at ``x`` (what hovering at ``x`` does)."""
        rows = self.readout_at(x)
        units = f" {self._review.units}" if self._review.units else ""
        body = "".join(
            f"<tr><td>{html.escape(r['name'])}</td><td>{r['p']:.4f}</td>"
            f"<td>{'atoms only' if r['density'] is None else _fmt(r['density'])}</td></tr>"
            for r in rows
        )
        self.readout.value = (
            f"<b>x = {html.escape(_fmt(x, 6) + units)}</b>"
            "<table><tr><th>candidate</th><th>p = F(x)</th><th>density</th></tr>"
            f"{body}</table>"
        )

    # ------------------------------------------------------------ views
    def _restyle(self) -> None:
        r = self._review
        from ..report import colours

        for c, col, dash in zip(r.candidates, colours(r), dashed(r), strict=True):
            chosen = c.name == r.chosen
            width = 3.5 if chosen else 1.8
            style = "dashed" if dash else "solid"
            line = self.cdf_lines[c.name]
            with line.hold_sync():
                line.colors = [col]
                line.stroke_width = width
                line.line_style = style
                line.labels = [f"{c.name} (chosen)" if chosen else c.name]
            if c.name in self.pdf_lines:
                pl = self.pdf_lines[c.name]
                with pl.hold_sync():
                    pl.colors = [col]
                    pl.stroke_width = width
                    pl.line_style = style
            if c.name in self.spikes:
                self.spikes[c.name].colors = [col]

    def _on_toggle(self, change: dict[str, Any]) -> None:
        for name, box in self.toggles.items():
            for marks in (self.cdf_lines, self.pdf_lines, self.spikes):
                if name in marks:
                    marks[name].visible = box.value

    def _show_table(self) -> None:
        r = self._review
        if r._table is None or self.sort_column is None or self.sort_descending is None:
            return
        col = self.sort_column.value
        self.table_view.value = table_html(
            r._table,
            chosen=r.chosen,
            sort_by=None if col == "(as given)" else col,
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
            f"<span style='white-space:pre-wrap'>{html.escape(d['rationale'])}</span>"
        )

    def _on_record(self, _button: Any) -> None:
        try:
            self.choose(self.choice.value, by=self.decided_by.value, rationale=self.rationale.value)
        except (TypeError, ValueError, KeyError) as err:
            self.decision_view.value = f"<span style='color:{palette.KNOT_OUTSIDE_BAND}'>" + (
                html.escape(str(err)) + "</span>"
            )


def _caution() -> str:
    from ..report import CAUTION

    return CAUTION
