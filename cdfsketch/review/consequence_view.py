"""Does the choice change the model's answer? What every view shows of a consequence run.

:func:`consequence_presentation` turns the review's
:class:`~cdfsketch.outcomes.Consequences` into plain, JSON-ready data the
board and the standalone page both draw: per output, the output's CDF per
candidate (from :meth:`~cdfsketch.outcomes.Consequences.output_curves`, in the
candidate's own colour, dash and marker from :mod:`.palette`), and a compact
table from :meth:`~cdfsketch.outcomes.Consequences.summary_records`:

* per candidate: mean ± standard error, sd, each reported quantile ± its
  standard error, each threshold's exceedance probability ± its standard error
  (in %), and under each figure the difference to the reference candidate on the
  same draws ± its paired standard error;
* per output: the verdict in words (:meth:`~cdfsketch.outcomes.Consequences.verdicts`).

The reference is the chosen candidate once there is a decision, else the
run's own reference. Figures are shown to 3 significant figures
(:func:`cdfsketch._numfmt.figure`); the raw values stay in the result's
``to_pandas()``. Only numbers and text leave here: no code, nothing to run.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._numfmt import figure
from ..outcomes.result import qlabel, tlabel
from .palette import DASH_ARRAY

__all__ = [
    "CURVE_POINTS",
    "TITLE",
    "VERDICT_HELP",
    "consequence_presentation",
    "quantile_label",
]

#: The section's heading on the board and the page.
TITLE = "Does the choice change the model's answer?"
#: Points per output curve (even steps in probability).
CURVE_POINTS = 201
#: What the table's verdict column says.
VERDICT_HELP = (
    "changes: this candidate instead of the reference changes the output by more than the "
    "tolerance; within: clearly within it; cannot tell: more draws are needed"
)
#: A row's verdict in the table, in a word (the sentence per output is above the table).
_SHORT = {"changes": "changes", "within": "within", "reference": "reference"}


def quantile_label(p: float) -> str:
    """A quantile's column label.

    Examples
    --------
    >>> quantile_label(0.5), quantile_label(0.9), quantile_label(0.975)
    ('median', '90 % quantile', '97.5 % quantile')
    """
    return "median" if p == 0.5 else f"{100 * p:.10g} % quantile"


def _pm(value: Any, se: Any, scale: float = 1.0) -> list[str]:
    """A figure and its standard error as the parts a view may wrap between."""
    if value is None:
        return ["–"]
    shown = figure(scale * value)
    return [shown] if se is None else [shown, f"± {figure(scale * se)}"]


def _columns(result: Any, output: str, unit: str) -> list[dict[str, Any]]:
    cols = [
        {"key": "mean", "label": "Mean", "unit": unit, "scale": 1.0, "se": True, "diff": True,
         "help": "average of the output over the draws ± its standard error"},
        {"key": "sd", "label": "SD", "unit": unit, "scale": 1.0, "se": False, "diff": False,
         "help": "standard deviation of the output over the draws"},
    ]  # fmt: skip
    for p in result.quantiles:
        cols.append(
            {"key": qlabel(p), "label": quantile_label(p).capitalize(), "unit": unit, "scale": 1.0,
             "se": True, "diff": True,
             "help": f"the output's {quantile_label(p)} ± its standard error"}
        )  # fmt: skip
    for t in result.thresholds[output]:
        where = f"{figure(t)} {unit}".strip()
        cols.append(
            {"key": tlabel(t), "label": f"P(> {figure(t)})", "unit": "%", "scale": 100.0,
             "se": True, "diff": True,
             "help": f"chance that the output exceeds {where} ± its standard error, in %"}
        )  # fmt: skip
    return cols


def _row_verdict(row: dict[str, Any]) -> str:
    code = row["verdict_code"]
    if code in _SHORT:
        return _SHORT[code]
    need = row["draws_needed"]
    return f"cannot tell (use ≥ {need:,} draws)" if need else "cannot tell"


def _x_range(curves: dict[str, dict[str, list]]) -> list[float]:
    """The shared x range, as the input panel's: the candidates' typical 1–99 % range.

    It covers the median candidate's 1 % and 99 % quantiles; a long-tailed
    candidate extends it by at most half that span on each side (its far tail
    stays in the table), and the range is padded 3 %.
    """
    lows, highs = [], []
    for c in curves.values():
        x, p = np.asarray(c["x"]), np.asarray(c["p"])
        lows.append(float(np.interp(0.01, p, x)))
        highs.append(float(np.interp(0.99, p, x)))
    typ_lo, typ_hi = float(np.median(lows)), float(np.median(highs))
    half = 0.5 * (typ_hi - typ_lo)
    lo, hi = max(min(lows), typ_lo - half), min(max(highs), typ_hi + half)
    if not hi > lo:
        half = 0.05 * abs(lo) or 1.0
        return [lo - half, hi + half]
    pad = 0.03 * (hi - lo)
    return [lo - pad, hi + pad]


def _output(review: Any, result: Any, output: str, ref: str) -> dict[str, Any]:
    unit = review.output_units[output]
    cols = _columns(result, output, unit)
    records = {r["candidate"]: r for r in result.summary_records(ref) if r["output"] == output}
    curves = result.output_curves(points=CURVE_POINTS, output=output)
    rows, lines = [], []
    for i, name in enumerate(review.names):
        rec = records[name]
        st = review.style(name)
        cells = {}
        for col in cols:
            k, s = col["key"], col["scale"]
            se = rec.get(f"{k}_se") if col["se"] else None
            diff = rec.get(f"diff_{k}") if col["diff"] else None
            diff_se = rec.get(f"diff_{k}_se") if col["diff"] else None
            parts = _pm(rec[k], se, s)
            diff_parts = [] if name == ref or not col["diff"] else _pm(diff, diff_se, s)
            if diff_parts:
                diff_parts[0] = f"Δ {diff_parts[0]}"
            cells[k] = {
                "value": rec[k],
                "se": se,
                "text": " ".join(parts),
                "parts": parts,
                "diff": None if name == ref else diff,
                "diffSe": None if name == ref else diff_se,
                "diffText": " ".join(diff_parts),
                "diffParts": diff_parts,
            }
        style = {"colour": st.colour, "dash": DASH_ARRAY[st.dash], "dashName": st.dash,
                 "marker": st.marker}  # fmt: skip
        rows.append(
            {"name": name, "index": i, "chosen": name == review.chosen, "reference": name == ref,
             **style, "cells": cells, "verdict": _row_verdict(rec)}
        )  # fmt: skip
        lines.append(
            {"name": name, "index": i, "chosen": name == review.chosen, **style,
             "x": curves[name]["x"], "p": curves[name]["p"]}
        )  # fmt: skip
    tol = result.tolerance[output]
    tol_text = (
        f"tolerance {figure(tol)} {unit}".rstrip()
        if tol > 0
        else "no tolerance set: any difference the draws can detect counts"
    )
    return {
        "name": output,
        "unit": unit,
        "axisLabel": f"{output} ({unit})" if unit else output,
        "verdict": result.verdicts(ref)[output],
        "tolerance": tol,
        "toleranceText": tol_text,
        "columns": [{k: c[k] for k in ("key", "label", "unit", "help")} for c in cols],
        "verdictHelp": VERDICT_HELP,
        "rows": rows,
        "curves": lines,
        "xRange": _x_range(curves),
    }


def consequence_presentation(review: Any) -> dict[str, Any] | None:
    """The consequence run as the board and the page show it (None without a run).

    Returns a JSON-ready dict: ``title``, ``vary``, ``size``, ``reference``,
    ``intro`` and ``note`` (the texts) and per output (``outputs``): its
    units, verdict, tolerance, ``columns``, ``rows`` (per candidate its style
    and per column ``text`` and ``diffText``, also split into ``parts`` and
    ``diffParts``, the pieces a narrow view wraps between) and ``curves`` (per candidate
    ``x`` and ``p``) over a shared ``xRange``.
    """
    result = review.consequences
    if result is None:
        return None
    ref = review.chosen if review.chosen is not None else result.reference
    named = [f"the {'mean' if j == 'mean' else quantile_label(float(j[1:]))}" for j in result.judge]
    judged = named[0] if len(named) == 1 else f"{', '.join(named[:-1])} and {named[-1]}"
    intro = (
        f"Each candidate for {result.vary!r} went through the model on the same "
        f"{result.size:,} draws ({result.design} design, common random numbers: every other "
        "input took the same draws for every candidate), so the differences come from the "
        f"choice, not from noise. ± is one standard error; Δ is the difference to {ref!r} "
        f"on the same draws ± its paired standard error. The verdicts weigh {judged} at "
        f"{100 * result.method['confidence']:g} % confidence."
    )
    note = (
        "Only the computed numbers and curves are kept here: the model is not included, "
        "and nothing is run to show them."
    )
    return {
        "title": TITLE,
        "vary": result.vary,
        "size": result.size,
        "reference": ref,
        "intro": intro,
        "note": note,
        "outputs": [_output(review, result, o, ref) for o in result.outputs],
    }
