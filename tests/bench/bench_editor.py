"""Speed of the editor, kernel side: drag handler, opening, bytes sent to the browser.

Targets: drag handler p95 ≤ 10 ms with 50 knots and n = 1e6 points; opening
on n = 1e7 points of any shape (skewed, heavy-tailed, bimodal with many ties,
unsorted; also already sorted, which is not sorted again) ≤ 1.5 s kernel-side
and ≤ 200 KB sent, measured as the JSON of
``ipywidgets.embed.embed_data(views=[editor], state=...)`` holding that
editor's widgets alone (binary buffers included, base64 as embedded). The
drag handler is timed by feeding the knot Scatter the same ``drag``
messages the browser sends. Baselines, timed in the same process: one
``Sketch.cdf`` over all the data points (what an exact KS distance per drag
would cost at least) and one ``np.sort`` of the data (opening sorts once;
numpy sorts sorted data fast too, so that shape's ratio is the largest).

Run ``python tests/bench/bench_editor.py`` (``--quick`` for small sizes).
"""

from __future__ import annotations

import json
import sys
import time

import numpy as np
from ipywidgets import Widget
from ipywidgets.embed import dependency_state, embed_data

from cdfsketch import Sketch
from cdfsketch.widgets.editor import Editor


def _sketch_50(data: np.ndarray, knots: int = 50) -> Sketch:
    p = np.linspace(0.0, 1.0, knots)
    x = np.quantile(data, p)
    x = np.maximum.accumulate(x + np.arange(knots) * 1e-9)
    return Sketch(x, p, interpolation="pchip", name="bench", units="h")


def state_bytes(root: Widget) -> int:
    """Bytes of ``embed_data(views=[root], state=...)`` with the state of ``root``'s widgets."""
    data = embed_data(views=[root], state=dependency_state([root], drop_defaults=True))
    return len(json.dumps(data["manager_state"])) + len(json.dumps(data["view_specs"]))


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
    ed = Editor(data, sk, holdout=0.3, rng=1)
    times = np.concatenate([drag_times(ed, int(i), moves, rng) for i in rng.integers(1, 49, 5)])
    p50, p95 = np.percentile(times, [50, 95])
    print(f"drag handler, 50 knots, n={n_drag:.0e}: p50 {p50 * 1e3:.2f} ms, p95 "
          f"{p95 * 1e3:.2f} ms over {times.size} messages (target p95 <= 10 ms)")  # fmt: skip
    print(f"  baseline: one Sketch.cdf over the {n_drag:.0e} points {base_cdf * 1e3:.1f} ms; "
          f"p95 / baseline = {p95 / base_cdf:.3f}")  # fmt: skip

    results: dict[str, float] = {"drag_p50": p50, "drag_p95": p95}
    for shape, make in SHAPES.items():
        big = make(np.random.default_rng(7), n_open)
        t = time.perf_counter()
        np.sort(big)
        t_sort = time.perf_counter() - t
        t = time.perf_counter()
        ed_big = Editor(big, holdout=0.3, rng=1)
        t_open = time.perf_counter() - t
        size = state_bytes(ed_big)
        print(f"open {shape}, n={n_open:.0e}: {t_open:.2f} s kernel-side (target <= 1.5 s), "
              f"{len(ed_big.sketch)} knots, {size / 1e3:.1f} KB sent (target <= 200 KB); "
              f"open / np.sort = {t_open / t_sort:.2f}")  # fmt: skip
        results[f"open_{shape}_s"] = t_open
        results[f"bytes_{shape}"] = size
        del ed_big, big
    return results


#: data shapes the editor must open quickly (invented)
SHAPES = {
    "skewed": lambda g, n: g.gamma(1.5, 4.0, n),
    "heavy-tailed": lambda g, n: g.pareto(1.5, n) * 3.0,
    "bimodal-ties": lambda g, n: np.round(
        np.where(g.random(n) < 0.6, g.normal(30, 5, n), g.normal(70, 3, n))
    ),
    "unsorted-lognormal": lambda g, n: g.lognormal(2.0, 0.8, n),
    "already-sorted": lambda g, n: np.sort(g.weibull(1.3, n)),
}

if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
