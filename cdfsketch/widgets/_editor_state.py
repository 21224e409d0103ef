"""The editor's state as one immutable value, its undo history, and the drag rules.

:class:`State` holds everything an undo step restores: the sketch, the
locked knots and the selection. :class:`History` is two stacks of states.
The drag rules live here too, as plain functions of a sketch:

* **visible gap** — a dragged knot stops :data:`GAP_X` of the x axis span
  and :data:`GAP_P` in ``p`` short of its neighbours (never closer than it
  already is), so two knots never end up on top of each other where they
  cannot be told apart or grabbed, and no density spike comes from a gap
  nobody can see. Typed values and code may still make jumps (atoms).
* **a tail that holds mass keeps it** — a drag of an end knot leaves at least
  :data:`TAIL_MIN` of mass in a tail that has mass, so a drag never removes
  a stated tail silently; the tail controls remove a tail ("no tail").
* **locked knots do not move** — :func:`check_locks` refuses any new sketch
  that moves a locked knot.

Examples
--------
>>> from cdfsketch import Sketch
>>> s = Sketch([0, 10, 20], [0, 0.5, 1])
>>> float(drag_knot(s, 1, x=19.99, p=0.9, span=100).x[1])  # 0.5 % of 100 short of 20
19.5
>>> slug("Pump repair time (invented)")
'pump_repair_time_invented'
"""

from __future__ import annotations

import inspect
import re
from dataclasses import dataclass, field, replace

import numpy as np
import traitlets

from ..sketch import Sketch
from ..tails import BoundedTail

__all__ = ["GAP_P", "GAP_X", "TAIL_MIN", "History", "State", "check_locks", "drag_knot", "slug"]

#: smallest gap a drag leaves to a neighbour, as a fraction of the x axis span (about 3 px)
GAP_X = 0.005
#: smallest gap a drag leaves to a neighbour in p
GAP_P = 0.005
#: smallest mass a drag leaves in a tail that holds mass (a stated tail is never dragged away)
TAIL_MIN = 0.005


@dataclass(frozen=True)
class State:
    """What one undo step restores: the sketch, the locked knots, the selected knot."""

    sketch: Sketch
    locked: frozenset[int] = field(default_factory=frozenset)
    selected: int | None = None

    def evolve(self, **changes: object) -> State:
        """A copy with some fields changed; locks and selection beyond the knots are dropped."""
        new = replace(self, **changes)  # type: ignore[arg-type]
        n = len(new.sketch)
        if any(i >= n for i in new.locked) or (new.selected is not None and new.selected >= n):
            new = replace(
                new,
                locked=frozenset(i for i in new.locked if i < n),
                selected=new.selected if new.selected is not None and new.selected < n else None,
            )
        return new


class History:
    """Undo and redo stacks of :class:`State` values (a drag gesture is one entry)."""

    def __init__(self) -> None:
        self._undo: list[State] = []
        self._redo: list[State] = []

    def record(self, before: State) -> None:
        """Remember ``before`` as the state to go back to; a new change clears redo."""
        self._undo.append(before)
        self._redo.clear()

    def back(self, now: State) -> State | None:
        """The state before ``now`` (``now`` goes onto redo), or ``None``."""
        if not self._undo:
            return None
        self._redo.append(now)
        return self._undo.pop()

    def forward(self, now: State) -> State | None:
        """The state undone last (``now`` goes onto undo), or ``None``."""
        if not self._redo:
            return None
        self._undo.append(now)
        return self._redo.pop()

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    def clear(self) -> None:
        self._undo.clear()
        self._redo.clear()


def check_locks(new: Sketch, state: State) -> Sketch:
    """``new`` if no locked knot of ``state`` moves in it, else a :class:`traitlets.TraitError`."""
    old = state.sketch
    if state.locked and len(new) == len(old):
        for i in sorted(state.locked):
            if new.x[i] != old.x[i] or new.p[i] != old.p[i]:
                raise traitlets.TraitError(
                    f"Knot {i} is locked, so it cannot move; got a sketch that moves it. "
                    f"Unlock it first (Editor.lock({i}, locked=False))."
                )
    return new


# the core's move_knot takes min_dx/min_dp in newer versions; without them the gap is kept here
_CORE_GAP = "min_dx" in inspect.signature(Sketch.move_knot).parameters


def drag_knot(sketch: Sketch, i: int, *, x: float, p: float, span: float) -> Sketch:
    """Knot ``i`` moved towards ``(x, p)`` by a drag: clamped with a visible gap (module doc).

    ``span`` is the x axis span the gap :data:`GAP_X` is a fraction of.
    """
    xs, ps = sketch.x, sketch.p
    n = len(sketch)
    dx, dp = GAP_X * span, GAP_P
    lo_x, hi_x = -np.inf, np.inf
    lo_p, hi_p = 0.0, 1.0
    low, up = sketch.lower_tail, sketch.upper_tail
    if i > 0:
        lo_x, lo_p = xs[i - 1] + dx, ps[i - 1] + dp
    elif isinstance(low, BoundedTail):
        lo_x = low.limit + dx
    if i < n - 1:
        hi_x, hi_p = xs[i + 1] - dx, ps[i + 1] - dp
    elif isinstance(up, BoundedTail):
        hi_x = up.limit - dx
    if i == 0 and ps[0] > 0:
        lo_p = max(lo_p, min(TAIL_MIN, float(ps[0])))
    if i == n - 1 and ps[-1] < 1:
        hi_p = min(hi_p, max(1.0 - TAIL_MIN, float(ps[-1])))
    # never pushed towards a neighbour it is already closer to than the gap
    lo_x, hi_x = min(lo_x, xs[i]), max(hi_x, xs[i])
    lo_p, hi_p = min(lo_p, ps[i]), max(hi_p, ps[i])
    cx = float(np.clip(x, lo_x, hi_x))
    cp = float(np.clip(p, lo_p, hi_p))
    if _CORE_GAP:  # pragma: no cover - the core's own clamp, once it has the gap options
        return sketch.move_knot(i, x=cx, p=cp, min_dx=dx, min_dp=dp)  # type: ignore[call-arg]
    return sketch.move_knot(i, x=cx, p=cp)


def slug(text: str, default: str = "sketch") -> str:
    """A safe file-name stem: lower case letters, digits and ``_`` (at most 60 characters)."""
    s = re.sub(r"[^a-z0-9]+", "_", text.lower()).strip("_")[:60].strip("_")
    return s or default
