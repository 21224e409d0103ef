"""The editor's controls, grouped by task: shape, tails, start from, check, save.

This module only builds the widgets and lays them out; the editor connects
them to its actions. Buttons carry a CSS class ``cdfsketch-<name>`` (the
browser tests find them by it).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

import ipywidgets as w
import numpy as np

from .._numfmt import significant
from ._editor_html import tag

__all__ = ["Controls", "candidate_options", "group"]

GUIDE = (
    "Drag a knot to reshape the curve; click empty space in the upper plot to add a knot "
    "there; type exact values in the table. The grey steps are the data and the shaded band "
    "is where the curve may plausibly run."
)


def group(title: str, *children: w.Widget, css: str) -> w.VBox:
    """A titled box of controls for one task."""
    box = w.VBox([w.HTML(tag("div", title, cls="cdfsketch-group-title")), *children])
    box.add_class("cdfsketch-group")
    box.add_class(f"cdfsketch-group-{css}")
    return box


def _button(label: str, css: str, tip: str = "") -> w.Button:
    b = w.Button(description=label, tooltip=tip or label, layout=w.Layout(width="auto"))
    b.add_class(f"cdfsketch-{css}")
    return b


def candidate_options(candidates: Sequence[Any], floor: float | None) -> list[tuple[str, str]]:
    """Dropdown options for fitted candidates: best AIC first, the score shown.

    Candidates that put more than 0.5 % of their mass below the data's
    natural floor (e.g. a normal fitted to positive data) are listed last and
    say so.
    """
    rows = []
    for i, c in enumerate(candidates):
        aic = float(getattr(c, "aic", float("nan")))
        below = float(c.cdf(floor)) if floor is not None else 0.0
        rows.append((below > 0.005, aic if np.isfinite(aic) else np.inf, i, c, below))
    rows.sort(key=lambda r: r[:3])
    finite = [r[1] for r in rows if np.isfinite(r[1])]
    best = min(finite) if finite else 0.0
    out = []
    for bad, aic, i, c, below in rows:
        score = f"ΔAIC {significant(aic - best, 3)}" if np.isfinite(aic) else "no AIC"
        note = f"; puts {significant(100 * below, 2)} % below 0" if bad else ""
        out.append((f"fit: {c.name} ({score}{note})", f"cand:{i}"))
    return out


class Controls:
    """Every control widget of the editor (no behaviour; see :class:`Editor`)."""

    def __init__(self, *, has_data: bool, default_path: str) -> None:
        self.interp = w.ToggleButtons(
            options=[("linear", "linear"), ("monotone cubic", "pchip")],
            style={"button_width": "128px"},
        )
        self.interp.add_class("cdfsketch-interpolation")
        self.pick = w.Dropdown(
            options=[("none", -1)], value=-1, description="selected",
            layout=w.Layout(width="150px"), style={"description_width": "58px"},
        )  # fmt: skip
        self.pick.add_class("cdfsketch-pick")
        self.add = _button("add knot", "add", "add a knot after the selected one")
        self.remove = _button("remove", "remove", "remove the selected knot")
        self.lock = _button("lock", "lock", "lock or unlock the selected knot")
        self.undo = _button("undo", "undo")
        self.redo = _button("redo", "redo")
        row = dict(layout=w.Layout(flex_flow="row wrap"))
        self.shape = group(
            "shape",
            self.interp,
            w.HBox([self.pick, self.add, self.remove, self.lock], **row),
            w.HBox([self.undo, self.redo], **row),
            css="shape",
        )
        opts = [("as opened", "opened")]
        if has_data:
            opts.append(("automatic start", "auto"))
        self.start = w.Dropdown(options=opts, layout=w.Layout(width="340px"))
        self.start.add_class("cdfsketch-start")
        self.start_over = _button("start over", "start-over", "replace the sketch (undoable)")
        start_row = [self.start, self.start_over]
        self.fit = _button("fit candidates", "fit", "fit the usual distributions to the data")
        if has_data:
            start_row.append(self.fit)
        self.starting = group("start from", w.HBox(start_row, **row), css="start")
        self.sample_n = w.BoundedIntText(
            value=10_000, min=10, max=10_000_000, description="n",
            layout=w.Layout(width="140px"), style={"description_width": "16px"},
        )  # fmt: skip
        self.draw = _button("draw a sample", "sample", "histogram of draws, lower plot")
        self.hide = _button("hide", "sample-hide", "hide the sample preview")
        self.check = group(
            "check", w.HBox([self.sample_n, self.draw, self.hide], **row), css="check"
        )
        self.path = w.Text(
            value=default_path, description="file", layout=w.Layout(width="300px"),
            style={"description_width": "56px"},
        )  # fmt: skip
        self.path.add_class("cdfsketch-path")
        self.author = w.Text(
            description="author",
            layout=w.Layout(width="300px"),
            style={"description_width": "56px"},
        )
        self.author.add_class("cdfsketch-author")
        self.rationale = w.Textarea(
            description="rationale", placeholder="why this shape: sources, judgements, checks",
            layout=w.Layout(width="300px", height="48px"), style={"description_width": "56px"},
        )  # fmt: skip
        self.rationale.add_class("cdfsketch-rationale")
        self.save = _button("save spec", "save", "write the spec (.json)")
        self.snippet = w.HTML()
        self.snippet.add_class("cdfsketch-snippet")
        self.saving = group(
            "save",
            w.HBox([self.path, self.save], **row),
            self.author,
            self.rationale,
            self.snippet,
            css="save",
        )

    def connect(self, actions: dict[str, Callable[[], Any]]) -> None:
        """Call ``actions[name]`` when the button with that attribute name is clicked."""
        for name, action in actions.items():
            getattr(self, name).on_click(lambda _b, a=action: a())
