"""The review board's section "Does the choice change the model's answer?".

A mixin of :class:`~cdfsketch.widgets.review.ReviewBoard`: with a consequence
run attached to the board's :class:`~cdfsketch.review.Review`, it shows, for
one output at a time (a drop-down when the model has several), the output's CDF
per candidate — a bqplot figure whose lines keep each candidate's colour, dash
pattern and marker from the input panels — and the compact table of the
output's figures with standard errors, differences to the reference and
verdicts. Both come from :func:`cdfsketch.review.consequence_view.consequence_presentation`,
the structure the standalone page draws; the table's HTML is built by
:func:`cdfsketch.widgets._editor_html.tag`, which escapes every text and
attribute.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from .._extras import need
from ..review import palette
from ..review.consequence_view import TITLE, consequence_presentation
from ..review.layers import span
from ._editor_html import raw, tag
from ._editor_html import swatch as line_mark

__all__ = [
    "BQ_DASH",
    "BQ_MARKER",
    "ConsequenceSection",
    "legend_html",
    "outcome_table_html",
    "swatch",
    "verdict_html",
]

widgets = need("notebook", "ipywidgets")
bqplot = need("notebook", "bqplot")

#: The palette's dash names as bqplot's ``line_style`` values.
BQ_DASH = {"solid": "solid", "dashed": "dashed", "dotted": "dotted", "dash-dot": "dash_dotted"}
#: The palette's marker names as bqplot's ``marker`` values (bqplot has no star).
BQ_MARKER = {"circle": "circle", "square": "square", "triangle-up": "triangle-up",
             "diamond": "diamond", "cross": "cross", "triangle-down": "triangle-down",
             "star": "plus"}  # fmt: skip
_MARGIN = {"top": 16, "bottom": 42, "left": 62, "right": 56}
_CELL = "padding:3px 4px;border-bottom:1px solid #e4e4e4;vertical-align:top;text-align:left"
_SMALL = "display:block;color:#555;font-size:0.92em;font-weight:normal;white-space:nowrap"
_DIFF = "display:block;color:#555;font-size:0.92em;font-weight:normal"


def swatch(colour: str, dash: str, width: int = 26) -> raw:
    """A legend line in a candidate's colour and palette dash name (see ``_editor_html.swatch``)."""
    dashes = palette.DASH_ARRAY[dash]
    return line_mark(
        "line", colour, dash=dashes, width=width, stroke_width=3, style="vertical-align:middle"
    )


def outcome_table_html(out: Mapping[str, Any]) -> str:
    """One output's table (from the presentation) as escaped HTML; it fits 1000 px.

    Examples
    --------
    >>> out = {"columns": [], "rows": [{"name": "<b>", "index": 0, "chosen": False,
    ...        "reference": True, "colour": "#000", "dashName": "solid", "cells": {},
    ...        "verdict": "reference"}]}
    >>> "&lt;b&gt;" in outcome_table_html(out) and "<b>" not in outcome_table_html(out)
    True
    """
    head = [tag("th", "Candidate", style=_CELL)]
    for col in out["columns"]:
        unit = tag("span", f"({col['unit']})", style=_SMALL) if col["unit"] else raw("")
        head.append(
            tag("th", col["label"], unit, style=_CELL, title=col["help"], data_column=col["key"])
        )
    head.append(tag("th", "Verdict", style=_CELL, title=out.get("verdictHelp")))
    body = []
    for r in out["rows"]:
        role = ", ".join(
            w for w, on in (("chosen", r["chosen"]), ("reference", r["reference"])) if on
        )
        name = tag(
            "td", raw(swatch(r["colour"], r["dashName"], 22)), " ", r["name"],
            tag("span", role, style=_SMALL) if role else raw(""),
            style=f"{_CELL};max-width:200px;overflow-wrap:anywhere",
        )  # fmt: skip
        cells = [name]
        for col in out["columns"]:
            c = r["cells"][col["key"]]
            diff = _parts(c["diffParts"], _DIFF) if c["diffParts"] else raw("")
            cells.append(
                tag("td", _parts(c["parts"], "display:block"), diff,
                    style=f"{_CELL};font-variant-numeric:tabular-nums", data_column=col["key"])
            )  # fmt: skip
        cells.append(tag("td", r["verdict"], style=_CELL, data_column="verdict"))
        look = "background:#e8f0f8;font-weight:bold" if r["chosen"] else None
        body.append(tag("tr", *cells, style=look, data_candidate=str(r["index"])))
    return tag(
        "table", tag("thead", tag("tr", *head)), tag("tbody", *body),
        cls="cdfsketch-outcome-table",
        style="border-collapse:collapse;font-size:12.5px;line-height:1.3;width:100%;max-width:100%",
    )  # fmt: skip


