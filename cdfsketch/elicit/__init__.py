"""Sketches from judgement and from data.

Every function here returns an ordinary :class:`~cdfsketch.Sketch`, so the
result can be edited, saved as a spec and sampled like any other. How it was
built (the method, what was stated, who contributed with what weight, the
achieved accuracy) is recorded in the sketch's provenance.

========================  ===============================================  ============
function                  what it builds                                   needs
========================  ===============================================  ============
:func:`from_quantiles`    knots through stated quantiles                   numpy
:func:`from_three_points` PERT or triangular three-point estimate          scipy (fit)
:func:`from_distribution` knots at quantiles of a distribution             numpy
:func:`reknot`            the one "target distribution → knots" function   numpy
:func:`pool`              linear opinion pool, quantile averaging          numpy
:func:`from_data`         fewest knots inside the data's DKW band          numpy
:func:`from_ecdf`         the same from an ECDF already built              numpy
========================  ===============================================  ============

Examples
--------
>>> s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41})
>>> float(s.cdf(20))
0.5
"""

from .._validate import JudgementError
from .autoknots import from_data, from_ecdf
from .pooling import pool
from .quantiles import from_quantiles
from .reknot import from_distribution, reknot
from .three_points import from_three_points

__all__ = [
    "JudgementError",
    "from_data",
    "from_distribution",
    "from_ecdf",
    "from_quantiles",
    "from_three_points",
    "pool",
    "reknot",
]
