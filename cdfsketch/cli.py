"""The ``cdfsketch`` command: check, summarise and sample specs from a shell.

Examples::

    cdfsketch check input.json other.json
    cdfsketch summary input.json
    cdfsketch sample input.json --size 100000 --seed 7 --out draws.npy
    cdfsketch ppf input.json 0.05 0.5 0.95

No widget code is imported here.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from ._version import __version__
from .spec import SpecError, load, validate_spec

__all__ = ["main"]


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="cdfsketch", description="Check, summarise and sample cdfsketch specs."
    )
    parser.add_argument("--version", action="version", version=f"cdfsketch {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    check = sub.add_parser("check", help="validate specs against the schema and the CDF rules")
    check.add_argument("specs", nargs="+", type=Path)
    summ = sub.add_parser("summary", help="print a spec's summary (mean, sd, quantiles, tails)")
    summ.add_argument("spec", type=Path)
    sample = sub.add_parser("sample", help="draw from a spec")
    sample.add_argument("spec", type=Path)
    sample.add_argument("--size", type=int, required=True, help="number of draws")
    sample.add_argument("--seed", type=int, default=None, help="seed for numpy's default_rng")
    sample.add_argument(
        "--out", type=Path, default=None, help="write to .npy, .csv or .txt (default: stdout)"
    )
    ppf = sub.add_parser("ppf", help="quantiles at the given probabilities")
    ppf.add_argument("spec", type=Path)
    ppf.add_argument("u", nargs="+", type=float)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (0 success, 1 bad spec, 2 usage).

    Examples
    --------
    >>> main(["check", "no-such-file.json"])
    no-such-file.json: No spec file at 'no-such-file.json'...
    1
    """
    args = _parser().parse_args(argv)
    try:
        if args.command == "check":
            bad = 0
            for path in args.specs:
                try:
                    validate_spec(path)
                    print(f"{path}: ok")
                except SpecError as exc:
                    bad += 1
                    print(f"{path}: {exc}")
            return 1 if bad else 0
        sketch = load(args.spec)
        if args.command == "summary":
            print(sketch.summary())
        elif args.command == "ppf":
            for u, x in zip(args.u, np.atleast_1d(sketch.ppf(args.u)), strict=True):
                print(f"{u!r}\t{float(x)!r}")
        elif args.command == "sample":
            if args.size < 0:
                print("--size must be ≥ 0", file=sys.stderr)
                return 2
            draws = np.atleast_1d(sketch.sample(args.size, rng=args.seed))
            _write_draws(draws, args.out)
    except (SpecError, ValueError) as exc:
        print(f"{getattr(args, 'spec', '')}: {exc}", file=sys.stderr)
        return 1
    return 0


def _write_draws(draws: np.ndarray, out: Path | None) -> None:
    if out is None:
        np.savetxt(sys.stdout, draws, fmt="%.17g")
    elif out.suffix == ".npy":
        np.save(out, draws)
    elif out.suffix in (".csv", ".txt"):
        np.savetxt(out, draws, fmt="%.17g")
    else:
        raise ValueError(
            f"--out must end in .npy, .csv or .txt; got {out.name!r}. Choose one of those."
        )


if __name__ == "__main__":
    sys.exit(main())
