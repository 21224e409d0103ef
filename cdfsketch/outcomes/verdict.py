"""Plain verdicts: does the choice change an output by more than the tolerance?

A difference ``d`` with standard error ``se`` from ``n`` draws, against a
tolerance ``tol`` (in the output's units), at confidence level
``1 - alpha`` (two-sided, ``z`` its normal quantile):

* ``|d| - z·se > tol``: the choice changes this output by more than the tolerance;
* ``|d| + z·se < tol``: within the tolerance;
* otherwise: cannot tell; the standard error falls as ``1/sqrt(n)``, so
  ``N = ceil(n (z·se / | |d| - tol |)²)`` draws would separate the
  difference from the tolerance if the difference stays as estimated.

Examples
--------
>>> judge(5.0, 1.0, 2.0, 1000, 1.96)
('changes', None)
>>> judge(0.1, 0.2, 2.0, 1000, 1.96)
('within', None)
>>> judge(1.5, 1.0, 2.0, 1000, 1.96)
('cannot tell', 15367)
"""

from __future__ import annotations

import math

__all__ = ["CHANGES", "UNSURE", "WITHIN", "judge", "overall", "sentence"]

CHANGES, WITHIN, UNSURE = "changes", "within", "cannot tell"


def judge(d: float, se: float, tol: float, n: int, z: float) -> tuple[str, int | None]:
    """Verdict code for one difference and, when it cannot tell, the draws needed."""
    if not (math.isfinite(d) and math.isfinite(se)):
        return UNSURE, None
    a = abs(d)
    if a - z * se > tol or (se == 0 and a > tol):
        return CHANGES, None
    if a + z * se < tol or (se == 0 and a <= tol):
        return WITHIN, None
    gap = abs(a - tol)
    if gap == 0:
        return UNSURE, None
    return UNSURE, max(n + 1, math.ceil(n * (z * se / gap) ** 2))


def overall(verdicts: list[tuple[str, int | None]]) -> tuple[str, int | None]:
    """One verdict from several: changes if any changes, within if all are within."""
    codes = [v for v, _ in verdicts]
    if CHANGES in codes:
        return CHANGES, None
    if not codes or all(v == WITHIN for v in codes):
        return WITHIN, None
    needed = [m for v, m in verdicts if v == UNSURE]
    return UNSURE, None if None in needed else max(needed)  # type: ignore[type-var]


def sentence(code: str, needed: int | None) -> str:
    """The verdict in words.

    Examples
    --------
    >>> sentence("cannot tell", 40000)
    'cannot tell at this sample size: use at least 40000 draws'
    """
    if code == CHANGES:
        return "the choice changes this output by more than the tolerance you set"
    if code == WITHIN:
        return "within the tolerance"
    if needed is None:
        return "cannot tell at this sample size: use many more draws"
    return f"cannot tell at this sample size: use at least {needed} draws"
