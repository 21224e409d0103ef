"""The editor's table of knot values and the tail controls (ipywidgets only).

Cells are text boxes showing the values formatted for people (``x`` to the
data's resolution, ``p`` to 4 decimals); a typed value is read when the
analyst presses Enter or leaves the cell, and only the field typed into
changes. A value the constraint refuses puts the formatted value back.
"""

from __future__ import annotations

from collections.abc import Callable

import ipywidgets as w

from .._numfmt import at_resolution, significant
from .._validate import InputError, number
from ..sketch import Sketch
from ..tails import BoundedTail, ExponentialTail, Tail
from ._editor_html import tag

__all__ = ["DEFAULT_TAIL_MASS", "KnotTable", "TailControl"]

#: mass a tail gets when it is added from the tail controls to a sketch without one
DEFAULT_TAIL_MASS = 0.02
_P_STEP = 1e-4


def fmt_p(p: float) -> str:
    """A probability as the table shows it (4 decimals, no ``-0``)."""
    return at_resolution(p, _P_STEP)


class KnotTable:
    """Rows of ``x`` and ``p`` per knot (reused between updates).

    ``on_edit(i, field, value)`` is called with the float the analyst typed.
    """

    def __init__(self, *, on_edit: Callable[[int, str, float | str], None], units: str) -> None:
        self._on_edit = on_edit
        self._rows: list[tuple[w.Text, w.Text]] = []
        self._quiet = False
        self._selected: int | None = None
        self._shown: dict[tuple[int, str], str] = {}
        self._resolution: float | None = None
        self._x_layout = w.Layout(width="170px")
        self._p_layout = w.Layout(width="96px")
        self._x_style = w.widgets.widget_string.TextStyle(description_width="64px")
        self._p_style = w.widgets.widget_string.TextStyle(description_width="0px")
        unit = f" ({units})" if units else ""
        head = w.HTML(
            tag(
                "div",
                tag("span", "knot", cls="cdfsketch-th-knot"),
                tag("span", f"x{unit}", cls="cdfsketch-th-x"),
                tag("span", "p (cumulative)"),
                cls="cdfsketch-table-head",
            )
        )
        self.grid = w.GridBox(
            [], layout=w.Layout(grid_template_columns="172px 98px", grid_gap="1px 2px")
        )
        self.box = w.VBox([head, self.grid], layout=w.Layout(max_height="260px", overflow="auto"))
        self.box.add_class("cdfsketch-knot-table")

    def _make_row(self, i: int) -> tuple[w.Text, w.Text]:
        fx = w.Text(
            description=str(i), layout=self._x_layout, style=self._x_style,
            continuous_update=False,
        )  # fmt: skip
        fp = w.Text(layout=self._p_layout, style=self._p_style, continuous_update=False)
        fx.add_class(f"cdfsketch-knot-x-{i}")
        fp.add_class(f"cdfsketch-knot-p-{i}")
        fx.observe(lambda ch, i=i: self._edited(i, "x", ch), names="value")
        fp.observe(lambda ch, i=i: self._edited(i, "p", ch), names="value")
        return fx, fp

    def _edited(self, i: int, field: str, change: dict) -> None:
        if self._quiet or change["new"] == self._shown.get((i, field)):
            return
        text = str(change["new"]).strip().replace("\u2212", "-")
        try:
            value: float | str = number(float(text), field=field)
        except (ValueError, InputError):
            value = text
        self._on_edit(i, field, value)

    def show(
        self,
        sketch: Sketch,
        *,
        locked: frozenset[int],
        selected: int | None,
        resolution: float | None,
        only: int | None = None,
    ) -> None:
        """Write the sketch's knots into the cells (only changed cells are sent)."""
        n = len(sketch)
        self._resolution = resolution
        self._quiet = True
        try:
            if len(self._rows) != n:
                while len(self._rows) < n:
                    self._rows.append(self._make_row(len(self._rows)))
                del self._rows[n:]
                self._shown = {k: v for k, v in self._shown.items() if k[0] < n}
                self.grid.children = [c for row in self._rows for c in row]
            for i in range(n) if only is None else (only,):
                fx, fp = self._rows[i]
                for cell, fld, text in (
                    (fx, "x", at_resolution(sketch.x[i], resolution)),
                    (fp, "p", fmt_p(sketch.p[i])),
                ):
                    self._shown[(i, fld)] = text
                    if cell.value != text:
                        cell.value = text
                lock = i in locked
                label = f"{i} locked" if lock else str(i)
                if fx.description != label:
                    fx.description = label
                if fx.disabled != lock:
                    fx.disabled = fp.disabled = lock
            if selected != self._selected:
                for j, on in ((self._selected, False), (selected, True)):
                    if j is not None and j < n:
                        for c in self._rows[j]:
                            (c.add_class if on else c.remove_class)("cdfsketch-selected-row")
                self._selected = selected
        finally:
            self._quiet = False

    def formatted(self, field: str, value: float) -> str:
        """``value`` as the ``field`` column shows it."""
        return fmt_p(value) if field == "p" else at_resolution(value, self._resolution)

    def revert(self, i: int) -> None:
        """Put the shown values back into row ``i`` after a refused edit."""
        self._quiet = True
        try:
            fx, fp = self._rows[i]
            fx.value, fp.value = self._shown[(i, "x")], self._shown[(i, "p")]
        finally:
            self._quiet = False


