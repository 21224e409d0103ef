"""The provenance record of a spec: who made it, why, from which data (numpy + stdlib).

:func:`check_provenance` is the one rule for provenance, used by the
:class:`~cdfsketch.Sketch` constructor (so a sketch never holds a record it
could not save) and by the spec reader. It accepts frozen records
(:mod:`cdfsketch._frozen`: tuples for lists).

Examples
--------
>>> check_provenance({"author": "A. Analyst", "contributors": ({"name": "B", "weight": 1},)})
>>> check_provenance({"author": 5})
Traceback (most recent call last):
...
cdfsketch._validate.SpecError: provenance.author must be a str; got int 5. ...
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Mapping
from typing import Any

import numpy as np

from .._validate import SpecError, fail, mapping, quote, text
from ._format import MAX_NAME_CHARS, MAX_TEXT_CHARS, PROVENANCE_KEYS, PROVENANCE_TEXT
from ._json import plain, real

__all__ = ["check_keys", "check_provenance", "data_fingerprint"]

_HEX64 = re.compile(r"[0-9a-f]{64}")


def check_keys(obj: Mapping[str, Any], allowed: tuple[str, ...], where: str) -> None:
    """Refuse keys of ``obj`` not in ``allowed``, naming the first unknown one.

    Examples
    --------
    >>> check_keys({"x": [0, 1], "w": 1}, ("x", "p"), "knots")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: knots may hold only the keys 'x', 'p'; got the unknown key 'w'...
    """
    for key in obj:
        if key not in allowed:
            listed = ", ".join(repr(k) for k in allowed)
            raise fail(
                f"{where} may hold only the keys {listed}",
                f"the unknown key {quote(key)}",
                "Remove it (or check its spelling); free-form notes go in provenance.extra.",
                error=SpecError,
                field=where,
                value=key,
            )


def _object(value: Any, where: str) -> Mapping[str, Any]:
    return mapping(value, field=where, error=SpecError)


def check_provenance(prov: Any) -> None:
    """Check a provenance record: known keys, right types, text limits, plain JSON.

    Raises :class:`~cdfsketch._validate.SpecError` naming the field.

    Examples
    --------
    >>> check_provenance({"data": {"sha256": "0" * 64, "n": 3, "label": 7}})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: provenance.data.label must be a str; got int 7. ...
    """
    _object(prov, "provenance")
    check_keys(prov, PROVENANCE_KEYS, "provenance")
    plain(prov, field=("provenance",))
    for key in PROVENANCE_TEXT:
        if key in prov:
            text(prov[key], field=f"provenance.{key}", max_len=MAX_TEXT_CHARS, error=SpecError)
    data = prov.get("data")
    if data is not None:
        _object(data, "provenance.data")
        check_keys(data, ("sha256", "n", "label"), "provenance.data")
        digest = data.get("sha256")
        if not (isinstance(digest, str) and _HEX64.fullmatch(digest)):
            raise fail(
                "provenance.data.sha256 must be 64 lowercase hex digits",
                quote(digest),
                "Use cdfsketch.data_fingerprint(data).",
                error=SpecError,
                field="provenance.data.sha256",
                value=digest,
            )
        n = data.get("n")
        if isinstance(n, bool) or not isinstance(n, int) or n < 0:
            raise fail(
                "provenance.data.n must be an integer ≥ 0",
                quote(n),
                "Use cdfsketch.data_fingerprint(data).",
                error=SpecError,
                field="provenance.data.n",
                value=n,
            )
        if "label" in data:
            text(
                data["label"],
                field="provenance.data.label",
                max_len=MAX_NAME_CHARS,
                error=SpecError,
            )
    if "contributors" in prov:
        contributors = prov["contributors"]
        if not isinstance(contributors, list | tuple):
            raise fail(
                "provenance.contributors must be a list of {name, weight} objects",
                f"{type(contributors).__name__} {quote(contributors)}",
                "Write e.g. [{'name': 'A', 'weight': 1}].",
                error=SpecError,
                field="provenance.contributors",
                value=contributors,
            )
        for i, item in enumerate(contributors):
            where = f"provenance.contributors[{i}]"
            _object(item, where)
            check_keys(item, ("name", "weight", "summary"), where)
            text(item.get("name"), field=f"{where}.name", max_len=MAX_NAME_CHARS, error=SpecError)
            real(item.get("weight"), field=f"{where}.weight", low=0)
            if "summary" in item:
                _object(item["summary"], f"{where}.summary")
    for key in ("decision", "extra"):
        if key in prov:
            _object(prov[key], f"provenance.{key}")


def data_fingerprint(data: Any, *, label: str = "") -> dict[str, Any]:
    """The digest and size of a dataset, for the spec's provenance.

    The digest is SHA-256 of the values as little-endian float64 in the order
    given; ``n`` counts them.

    Examples
    --------
    >>> fp = data_fingerprint([1.0, 2.0, 3.0])
    >>> fp["n"], fp["sha256"][:12]
    (3, 'a68de4b5e96a')
    """
    arr = np.ascontiguousarray(np.asarray(data, dtype="<f8").ravel())
    digest = hashlib.sha256(memoryview(arr)).hexdigest()  # the array's bytes, not a copy
    out: dict[str, Any] = {"sha256": digest, "n": int(arr.size)}
    if label:
        out["label"] = text(label, field="label", max_len=MAX_NAME_CHARS, error=SpecError)
    return out
