"""The ``cdfsketch`` command: describe, check, sample, quantiles and table, from a shell.

Examples::

    cdfsketch describe hours.json --json
    cdfsketch check hours.json cost.json model-inputs.json
    cdfsketch sample model-inputs.json --size 1e7 --design lhs --seed 7 --out draws.parquet
    cdfsketch quantiles hours.json 0.05 0.5 0.95
    cdfsketch table hours.json --points 101 -o hours-table.csv
    cdfsketch demo                  # the main job on embedded invented data

Every command takes a single-input spec or an input-set file. Errors are
one line on stderr naming the file or option at fault and the remedy, never
a traceback. Exit codes:

* 0 — success;
* 1 — a bad input file (missing, a folder, unreadable, not JSON, not a valid
  spec or input set, an unknown format); ``check`` also exits 1 when any file
  fails;
* 2 — bad usage (an unknown option, a bad ``--size``, ``--seed``,
  ``--points`` or probability, an output path that cannot be written, not
  enough disk or memory for the requested size, a missing optional extra);
* 3 — an unexpected internal error (one line; please report it);
* 130 — interrupted (Ctrl-C); no partial output file is left.

Output paths and sizes are checked before any sampling. No widget code is
imported here.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import re
import secrets
import sys
import tempfile
import warnings
from collections.abc import Callable, Sequence
from datetime import UTC, datetime
from pathlib import Path
from typing import Any, NoReturn

import numpy as np

from ._files import check_output_path, write_text
from ._numfmt import significant
from ._validate import InputError, quote
from ._version import __version__
from .inputs import WINDOW, InputSet, spec_digest
from .inputs.describe import finite_list, inputset_record, plain, quantile_table, sketch_record
from .inputs.output import (
    SUFFIXES,
    draw_blocks,
    progress_bar,
    sidecar_path,
    space_problem,
    write_draws,
)
from .loading import load, validate_spec
from .sketch import Sketch

__all__ = ["main"]

#: Longest error line printed.
_LINE_LIMIT = 600
MAX_SIZE = 2**53
MAX_POINTS = 1_000_000


class _Exit(Exception):
    """Stop with ``code`` after printing ``message`` as one line on stderr."""

    def __init__(self, code: int, message: str) -> None:
        super().__init__(message)
        self.code = code


def _one_line(message: str) -> str:
    line = " ".join(str(message).split())
    return line if len(line) <= _LINE_LIMIT else line[:_LINE_LIMIT] + "…"


# ---------------------------------------------------------------- argument types


def _size(text: str) -> int:
    """A count such as ``10000``, ``1_000_000`` or ``1e7``."""
    raw = text.strip().replace("_", "")
    try:
        value = int(raw)
    except ValueError:
        try:
            f = float(raw)
        except ValueError:
            f = math.nan
        if not (math.isfinite(f) and f.is_integer()):
            raise argparse.ArgumentTypeError(
                f"must be a whole number such as 10000 or 1e7; got {quote(text)}"
            ) from None
        value = int(f)
    if not 1 <= value <= MAX_SIZE:
        raise argparse.ArgumentTypeError(f"must be between 1 and 2**53; got {quote(text)}")
    return value


def _seed(text: str) -> int:
    """A non-negative integer seed."""
    raw = text.strip().replace("_", "")
    if not re.fullmatch(r"\d{1,40}", raw):
        raise argparse.ArgumentTypeError(
            f"must be a non-negative whole number such as 7 or 20261202; got {quote(text)}"
        )
    return int(raw)


def _probability(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not 0.0 <= value <= 1.0:
        raise argparse.ArgumentTypeError(
            f"probabilities must be numbers in [0, 1] such as 0.05; got {quote(text)}"
        )
    return value


def _points(text: str) -> int:
    value = _size(text)
    if not 2 <= value <= MAX_POINTS:
        raise argparse.ArgumentTypeError(f"must be between 2 and {MAX_POINTS:,}; got {quote(text)}")
    return value


# ---------------------------------------------------------------- reading inputs


def _load(path: Path) -> Sketch | InputSet:
    """THE loading door of the command line: :func:`cdfsketch.load`, a spec or an input set."""
    return load(path)


def _validate(path: Path) -> None:
    """THE checking door: :func:`cdfsketch.validate_spec` (schema and CDF rules, either format)."""
    validate_spec(path)


def _input_file(text: str) -> Path:
    path = Path(text)
    if not path.exists():
        raise _Exit(1, f"{text}: no such file. Check the path.")
    if path.is_dir():
        raise _Exit(1, f"{text}: is a folder, not a file. Name a .json file inside it.")
    if not os.access(path, os.R_OK):
        raise _Exit(1, f"{text}: cannot be read (permission denied). Check its permissions.")
    return path


def _open(text: str, action: Callable[[Path], Any] = _load) -> Any:
    path = _input_file(text)
    try:
        return action(path)
    except (ValueError, OSError) as exc:  # SpecError, KnotError, … are ValueErrors
        raise _Exit(1, f"{text}: {exc}") from None


def _column(path: Path) -> str:
    return path.stem or "x"


# ---------------------------------------------------------------- output checks


def _output(text: str | None, suffixes: Sequence[str], option: str) -> Path | None:
    if text is None:
        return None
    try:
        out = check_output_path(text, suffixes=suffixes, what=f"{option} file")
        side = sidecar_path(out) if option == "--out" else None
        if side is not None:
            check_output_path(side, what="record file beside it")
    except InputError as exc:
        raise _Exit(2, f"{option}: {exc}") from None
    try:  # permissions can say yes where the file system says no (read-only mounts, root)
        with tempfile.TemporaryFile(dir=out.parent if str(out.parent) else "."):
            pass
    except OSError as exc:
        raise _Exit(
            2,
            f"{option}: The folder of the {option} file must be writable; got {exc.strerror} "
            f"for {str(out.parent)!r}. Choose a folder you can write to.",
        ) from None
    return out


# ---------------------------------------------------------------- commands


def _cmd_check(args: argparse.Namespace) -> int:
    failed = 0
    for text in args.files:
        try:
            _open(text, _validate)
        except _Exit as exc:
            failed += 1
            print(_one_line(str(exc)), file=sys.stderr)
        except Exception as exc:  # one bad file never stops the others
            failed += 1
            print(_one_line(f"{text}: unexpected {type(exc).__name__}: {exc}"), file=sys.stderr)
        else:
            print(f"{text}: ok")
    return 1 if failed else 0


def _cmd_describe(args: argparse.Namespace) -> int:
    obj = _open(args.file)
    if isinstance(obj, Sketch):
        if args.json:
            print(json.dumps(sketch_record(obj), indent=2, ensure_ascii=False))
        else:
            print(obj.summary())
            digest = spec_digest(obj)
            print(f"  {'sha256':<19}  {digest}")
            for key, value in obj.provenance.items():
                print(f"  {'provenance.' + key:<19}  {_one_line(quote(plain(value), limit=120))}")
        return 0
    if args.json:
        record = inputset_record(obj)
        print(json.dumps(record, indent=2, ensure_ascii=False))
        return 0
    print(f"Input set {obj.name or args.file!s}: {len(obj)} input(s)")
    for key, value in obj.provenance.items():
        print(f"  provenance.{key}: {_one_line(quote(plain(value), limit=120))}")
    for a_b, v in obj.rank_corr.items():
        print(f"  rank correlation {a_b[0]} ~ {a_b[1]}: {significant(v)} (Spearman target)")
    for n in obj.names:
        print()
        print(f"[{n}]")
        print(obj.sketches[n].summary())
    return 0


def _cmd_quantiles(args: argparse.Namespace) -> int:
    obj = _open(args.file)
    sketches = {_column(Path(args.file)): obj} if isinstance(obj, Sketch) else obj.sketches
    u = np.asarray(args.u, dtype=float)
    values = {n: np.atleast_1d(sk.ppf(u)) for n, sk in sketches.items()}
    if args.json:
        print(json.dumps({"u": u.tolist(), "x": {n: finite_list(v) for n, v in values.items()}}))
        return 0
    if isinstance(obj, Sketch):
        for p, x in zip(args.u, values[next(iter(values))], strict=True):
            print(f"{p!r}\t{float(x)!r}")
        return 0
    print("\t".join(["u", *sketches]))
    for i, p in enumerate(args.u):
        print("\t".join([repr(p), *(repr(float(values[n][i])) for n in sketches)]))
    return 0


def _cmd_table(args: argparse.Namespace) -> int:
    out = _output(args.out, (".csv",), "--out")
    obj = _open(args.file)
    sketches = {_column(Path(args.file)): obj} if isinstance(obj, Sketch) else dict(obj.sketches)
    text = quantile_table(sketches, args.points, source=Path(args.file).name)
    if out is None:
        sys.stdout.write(text)
        return 0
    try:
        write_text(out, text)
    except OSError as exc:
        raise _Exit(2, f"--out: {exc}") from None
    return 0


def _need(option: str, extra: str, module: str) -> None:
    from ._extras import need

    try:
        need(extra, module)
    except ImportError as exc:
        raise _Exit(2, f"{option}: {exc}") from None


def _cmd_sample(args: argparse.Namespace) -> int:
    n, block = args.size, args.block
    seed = args.seed if args.seed is not None else secrets.randbits(63)
    out = _output(args.out, SUFFIXES, "--out")
    if out is not None and out.suffix.lower() == ".parquet":
        _need("--out", "parquet", "pyarrow")
    obj = _open(args.file)
    if args.design != "random":
        _need("--design", "fit", "scipy")
    elif isinstance(obj, InputSet) and obj.dependent and args.dependence != "independent":
        _need("--dependence", "fit", "scipy")
    if isinstance(obj, Sketch):
        names: tuple[str, ...] = (_column(Path(args.file)),)
        digests = {names[0]: spec_digest(obj)}
    else:
        names = obj.names
        digests = {n: spec_digest(obj.sketches[n]) for n in names}
    problem = space_problem(out, n, len(names), block)
    if problem:
        raise _Exit(2, problem)
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            blocks = draw_blocks(obj, names, n, block, seed, args.design, args.dependence)
        for w in caught:
            print(_one_line(f"cdfsketch sample: warning: {w.message}"), file=sys.stderr)
    except InputError as exc:
        raise _Exit(2, f"--{exc.field or 'size'}: {exc}") from None
    record = {
        "format": "cdfsketch-sample-record",
        "version": 1,
        "source": str(args.file),
        "size": n,
        "seed": seed,
        "design": args.design,
        "dependence": args.dependence if isinstance(obj, InputSet) else None,
        "columns": list(names),
        "package_version": __version__,
        "spec_sha256": digests,
        "created": datetime.now(UTC).isoformat(timespec="seconds"),
    }
    bar = progress_bar(n, quiet=args.quiet)
    try:
        write_draws(out, names, blocks, n, record, flat=isinstance(obj, Sketch), tick=bar.update)
    except BrokenPipeError:
        raise
    except OSError as exc:
        raise _Exit(2, f"--out: {exc}") from None
    finally:
        bar.close()
    return 0


# ---------------------------------------------------------------- the parser


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage error as one line (exit 2), never the usage block."""

    def error(self, message: str) -> NoReturn:
        raise _Exit(2, f"{self.prog}: {message}. See '{self.prog} --help'.")


