"""Writing files so that nothing half-written is ever left behind (stdlib only).

:func:`write_text` writes to a temporary file beside the target and renames
it into place; on any error the temporary file is removed and the error is
raised as an :class:`OSError` naming the user's path (never the temporary
one). :func:`check_output_path` checks an output path before any work is
done, so a bad ``--out`` is found before sampling, not after.

Examples
--------
>>> import tempfile, pathlib
>>> d = pathlib.Path(tempfile.mkdtemp())
>>> write_text(d / "a.json", '{"ok": true}').name
'a.json'
>>> sorted(p.name for p in d.iterdir())
['a.json']
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from ._validate import InputError, fail, quote

__all__ = ["check_output_path", "write_bytes", "write_text"]


def check_output_path(
    path: Any, *, suffixes: Iterable[str] | None = None, what: str = "output file"
) -> Path:
    """``path`` as a :class:`Path` once it is known to be writable, before any work is done.

    Checks: it is a path (str or os.PathLike), its suffix is one of ``suffixes``
    (when given), it is not a directory, its folder exists and can be written.
    """
    if not isinstance(path, str | os.PathLike) or not str(path):
        raise fail(
            f"The {what} must be a file path",
            quote(path),
            "Pass a path such as 'out/draws.npy'.",
            field="path",
            value=path,
        )
    p = Path(path)
    if suffixes is not None:
        allowed = tuple(suffixes)
        if p.suffix.lower() not in allowed:
            raise fail(
                f"The {what} must end in {', '.join(allowed)}",
                quote(p.name),
                f"Rename it, e.g. {p.stem or 'out'}{allowed[0]}.",
                field="path",
                value=path,
            )
    if p.is_dir():
        raise fail(
            f"The {what} must be a file, not a folder",
            quote(str(p)),
            f"Name a file inside it, e.g. {str(p / ('out' + (p.suffix or '.json')))!r}.",
            field="path",
            value=path,
        )
    folder = p.parent if str(p.parent) else Path(".")
    if not folder.is_dir():
        raise fail(
            f"The folder of the {what} must exist",
            quote(str(folder)),
            "Create it first, or choose another path.",
            field="path",
            value=path,
        )
    if not os.access(folder, os.W_OK) or (p.exists() and not os.access(p, os.W_OK)):
        raise fail(
            f"The {what} must be writable",
            quote(str(p)),
            "Choose a folder you can write to.",
            field="path",
            value=path,
        )
    return p


def write_bytes(path: Any, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically: all of it, or nothing and the old file kept."""
    p = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".part", dir=p.parent or ".")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # as open() would make it, not mkstemp's 0600
        os.replace(tmp, p)
    except BaseException as exc:
        with _quiet():
            os.unlink(tmp)
        if isinstance(exc, OSError):
            raise OSError(exc.errno, f"Could not write {str(p)!r}: {exc.strerror}") from None
        raise
    return p


def write_text(path: Any, text: str) -> Path:
    """Write ``text`` as UTF-8 to ``path`` atomically.

    Text that cannot be encoded (an unpaired surrogate) is refused before
    anything touches the disk.
    """
    try:
        data = text.encode("utf-8")
    except UnicodeEncodeError as exc:
        raise InputError(
            f"The text to write must be valid UTF-8; got an unpaired surrogate at character "
            f"{exc.start}. Remove it from the names and notes and save again.",
            field="text",
            index=exc.start,
        ) from None
    return write_bytes(path, data)


class _quiet:
    def __enter__(self) -> None:
        return None

    def __exit__(self, *exc: object) -> bool:
        return True
