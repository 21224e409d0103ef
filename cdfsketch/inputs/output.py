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
import shutil
import sys
import tempfile
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import IO, Any

import numpy as np

from .._files import write_text
from ..sketch import Sketch
from .inputset import InputSet

__all__ = [
    "SUFFIXES",
    "bytes_per_value",
    "draw_blocks",
    "progress_bar",
    "sidecar_path",
    "space_problem",
    "write_draws",
]

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


def space_problem(out: Path | None, n: int, columns: int, block: int) -> str | None:
    """Why ``n`` draws of ``columns`` inputs cannot be written (disk) or made (memory), if so.

    Checked before anything is drawn. Memory is about four float arrays per
    input of one window (2¹⁶) plus one block.
    """
    from .designs import WINDOW

    if out is not None:
        need = n * columns * bytes_per_value(out.suffix.lower())
        free = shutil.disk_usage(out.parent if str(out.parent) else ".").free
        if need > free:
            return (
                f"--size: {n:,} draws of {columns} input(s) need about {_bytes(need)} in "
                f"{str(out)!r}, but only {_bytes(free)} are free there. Lower --size or write "
                "elsewhere."
            )
    work = columns * (WINDOW + block) * 8 * 4
    avail = _available_memory()
    if avail is not None and work > avail:
        return (
            f"--block: sampling {columns} input(s) in blocks of {block:,} needs about "
            f"{_bytes(work)} of memory; {_bytes(avail)} are available. Lower --block or split "
            "the input set."
        )
    return None


def _available_memory() -> int | None:
    try:
        return os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (ValueError, OSError, AttributeError):
        return None


def _bytes(n: float) -> str:
    for unit in ("bytes", "kB", "MB", "GB", "TB"):
        if n < 1000:
            return f"{n:.0f} {unit}" if unit == "bytes" else f"{n:.1f} {unit}"
        n /= 1000
    return f"{n:.1f} PB"


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


def draw_blocks(
    obj: Sketch | InputSet,
    names: tuple[str, ...],
    n: int,
    block: int,
    seed: int,
    design: str,
    dependence: str,
) -> Iterator[dict[str, np.ndarray]]:
    """The draws in blocks; a single spec with the random design equals ``load(f).sample(n)``."""
    if isinstance(obj, Sketch):
        if design == "random":
            return _sketch_blocks(obj, names[0], n, block, seed)
        obj = InputSet({names[0]: obj})
    return iter(obj.blocks(n, block=block, rng=seed, design=design, dependence=dependence))


def _sketch_blocks(
    sk: Sketch, name: str, n: int, block: int, seed: int
) -> Iterator[dict[str, np.ndarray]]:
    sampler = sk.sampler()
    gen = np.random.default_rng(seed)  # one stream, continued block after block
    for lo in range(0, n, block):
        yield {name: sampler.sample(min(block, n - lo), rng=gen)}


class _NoBar:
    def update(self, k: int) -> None:
        return None

    def close(self) -> None:
        return None


def progress_bar(total: int, *, quiet: bool = False) -> Any:
    """A tqdm bar on stderr after one second (terminals only); none without tqdm."""
    if quiet or not sys.stderr.isatty():
        return _NoBar()
    from .._extras import need

    try:
        tqdm = need("progress", "tqdm")
    except ImportError:
        return _NoBar()
    return tqdm.tqdm(
        total=total, delay=1.0, file=sys.stderr, unit=" draws", unit_scale=True, leave=False
    )
