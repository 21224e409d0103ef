"""What the user's input does to the editor: drags, clicks, typed values, control changes.

:class:`EditorInput` is the part of :class:`cdfsketch.widgets.editor.Editor`
that turns the browser's messages and the controls' values into new states
(through ``Editor._set`` / ``Editor._apply``, the one way the state changes).
It has no state of its own.

Dragging: the movable knot scatter keeps bqplot's ``update_on_move=False``,
deliberately. The dragged dot then follows the pointer smoothly and the
front end sends one small ``drag`` message per pointer move (with
``update_on_move=True`` it also sends the whole ``x``/``y`` arrays, about 4×
the traffic, and the dot flickers between the pointer and the clamped place
while the pointer is past a limit). On each ``drag`` message the kernel
clamps the knot (:func:`~cdfsketch.widgets._editor_state.drag_knot`) and
shows the result live: the curve, the density, the readout, and a ring
where the knot really is; on ``drag_end`` the dot snaps to the ring. A
gesture is one undo step. A press and release without a move is a click:
it selects the knot and leaves it exactly where it was.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from .._files import check_output_path, write_text
from .._validate import InputError, KnotError
from ..sketch import Sketch
from ..tails import Tail
from ._editor_controls import candidate_options
from ._editor_html import tag
from ._editor_state import State, drag_knot

__all__ = ["EditorInput"]

_EDITED = "edited in the cdfsketch Editor"
_ERRORS = (InputError, ValueError, TypeError)


class EditorInput:
    """Handlers of the editor's input (mixed into :class:`Editor`; see the module docstring)."""

    _state: State
    _gesture: tuple[int, State] | None
    _moved: bool
    _drawing: bool
    _candidates: list[Any]
    _data: Any
    _root: Any
    _samples: int
    plots: Any
    knots: Any
    table: Any
    controls: Any
    message: Any
    autosave: str | None
    _set: Any
    _apply: Any
    _error: Any
    _render: Any
    selected: int | None
    lock: Any
    start_from: Any
    preview_sample: Any

    # ================================================================ dragging
    def _knot_of(self, content: dict) -> int:
        return int(self.plots.movable[int(content["index"])])

    def _on_drag_start(self, _mark: Any, content: dict) -> None:
        self._gesture = (self._knot_of(content), self._state)
        self._moved = False

    def _drag_target(self, content: dict) -> Sketch | None:
        i = self._knot_of(content)
        if self._gesture is None or self._gesture[0] != i:
            self._gesture = (i, self._state)
        start = self._gesture[1]
        if i in start.locked:
            return None
        pt = content["point"]
        lo, hi = self.plots.domain
        try:
            return drag_knot(start.sketch, i, x=float(pt["x"]), p=float(pt["y"]), span=hi - lo)
        except (*_ERRORS, KnotError):
            return None

    def _on_drag(self, _mark: Any, content: dict) -> None:
        self._moved = True
        target = self._drag_target(content)
        if target is not None:
            self._set(self._state.evolve(sketch=target), record=False)

    def _on_drag_end(self, _mark: Any, content: dict) -> None:
        # a press and release without a move is a click: it selects the knot, which stays put
        target = self._drag_target(content) if self._moved else None
        i, start = (
            self._gesture if self._gesture is not None else (self._knot_of(content), self._state)
        )
        self._gesture = None
        self._moved = False
        final = start.sketch if target is None else target
        self._set(start.evolve(sketch=final, selected=i), record=start)

    def _on_knots_synced(self, _change: dict) -> None:
        if self._drawing or self._gesture is not None:
            return
        s = self._state.sketch
        mv = self.plots.movable
        kx = np.asarray(self.knots.x, dtype=float)
        ky = np.asarray(self.knots.y, dtype=float)
        if (
            kx.shape == ky.shape
            and kx.size == mv.size + 1
            and np.array_equal(kx[:-1], s.x[mv])
            and np.array_equal(ky[:-1], s.p[mv])
        ):
            # a click on the canvas: bqplot's "add" interaction appended the pointer's point
            self._add_at(float(kx[-1]), float(ky[-1]))
        else:
            self._render()  # anything else the browser did is overwritten from the state
        with self._writing_view():
            self.plots.draw_knots(self._state, self._outside())

    def _outside(self) -> np.ndarray:
        s = self._state.sketch
        return self._data.outside_band(s) if self._data is not None else np.zeros(len(s), bool)

    def _on_locked_clicked(self, change: dict) -> None:
        if not self._drawing and change["new"]:
            locked = sorted(self._state.locked)
            self.selected = locked[int(change["new"][0])]

    # ================================================================ controls
    def _on_cell(self, i: int, field: str, value: float | str) -> None:
        if isinstance(value, str):
            self._error(
                f"Knot {i}: {field} must be a finite number; got {value!r}. Type e.g. 12.5."
            )
            self.table.revert(i)
            return
        s = self._state.sketch
        x, p = s.x.copy(), s.p.copy()
        ref = x if field == "x" else p
        lo = ref[i - 1] if i > 0 else -np.inf if field == "x" else 0.0
        hi = ref[i + 1] if i < len(s) - 1 else np.inf if field == "x" else 1.0
        if not lo <= value <= hi:
            show = self.table.formatted
            self._error(
                f"Knot {i}: {field} must lie between its neighbours' {show(field, lo)} and "
                f"{show(field, hi)}; got {show(field, value)}. Type a value in that range, or "
                "move a neighbour first."
            )
            self.table.revert(i)
            return
        ref[i] = value
        if not self._apply(lambda sk: sk.replace(x=x, p=p)):
            self.table.revert(i)

    def _on_pick(self, change: dict) -> None:
        if not self._drawing:
            self.selected = None if change["new"] < 0 else int(change["new"])

    def _toggle_lock(self) -> None:
        st = self._state
        if st.selected is None:
            self._error("Select a knot first: click it, or choose its number under 'selected'.")
            return
        self.lock(st.selected, locked=st.selected not in st.locked)

    def _on_interp(self, change: dict) -> None:
        if not self._drawing:
            self._apply(lambda s: s.replace(interpolation=change["new"]))

    def _on_tail(self, side: str, tail: Tail | Exception, mass: float) -> None:
        if self._drawing:
            return
        if isinstance(tail, Exception):
            self._error(str(tail))
            self._render()
            return
        s = self._state.sketch
        p = s.p.copy()
        j = 0 if side == "lower" else -1
        p[j] = mass if j == 0 else 1.0 - mass
        neighbour = p[1] if j == 0 else p[-2]
        if (j == 0 and p[0] > neighbour) or (j == -1 and p[-1] < neighbour):
            self._error(
                f"The {side} tail's mass must leave the next knot's p in order; got mass "
                f"{mass:g} beyond p={neighbour:g}. Choose a smaller mass or move that knot first."
            )
            self._render()
            return
        stated = None if mass <= 0 else tail
        if not self._apply(lambda sk: sk.replace(p=p, **{f"{side}_tail": stated})):
            self._render()

    def _default_limit(self, side: str) -> float:
        """A bounded tail's first limit: 10 % of the span beyond, never across the data's floor."""
        s = self._state.sketch
        span = float(s.x[-1] - s.x[0]) or 1.0
        d = self._data
        if side == "lower":
            base = float(s.x[0]) if d is None else min(float(s.x[0]), d.range[0])
            limit = base - 0.1 * span
            if d is not None and d.floor is not None and s.x[0] > d.floor:
                limit = max(limit, d.floor)
            return limit
        base = float(s.x[-1]) if d is None else max(float(s.x[-1]), d.range[1])
        limit = base + 0.1 * span
        if d is not None and d.ceiling is not None and s.x[-1] < d.ceiling:
            limit = min(limit, d.ceiling)
        return limit

    def _refresh_candidates(self) -> None:
        c = self.controls
        opts = [o for o in c.start.options if o[1] in ("opened", "auto")]
        floor = None if self._data is None else self._data.floor
        c.start.options = opts + candidate_options(self._candidates, floor)

    def _fit_candidates(self) -> None:
        from ..fit import fit_candidates

        assert self._data is not None
        try:
            self._candidates = list(
                fit_candidates(self._data.fit_values, rng=self._root, progress=False)
            )
        except _ERRORS as err:
            self._error(str(err))
            return
        self._refresh_candidates()
        self.message.value = tag(
            "div",
            f"{len(self._candidates)} candidates fitted, best first: choose one under "
            "'start from', then 'start over'.",
            cls="cdfsketch-note",
        )

    def _start_over(self) -> None:
        self.start_from(self.controls.start.value)

    def _draw_sample(self) -> None:
        self._samples += 1
        self.preview_sample(int(self.controls.sample_n.value))

    def _save_button(self) -> None:
        c = self.controls
        extra = {
            k: v for k, v in (("author", c.author.value), ("rationale", c.rationale.value)) if v
        }
        try:
            self.save(c.path.value, **extra)
        except (*_ERRORS, OSError) as err:
            self._error(f"Could not save the spec: {err}")

    def _save_if_asked(self) -> None:
        if self.autosave:
            try:
                write_text(self.autosave, self._state.sketch.to_json(**self._provenance()))
            except (*_ERRORS, OSError) as err:
                self._error(f"Autosave failed: {err}")

    def _provenance(self) -> dict[str, Any]:
        method = str(self._state.sketch.provenance.get("method", "") or "")
        if not method.startswith(_EDITED):
            origin = method.removeprefix("from ")
            method = _EDITED + (f", started from {origin}" if origin else "")
        prov: dict[str, Any] = {"method": method}
        if self._data is not None:
            prov["data"] = self._data.fingerprint
        return prov

    def _add_at(self, x: float, p: float) -> None:
        s = self._state.sketch
        at = int(np.searchsorted(s.x, x, side="right"))
        lo = s.p[at - 1] if at > 0 else 0.0
        hi = s.p[at] if at < len(s) else 1.0
        if not lo <= p <= hi:
            self._error(
                f"A knot at x={x:.4g} must have p between its neighbours' {lo:.3g} and {hi:.3g}; "
                f"got p={p:.3g}. Click nearer the curve, or move a neighbour first."
            )
            return
        if self._apply(lambda sk: sk.with_knot(x, p)):
            hit = np.flatnonzero(self._state.sketch.x == x)
            if hit.size:
                self.selected = int(hit[-1])

    def save(self, path: str | os.PathLike[str], **provenance: Any) -> Path:
        """Write the spec (a ``.json`` file, atomic) and show the snippet that loads it.

        Keyword arguments add to the provenance (``author=``, ``rationale=``…).
        """
        target = check_output_path(path, suffixes=(".json",), what="spec file")
        text = self._state.sketch.to_json(**{**self._provenance(), **provenance})
        write_text(target, text)
        self.message.value = ""
        self.controls.snippet.value = tag(
            "div",
            f"saved {target}; load it anywhere with:",
            tag("pre", self.snippet(target)),
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
