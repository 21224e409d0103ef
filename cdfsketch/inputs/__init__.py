"""A simulation model's inputs together: :class:`InputSet`, rank dependence, designs, files.

Numpy only at import. Latin hypercube and Sobol designs and imposed rank
dependence load scipy when first used (the ``fit`` extra); independent random
draws stay numpy only.

Examples
--------
>>> from cdfsketch import Sketch
>>> hours = Sketch([1, 3, 9], [0, 0.6, 1])
>>> cost = Sketch([100, 250, 900], [0, 0.5, 1])
>>> ins = InputSet({"hours": hours, "cost": cost})
>>> d = ins.sample(1000, rng=1)
>>> sorted(d), d.size
(['cost', 'hours'], 1000)
"""

from __future__ import annotations

from .dependence import nearest_correlation, nearest_rank_corr, spearman
from .designs import DESIGNS, WINDOW
from .draws import Draws, RankCorrRow
from .file import inputset_from_dict, read_inputset
from .inputset import DEPENDENCE, MAX_INPUTS, InputSet
from .writing import INPUTSET_FORMAT, INPUTSET_VERSION, inputset_schema, spec_digest

__all__ = [
    "DEPENDENCE",
    "DESIGNS",
    "INPUTSET_FORMAT",
    "INPUTSET_VERSION",
    "MAX_INPUTS",
    "WINDOW",
    "Draws",
    "InputSet",
    "RankCorrRow",
    "inputset_from_dict",
    "inputset_schema",
    "nearest_correlation",
    "nearest_rank_corr",
    "read_inputset",
    "spearman",
    "spec_digest",
]
