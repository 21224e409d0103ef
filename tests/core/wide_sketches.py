"""Wide random sketches and the checks every accepted sketch must pass.

Shared by the fixed-seed property test (``tests/core/test_wide_sketches.py``)
and the longer run ``tests/bench/fuzz_sketches.py``. The ranges follow the
outside fuzzing run described in the hardening issue: x from 1e-150 to 1e15,
spacings down to 1e-100, p with 1-ulp steps, atoms at both ends, bounded and
exponential tails with stated scales from 1e-100 to 1e100.
"""

from __future__ import annotations

from collections import Counter
from itertools import pairwise

import numpy as np

from cdfsketch import BoundedTail, ExponentialTail, KnotError, Sketch
from cdfsketch._validate import InputError

ULP53 = 2.0**-53


def random_knots(rng: np.random.Generator) -> dict:
    """Constructor arguments of one wide random sketch (it may be refused)."""
    n = int(rng.integers(2, 10))
    mag = 10.0 ** rng.uniform(-150, 15) if rng.random() < 0.8 else 0.0
    x0 = mag * rng.choice([-1.0, 1.0])
    scale = max(abs(x0), 10.0 ** rng.uniform(-100, 15))
    kind = rng.random(n - 1)
    dx = np.where(
        kind < 0.15,
        10.0 ** rng.uniform(-100, -20, n - 1),  # tiny, maybe below rounding
        np.where(
            kind < 0.3,
            np.spacing(abs(x0) + scale) * rng.integers(1, 200, n - 1),  # a few ulps
            scale * 10.0 ** rng.uniform(-6, 0, n - 1),
        ),
    )
    x = x0 + np.r_[0.0, np.cumsum(dx)]
    p = np.sort(rng.uniform(0, 1, n))
    if rng.random() < 0.5:
        p[0] = 0.0
    if rng.random() < 0.5:
        p[-1] = 1.0
    if rng.random() < 0.3:  # 1-ulp steps in p
        i = int(rng.integers(0, n - 1))
        p[i + 1] = np.nextafter(p[i], 1.0)
    if rng.random() < 0.2:  # a flat stretch
        i = int(rng.integers(0, n - 1))
        p[i + 1] = p[i]
    if n >= 3 and rng.random() < 0.25:  # an atom at the lower end
        x[1] = x[0]
        p[1] = max(p[1], np.nextafter(p[0], 1.0))
    if n >= 4 and rng.random() < 0.25:  # an atom at the upper end
        x[-2] = x[-1]
        p[-2] = min(p[-2], np.nextafter(p[-1], 0.0))
    p = np.maximum.accumulate(np.clip(p, 0, 1))
    span = float(x[-1] - x[0]) if x[-1] > x[0] else 1.0

    def tail(side: str):
        r = rng.random()
        if r < 0.3:
            return None
        if r < 0.6:
            return ExponentialTail(scale=float(10.0 ** rng.uniform(-100, 100)))
        gap = span * 10.0 ** rng.uniform(-14, 2)
        limit = float(x[0] - gap if side == "lower" else x[-1] + gap)
        return BoundedTail(limit, density=str(rng.choice(["uniform", "taper"])))

    return {
        "x": x,
        "p": p,
        "interpolation": str(rng.choice(["linear", "pchip"])),
        "lower_tail": tail("lower"),
        "upper_tail": tail("upper"),
    }


def _probe_x(s: Sketch, rng: np.random.Generator) -> np.ndarray:
    """Sorted points: every knot and bounded limit ± a few ulps, and random points in between."""
    bp = s.breakpoints
    near = (bp[:, None] + np.spacing(np.abs(bp))[:, None] * np.arange(-6, 7)[None, :]).ravel()
    inner = np.concatenate([rng.uniform(a, b, 8) for a, b in pairwise(bp)])
    lo, hi = s.support
    out = [near, inner]
    for end, sign in ((lo, -1), (hi, 1)):
        if not np.isfinite(end):
            edge = bp[0] if sign < 0 else bp[-1]
            width = max(s.tail_scales[0 if sign < 0 else 1] or 1.0, np.spacing(abs(edge)))
            out.append(edge + sign * width * np.geomspace(1e-3, 30, 12))
    v = np.sort(np.concatenate(out))
    return v[np.isfinite(v)]


