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
>>> figure(1234.6), figure(0.012345), figure(2.5e7)
('1235', '0.0123', '2.5e+07')
"""

from __future__ import annotations

import math
from typing import Any

__all__ = ["at_resolution", "figure", "significant"]


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


def figure(value: Any, digits: int = 3) -> str:
    """``value`` to ``digits`` significant figures, written out in full from 0.001 to 10⁶.

    Digits before the decimal point are never dropped (1234.6 shows as ``1235``,
    not ``1.23e+03``), so a figure and its standard error read side by side;
    trailing zeros after the point are dropped as in :func:`significant`, which
    handles magnitudes outside [0.001, 10⁶), zero, infinities and missing values.

    Examples
    --------
    >>> figure(12.0), figure(-0.0004567), figure(999.96), figure(None)
    ('12', '-0.000457', '1000', '–')
    """
    if value is None:
        return "–"
    v = float(value)
    if not math.isfinite(v) or not 1e-3 <= abs(v) < 1e6:
        return significant(v, digits)
    decimals = max(0, digits - 1 - math.floor(math.log10(abs(v))))
    text = f"{v:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if float(text) == 0.0 else text


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
