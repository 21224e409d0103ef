"""Fuzz the spec loader: mutations of the golden specs, semantic edits, raw bytes and strings.

Every input must end as an accepted spec or a SpecError, for ``load`` and
``validate_spec`` alike, and both must give the same verdict; every accepted
spec must build a sampler that draws. ``corpus(seed, n)`` is shared with the
suite's fixed-seed fuzz test (tests/spec/test_spec_fuzz.py); this script runs
a longer corpus and prints the counts::

    PYTHONPATH=$PWD python tests/bench/fuzz_specs.py --n 100000
"""

from __future__ import annotations

import argparse
import copy
import json
import time
from collections import Counter
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import numpy as np

DATA = Path(__file__).resolve().parents[1] / "data"

_VALUES: list[Any] = [
    None, True, False, 0, -1, 1, 0.5, 1.5, -0.0, 1e308, -1e308, 5e-324, 1e100, 1e101,
    10**30, 10**400, "", "x", "linear", "pchip", "bounded", "exponential", "stated",
    "continue-density", "uniform", "taper", "cdfsketch-spec", "\ud800", "é" * 3,
    "A" * 501, "u" * 101, [], [0], [0, 1], [1, 0], [0.0, 0.5, 1.0], {}, {"kind": "bounded"},
    {"a": 1}, [[[[[]]]]], float("nan"), float("inf"), -float("inf"), (0, 1),
]  # fmt: skip


def golden() -> list[dict[str, Any]]:
    """The golden specs as dicts (the corpus is built from these)."""
    return [json.loads(p.read_text(encoding="utf-8")) for p in sorted(DATA.glob("spec-v1-*.json"))]