_FILE_HELP = "a single-input spec (.json) or an input-set file (format 'cdfsketch-inputs')"


def _add_describe(sub: Any) -> None:
    p = sub.add_parser(
        "describe",
        help="name, units, support, mean, sd, quantiles, tails and provenance of a file",
        description="Describe a spec or each input of an input set: name, units, support, mean, "
        "sd, quantiles, tail masses and models, provenance, and the spec's sha256 digest.",
    )
    p.add_argument("file", help=_FILE_HELP)
    p.add_argument("--json", action="store_true", help="print one JSON document for machines")
    p.set_defaults(run=_cmd_describe)


def _add_check(sub: Any) -> None:
    p = sub.add_parser(
        "check",
        help="validate files; one line per file, exit 1 if any fails",
        description="Check each file against its JSON Schema and the CDF rules. Prints "
        "'FILE: ok' on stdout or 'FILE: what is wrong' on stderr for every file, and exits 1 "
        "if any failed.",
    )
    p.add_argument("files", nargs="+", metavar="file", help=_FILE_HELP + "; several allowed")
    p.set_defaults(run=_cmd_check)


def _add_sample(sub: Any) -> None:
    p = sub.add_parser(
        "sample",
        help="draw from a spec or an input set to .npy, .csv, .parquet or stdout",
        description="Draw --size values of every input, streamed in blocks (memory does not grow "
        "with --size). The seed, design, package version and each spec's sha256 are recorded: "
        "in the parquet metadata (key 'cdfsketch'), or in a sidecar FILE.json beside a .npy or "
        ".csv file. For a single spec with --design random the draws equal "
        "cdfsketch.load(FILE).sample(size, rng=seed); otherwise they equal "
        "InputSet.sample(size, rng=seed, design=..., dependence=...).",
    )
    p.add_argument("file", help=_FILE_HELP)
    p.add_argument(
        "--size", type=_size, required=True, help="draws per input, e.g. 10000, 1_000_000 or 1e7"
    )
    p.add_argument(
        "--seed",
        type=_seed,
        default=None,
        help="non-negative integer seed; when left out a fresh one is drawn and recorded",
    )
    p.add_argument(
        "--design",
        choices=("random", "lhs", "sobol"),
        default="random",
        help="random draws (default), a Latin hypercube, or a scrambled Sobol sequence "
        "(balanced at power-of-two sizes); lhs and sobol need scipy (extra 'fit')",
    )
    p.add_argument(
        "--dependence",
        choices=("iman-conover", "gaussian-copula", "independent"),
        default="iman-conover",
        help="how an input set's rank correlations are imposed (default iman-conover, which "
        "keeps each input's draws exactly); ignored for a single spec",
    )
    p.add_argument(
        "--out",
        "-o",
        default=None,
        help="output file ending in .npy (rows x inputs; 1-d for a single spec), .csv (header "
        "row naming the inputs) or .parquet (extra 'parquet'); default: CSV on stdout",
    )
    p.add_argument(
        "--block",
        type=_size,
        default=WINDOW,
        help=f"draws per input written at a time (default {WINDOW:,}); memory grows with it",
    )
    p.add_argument("--quiet", "-q", action="store_true", help="no progress bar on stderr")
    p.set_defaults(run=_cmd_sample)


