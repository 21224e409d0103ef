"""The comparison as a review reads it: four questions, plain labels, a dot per row.

The raw scores stay in :class:`~cdfsketch.fit.ComparisonTable` (``rows``,
``to_pandas()``, ``to_csv()``). Here they become the answers to the questions
a review meeting asks of each candidate:

* how close is it to the data (largest CDF gap to the ECDF, against the
  band's half-width);
* how well does it predict held-out data (mean CRPS of the held-out points,
  in the data's units);
* how heavy is its upper tail (the chance of exceeding the largest
  observation, against the ``1/(n+1)`` the data themselves suggest);
* how many parameters were estimated from the data.

Each number is shown to 3 significant digits with its unit and its direction
(a distance or an error below :data:`NOISE` times its column's scale — the
largest value in the column, or the band's half-width — is floating-point
rounding, e.g. the resampled data's KS distance to its own ECDF, and is shown
as 0; the raw value stays in ``to_pandas()`` and the CSV),
and as a dot on a scale shared by the rows, so the order is seen at a glance
(distances from zero; held-out errors over their span; tail chances in log10,
since they range over orders of magnitude).
The board renders :func:`presentation` as HTML (:func:`table_html`), the page
renders the same structure in the browser.
"""

from __future__ import annotations

import html
import math
from typing import Any

import numpy as np

from .._numfmt import significant
from .palette import DASH_ARRAY

__all__ = ["NOISE", "QUESTIONS", "presentation", "shown_value", "sort_rows", "table_html"]

#: The questions, in order: key, label, direction, what it is.
QUESTIONS = (
    (
        "close",
        "Distance to the data",
        "lower is better",
        "largest gap between the candidate's CDF and the data's ECDF (Kolmogorov–Smirnov "
        "distance, in probability); below the band's half-width it stays inside the band",
    ),
    (
        "predict",
        "Error on held-out data",
        "lower is better",
        "mean CRPS of the held-out points under the candidate fitted without them (a "
        "judgement is scored as given), in the data's units",
    ),
    (
        "tail",
        "Chance above the largest value",
        "near the mark",
        "probability of exceeding the largest observation; the mark is 1/(n+1), what the "
        "data alone suggest. Much lower: a light upper tail; much higher: a heavy one",
    ),
    (
        "params",
        "Parameters",
        "fewer is simpler",
        "parameters estimated from the data (a judgement or the data themselves: none)",
    ),
)


#: How each question's dots are laid out: from zero, over the values' span, or in log10.
_SCALES = {"close": "zero", "predict": "span", "tail": "log", "params": "zero"}
#: Smallest probability placed on the log scale (smaller ones sit at its left end).
_LOG_FLOOR = 1e-5
#: A distance or error below this fraction of its column's scale is shown as 0 (rounding).
NOISE = 1e-9
#: The questions whose values are distances or errors (exactly 0 is attainable).
_NOISY = ("close", "predict")


def shown_value(v: float, scale: float) -> str:
    """A distance or error to 3 significant digits; below ``NOISE · scale`` it is 0.

    Examples
    --------
    >>> shown_value(8.673617379884035e-19, 0.136), shown_value(0.0123456, 0.136)
    ('0', '0.0123')
    """
    return "0" if abs(v) < NOISE * scale else significant(v, 3)


def _t(v: float, kind: str) -> float:
    return math.log10(max(v, _LOG_FLOOR)) if kind == "log" else v


def _scale(
    values: list[float | None], ref: float | None, kind: str
) -> tuple[float, float, str] | None:
    finite = [_t(v, kind) for v in values if v is not None and math.isfinite(v)]
    if ref is not None:
        finite.append(_t(ref, kind))
    if not finite:
        return None
    lo, hi = min(finite), max(finite)
    if kind == "zero":
        lo = min(0.0, lo)
    elif hi > lo:  # a little room at both ends so no dot sits on the edge
        pad = 0.08 * (hi - lo)
        lo, hi = lo - pad, hi + pad
    return (lo, hi if hi > lo else lo + 1.0, kind)