_TAIL_KINDS = [
    ("no tail (ends at the knot)", "none"),
    ("exponential, derived scale", "exp-derived"),
    ("exponential, stated scale", "exp-stated"),
    ("bounded, uniform density", "bounded-uniform"),
    ("bounded, density tapering to 0", "bounded-taper"),
]


class TailControl:
    """Tail on one side: its kind, its mass and its number (scale or limit, in units).

    ``on_change(side, tail, mass)`` gets the tail (or the error reading it)
    and the mass it should hold (the outer knot's ``p``).
    """

    def __init__(
        self, side: str, units: str, on_change: Callable[[str, Tail | Exception, float], None]
    ) -> None:
        self.side = side
        self._on_change = on_change
        self._quiet = False
        self._default_limit = 0.0
        self._mass = 0.0
        self._exact = (0.0, 0.0)
        self._units = f" ({units})" if units else ""
        self.kind = w.Dropdown(
            options=_TAIL_KINDS, description=f"{side}",
            layout=w.Layout(width="290px"), style={"description_width": "44px"},
        )  # fmt: skip
        self.mass = w.BoundedFloatText(
            min=0.0, max=0.5, step=0.005, description="mass",
            layout=w.Layout(width="130px"), style={"description_width": "36px"},
        )  # fmt: skip
        self.value = w.FloatText(
            description="", layout=w.Layout(width="190px"), style={"description_width": "82px"}
        )
        self.kind.observe(self._changed, names="value")
        self.mass.observe(self._changed, names="value")
        self.value.observe(self._changed, names="value")
        self.box = w.HBox([self.kind, self.mass, self.value], layout=w.Layout(flex_flow="row wrap"))
        self.box.add_class(f"cdfsketch-tail-{side}")

    def show(self, sketch: Sketch, default_limit: float) -> None:
        """Reflect the sketch's tail on this side (a tail without mass shows as "no tail")."""
        i = 0 if self.side == "lower" else 1
        tail = (sketch.lower_tail, sketch.upper_tail)[i]
        mass = float(sketch.tail_mass[i])
        self._quiet = True
        try:
            self._mass = mass
            self.mass.value = round(mass, 4)
            if mass <= 0:
                self.kind.value = "none"
                self.value.description = ""
                self.value.disabled = True
                self.value.layout.visibility = "hidden"
            elif isinstance(tail, BoundedTail):
                self.kind.value = f"bounded-{tail.density}"
                self._show_value(tail.limit, 6)
                self.value.description = f"limit{self._units}"
                self.value.disabled = False
                self.value.layout.visibility = "visible"
            else:
                self.kind.value = "exp-derived" if tail.scale is None else "exp-stated"
                scale = sketch.tail_scales[i] if tail.scale is None else tail.scale
                self._show_value(scale if scale is not None else 1.0, 4)
                self.value.description = f"scale{self._units}"
                self.value.disabled = tail.scale is None
                self.value.layout.visibility = "visible"
            self.mass.disabled = mass <= 0
        finally:
            self._quiet = False
        self._default_limit = default_limit

    def _show_value(self, exact: float, digits: int) -> None:
        """Show ``exact`` rounded; reading the field back gives ``exact`` while unedited."""
        self._exact = (float(significant(exact, digits)), float(exact))
        self.value.value = self._exact[0]

    def _changed(self, change: dict) -> None:
        if self._quiet:
            return
        kind_changed = change["owner"] is self.kind
        mass = float(self.mass.value)
        if self.kind.value == "none":
            mass = 0.0
        elif kind_changed and self._mass <= 0:
            mass = DEFAULT_TAIL_MASS
        try:
            tail: Tail | Exception = self._read(kind_changed)
        except (ValueError, InputError) as err:
            tail = err
        self._on_change(self.side, tail, mass)

    def _read(self, kind_changed: bool) -> Tail:
        kind = self.kind.value
        shown, exact = self._exact
        v = exact if self.value.value == shown else float(self.value.value)
        if kind in ("none", "exp-derived"):
            return ExponentialTail()
        if kind == "exp-stated":
            scale = number(
                v, field=f"{self.side} tail scale", low=0.0, low_open=True,
                example=f"a scale in the data's units, e.g. {self.side} tail scale 2.5",
            )  # fmt: skip
            return ExponentialTail(scale=scale)
        if kind_changed and not self.value.description.startswith("limit"):
            v = self._default_limit
        return BoundedTail(v, density=kind.split("-", 1)[1])  # type: ignore[arg-type]