def verdict_html(out: Mapping[str, Any]) -> str:
    """One output's verdict in words, with its tolerance (escaped HTML).

    Examples
    --------
    >>> out = {"name": "cost <EUR>", "verdict": "within the tolerance",
    ...        "toleranceText": "tolerance 5 EUR"}
    >>> verdict_html(out).endswith("EUR&gt;</b>: within the tolerance (tolerance 5 EUR).</p>")
    True
    """
    return tag(
        "p", tag("b", out["name"]), f": {out['verdict']} ({out['toleranceText']}).",
        style="margin:4px 0;font-size:13px",
    )  # fmt: skip


def legend_html(out: Mapping[str, Any]) -> str:
    """The figure's legend: each candidate's line (colour, dash) and name, the chosen marked.

    Examples
    --------
    >>> row = {"name": "a&b", "chosen": True, "colour": "#E69F00", "dashName": "solid"}
    >>> "a&amp;b" in legend_html({"rows": [row]}) and "(chosen)" in legend_html({"rows": [row]})
    True
    """
    items = [
        tag("div", raw(swatch(r["colour"], r["dashName"])), " ", r["name"],
            tag("b", " (chosen)") if r["chosen"] else raw(""), title=r["name"],
            style="white-space:nowrap;overflow:hidden;text-overflow:ellipsis")
        for r in out["rows"]
    ]  # fmt: skip
    return tag("div", *items, style="font-size:12.5px;line-height:1.6;padding:14px 0 0 8px")


def _parts(parts: list[str], style: str) -> raw:
    """A figure and its "± se" as unbreakable pieces the line may wrap between."""
    pieces: list[Any] = []
    for i, part in enumerate(parts):
        if i:
            pieces.append(" ")
        pieces.append(tag("span", part, style="white-space:nowrap"))
    return tag("span", *pieces, style=style)


