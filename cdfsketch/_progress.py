"""Progress reporting for long steps: a callable, or a bar in a Jupyter kernel.

Only the standard library is imported at module level; ipywidgets and IPython
are imported when a bar is first shown.
"""

from __future__ import annotations

import importlib.util
import sys
import time
from collections.abc import Callable
from typing import Any

from ._extras import need

#: ``progress(done, total, label)``, called after each step.
ProgressCallback = Callable[[int, int, str], Any]

#: Seconds of work before the automatic bar appears (quick calls show nothing).
BAR_DELAY = 1.0


def in_notebook() -> bool:
    """Whether code runs in a Jupyter kernel (an IPython ZMQ shell)."""
    shell = sys.modules.get("IPython")
    if shell is None:
        return False
    try:
        ip = shell.get_ipython()  # type: ignore[attr-defined]
    except AttributeError:
        return False
    return ip is not None and type(ip).__name__ == "ZMQInteractiveShell"


def check_progress(progress: Any) -> None:
    """Raise unless ``progress`` is None, False or a callable."""
    if progress is not None and progress is not False and not callable(progress):
        raise TypeError(
            f"progress must be None (automatic), False (off) or a callable "
            f"progress(done, total, label); got {type(progress).__name__}."
        )


class Progress:
    """Reports steps to a callable, or to an ipywidgets bar shown after 1 s in a notebook.

    Parameters
    ----------
    progress : None, False or callable
        ``None``: automatic bar in a Jupyter kernel; ``False``: silent; a
        callable is called as ``progress(done, total, label)``.
    total : int
        Number of steps.
    title : str
        The bar's caption before the first step's label.
    """

    def __init__(self, progress: Any, total: int, *, title: str) -> None:
        check_progress(progress)
        self.total = total
        self.title = title
        self.call = progress if callable(progress) else None
        self.auto = progress is None and in_notebook()
        self.start = time.perf_counter()
        self.bar: Any = None

    def __call__(self, done: int, label: str) -> None:
        if self.call is not None:
            self.call(done, self.total, label)
            return
        if not self.auto:
            return
        if self.bar is None and time.perf_counter() - self.start > BAR_DELAY:
            if importlib.util.find_spec("ipywidgets") is None:
                self.auto = False
                return
            ipywidgets = need("notebook", "ipywidgets")
            display = need("notebook", "IPython.display").display
            self.bar = ipywidgets.IntProgress(min=0, max=self.total, description=self.title)
            display(self.bar)
        if self.bar is not None:
            self.bar.value = done
            self.bar.description = label[:20]
            if done >= self.total:
                self.bar.close()
