"""Does the choice matter? Candidates for one input through the user's model.

:func:`consequences` runs each candidate for one input through the user's
model with common random numbers and returns a :class:`Consequences` value
(figures with standard errors, paired differences, verdicts). Numpy only at
import; Dask is loaded when ``chunks=`` sends the run there.

This package is also callable: ``cdfsketch.consequences(...)`` is the
function, whether ``cdfsketch.consequences`` names the function or — once a
submodule such as ``cdfsketch.consequences.result`` was imported — this
package (Python binds a package's submodule as an attribute of its parent).
"""

from __future__ import annotations

import sys
import types
from typing import Any

from .evaluate import ModelError
from .result import Consequences
from .run import consequences

__all__ = ["Consequences", "ModelError", "consequences"]


class _CallablePackage(types.ModuleType):
    def __call__(self, *args: Any, **kwargs: Any) -> Consequences:
        return consequences(*args, **kwargs)


sys.modules[__name__].__class__ = _CallablePackage