def _pos(v: float | None, scale: tuple[float, float, str] | None) -> float | None:
    if v is None or scale is None or not math.isfinite(v):
        return None
    lo, hi, kind = scale
    return round(min(1.0, max(0.0, (_t(v, kind) - lo) / (hi - lo))), 4)


def _cell(v: Any) -> float | None:
    if v is None:
        return None
    f = float(v)
    return None if math.isnan(f) else f


def presentation(review: Any) -> dict[str, Any] | None:
    """The comparison table as labelled questions, texts and dot positions (None without data).

    Returns a JSON-ready dict: ``columns`` (key, label, unit, direction,
    help, reference mark) and ``rows`` (name, chosen, style, and per
    question the value, its text and its dot position in [0, 1]).
    """
    if not review.has_table:
        return None
    table = review.table()
    units = review.units
    n = int(table.info["n"])
    eps = float(table.info["eps"])
    top = review.data_range[1]
    raw = {r["name"]: r for r in table.rows}
    values: dict[str, list[float | None]] = {k: [] for k, *_ in QUESTIONS}
    for c in review.candidates:
        r = raw[c.name]
        values["close"].append(_cell(r["ks"]))
        values["predict"].append(_cell(r.get("crps_holdout")))
        values["tail"].append(float(c.model.sf(top)))
        values["params"].append(_cell(r.get("n_params")))
    refs = {"close": eps, "predict": None, "tail": 1.0 / (n + 1), "params": None}
    ref_text = {
        "close": f"band half-width {significant(eps, 3)}",
        "tail": f"1/(n+1) = {significant(100 / (n + 1), 3)} %",
    }
    unit = {"close": "", "predict": units, "tail": "%", "params": ""}
    columns = []
    scales = {}
    for key, label, direction, help_ in QUESTIONS:
        scales[key] = _scale(values[key], refs[key], _SCALES[key])
        ref = refs[key]
        columns.append(
            {
                "key": key,
                "label": label,
                "unit": unit[key],
                "direction": direction,
                "help": help_,
                "reference": None
                if ref is None
                else {"pos": _pos(ref, scales[key]), "text": ref_text[key]},
            }
        )
    noise_scale = {
        k: max([abs(v) for v in values[k] if v is not None and math.isfinite(v)] + [refs[k] or 0.0])
        for k in _NOISY
    }
    rows = []
    for i, c in enumerate(review.candidates):
        cells = {}
        for key, *_ in QUESTIONS:
            v = values[key][i]
            if key == "params" and v is None:
                shown = "none" if c.kind != "fit" else "–"
            elif key == "tail":
                shown = significant(100 * v, 3) if v is not None else "–"
            elif key == "params":
                shown = str(int(v)) if v is not None else "–"
            elif v is not None and math.isfinite(v):
                shown = shown_value(v, noise_scale[key])
            else:
                shown = significant(v, 3)
            cells[key] = {
                "value": None if v is None or not math.isfinite(v) else v,
                "text": shown,
                "pos": _pos(v, scales[key]),
            }
        st = review.style(c.name)
        rows.append(
            {
                "name": c.name,
                "index": i,
                "kind": c.description,
                "chosen": c.name == review.chosen,
                "colour": st.colour,
                "dash": DASH_ARRAY[st.dash],
                "cells": cells,
            }
        )
    return {"columns": columns, "rows": rows, "n": n, "nTest": int(table.info["n_test"])}


def sort_rows(rows: list[dict[str, Any]], key: str | None, *, ascending: bool = True) -> list:
    """Rows ordered by one question's value, missing values last (stable)."""
    if key is None:
        return list(rows)
    have = [r for r in rows if r["cells"][key]["value"] is not None]
    rest = [r for r in rows if r["cells"][key]["value"] is None]
    have.sort(key=lambda r: r["cells"][key]["value"], reverse=not ascending)
    return have + rest


