"""Does the choice matter? Candidates for one input through the user's model.

:func:`consequences` runs each candidate for one input through the user's
model with common random numbers and returns a :class:`Consequences` value
(figures with standard errors, paired differences, verdicts). Numpy only at
import; Dask is loaded when ``chunks=`` sends the run there.

The package is named for what it holds (the model's outcomes per
candidate); the function is re-exported as ``cdfsketch.consequences``.
"""

from __future__ import annotations

from .evaluate import ModelError
from .result import Consequences
from .run import consequences

__all__ = ["Consequences", "ModelError", "consequences"]
