"""Speed of the editor, kernel side: drag handler, opening, bytes sent to the browser.

Targets (issue 5): drag handler p95 ≤ 10 ms with 50 knots and n = 1e6 points;
opening on n = 1e7 points ≤ 1.5 s and ≤ 200 KB of widget state. The drag
handler is timed by feeding the knot Scatter the same ``drag`` messages the
browser sends (constraint, all derived marks, table row and readout). The
baseline, timed in the same process, is one ``Sketch.cdf`` over all the data
points (what an exact KS distance per drag would cost at least).

Run ``python tests/bench/bench_editor.py`` (``--quick`` for small sizes).
"""

from __future__ import annotations

import json
import sys
import time

import numpy as np
from ipywidgets import Widget
from ipywidgets.widgets.widget import _remove_buffers

from cdfsketch import Sketch
from cdfsketch.widgets.editor import Editor


def _sketch_50(data: np.ndarray, knots: int = 50) -> Sketch:
    p = np.linspace(0.0, 1.0, knots)
    x = np.quantile(data, p)
    x = np.maximum.accumulate(x + np.arange(knots) * 1e-9)
    return Sketch(x, p, interpolation="pchip", name="bench", units="h")


def state_bytes(root: Widget) -> int:
    """Bytes of the widget state the browser receives for ``root`` and every widget it holds."""
    seen: dict[str, Widget] = {}
    todo = [root]
    while todo:
        wid = todo.pop()
        if wid.model_id in seen:
            continue
        seen[wid.model_id] = wid
        for name in wid.keys:
            todo.extend(_widgets_in(getattr(wid, name)))
    total = 0
    for wid in seen.values():
        state, _paths, buffers = _remove_buffers(wid.get_state())
        total += len(json.dumps(state, default=str)) + sum(len(memoryview(b)) for b in buffers)
    return total


def _widgets_in(value: object) -> list[Widget]:
    if isinstance(value, Widget):
        return [value]
    if isinstance(value, list | tuple):
        return [v for item in value for v in _widgets_in(item)]
    if isinstance(value, dict):
        return [v for item in value.values() for v in _widgets_in(item)]
    return []


def drag_times(ed: Editor, i: int, moves: int, rng: np.random.Generator) -> np.ndarray:
    """Seconds per ``drag`` message over one gesture of ``moves`` moves of knot ``i``."""
    k = ed.knots
    x0, y0 = float(k.x[i]), float(k.y[i])
    span = float(k.x[-1] - k.x[0])
    k._handle_custom_msgs(None, {"event": "drag_start", "point": {"x": x0, "y": y0}, "index": i})
    out = np.empty(moves)
    for j in range(moves):
        pt = {
            "x": x0 + rng.normal(0, 0.05) * span,
            "y": float(np.clip(y0 + rng.normal(0, 0.05), 0, 1)),
        }
        msg = {"event": "drag", "origin": {"x": x0, "y": y0}, "point": pt, "index": i}
        t = time.perf_counter()
        k._handle_custom_msgs(None, msg)
        out[j] = time.perf_counter() - t
    t = time.perf_counter()
    k._handle_custom_msgs(None, {"event": "drag_end", "point": pt, "index": i})
    return np.r_[out, time.perf_counter() - t]


def main(quick: bool = False) -> dict[str, float]:
    rng = np.random.default_rng(5)
    n_drag = 10_000 if quick else 1_000_000
    n_open = 20_000 if quick else 10_000_000
    moves = 20 if quick else 60
    data = rng.gamma(3.0, 2.0, n_drag)
    data.sort()
    sk = _sketch_50(data)
    t = time.perf_counter()
    sk.cdf(data)
    base_cdf = time.perf_counter() - t
    ed = Editor(data, sk, holdout=0.3, seed=1)
    times = np.concatenate([drag_times(ed, int(i), moves, rng) for i in rng.integers(1, 49, 5)])
    p50, p95 = np.percentile(times, [50, 95])
    print(f"drag handler, 50 knots, n={n_drag:.0e}: p50 {p50 * 1e3:.2f} ms, p95 "
          f"{p95 * 1e3:.2f} ms over {times.size} messages (target p95 <= 10 ms)")  # fmt: skip
    print(f"  baseline: one Sketch.cdf over the {n_drag:.0e} points {base_cdf * 1e3:.1f} ms; "
          f"p95 / baseline = {p95 / base_cdf:.3f}")  # fmt: skip

    big = rng.gamma(3.0, 2.0, n_open)
    sk_big = _sketch_50(big[: min(n_open, 200_000)])
    t = time.perf_counter()
    sk_big.cdf(big)
    base_big = time.perf_counter() - t
    t = time.perf_counter()
    ed_big = Editor(big, sk_big, holdout=0.3, seed=1)
    t_open = time.perf_counter() - t
    size = state_bytes(ed_big)
    print(f"open with a 50-knot sketch, n={n_open:.0e}: {t_open:.2f} s kernel-side (target "
          f"<= 1.5 s), widget state {size / 1e3:.1f} KB (target <= 200 KB)")  # fmt: skip
    print(f"  baseline: one Sketch.cdf over the {n_open:.0e} points {base_big:.2f} s; "
          f"open / baseline = {t_open / base_big:.2f}")  # fmt: skip
    t = time.perf_counter()
    ed_auto = Editor(big, holdout=0.3, seed=1)
    t_auto = time.perf_counter() - t
    size_auto = state_bytes(ed_auto)
    print(f"open from automatic knots (the default), n={n_open:.0e}: {t_auto:.2f} s "
          f"kernel-side (target <= 1.5 s), {len(ed_auto.sketch)} knots, widget state "
          f"{size_auto / 1e3:.1f} KB")  # fmt: skip
    t = time.perf_counter()
    np.sort(big)
    t_sort = time.perf_counter() - t
    print(f"  baseline: np.sort of the {n_open:.0e} points {t_sort:.2f} s; "
          f"open / sort = {t_auto / t_sort:.2f}")  # fmt: skip
    return {
        "drag_p50": p50, "drag_p95": p95, "open_s": t_open, "state_bytes": size,
        "open_auto_s": t_auto, "state_bytes_auto": size_auto,
    }  # fmt: skip


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
