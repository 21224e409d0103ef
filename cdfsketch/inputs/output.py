"""Writing draws to files in blocks: ``.npy``, ``.csv``, ``.parquet``, with a run record.

Every file is written to a temporary file beside the target and renamed into
place when complete; on any error (or Ctrl-C) the temporary file is removed,
so a run either leaves the whole file or nothing. The run record (seed,
design, dependence, package version, each spec's digest) goes into the
parquet metadata under the key ``cdfsketch``, or into a ``.json`` sidecar
beside a ``.npy`` or ``.csv`` file (``draws.npy`` → ``draws.npy.json``).

Memory is O(block): blocks are written as they come.

Examples
--------
>>> import tempfile, pathlib
>>> out = pathlib.Path(tempfile.mkdtemp()) / "d.csv"
>>> blocks = iter([{"a": np.array([1.0, 2.0])}, {"a": np.array([3.0])}])
>>> write_draws(out, ("a",), blocks, 3, {"seed": 1})
>>> out.read_text().splitlines()
['a', '1', '2', '3']
>>> sorted(p.name for p in out.parent.iterdir())
['d.csv', 'd.csv.json']
"""

from __future__ import annotations

import csv
import io
import json
import os
import sys
import tempfile
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import IO, Any

import numpy as np

from .._files import write_text

__all__ = ["SUFFIXES", "bytes_per_value", "sidecar_path", "write_draws"]

SUFFIXES = (".npy", ".csv", ".parquet")
RECORD_KEY = "cdfsketch"


def sidecar_path(out: Path) -> Path | None:
    """Where the run record of ``out`` goes (``None``: inside the parquet file itself)."""
    if out.suffix.lower() == ".parquet":
        return None
    return out.with_name(out.name + ".json")


def bytes_per_value(suffix: str | None) -> int:
    """About how many bytes one draw takes in a file of this kind (for a space check)."""
    return 8 if suffix in (".npy", ".parquet") else 24


@contextmanager
def _atomic(path: Path) -> Iterator[IO[bytes]]:
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    except OSError as exc:
        raise OSError(exc.errno, f"Could not write {str(path)!r}: {exc.strerror}") from None
    try:
        os.chmod(tmp, 0o666 & ~_umask())  # the permissions a plain open() would give
        with os.fdopen(fd, "wb") as fh:
            yield fh
        os.replace(tmp, path)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(exc, OSError) and not isinstance(exc, BrokenPipeError):
            raise OSError(exc.errno, f"Could not write {str(path)!r}: {exc.strerror}") from None
        raise


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _rows(block: Mapping[str, np.ndarray], names: Sequence[str]) -> np.ndarray:
    return np.column_stack([np.asarray(block[n], dtype="<f8") for n in names])


def _write_csv(fh: IO[str], names: Sequence[str], blocks: Iterable[Any], tick: Callable) -> None:
    head = io.StringIO()
    csv.writer(head, lineterminator="\n").writerow(names)
    fh.write(head.getvalue())
    for block in blocks:
        rows = _rows(block, names)
        np.savetxt(fh, rows, fmt="%.17g", delimiter=",")
        tick(rows.shape[0])


def write_draws(
    out: Path | None,
    names: Sequence[str],
    blocks: Iterable[Mapping[str, np.ndarray]],
    size: int,
    record: Mapping[str, Any],
    *,
    flat: bool = False,
    tick: Callable[[int], Any] | None = None,
) -> None:
    """Write ``size`` rows, one column per name, from ``blocks``; ``out=None`` is stdout as CSV.

    ``flat=True`` writes a single input's ``.npy`` as a 1-d array.
    """
    tick = tick or (lambda k: None)
    if out is None:
        _write_csv(sys.stdout, names, blocks, tick)
        sys.stdout.flush()
        return
    suffix = out.suffix.lower()
    body = json.dumps(dict(record), indent=2, allow_nan=False, ensure_ascii=False)
    if suffix == ".parquet":
        _write_parquet(out, names, blocks, body, tick)
        return
    with _atomic(out) as fh:
        if suffix == ".npy":
            shape = (size,) if flat and len(names) == 1 else (size, len(names))
            header = {"descr": "<f8", "fortran_order": False, "shape": shape}
            np.lib.format.write_array_header_2_0(fh, header)
            for block in blocks:
                rows = _rows(block, names)
                fh.write(rows.tobytes())
                tick(rows.shape[0])
        else:
            text = io.TextIOWrapper(fh, encoding="utf-8", newline="")
            _write_csv(text, names, blocks, tick)
            text.flush()
            text.detach()
    side = sidecar_path(out)
    if side is not None:
        write_text(side, body + "\n")


def _write_parquet(
    out: Path, names: Sequence[str], blocks: Iterable[Any], body: str, tick: Callable
) -> None:
    from .._extras import need

    pa = need("parquet", "pyarrow")
    pq = need("parquet", "pyarrow.parquet")
    schema = pa.schema([(n, pa.float64()) for n in names], metadata={RECORD_KEY: body})
    with _atomic(out) as fh:
        writer = pq.ParquetWriter(fh, schema)
        try:
            for block in blocks:
                table = pa.table(
                    {n: np.asarray(block[n], dtype=float) for n in names}, schema=schema
                )
                writer.write_table(table)
                tick(table.num_rows)
        finally:
            writer.close()
