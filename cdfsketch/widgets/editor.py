"""The editor: drag monotone knots over the data's ECDF in a notebook.

:class:`Editor` is an ipywidgets ``VBox`` built on bqplot. Its state is one
immutable value (:class:`~cdfsketch.widgets._editor_state.State`: the
sketch, the locked knots, the selected knot); every change goes through one
method that records it for undo, re-derives every mark, table cell, message
and readout line from it, and autosaves. :attr:`Editor.sketch` is a
``traitlets.Instance(Sketch)`` mirroring the state's sketch: setting it from
code is a change like any other.

Rules a user can rely on (see :mod:`cdfsketch.widgets._editor_state`):

* a drag stops a visible gap (0.5 % of the x axis span, 0.005 in ``p``) short
  of the neighbouring knots; while dragging, a ring marks where the knot
  really is and the curve follows it; on release the dot snaps there;
* a drag leaves at least 0.5 % of mass in a tail that holds mass; a tail is
  added or removed with the tail controls;
* a locked knot does not move by any path (drag, table, code, undo);
* a click on empty plot space adds a knot exactly there, or says why not.

Layout: the plots take the width; the side column (shape controls,
readout, table) keeps 300 px and wraps below the plots when the row is
narrower than both (under about 900 px).
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Iterator, Sequence
from typing import Any

import ipywidgets as w
import numpy as np
import traitlets

from .. import _streams
from .._validate import InputError, integer, number
from ..sketch import Sketch
from ._editor_controls import GUIDE, Controls, group
from ._editor_data import DataView, automatic_start
from ._editor_html import CSS, raw, tag
from ._editor_input import EditorInput
from ._editor_readout import CAUTION, checks_html, readout, readout_html
from ._editor_state import History, State, check_locks, slug
from ._editor_table import KnotTable, TailControl
from ._editor_view import Plots

__all__ = ["Editor"]

_ERRORS = (InputError, ValueError, TypeError)


class Editor(EditorInput, w.VBox):
    """Drag, type and judge a sketch over the data's ECDF (an ipywidgets widget).

    Parameters
    ----------
    data : array_like, optional
        The sample to draw over (ECDF, DKW band, histogram, KS distance, band
        excursion and a holdout score). Without data the editor still works.
    sketch : Sketch, optional
        Where to start. Default with data: the automatic start (at most 7
        knots along the ECDF); one of ``sketch`` or ``data`` is required.
    level : float
        Coverage of the simultaneous DKW band.
    quantiles : sequence of float
        Quantiles shown in the readout.
    holdout : float or None
        Fraction of the points held out for the live score
        (:func:`cdfsketch.holdout.holdout_split`; ``None``: none).
    hide_held_out : bool
        Draw the ECDF, band and histogram from the training part only, so the
        held-out points are unseen while you shape the curve and their score
        is an honest out-of-sample check. Default ``False``: every point is
        drawn, and the score is marked "in view" (optimistic).
    rng : optional
        Seed of the holdout split and of the sample previews (anything
        ``numpy.random.default_rng`` takes).
    autosave : str or path, optional
        Write the spec there after every committed change (atomic).
    candidates : sequence of Candidate, optional
        Fitted candidates offered as starting points (best AIC first); the
        "fit candidates" button fits them on request otherwise.
    name, units : str, optional
        Override the sketch's name and units (units label axes and fields).

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> ed = Editor(sketch=Sketch([0, 2, 5, 9], [0, 0.3, 0.8, 1], units="h"))
    >>> ed.sketch = ed.sketch.move_knot(1, x=3.0)
    >>> ed.knots.x.tolist(), ed.undo().sketch.x.tolist()
    ([0.0, 3.0, 5.0, 9.0], [0.0, 2.0, 5.0, 9.0])
    """

    sketch = traitlets.Instance(Sketch)
    autosave = traitlets.Unicode(None, allow_none=True)

    @traitlets.validate("sketch")
    def _valid_sketch(self, proposal: dict) -> Sketch:
        return check_locks(proposal["value"], self._state)

    def __init__(
        self,
        data: Any = None,
        sketch: Sketch | None = None,
        *,
        level: float = 0.95,
        quantiles: Sequence[float] = (0.05, 0.5, 0.95),
        holdout: float | None = 0.3,
        hide_held_out: bool = False,
        rng: Any = None,
        autosave: str | os.PathLike[str] | None = None,
        candidates: Sequence[Any] | None = None,
        name: str | None = None,
        units: str | None = None,
    ) -> None:
        if data is None and sketch is None:
            raise InputError(
                "Editor needs data, a sketch, or both; got neither. Start without data from "
                "cdfsketch.from_quantiles({0.05: ..., 0.5: ..., 0.95: ...}) or "
                "cdfsketch.from_three_points(low, mode, high).",
                field="data",
            )
        if sketch is not None and not isinstance(sketch, Sketch):
            raise InputError(
                f"sketch must be a cdfsketch.Sketch; got {type(sketch).__name__}. Build one with "
                "Sketch(x, p), cdfsketch.from_quantiles(...) or cdfsketch.load(path).",
                field="sketch",
            )
        self._quantiles = tuple(
            number(q, field=f"quantiles[{i}]", low=0, high=1, low_open=True, high_open=True)
            for i, q in enumerate(quantiles)
        )
        self._root = _streams.root_seed(rng)
        self._data = (
            None
            if data is None
            else DataView(
                data, level=level, holdout=holdout, rng=self._root, hide_held_out=hide_held_out
            )
        )
        if sketch is None:
            sketch = self._automatic()
        changes = {k: v for k, v in (("name", name), ("units", units)) if v is not None}
        if changes:
            sketch = sketch.replace(**changes)
        self._initial = sketch
        self._candidates = list(candidates or [])
        self._history = History()
        self._state = State(sketch)
        self._drawing = False  # the kernel is writing the view: its echoes are not user input
        self._gesture: tuple[int, State] | None = None  # knot index and state at drag start
        self._moved = False
        self._samples = 0
        self._readout: dict[str, Any] = {}
        self.plots = Plots(sketch, self._data, self._domain_for(sketch))
        self.knots = self.plots.knots
        self.controls = Controls(
            has_data=self._data is not None, default_path=slug(sketch.name) + ".json"
        )
        self.table = KnotTable(on_edit=self._on_cell, units=sketch.units)
        self._tails = (
            TailControl("lower", sketch.units, self._on_tail),
            TailControl("upper", sketch.units, self._on_tail),
        )
        self.message = w.HTML()
        self.message.add_class("cdfsketch-message")
        self._readout_html = w.HTML()
        self._readout_html.add_class("cdfsketch-readout")
        self._checks_html = w.HTML()
        self._checks_html.add_class("cdfsketch-checks")
        self._refresh_candidates()
        super().__init__(self._layout())
        self.add_class("cdfsketch-editor")
        self._connect()
        self.sketch = sketch
        if autosave is not None:
            self.autosave = os.fspath(autosave)
        self.observe(self._on_sketch_trait, names="sketch")
        self.observe(lambda _c: self._save_if_asked(), names="autosave")
        self._render()
        self.plots.draw_legend()
        self._save_if_asked()

    # ================================================================ building
    def _automatic(self) -> Sketch:
        """The automatic start (the one place it comes from)."""
        assert self._data is not None
        return automatic_start(self._data)

    def _domain_for(self, s: Sketch) -> tuple[float, float]:
        """The x axis: the opened sketch's and the data's range, widened to the knots shown."""
        base = getattr(self, "_initial", s)
        lo = min(float(base.ppf(0.002)), float(base.x[0]), float(s.x[0]))
        hi = max(float(base.ppf(0.998)), float(base.x[-1]), float(s.x[-1]))
        if self._data is not None:
            lo, hi = min(lo, self._data.range[0]), max(hi, self._data.range[1])
        pad = 0.04 * (hi - lo or 1.0)
        return float(lo - pad), float(hi + pad)

    def _layout(self) -> list[w.Widget]:
        s = self._initial
        c = self.controls
        title = (s.name or "sketch") + (f" ({s.units})" if s.units else "")
        head = w.HTML(
            raw(f"<style>{CSS}</style>")
            + tag(
                "div",
                tag("div", title, cls="cdfsketch-title"),
                tag("div", GUIDE, cls="cdfsketch-guide"),
                tag("div", CAUTION, cls="cdfsketch-note"),
            )
        )
        left = w.VBox(
            [
                self.plots.legend,
                self.message,
                self.plots.cdf_figure,
                self.plots.pdf_figure,
                self.plots.density_note,
            ],
            layout=w.Layout(flex="1 1 560px", min_width="0"),
        )
        right = w.VBox(
            [c.shape, self._readout_html, self.table.box, self._checks_html],
            layout=w.Layout(flex="0 0 300px", width="300px", margin="0 0 0 6px"),
        )
        right.add_class("cdfsketch-side")
        left.add_class("cdfsketch-plots")
        tails = group("tails (beyond the outer knots)", *(t.box for t in self._tails), css="tails")
        wrap = w.Layout(flex_flow="row wrap", width="100%")
        return [
            head,
            w.HBox([left, right], layout=wrap),
            w.HBox([tails, c.starting, c.check, c.saving], layout=wrap),
        ]

    def _connect(self) -> None:
        c = self.controls
        c.connect({
            "add": self.add_knot, "remove": self.remove_selected, "lock": self._toggle_lock,
            "undo": self.undo, "redo": self.redo, "start_over": self._start_over,
            "fit": self._fit_candidates, "draw": self._draw_sample, "hide": self.hide_sample,
            "save": self._save_button,
        })  # fmt: skip
        c.interp.observe(self._on_interp, names="value")
        c.pick.observe(self._on_pick, names="value")
        self.knots.on_drag_start(self._on_drag_start)
        self.knots.on_drag(self._on_drag)
        self.knots.on_drag_end(self._on_drag_end)
        self.knots.observe(self._on_knots_synced, names=["x", "y"])
        self.plots.locked_knots.observe(self._on_locked_clicked, names="selected")

    # ================================================================ the one change
    @contextlib.contextmanager
    def _writing_view(self) -> Iterator[None]:
        was, self._drawing = self._drawing, True
        try:
            yield
        finally:
            self._drawing = was

    def _set(self, new: State, *, record: bool | State = True) -> None:
        """Make ``new`` the state: record it for undo, clear what belonged to the old one, draw.

        ``record`` is ``False`` (no undo step: a selection, a live drag step,
        undo itself), ``True`` (an undo step back to the current state) or the
        state to go back to (a whole drag gesture).
        """
        old = self._state
        before = record if isinstance(record, State) else old
        if record is not False and (new.sketch, new.locked) != (before.sketch, before.locked):
            self._history.record(before)
        self._state = new
        if new != old:
            self.message.value = ""  # every message belongs to the state it was about
        changed = new.sketch != old.sketch
        if changed:
            self.controls.snippet.value = ""
            self.plots.show_sample(None)
        self.sketch = new.sketch
        self._render()
        if self._gesture is None and (changed or new.sketch != before.sketch):
            self._save_if_asked()

    def _on_sketch_trait(self, change: dict) -> None:
        # set from code (not by _set): a change like any other; locks survive if the knots do
        if change["new"] is not self._state.sketch:
            s: Sketch = change["new"]
            same = len(s) == len(self._state.sketch)
            self._set(
                self._state.evolve(sketch=s, locked=self._state.locked if same else frozenset())
            )

    def _render(self) -> None:
        """Derive every mark, cell, control and readout line from the state."""
        st = self._state
        s = st.sketch
        drag = self._gesture is not None
        d = self._data
        outside = d.outside_band(s) if d is not None else np.zeros(len(s), dtype=bool)
        with self._writing_view():
            if not drag:
                self.plots.set_domain(self._domain_for(s))
            self.plots.draw_curves(s, grow_only=drag)
            if drag:
                i = self._gesture[0]  # type: ignore[index]
                self.plots.show_clamped(float(s.x[i]), float(s.p[i]))
            else:
                self.plots.draw_knots(st, outside)
                self._draw_controls(st)
            res = None if d is None else d.resolution
            only = self._gesture[0] if drag else None  # type: ignore[index]
            self.table.show(s, locked=st.locked, selected=st.selected, resolution=res, only=only)
            r = readout(s, d, self._quantiles, outside)
            self._readout = r
            html_ = readout_html(r, d, s)
            if self._readout_html.value != html_:
                self._readout_html.value = html_
            checks = checks_html(r)
            if self._checks_html.value != checks:
                self._checks_html.value = checks

    def _draw_controls(self, st: State) -> None:
        c = self.controls
        n = len(st.sketch)
        if len(c.pick.options) != n + 1:
            c.pick.options = [("none", -1), *((str(i), i) for i in range(n))]
        c.pick.value = -1 if st.selected is None else st.selected
        c.remove.disabled = st.selected is None or st.selected in st.locked
        c.lock.disabled = st.selected is None
        c.lock.description = "unlock" if st.selected in st.locked else "lock"
        c.undo.disabled = not self._history.can_undo
        c.redo.disabled = not self._history.can_redo
        c.interp.value = st.sketch.interpolation
        for tc in self._tails:
            tc.show(st.sketch, self._default_limit(tc.side))

    def _apply(self, make: Any) -> bool:
        """Replace the sketch by ``make(sketch)``; show the error instead of raising."""
        try:
            new = make(self._state.sketch)
            check_locks(new, self._state)
        except (*_ERRORS, traitlets.TraitError) as err:
            self._error(str(err))
            return False
        self._set(self._state.evolve(sketch=new))
        return True

    def _error(self, text: str) -> None:
        self.message.value = tag("div", text, cls="cdfsketch-error")

    # ================================================================ public API
    @property
    def readout(self) -> dict[str, Any]:
        """The readout's numbers (mean, sd, quantiles, tails, fit numbers, warnings)."""
        return dict(self._readout)

    @property
    def data(self) -> DataView | None:
        """What the editor computed from the data (ECDF, band, split), or ``None``."""
        return self._data

    @property
    def state(self) -> State:
        """The whole state: sketch, locked knots, selected knot (immutable)."""
        return self._state

    @property
    def selected(self) -> int | None:
        """Index of the selected knot, or ``None``."""
        return self._state.selected

    @selected.setter
    def selected(self, i: int | None) -> None:
        if i is not None:
            i = integer(i, field="selected", low=0, high=len(self._state.sketch) - 1)
        self._set(self._state.evolve(selected=i), record=False)

    @property
    def locked(self) -> frozenset[int]:
        """Indices of the locked knots (they do not move by any path)."""
        return self._state.locked

    @property
    def can_undo(self) -> bool:
        """Whether :meth:`undo` has a step to go back to."""
        return self._history.can_undo

    def lock(self, i: int, *, locked: bool = True) -> Editor:
        """Lock (or unlock) knot ``i`` (an undoable change)."""
        i = integer(i, field="knot index", low=0, high=len(self._state.sketch) - 1)
        st = self._state
        self._set(st.evolve(locked=st.locked | {i} if locked else st.locked - {i}))
        return self

    def undo(self) -> Editor:
        """Go back one change (a whole drag gesture is one change; locks included)."""
        prev = self._history.back(self._state)
        if prev is not None:
            self._set(prev, record=False)
        return self

    def redo(self) -> Editor:
        """Redo the last undone change."""
        nxt = self._history.forward(self._state)
        if nxt is not None:
            self._set(nxt, record=False)
        return self

    def reset(self) -> Editor:
        """Back to the sketch the editor opened with (undoable): ``start_from("opened")``."""
        return self.start_from("opened")

    def add_knot(self, x: float | None = None, p: float | None = None) -> Editor:
        """Add a knot at ``(x, p)``; by default halfway to the next knot after the selected one.

        Without a selection the knot goes into the middle of the widest step in
        ``p``. Errors are shown in the editor (the sketch is unchanged).
        """
        s = self._state.sketch
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
        st = self._state
        i = st.selected
        if i is None:
            self._error("Select a knot first: click it, or choose its number under 'selected'.")
            return self
        if i in st.locked:
            self._error(f"Knot {i} is locked; unlock it before removing it.")
            return self
        try:
            new = st.sketch.without_knot(i)
        except _ERRORS as err:
            self._error(str(err))
            return self
        locked = frozenset(j - (j > i) for j in st.locked)
        self._set(State(new, locked, None))
        return self

    def start_from(self, choice: str | Sketch | Any) -> Editor:
        """Start over from ``"auto"``, ``"opened"``, a candidate or a sketch (undoable).

        A candidate (:class:`cdfsketch.fit.Candidate`, or ``"cand:<i>"`` for
        the i-th offered one) becomes a sketch with
        ``Candidate.to_sketch(knots=12)``; its CDF is drawn dashed and named
        in the legend. Locks and the selection are cleared.
        """
        s = self._state.sketch
        cand = None
        if isinstance(choice, Sketch):
            new = choice
        elif choice == "opened":
            new = self._initial
        elif choice == "auto":
            if self._data is None:
                self._error("The automatic start needs data; this editor has none.")
                return self
            new = self._automatic().replace(name=s.name, units=s.units)
        elif isinstance(choice, str) and choice.startswith("cand:"):
            cand = self._candidates[int(choice[5:])]
        elif hasattr(choice, "to_sketch"):
            cand = choice
        else:
            raise InputError(
                f"start_from takes 'auto', 'opened', a Candidate, 'cand:<i>' or a Sketch; got "
                f"{choice!r}. For example ed.start_from('auto').",
                field="choice",
            )
        if cand is not None:
            new = cand.to_sketch(knots=12, name=s.name, units=s.units)
        self.show_candidate(cand)
        self._set(State(new))
        return self

    def show_candidate(self, candidate: Any | None) -> Editor:
        """Draw a candidate's CDF dashed over the sketch, named in the legend (``None`` hides)."""
        if candidate is None:
            self.plots.show_candidate("", None)
        else:
            self.plots.show_candidate(str(getattr(candidate, "name", "candidate")), candidate.cdf)
        return self

    def preview_sample(self, size: int = 10_000, *, rng: Any = None) -> np.ndarray:
        """Draw ``size`` values from the sketch and show their histogram (until the next change).

        Returns the draws. ``rng`` is anything ``np.random.default_rng`` takes
        (default: the editor's ``rng``, a new stream per preview).
        """
        size = integer(size, field="size", low=1)
        if rng is None:
            self._samples += 1
            rng = _streams.generator(self._root, "preview", self._samples)
        draws = self._state.sketch.sample(size, rng=rng)
        self.plots.show_sample(draws)
        return draws

    def hide_sample(self) -> Editor:
        """Hide the sample preview."""
        self.plots.show_sample(None)
        return self