def _dot_svg(pos: float | None, ref: float | None, colour: str) -> str:
    width, pad = 90, 5
    span = width - 2 * pad
    parts = [
        f'<svg width="{width}" height="14" viewBox="0 0 {width} 14" aria-hidden="true" '
        'style="vertical-align:middle">',
        f'<line x1="{pad}" x2="{width - pad}" y1="7" y2="7" stroke="#ccc"/>',
    ]
    if ref is not None:
        x = pad + ref * span
        parts.append(f'<line x1="{x:.1f}" x2="{x:.1f}" y1="1" y2="13" stroke="#555"/>')
    if pos is not None:
        x = pad + pos * span
        parts.append(f'<circle cx="{x:.1f}" cy="7" r="4" fill="{colour}" stroke="#222" '
                     'stroke-width="0.6"/>')  # fmt: skip
    parts.append("</svg>")
    return "".join(parts)


def table_html(pres: dict[str, Any], *, sort_by: str | None = None, ascending: bool = True) -> str:
    """The presentation as escaped HTML (the board's table); it fits 1000 px."""
    head = ['<th style="text-align:left">Candidate</th>']
    for col in pres["columns"]:
        unit = f" ({html.escape(col['unit'])})" if col["unit"] else ""
        head.append(
            f'<th title="{html.escape(col["help"])}" style="text-align:left">'
            f'{html.escape(col["label"])}{unit}<br><small style="font-weight:normal;'
            f'color:#555">{html.escape(col["direction"])}</small></th>'
        )
    body = []
    for r in sort_rows(pres["rows"], sort_by, ascending=ascending):
        mark = ' class="chosen" style="background:#e8f0f8;font-weight:bold"' if r["chosen"] else ""
        swatch = (
            f'<svg width="22" height="8" aria-hidden="true"><line x1="0" x2="22" y1="4" y2="4" '
            f'stroke="{r["colour"]}" stroke-width="3" stroke-dasharray="{r["dash"]}"/></svg>'
        )
        cells = [
            f'<td style="max-width:220px;overflow-wrap:anywhere">{swatch} '
            f"{html.escape(r['name'])}{' (chosen)' if r['chosen'] else ''}<br>"
            f'<small style="color:#555;font-weight:normal">{html.escape(r["kind"])}</small></td>'
        ]
        for col in pres["columns"]:
            c = r["cells"][col["key"]]
            ref = col["reference"]["pos"] if col["reference"] else None
            dot = _dot_svg(c["pos"], ref, r["colour"]) if col["key"] != "params" else ""
            cells.append(
                f'<td style="white-space:nowrap" data-column="{col["key"]}">'
                f'<span style="display:inline-block;min-width:3.6em;text-align:right;'
                f'font-variant-numeric:tabular-nums">{html.escape(c["text"])}</span> {dot}</td>'
            )
        body.append(f"<tr{mark}>{''.join(cells)}</tr>")
    refs = "; ".join(
        f"{html.escape(c['label'])}: the mark is {html.escape(c['reference']['text'])}"
        for c in pres["columns"]
        if c["reference"]
    )
    return (
        '<table class="cdfsketch-comparison" style="border-collapse:collapse;font-size:13px;'
        "line-height:1.3;"
        'max-width:100%;table-layout:auto">'
        f"<thead><tr>{''.join(head)}</tr></thead><tbody>{''.join(body)}</tbody></table>"
        '<p style="font-size:12px;color:#555;margin:4px 0;line-height:1.35">'
        f"{refs}. Dots share one scale per column (the tail chance in log scale). "
        "Distances on all data carry no p-value: the candidates were fitted or tuned on "
        "these data. Every raw score: table().to_pandas() or table().to_csv(path).</p>"
    )


def finite_or_none(v: Any) -> Any:
    """JSON-safe value: NaN → None, ±inf → "inf"/"-inf", numpy scalars → Python."""
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float):
        if math.isnan(v):
            return None
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
    return v