def _probe_u(s: Sketch, rng: np.random.Generator) -> np.ndarray:
    """Sorted probabilities: the 2⁻⁵³ neighbourhood of every knot's p, and random ones."""
    near = (s.p[:, None] + ULP53 * np.arange(-40, 41)[None, :]).ravel()
    u = np.r_[near, rng.random(200), 0.0, 1.0, ULP53, 1 - ULP53]
    return np.sort(np.clip(u, 0.0, 1.0))


def check_sketch(args: dict, rng: np.random.Generator, *, sample: bool) -> list[str]:
    """Failure kinds for one sketch ([] when it passes, ["refused"] when refused cleanly)."""
    try:
        s = Sketch(**args)
    except (KnotError, InputError):
        return ["refused"]
    except Exception:
        return ["constructor raised"]
    try:
        return _check_accepted(s, rng, sample=sample)
    except Exception:
        return ["evaluation raised"]


def _check_accepted(s: Sketch, rng: np.random.Generator, *, sample: bool) -> list[str]:
    bad = []
    v = _probe_x(s, rng)
    f = s.cdf(v)
    if not (np.all(np.diff(f) >= 0) and f.min() >= 0 and f.max() <= 1):
        bad.append("cdf not monotone")
    u = _probe_u(s, rng)
    x = s.ppf(u)
    if np.any(np.diff(x) < 0):
        bad.append("ppf not monotone")
    inner = (u > 0) & (u < 1) & np.isfinite(x)
    xi, ui = x[inner], u[inner]
    step = 4 * np.spacing(np.abs(xi))
    tol = 1e-12
    if np.any(s.cdf(xi + step) < ui - tol) or np.any(s.cdf(xi - step) > ui + tol):
        bad.append("ppf does not invert cdf")
    try:
        moved = s.move_knot(
            int(rng.integers(0, len(s))), x=float(rng.choice(v)), p=float(rng.random())
        )
        assert len(moved) == len(s)
    except Exception:
        bad.append("move_knot raised")
    if sample:
        try:
            fast = s.sampler()
        except Exception:
            return [*bad, "sampler did not compile"]
        try:
            draws = fast.sample(2000, rng=rng)
            xs = fast.ppf(u)
        except Exception:
            return [*bad, "sampler raised"]
        lo, hi = s.support
        if not (np.all(draws >= lo) and np.all(draws <= hi)):
            bad.append("draw outside support")
        if np.any(np.diff(xs) < 0):
            bad.append("sampler ppf not monotone")
        xi = xs[inner]
        step = 8 * np.spacing(np.abs(xi))
        tol = 1e-10
        if np.any(s.cdf(xi + step) < ui - tol) or np.any(s.cdf(xi - step) > ui + tol):
            bad.append("sampler ppf beyond 1e-10 in u")
    return bad


def run(n: int, seed: int, *, sample_every: int = 3) -> tuple[Counter, list[tuple[int, str, dict]]]:
    """Check ``n`` wide sketches; counts of outcomes and the first failures (index, kind, args)."""
    rng = np.random.default_rng(seed)
    counts: Counter = Counter()
    failures: list[tuple[int, str, dict]] = []
    for i in range(n):
        args = random_knots(rng)
        kinds = check_sketch(args, rng, sample=i % sample_every == 0)
        counts["examples"] += 1
        if kinds == ["refused"]:
            counts["refused (clear KnotError)"] += 1
            continue
        counts["accepted"] += 1
        for k in kinds:
            counts[k] += 1
            if len(failures) < 20:
                failures.append((i, k, args))
    return counts, failures