def _add_quantiles(sub: Any) -> None:
    p = sub.add_parser(
        "quantiles",
        aliases=["ppf"],
        help="exact quantiles at given probabilities",
        description="Print the exact quantile (ppf) of each input at each probability: 'u<TAB>x' "
        "lines for a spec, a table with one column per input for an input set.",
    )
    p.add_argument("file", help=_FILE_HELP)
    p.add_argument("u", nargs="+", type=_probability, help="probabilities in [0, 1], e.g. 0.05 0.5")
    p.add_argument("--json", action="store_true", help="print one JSON document for machines")
    p.set_defaults(run=_cmd_quantiles)


def _add_table(sub: Any) -> None:
    p = sub.add_parser(
        "table",
        help="a (u, x) quantile table with an exact error bound, for other simulation tools",
        description="Write a CSV quantile table at --points values of u (u = i/(N-1); an "
        "unbounded end moves in by half a step) for tools that take an empirical table. Its "
        "header states the exact error bound of reading it by linear interpolation.",
    )
    p.add_argument("file", help=_FILE_HELP)
    p.add_argument(
        "--points", "-n", type=_points, required=True, help="rows of the table, 2 to 1,000,000"
    )
    p.add_argument("--out", "-o", default=None, help="a .csv file (default: stdout)")
    p.set_defaults(run=_cmd_table)


