"""What a spec or an input set says, for people and machines; a quantile table with its bound.

Examples
--------
>>> from cdfsketch import Sketch
>>> rec = sketch_record(Sketch([0, 2, 10], [0, 0.5, 1], name="delay", units="h"))
>>> rec["name"], rec["mean"], rec["support"]
('delay', 3.5, [0.0, 10.0])
>>> print(quantile_table({"delay": Sketch([0, 10], [0, 1])}, 3).splitlines()[-3:])
['0.0,0.0', '0.5,5.0', '1.0,10.0']
"""

from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from .._numfmt import significant
from .._version import __version__
from .writing import spec_digest

if TYPE_CHECKING:
    from ..sketch import Sketch
    from .inputset import InputSet

__all__ = ["finite_list", "inputset_record", "plain", "quantile_table", "sketch_record"]


def plain(obj: Any) -> Any:
    """``obj`` as plain JSON data (read-only records thawed, other values as text)."""
    return json.loads(json.dumps(obj, default=str))


def finite_list(v: np.ndarray) -> list[Any]:
    """Floats for JSON: ±inf written as the strings "inf" and "-inf"."""
    return [float(x) if math.isfinite(x) else ("-inf" if x < 0 else "inf") for x in v]


def sketch_record(sk: Sketch) -> dict[str, Any]:
    """Name, units, support (``None`` for an unbounded end), mean, sd, quantiles, atoms,
    tail masses and models, warnings, provenance and the spec's sha256."""
    s = sk.summary()
    lo, hi = s.support
    return {
        "name": s.name,
        "units": s.units,
        "support": [lo if math.isfinite(lo) else None, hi if math.isfinite(hi) else None],
        "mean": s.mean,
        "sd": s.sd,
        "quantiles": [{"p": p, "x": x} for p, x in s.quantiles],
        "atoms": [{"x": a.x, "mass": a.mass} for a in s.atoms],
        "tails": {
            side: {"mass": m, "model": model}
            for side, m, model in zip(("lower", "upper"), s.tail_mass, s.tail_models, strict=True)
        },
        "warnings": list(s.warnings),
        "provenance": plain(sk.provenance),
        "sha256": spec_digest(sk),
    }


def inputset_record(ins: InputSet) -> dict[str, Any]:
    """The set's name, each input's :func:`sketch_record`, the targets and provenance."""
    return {
        "name": ins.name,
        "inputs": [{"input": n, **sketch_record(ins.sketches[n])} for n in ins.names],
        "rank_corr": [{"a": a, "b": b, "rank_corr": v} for (a, b), v in ins.rank_corr.items()],
        "provenance": plain(ins.provenance),
    }


def _grid(sketches: Mapping[str, Sketch], n: int) -> np.ndarray:
    """u = i/(N-1); an end whose quantile is infinite moves in by half a step."""
    u = np.arange(n) / (n - 1)
    half = 0.5 / (n - 1)
    if any(not math.isfinite(sk.support[0]) for sk in sketches.values()):
        u[0] = half
    if any(not math.isfinite(sk.support[1]) for sk in sketches.values()):
        u[-1] = 1.0 - half
    return u


def _csv_row(cells: list[str]) -> str:
    buf = io.StringIO()
    csv.writer(buf, lineterminator="").writerow(cells)
    return buf.getvalue()


def quantile_table(sketches: Mapping[str, Sketch], points: int, *, source: str = "") -> str:
    """CSV text: ``u`` and each sketch's exact quantile at ``points`` values of u.

    The header comment lines state the exact error bound of reading the table
    by linear interpolation in u: for u between two rows both the exact and
    the interpolated quantile lie between the rows' x, and at every x both
    CDFs lie between the rows' u, so the distribution so read is within the
    largest step in u of the sketch's (Kolmogorov distance) and, inside the
    table, its quantile within the largest step in x.
    """
    u = _grid(sketches, points)
    cols = {name: np.asarray(sk.ppf(u), dtype=float) for name, sk in sketches.items()}
    step_u = float(np.max(np.diff(u)))
    where = f" from {source}" if source else ""
    lines = [
        f"# cdfsketch {__version__} quantile table{where}, {points} rows: u and each input's "
        "exact quantile x at u.",
        f"# Read it by linear interpolation in u between rows (u from {float(u[0])!r} to "
        f"{float(u[-1])!r}).",
        "# Exact error bound: the distribution so read differs from the sketch by at most "
        f"{significant(step_u)} in probability (Kolmogorov distance <= the largest step in u, "
        "since both CDFs lie between the two rows' u at every x).",
    ]
    for name, x in cols.items():
        sk = sketches[name]
        gap = float(np.max(np.diff(x)))
        units = f" {sk.units}" if sk.units else ""
        lines.append(
            f"# {name}: sha256 {spec_digest(sk)}; between rows the interpolated quantile is "
            f"within {significant(gap)}{units} of the exact one (both lie between the rows' x)."
        )
    body = np.column_stack([u, *cols.values()])
    rows = "".join(",".join(repr(float(v)) for v in row) + "\n" for row in body)
    return "\n".join([*lines, _csv_row(["u", *cols])]) + "\n" + rows
