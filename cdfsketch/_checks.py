"""Small input checks shared by the core modules (numpy and stdlib only)."""

from __future__ import annotations

import numbers
from typing import Any


def check_size(size: Any) -> tuple[int, ...]:
    """Read a ``size=`` argument as a shape; ``None`` gives ``()`` (one scalar).

    Examples
    --------
    >>> check_size(3), check_size((2, 4)), check_size(None)
    ((3,), (2, 4), ())
    """
    if size is None:
        return ()
    dims = (size,) if isinstance(size, numbers.Integral) else size
    try:
        shape = tuple(int(d) for d in dims)
        ok = all(
            isinstance(d, numbers.Integral) and not isinstance(d, bool) and d >= 0 for d in dims
        )
    except (TypeError, ValueError):
        ok = False
    if not ok:
        raise ValueError(
            f"size must be a non-negative integer or a tuple of them; got {size!r}. "
            "For example size=10_000 or size=(100, 3)."
        )
    return shape