def _cmd_demo(args: argparse.Namespace) -> int:
    from . import demo

    try:
        demo.run(args.out)
    except InputError as exc:
        raise _Exit(2, f"--out: {exc}") from None
    except ImportError as exc:
        raise _Exit(2, f"demo: {exc}") from None
    return 0


def _add_demo(sub: Any) -> None:
    p = sub.add_parser(
        "demo",
        help="the main job on embedded invented data, told step by step",
        description="Run the whole path on embedded INVENTED data (pump repair times at an "
        "invented irrigation cooperative): the data, the automatic start, an adjusted sketch, the "
        "comparison with fitted candidates, the decision, the spec written, a reload and sample "
        "in a fresh Python process, and the review page written. Writes exactly two files into "
        "--out: pump_repair_hours.json and pump_repair_review.html. Needs the 'fit' extra.",
    )
    p.add_argument(
        "--out",
        "-o",
        default="cdfsketch-demo",
        help="folder for the two files (default: ./cdfsketch-demo, created if missing)",
    )
    p.set_defaults(run=_cmd_demo)


#: The subcommands, in the order ``--help`` lists them.
_COMMANDS = (_add_describe, _add_check, _add_sample, _add_quantiles, _add_table, _add_demo)


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="cdfsketch",
        description="Describe, check and sample cdfsketch specs and input sets.",
        epilog="Exit codes: 0 ok, 1 bad input file, 2 bad usage (options, output path, size), "
        "3 internal error, 130 interrupted. Run 'cdfsketch COMMAND --help' for each command.",
    )
    parser.add_argument("--version", action="version", version=f"cdfsketch {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for add in _COMMANDS:
        add(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (see the module docstring).

    Examples
    --------
    >>> main(["check", "no-such-file.json"])
    1
    """
    try:
        args = _parser().parse_args(argv)
        return int(args.run(args))
    except _Exit as exc:
        print(_one_line(str(exc)), file=sys.stderr)
        return exc.code
    except SystemExit as exc:  # --help and --version
        return exc.code if isinstance(exc.code, int) else 0
    except MemoryError:
        print("cdfsketch: out of memory; lower --size or --block.", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("cdfsketch: interrupted; no partial output was kept.", file=sys.stderr)
        return 130
    except BrokenPipeError:  # e.g. piped into `head`: stop quietly
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0
    except Exception as exc:
        print(
            _one_line(
                f"cdfsketch: unexpected {type(exc).__name__}: {quote(str(exc), limit=300)}. "
                "Please report it with the command you ran."
            ),
            file=sys.stderr,
        )
        return 3


if __name__ == "__main__":
    sys.exit(main())