def _paths(obj: Any, prefix: tuple[Any, ...] = ()) -> Iterator[tuple[Any, ...]]:
    yield prefix
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(obj, list) and obj:
        for i in {0, len(obj) - 1, len(obj) // 2}:
            yield from _paths(obj[i], (*prefix, i))


def _nest(depth: int, leaf: Any = 0) -> Any:
    out = leaf
    for _ in range(depth):
        out = [out]
    return out


def _semantic(spec: dict[str, Any], rng: np.random.Generator) -> Any:
    out = copy.deepcopy(spec)
    paths = [p for p in _paths(out) if p]
    path = paths[rng.integers(len(paths))]
    parent = out
    for key in path[:-1]:
        parent = parent[key]
    key = path[-1]
    old = parent[key]
    move = rng.integers(10)
    if move == 0 and isinstance(parent, dict):
        del parent[key]
    elif move == 1 and isinstance(parent, dict):
        parent[f"{key}_extra"] = old
    elif move == 2:
        parent[key] = str(old) if not isinstance(old, str) else [old]
    elif move == 3:
        parent[key] = _nest(int(rng.integers(1, 60)))
    elif move == 4 and isinstance(old, float | int) and not isinstance(old, bool):
        parent[key] = float(
            np.nextafter(old, rng.choice([-np.inf, np.inf])) * rng.choice([1, -1, 2])
        )
    elif move == 5 and isinstance(old, list) and old:
        arr = list(old)
        i, j = rng.integers(len(arr), size=2)
        arr[i], arr[j] = arr[j], arr[i]
        parent[key] = arr if rng.random() < 0.7 else arr[:-1]
    elif move == 6 and "knots" in out and isinstance(out["knots"], dict):
        n = int(rng.choice([1, 2, 3, 50, 1000]))
        x = np.sort(rng.normal(0, 10.0 ** rng.integers(-5, 15), n))
        if rng.random() < 0.3:
            x = 1e9 + np.cumsum(rng.random(n) * 10.0 ** rng.integers(-8, 0))
        p = np.sort(rng.random(n))
        if rng.random() < 0.5 and n > 1:
            p[0], p[-1] = 0.0, 1.0
        out["knots"] = {"x": x.tolist(), "p": p.tolist()}
    else:
        parent[key] = _VALUES[rng.integers(len(_VALUES))]
    return out


def _text_mutation(spec: dict[str, Any], rng: np.random.Generator) -> Any:
    text = json.dumps(spec)
    move = rng.integers(9)
    if move == 0:  # flip bytes
        b = bytearray(text.encode())
        for i in rng.integers(len(b), size=int(rng.integers(1, 5))):
            b[i] = int(rng.integers(256))
        return bytes(b)
    if move == 1:  # truncate
        return text[: int(rng.integers(len(text)))]
    if move == 2:  # a huge integer literal in place of a number
        return text.replace("0.", "9" * int(rng.choice([400, 5000, 20000])) + ".", 1)
    if move == 3:  # a deep array in a field
        depth = int(rng.choice([30, 33, 3000, 100_000]))
        return text.replace('"name": ', '"name": ' + "[" * depth + "]" * depth + ', "n2": ', 1)
    if move == 4:  # random bytes
        return rng.bytes(int(rng.integers(1, 64)))
    if move == 5:  # random text (may contain surrogates) taken as a path or as JSON
        chars = rng.integers(1, 0xFFFF, size=int(rng.integers(1, 300)))
        s = "".join(map(chr, chars))
        return s if rng.random() < 0.5 else "{" + s
    if move == 6:  # a long string taken as a path
        return "A" * int(rng.choice([255, 256, 5000, 100_000]))
    if move == 7:  # escapes: lone surrogates, NaN, Infinity
        return text.replace(
            '"units": "', rng.choice(['"units": "\\ud800', '"units": "\\udc00x']), 1
        )
    return text.replace(
        "1.0", str(rng.choice(["NaN", "Infinity", "-Infinity", "1e400", "1e-400"])), 1
    )


def corpus(seed: int, n: int) -> Iterator[Any]:
    """``n`` fuzz inputs (dicts, str, bytes), the same for the same seed."""
    rng = np.random.default_rng(seed)
    base = golden()
    for _ in range(n):
        spec = base[rng.integers(len(base))]
        kind = rng.random()
        if kind < 0.55:
            item = _semantic(spec, rng)
            if rng.random() < 0.3:
                item = _semantic(item, rng) if isinstance(item, dict) else item
            yield json.dumps(item) if rng.random() < 0.3 and _dumpable(item) else item
        elif kind < 0.95:
            yield _text_mutation(spec, rng)
        else:
            yield copy.deepcopy(spec)


def _dumpable(item: Any) -> bool:
    try:
        json.dumps(item)
    except (ValueError, TypeError, RecursionError):
        return False
    return True


def verdict(fn: Any, item: Any) -> tuple[str, Any]:
    """``("ok", result)``, ``("SpecError", message)`` or ``("other", exception)``."""
    from cdfsketch import SpecError

    try:
        return "ok", fn(item)
    except SpecError as exc:
        return "SpecError", str(exc)
    except Exception as exc:  # what the fuzz run is looking for
        return "other", exc


def judge(item: Any) -> dict[str, Any]:
    """Run load and validate_spec on ``item``; build and draw from the sampler when accepted."""
    from cdfsketch.loading import load, validate_spec

    a, sketch = verdict(load, item)
    b, _ = verdict(validate_spec, item)
    out: dict[str, Any] = {"load": a, "validate": b, "sampler": None, "detail": None}
    if a == "other":
        out["detail"] = repr(sketch)[:300]
    if a == "ok":
        try:
            draws = sketch.sampler().sample(64, rng=1)
            lo, hi = sketch.support
            ok = np.all(np.isfinite(draws)) and np.all((draws >= lo) & (draws <= hi))
            out["sampler"] = "ok" if ok else "bad draws"
        except Exception as exc:
            out["sampler"] = f"{type(exc).__name__}"
            out["detail"] = f"{type(exc).__name__}: {str(exc)[:200]}"
    return out


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=100_000)
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--every", type=int, default=10_000, help="print counts this often")
    args = parser.parse_args(argv)
    counts: Counter[str] = Counter()
    examples: dict[str, str] = {}
    t0 = time.perf_counter()
    for i, item in enumerate(corpus(args.seed, args.n), 1):
        r = judge(item)
        key = f"load={r['load']} validate={r['validate']} sampler={r['sampler']}"
        counts[key] += 1
        if r["detail"] and key not in examples:
            examples[key] = r["detail"]
        if i % args.every == 0:
            print(f"after {i:,}: {dict(counts.most_common())}", flush=True)
    took = time.perf_counter() - t0
    print(f"{args.n:,} inputs in {took:.1f} s ({1e3 * took / args.n:.2f} ms each)")
    for key, c in counts.most_common():
        print(f"{c:>8,}  {key}")
    for key, detail in examples.items():
        print(f"example for {key}: {detail}")
    bad = sum(c for k, c in counts.items() if "other" in k or "load=ok validate=SpecError" in k)
    bad += sum(c for k, c in counts.items() if "load=SpecError validate=ok" in k)
    bad += sum(
        c
        for k, c in counts.items()
        if "sampler=" in k and "sampler=ok" not in k and "sampler=None" not in k
    )
    print(f"problems: {bad:,}")


if __name__ == "__main__":
    main()
