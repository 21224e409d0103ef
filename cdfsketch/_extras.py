"""Optional dependencies: one clear error naming the extra to install (stdlib only).

Examples
--------
>>> need("fit", "scipy").__name__
'scipy'
>>> try:
...     need("parquet", "no_such_module_for_cdfsketch")
... except ImportError as exc:
...     print(exc)
This needs the optional 'parquet' extra (...). Install it with: pip install 'cdfsketch[parquet]'
"""

from __future__ import annotations

import importlib
from types import ModuleType

__all__ = ["EXTRAS", "MissingExtraError", "need"]

#: extra name -> what it serves (the README lists the same)
EXTRAS = {
    "fit": "candidate fits, scores and comparison (scipy)",
    "notebook": "the Editor and ReviewBoard widgets (ipywidgets, bqplot, traitlets)",
    "review": "static review figures (matplotlib)",
    "dask": "sampling and model runs on Dask",
    "parquet": "writing samples as .parquet (pyarrow)",
    "progress": "progress bars on long command-line runs (tqdm)",
}


class MissingExtraError(ImportError):
    """An optional dependency is missing; the message names the extra to install."""


def need(extra: str, module: str) -> ModuleType:
    """Import ``module`` or raise :class:`MissingExtraError` naming ``extra``."""
    try:
        return importlib.import_module(module)
    except ImportError as exc:
        raise MissingExtraError(
            f"This needs the optional {extra!r} extra (module {module!r} is not installed). "
            f"Install it with: pip install 'cdfsketch[{extra}]'"
        ) from exc