class ConsequenceSection:
    """The board's consequence section (a mixin; the board owns ``_review``)."""

    _review: Any
    toggles: dict[str, Any]

    def _build_outcome(self) -> None:
        r = self._review
        self._outcome_busy = False
        self.outcome_output = widgets.Dropdown(description="output", layout={"width": "340px"})
        self.outcome_output.observe(self._on_outcome_output, names="value")
        self.outcome_x = bqplot.LinearScale(min=0.0, max=1.0, allow_padding=False)
        y = bqplot.LinearScale(min=0.0, max=1.0, allow_padding=False)
        scales = {"x": self.outcome_x, "y": y}
        self.outcome_lines: dict[str, Any] = {}
        self.outcome_markers: dict[str, Any] = {}
        marks = []
        for c in r.candidates:
            self.outcome_lines[c.name] = bqplot.Lines(x=[0.0, 1.0], y=[0.0, 1.0], scales=scales,
                                                      labels=[c.name])  # fmt: skip
            self.outcome_markers[c.name] = bqplot.Scatter(
                x=[0.5], y=[0.5], scales=scales, default_size=18, stroke="white"
            )
            marks += [self.outcome_lines[c.name], self.outcome_markers[c.name]]
        self.outcome_axis = bqplot.Axis(scale=self.outcome_x, label="output", tick_format=".4~g")
        self.outcome_figure = bqplot.Figure(
            marks=marks, fig_margin=_MARGIN, layout={"width": "100%", "height": "300px"},
            axes=[self.outcome_axis,
                  bqplot.Axis(scale=y, side="left", label="cumulative probability",
                              tick_values=[0, 0.25, 0.5, 0.75, 1], tick_format=".2~f")],
        )  # fmt: skip
        self.outcome_figure.add_class("cdfsketch-review-outcome")
        self.outcome_head = widgets.HTML()
        self.outcome_verdict = widgets.HTML()
        self.outcome_view = widgets.HTML(layout={"max_width": "100%", "overflow": "hidden"})
        self.outcome_view.add_class("cdfsketch-review-outcome-table")
        self.outcome_note = widgets.HTML()
        self.outcome_legend = widgets.HTML(layout={"flex": "0 1 260px", "min_width": "0"})
        self.outcome_legend.add_class("cdfsketch-review-outcome-legend")
        figure = widgets.HBox(
            [widgets.Box([self.outcome_figure], layout={"flex": "1 1 480px", "min_width": "0",
                                                        "max_width": "820px"}),
             self.outcome_legend],
            layout={"flex_flow": "row wrap", "align_items": "flex-start", "width": "100%"},
        )  # fmt: skip
        self.outcome_box = widgets.VBox(
            [self.outcome_head, self.outcome_output, self.outcome_verdict, figure,
             self.outcome_view, self.outcome_note],
            layout={"width": "100%"},
        )  # fmt: skip
        self.outcome_box.add_class("cdfsketch-review-consequences")
        self._outcome_outputs()

    def _outcome_outputs(self) -> None:
        """Fill the output drop-down from the attached run (hidden for a single output)."""
        result = self._review.consequences
        outputs = list(result.outputs) if result is not None else []
        self._outcome_busy = True
        try:
            self.outcome_output.options = outputs
            self.outcome_output.value = outputs[0] if outputs else None
        finally:
            self._outcome_busy = False
        self.outcome_output.layout.display = "" if len(outputs) > 1 else "none"
        self._show_outcome()

    def _on_outcome_output(self, _change: Any) -> None:
        if not self._outcome_busy:
            self._show_outcome()

    def _show_outcome(self) -> None:
        """Redraw the section from the review (after a run is attached, a choice, an output)."""
        pres = consequence_presentation(self._review)
        self.outcome_box.layout.display = "none" if pres is None else ""
        if pres is None:
            return
        out = next(o for o in pres["outputs"] if o["name"] == self.outcome_output.value)
        self.outcome_head.value = tag(
            "div", tag("b", TITLE), raw("<br>"), pres["intro"],
            style="font-size:12.5px;line-height:1.35",
        )  # fmt: skip
        self.outcome_verdict.value = verdict_html(out)
        self.outcome_legend.value = legend_html(out)
        self.outcome_view.value = outcome_table_html(out)
        lo, hi = out["xRange"]
        with self.outcome_x.hold_sync():
            self.outcome_x.min, self.outcome_x.max = lo, hi
        self.outcome_axis.label = out["axisLabel"]
        for k, curve in enumerate(out["curves"]):
            x, p = np.asarray(curve["x"]), np.asarray(curve["p"])
            line, dots = self.outcome_lines[curve["name"]], self.outcome_markers[curve["name"]]
            with line.hold_sync():
                line.x, line.y = x, p
                line.colors = [curve["colour"]]
                line.line_style = BQ_DASH[curve["dashName"]]
                line.stroke_width = 3.6 if curve["chosen"] else 1.8
            shift = (k % 5) / 60  # markers of neighbours apart, as on the input panel
            mx = span(lo, hi, 9)[1:-1] * (1 - shift) + hi * shift
            with dots.hold_sync():
                dots.x, dots.y = mx, np.interp(mx, x, p, left=0.0, right=1.0)
                dots.colors = [curve["colour"]]
                dots.marker = BQ_MARKER[curve["marker"]]
        decision = self._review.decision
        said = (
            tag("span", raw("<br>"), "Recorded with the decision: ",
                decision["consequences"]["statement"], cls="cdfsketch-outcome-statement")
            if decision is not None and "consequences" in decision
            else raw("")
        )  # fmt: skip
        self.outcome_note.value = tag(
            "div", pres["note"], said, style="font-size:12px;color:#555;line-height:1.35"
        )

    # ------------------------------------------------------------ attaching a run
    def attach_consequences(self, result: Any, *, output_units: Any = None) -> Any:
        """Show a consequence run; see :meth:`cdfsketch.review.Review.attach_consequences`."""
        out = self._review.attach_consequences(result, output_units=output_units)
        self._outcome_outputs()
        return out

    def run_consequences(
        self,
        model: Callable[[Mapping[str, np.ndarray]], Any] | None,
        inputs: Any,
        *,
        vary: str,
        size: int,
        rng: Any = None,
        output_units: Any = None,
        **options: Any,
    ) -> Any:
        """Run and show the consequences; see :meth:`cdfsketch.review.Review.run_consequences`."""
        out = self._review.run_consequences(
            model, inputs, vary=vary, size=size, rng=rng, output_units=output_units, **options
        )
        self._outcome_outputs()
        return out
