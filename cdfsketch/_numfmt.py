"""The one way numbers are shown to people (stdlib only).

Tables, readouts, the review page and error messages format numbers here:
a few significant digits, no ``-0``, ``∞`` for infinities, ``–`` for a
missing value, and — for values read off data — no more decimals than the
data's own resolution.

Examples
--------
>>> significant(1234.5678), significant(-0.00001234, 2), significant(-0.0)
('1235', '-1.2e-05', '0')
>>> significant(float("inf")), significant(None)
('∞', '–')
>>> at_resolution(12.3456789, 0.1), at_resolution(67.4999999305, 0.5)
('12.3', '67.5')
"""

from __future__ import annotations

import math
from typing import Any

__all__ = ["at_resolution", "significant"]


def significant(value: Any, digits: int = 4) -> str:
    """``value`` with ``digits`` significant digits (``g`` style), ``-0`` shown as ``0``."""
    if value is None:
        return "–"
    v = float(value)
    if math.isnan(v):
        return "–"
    if math.isinf(v):
        return "∞" if v > 0 else "−∞"
    text = f"{v:.{digits}g}"
    if float(text) == 0.0 or abs(v) < 1e-300:
        return "0"
    return text


def at_resolution(value: Any, step: float | None, *, digits: int = 4) -> str:
    """``value`` rounded to the data's resolution ``step`` (e.g. 0.1 h)."""
    if step is None or not step > 0 or not math.isfinite(step):
        return significant(value, digits)
    v = float(value)
    if not math.isfinite(v):
        return significant(v, digits)
    decimals = max(0, -math.floor(math.log10(step) + 1e-12))
    rounded = round(round(v / step) * step, decimals)
    return (
        significant(rounded, digits)
        if decimals == 0 and abs(rounded) >= 1e7
        else (f"{rounded:.{decimals}f}" if rounded != 0 else "0")
    )
