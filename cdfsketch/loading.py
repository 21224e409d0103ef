"""Loading files: a single-input spec gives a :class:`~cdfsketch.Sketch`, an input set an InputSet.

This module sits above the sketch and the input sets; :mod:`cdfsketch.spec`
below it knows the single-input format, :mod:`cdfsketch.inputs` the
input-set format. Both readers share one hardened JSON reader
(:func:`cdfsketch.spec.read_json`) and so one rule for telling text from a path.

Examples
--------
>>> from cdfsketch import Sketch
>>> text = Sketch([0, 1, 3], [0, 0.5, 1], name="delay", units="h").to_json()
>>> load(text).name
'delay'
>>> validate_spec(text)
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ._validate import InputError, SpecError
from .sketch import Sketch
from .spec import (
    FORMAT,
    check_against_schema,
    check_spec,
    read_json,
)

if TYPE_CHECKING:
    from .inputs import InputSet

__all__ = ["load", "validate_spec"]


def _is_inputset(data: Mapping[str, Any]) -> bool:
    fmt = data.get("format")
    if not isinstance(fmt, str) or fmt == FORMAT:
        return False
    try:
        from .inputs import INPUTSET_FORMAT
    except ModuleNotFoundError:  # until the input sets are merged: only single specs exist
        return False
    return fmt == INPUTSET_FORMAT


def _inputset(data: dict[str, Any], base: Path | None) -> InputSet:
    """The input set of a file (its rules reported as a SpecError)."""
    from .inputs import inputset_from_dict

    try:
        return inputset_from_dict(data, base_dir=base)
    except SpecError:
        raise
    except InputError as exc:
        raise SpecError(str(exc), field=exc.field, index=exc.index, found=exc.found) from None


def load(obj: Any) -> Sketch | InputSet:
    """Load a spec (a :class:`~cdfsketch.Sketch`) or an input-set file (an ``InputSet``).

    Parameters
    ----------
    obj : str, bytes, os.PathLike or mapping
        How it is read, decided once for every reader of the package:

        * ``bytes`` are JSON text (UTF-8);
        * a ``str`` whose first non-blank character is ``{`` or ``[`` is JSON text;
        * any other ``str`` or ``os.PathLike`` is the path of a JSON file (its
          folder is where an input set's relative paths start);
        * a mapping is taken as the parsed JSON object.

        A string that is neither JSON text nor a plausible path (too long,
        with line breaks) is a :class:`SpecError`, never an ``OSError``.

    Returns
    -------
    Sketch or InputSet
        By the file's ``format``: ``"cdfsketch-spec"`` gives a sketch.

    Raises
    ------
    SpecError
        For anything wrong, naming the field, the index, what was found and
        the remedy: unreadable or non-UTF-8 files, invalid JSON, nesting
        deeper than 32 levels, number literals over 1000 characters, sizes
        over the limits of :mod:`cdfsketch._limits`, knots that are not a valid CDF.

    Examples
    --------
    >>> from cdfsketch import Sketch
    >>> s = load(Sketch([0, 1, 3], [0, 0.5, 1], name="delay").to_json())
    >>> s.name, s.x.tolist()
    ('delay', [0.0, 1.0, 3.0])
    >>> load("no-such-file.json")
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: A spec path must name an existing file; got ...
    """
    data, base = read_json(obj)
    if _is_inputset(data):
        return _inputset(data, base)
    return Sketch.from_spec(data)


def validate_spec(obj: Any) -> None:
    """Check a spec or an input-set file completely; raise :class:`SpecError` if anything is wrong.

    Runs the loader's rules (sizes first, then fields, then the CDF rules by
    building the sketch) and the shipped JSON Schema of the file's format,
    without format checking and without importing ``jsonschema``.
    ``obj`` is read as :func:`load` reads it.

    Examples
    --------
    >>> validate_spec({"format": "cdfsketch-spec", "version": 1})
    Traceback (most recent call last):
    ...
    cdfsketch._validate.SpecError: A spec must have the key 'interpolation'...
    """
    data, base = read_json(obj)
    if _is_inputset(data):
        _inputset(data, base)  # the loader's rules first (sizes before anything slow)
        check_against_schema(data, "inputs")
        return
    spec = check_spec(data)  # sizes and fields first: nothing slow on a bad file
    check_against_schema(spec, "spec")
    Sketch.from_spec(spec)
