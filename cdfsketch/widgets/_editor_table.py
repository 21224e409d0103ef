"""The editor's table of exact knot values and the tail controls (ipywidgets only)."""

from __future__ import annotations

from collections.abc import Callable

import ipywidgets as w
import numpy as np

from ..sketch import Sketch
from ..tails import BoundedTail, ExponentialTail, Tail
from . import palette

__all__ = ["KnotTable", "TailControl"]

_CELL = dict(width="92px")


class KnotTable:
    """Rows of ``x`` and ``p`` per knot (reused between updates).

    ``on_edit(i, field, value)`` is called when the analyst types a value.
    Each row is two ``FloatText`` cells and nothing else (the knot's number is
    the ``x`` cell's description; a locked knot's cells are disabled and its
    number carries a lock sign; the selected row is highlighted by a CSS
    class): the state sent to the browser stays small with many knots.
    """

    def __init__(self, *, on_edit: Callable[[int, str, float], None]) -> None:
        self._on_edit = on_edit
        self._rows: list[tuple[w.FloatText, w.FloatText]] = []
        self._quiet = False
        self._selected: int | None = None
        # one Layout and one style per column, shared by every row (less state to send)
        self._x_layout = w.Layout(width="150px")
        self._p_layout = w.Layout(width="100px")
        self._x_style = w.widgets.widget_description.DescriptionStyle(description_width="44px")
        self._p_style = w.widgets.widget_description.DescriptionStyle(description_width="0px")
        # the header sits above the grid, not in it: a cell spanning two grid columns
        # is not honoured by every front end, and the cells then shift by one
        cell = f"display:inline-block;color:{palette.DATA};font-size:12px"
        head = w.HTML(
            f"<span style='{cell};width:44px'>knot</span>"
            f"<span style='{cell};width:112px'>x</span>"
            f"<span style='{cell};width:100px'>p</span>"
        )
        self.grid = w.GridBox(
            [], layout=w.Layout(grid_template_columns="154px 104px", grid_gap="1px 2px")
        )
        self.box = w.VBox(
            [head, self.grid],
            layout=w.Layout(max_height="300px", overflow="auto", width="290px"),
        )
        self.box.add_class("cdfsketch-knot-table")

    def _make_row(self, i: int) -> tuple[w.FloatText, w.FloatText]:
        fx = w.FloatText(description=str(i), layout=self._x_layout, style=self._x_style)
        fp = w.FloatText(layout=self._p_layout, style=self._p_style, step=0.01)
        fx.add_class(f"cdfsketch-knot-x-{i}")
        fp.add_class(f"cdfsketch-knot-p-{i}")
        fx.observe(lambda ch, i=i: self._edited(i, "x", ch), names="value")
        fp.observe(lambda ch, i=i: self._edited(i, "p", ch), names="value")
        return fx, fp

    def _edited(self, i: int, field: str, change: dict) -> None:
        if not self._quiet:
            self._on_edit(i, field, change["new"])

    def show(
        self, sketch: Sketch, *, locked: frozenset[int], selected: int | None, only: int | None
    ) -> None:
        """Write the sketch's knots into the cells (only changed cells are sent)."""
        n = len(sketch)
        self._quiet = True
        try:
            if len(self._rows) != n:
                while len(self._rows) < n:
                    self._rows.append(self._make_row(len(self._rows)))
                del self._rows[n:]
                self.grid.children = [c for row in self._rows for c in row]
            todo = range(n) if only is None else (only,)
            xs, ps = sketch.x, sketch.p
            for i in todo:
                fx, fp = self._rows[i]
                if fx.value != float(xs[i]):
                    fx.value = float(xs[i])
                if fp.value != float(ps[i]):
                    fp.value = float(ps[i])
                if only is None:
                    lock = i in locked
                    label = f"{i} \N{LOCK}" if lock else str(i)
                    if fx.description != label:
                        fx.description = label
                    if fx.disabled != lock:
                        fx.disabled = fp.disabled = lock
            if only is None and selected != self._selected:
                for j, on in ((self._selected, False), (selected, True)):
                    if j is not None and j < n:
                        for c in self._rows[j]:
                            (c.add_class if on else c.remove_class)("cdfsketch-selected-row")
                self._selected = selected
        finally:
            self._quiet = False

    def revert(self, sketch: Sketch, i: int) -> None:
        """Put the sketch's value back into row ``i`` after a refused edit."""
        self._quiet = True
        try:
            fx, fp = self._rows[i]
            fx.value, fp.value = float(sketch.x[i]), float(sketch.p[i])
        finally:
            self._quiet = False


_TAIL_KINDS = [
    ("exponential, derived scale", "exp-derived"),
    ("exponential, stated scale", "exp-stated"),
    ("bounded, uniform density", "bounded-uniform"),
    ("bounded, density tapering to 0", "bounded-taper"),
]


class TailControl:
    """Tail model on one side: a kind and its number (scale or limit)."""

    def __init__(self, side: str, on_change: Callable[[str, Tail | ValueError], None]) -> None:
        self.side = side
        self._on_change = on_change
        self._quiet = False
        self._default_limit = 0.0
        self.kind = w.Dropdown(
            options=_TAIL_KINDS,
            description=f"{side} tail",
            layout=w.Layout(width="330px"),
            style={"description_width": "76px"},
        )
        self.value = w.FloatText(description="", layout=w.Layout(width="110px"))
        self.label = w.HTML()
        self.kind.observe(self._changed, names="value")
        self.value.observe(self._changed, names="value")
        self.box = w.HBox([self.kind, self.label, self.value])
        self.box.add_class(f"cdfsketch-tail-{side}")

    def show(self, sketch: Sketch, default_limit: float) -> None:
        """Reflect the sketch's tail on this side."""
        i = 0 if self.side == "lower" else 1
        tail = (sketch.lower_tail, sketch.upper_tail)[i]
        self._quiet = True
        try:
            if isinstance(tail, BoundedTail):
                self.kind.value = f"bounded-{tail.density}"
                self.value.value = tail.limit
                self.label.value = "limit"
                self.value.disabled = False
            else:
                self.kind.value = "exp-derived" if tail.scale is None else "exp-stated"
                scale = sketch.tail_scales[i] if tail.scale is None else tail.scale
                self.value.value = float(scale) if scale is not None else 0.0
                self.label.value = "scale"
                self.value.disabled = tail.scale is None
        finally:
            self._quiet = False
        self._default_limit = default_limit

    def _changed(self, change: dict) -> None:
        if self._quiet:
            return
        try:
            tail: Tail | ValueError = self._read(change["owner"] is self.kind)
        except ValueError as err:
            tail = err
        self._on_change(self.side, tail)

    def _read(self, kind_changed: bool) -> Tail:
        kind = self.kind.value
        v = float(self.value.value)
        if kind == "exp-derived":
            return ExponentialTail()
        if kind == "exp-stated":
            if not (np.isfinite(v) and v > 0):
                raise ValueError(
                    f"The {self.side} tail's scale must be a positive number; got {v!r}. "
                    "Type a scale (in the data's units) or choose the derived scale."
                )
            return ExponentialTail(scale=v)
        if kind_changed and self.label.value != "limit":
            v = self._default_limit
        return BoundedTail(v, density=kind.split("-", 1)[1])  # type: ignore[arg-type]
