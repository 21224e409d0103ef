"""Writing a sketch as a spec: the dict, its JSON text, the file (numpy + stdlib).

:func:`sketch_to_spec` reads only the sketch's public attributes (``x``,
``p``, ``interpolation``, ``lower_tail``, ``upper_tail``, ``tails_given``,
``tail_scales``, ``name``, ``units``, ``provenance``), so this module never
imports the sketch. What it writes passes :func:`~cdfsketch.spec.check_spec`,
and :func:`dump_spec` writes files atomically (all or nothing).

Examples
--------
>>> from types import SimpleNamespace
>>> from cdfsketch.tails import BoundedTail
>>> s = SimpleNamespace(x=np.array([0.0, 1.0]), p=np.array([0.0, 1.0]), interpolation="linear",
...     lower_tail=BoundedTail(0.0), upper_tail=BoundedTail(1.0), tails_given=(True, True),
...     tail_scales=(None, None), name="", units="", provenance={})
>>> sketch_to_spec(s, author="A. Analyst")["knots"]
{'x': [0.0, 1.0], 'p': [0.0, 1.0]}
"""

from __future__ import annotations

import json
import os
from collections.abc import Mapping
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np

from .._files import check_output_path, write_text
from .._frozen import thaw
from .._version import __version__
from ..tails import BoundedTail
from ._format import FORMAT, VERSION
from ._json import plain
from ._provenance import check_provenance, data_fingerprint
from ._read import check_spec

__all__ = ["dump_spec", "sketch_to_spec"]


def _tail_to_spec(sketch: Any, side: str) -> dict[str, Any]:
    i = 0 if side == "lower" else 1
    tail = sketch.lower_tail if side == "lower" else sketch.upper_tail
    stated = bool(sketch.tails_given[i])
    if isinstance(tail, BoundedTail):
        return {"kind": "bounded", "limit": tail.limit, "density": tail.density, "stated": stated}
    resolved = sketch.tail_scales[i]
    scale = tail.scale if tail.scale is not None else resolved
    return {
        "kind": "exponential",
        "scale": None if scale is None else float(scale),
        "scale_rule": "stated" if tail.scale is not None else "continue-density",
        "stated": stated,
    }


def sketch_to_spec(sketch: Any, **provenance: Any) -> dict[str, Any]:
    """Describe ``sketch`` as a spec dict.

    Keyword arguments are added to the provenance (``author=``,
    ``rationale=``, ``data=`` with an array to fingerprint, …). ``created`` is
    filled in when absent and ``package_version`` is set. The result passes
    :func:`~cdfsketch.spec.check_spec`: what is written can be read.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> spec = sketch_to_spec(Sketch([0, 1], [0, 1]), author="A. Analyst", data=[1.0, 2.0])
    >>> spec["provenance"]["author"], spec["provenance"]["data"]["n"]
    ('A. Analyst', 2)
    """
    prov = thaw(sketch.provenance)
    extra = dict(provenance)
    if "data" in extra and extra["data"] is not None and not isinstance(extra["data"], Mapping):
        extra["data"] = data_fingerprint(extra["data"])
    prov.update(thaw(extra))
    prov.setdefault("created", datetime.now(UTC).isoformat(timespec="seconds"))
    prov["package_version"] = __version__
    check_provenance(prov)
    spec = {
        "format": FORMAT,
        "version": VERSION,
        "name": sketch.name,
        "units": sketch.units,
        "interpolation": sketch.interpolation,
        "knots": {
            "x": np.asarray(sketch.x, dtype=float).tolist(),
            "p": np.asarray(sketch.p, dtype=float).tolist(),
        },
        "tails": {"lower": _tail_to_spec(sketch, "lower"), "upper": _tail_to_spec(sketch, "upper")},
        "provenance": prov,
    }
    return check_spec(plain(spec))


def dump_spec(spec: Mapping[str, Any], path: str | os.PathLike[str] | None = None) -> str:
    """JSON text of ``spec`` (plain JSON: no NaN/Infinity); written to ``path`` when given.

    The path is checked before any work; the file is written atomically, so a
    reader never sees half a spec and a failed write leaves nothing behind.
    Text that cannot be written (an unpaired surrogate) is refused, naming the field.

    Examples
    --------
    >>> dump_spec({"format": "cdfsketch-spec"})
    '{\\n  "format": "cdfsketch-spec"\\n}'
    >>> dump_spec({"a": float("nan")})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: a must be a finite number; got nan. ...
    """
    target: Path | None = None
    if path is not None:
        target = check_output_path(path, what="spec file")
    text = json.dumps(plain(spec), indent=2, allow_nan=False, ensure_ascii=False)
    if target is not None:
        write_text(target, text + "\n")
    return text
