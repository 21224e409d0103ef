"""Write the shared test vectors for the JS spec reader (``js/spec-reader.mjs``).

Run from the repository root::

    python tests/data/make_js_vectors.py            # writes tests/data/js-vectors.json
    python tests/data/make_js_vectors.py --out PATH

Each case holds a spec (written by :meth:`Sketch.to_spec`), points ``x`` with
the Python package's ``cdf``, ``sf`` and ``pdf`` there, probabilities ``u`` with
``Sketch.ppf``, and the piece table, support, atoms and resolved tail scales.
``bad_specs`` holds specs that :func:`cdfsketch.load` rejects, with the field
its message names. The output is deterministic: a fixed seed, a fixed
``created`` stamp, and no ``package_version`` in the specs' provenance (so
the file changes only when the numerics or this script change; a spec
without ``package_version`` is still valid). Numbers that JSON cannot hold
(``±inf``) are written as the strings ``"inf"`` and ``"-inf"``.

``tests/test_js_reader.py`` regenerates the vectors and checks that they
equal the committed file.
"""

from __future__ import annotations

import argparse
import copy
import json
import math
from pathlib import Path
from typing import Any

import numpy as np

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch

SEED = 20260101
CREATED = "2026-01-01T00:00:00+00:00"
DEFAULT_OUT = Path(__file__).with_name("js-vectors.json")
HOSTILE = {
    "name": "<script>alert('name')</script>\u202e${globalThis.x=1}",
    "units": '"><img src=x onerror=alert(1)>',
    "notes": "</script><!-- `${process.exit(1)}` --> eval('1+1') \u0000 \U0001f600",
}


def encode(value: float) -> float | str:
    """A float for JSON: finite values as they are, infinities as strings.

    Examples
    --------
    >>> encode(float("-inf")), encode(2.5)
    ('-inf', 2.5)
    """
    v = float(value)
    if math.isnan(v):
        raise ValueError("The vectors must not hold NaN; got NaN. Check the case that made it.")
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    return v


def _cases(rng: np.random.Generator) -> list[tuple[str, Sketch]]:
    """The sketches the vectors cover (label, sketch)."""
    lin, pch = "linear", "pchip"
    cases: list[tuple[str, Sketch]] = [
        ("linear three knots", Sketch([0, 10, 30], [0, 0.5, 1])),
        # regressions: xa + h rounding past the next knot (found in review and by hypothesis)
        ("rounded piece end", Sketch([-3.5, -1, 0.1, 0.3, 7], [0.1, 0.25, 0.5, 0.75, 0.9])),
        (
            "rounded last end before an atom",
            Sketch([-248589.0, -248588.658, 275700.0, 275700.0], [2 / 3, 2 / 3, 2 / 3, 1.0]),
        ),
        ("linear two knots", Sketch([-1.5, 2.25], [0, 1])),
        ("pchip two knots", Sketch([-1.5, 2.25], [0, 1], interpolation=pch)),
        ("pchip three knots", Sketch([0, 1, 4], [0, 0.7, 1], interpolation=pch)),
        (
            "pchip six knots",
            Sketch([0, 1, 2.5, 4, 7, 10], [0, 0.1, 0.35, 0.6, 0.9, 1], interpolation=pch),
        ),
        ("linear atom inside", Sketch([0, 2, 2, 5], [0, 0.3, 0.6, 1])),
        (
            "pchip atom inside",
            Sketch([0, 1, 3, 3, 4, 6], [0, 0.2, 0.4, 0.7, 0.8, 1], interpolation=pch),
        ),
        ("linear atom at lower end", Sketch([1, 1, 3, 4], [0, 0.25, 0.6, 1])),
        ("pchip atom at lower end", Sketch([1, 1, 3, 4], [0, 0.25, 0.6, 1], interpolation=pch)),
        ("pchip atom at upper end", Sketch([0, 2, 5, 5], [0, 0.4, 0.8, 1], interpolation=pch)),
        ("linear atom at upper end", Sketch([0, 2, 5, 5], [0, 0.4, 0.8, 1])),
        ("linear atoms at both ends", Sketch([0, 0, 1, 2, 2], [0, 0.2, 0.5, 0.7, 1])),
        (
            "pchip flat stretch inside",
            Sketch([0, 1, 2, 3, 5], [0, 0.3, 0.3, 0.7, 1], interpolation=pch),
        ),
        ("linear flat stretch inside", Sketch([0, 1, 2, 3, 5], [0, 0.3, 0.3, 0.7, 1])),
        (
            "pchip flat at both ends",
            Sketch([0, 1, 2, 3, 4], [0, 0, 0.5, 1, 1], interpolation=pch),
        ),
        ("linear flat at both ends", Sketch([0, 1, 2, 3, 4], [0, 0, 0.5, 1, 1])),
        (
            "bounded uniform below, taper above (linear)",
            Sketch(
                [1, 2, 4],
                [0.1, 0.5, 0.8],
                lower_tail=BoundedTail(0.0, density="uniform"),
                upper_tail=BoundedTail(7.5, density="taper"),
            ),
        ),
        (
            "bounded taper below, uniform above (pchip)",
            Sketch(
                [1, 2, 4],
                [0.1, 0.5, 0.8],
                interpolation=pch,
                lower_tail=BoundedTail(-2.0, density="taper"),
                upper_tail=BoundedTail(5.0, density="uniform"),
            ),
        ),
        (
            "exponential tails derived (linear)",
            Sketch([2, 3, 5, 9], [0.05, 0.3, 0.7, 0.9]),
        ),
        (
            "exponential tails derived (pchip)",
            Sketch([2, 3, 5, 9], [0.05, 0.3, 0.7, 0.9], interpolation=pch),
        ),
        (
            "exponential tails stated (pchip)",
            Sketch(
                [2, 3, 5, 9],
                [0.05, 0.3, 0.7, 0.9],
                interpolation=pch,
                lower_tail=ExponentialTail(0.75),
                upper_tail=ExponentialTail(4.0),
            ),
        ),
        (
            # the pchip end slope is zero here; the derived lower tail sets it to the outer
            # segment's secant (changing the first piece) and continues that density
            "exponential tail derived from the outer segment",
            Sketch([0, 1, 2], [0.1, 0.11, 0.9], interpolation=pch),
        ),
        (
            # a flat outer segment: the scale comes from the average density of the knots
            "exponential tails derived from the knots' average",
            Sketch([0, 1, 2, 3], [0.1, 0.1, 0.5, 0.9], interpolation=pch),
        ),
        (
            "exponential tails with atoms at the outer knots",
            Sketch([0, 0, 1, 3, 3], [0.1, 0.3, 0.5, 0.6, 0.8], interpolation=pch),
        ),
        (
            "bounded below, exponential above (linear)",
            Sketch([1, 2, 4], [0.1, 0.5, 0.8], lower_tail=BoundedTail(0.5, density="taper")),
        ),
        (
            "wide magnitudes, bounded at zero (pchip)",
            Sketch(
                [1e-6, 1e-3, 1.0, 1e3, 1e6],
                [0.02, 0.2, 0.5, 0.85, 0.99],
                interpolation=pch,
                lower_tail=BoundedTail(0.0),
            ),
        ),
        (
            "wide magnitudes (linear)",
            Sketch([1e-6, 1e-3, 1.0, 1e3, 1e6], [0.0, 0.2, 0.5, 0.85, 1.0]),
        ),
        (
            "large offset, small span (pchip)",
            Sketch(
                [1e9, 1e9 + 0.5, 1e9 + 2, 1e9 + 3],
                [0.1, 0.4, 0.8, 0.95],
                interpolation=pch,
                lower_tail=ExponentialTail(0.3),
            ),
        ),
        (
            "large negative x (linear)",
            Sketch([-1e12, -5e11, 0.0, 3e11], [0.0, 0.25, 0.75, 0.99]),
        ),
        # derived scales with no density to continue, or one that underflows: the knots' span
        ("derived scales, no density at the knots", Sketch([0, 4], [0.5, 0.5])),
        ("derived scale underflows", Sketch([0, 1e-67, 1], [1e-263, 0.5, 1])),
        ("derived scale capped at 1e100", Sketch([0, 1e100], [0.5, 0.5 + 1e-10])),
        (
            # the README sketch: the pchip slope at 45 is zero, the derived upper tail sets
            # it to the last secant, so the density is continuous at 45
            "README sketch, derived upper tail continues the density",
            Sketch(
                [2, 4, 20, 45],
                [0.1, 0.55, 0.85, 0.97],
                interpolation=pch,
                upper_tail=ExponentialTail(),
            ),
        ),
        (
            # bounded tails without mass may have their limits at the outer knots
            "bounded limits at the outer knots, no tail mass (pchip)",
            Sketch(
                [0, 1, 2],
                [0, 0.5, 1],
                interpolation=pch,
                lower_tail=BoundedTail(0.0),
                upper_tail=BoundedTail(2.0, density="taper"),
            ),
        ),
    ]
    # random knots: sorted draws, probabilities strictly inside (0, 1) and rising
    xr = np.sort(rng.normal(10.0, 3.0, 12))
    pr = np.sort(rng.uniform(0.02, 0.98, 12))
    cases.append(("pchip random knots, exponential tails", Sketch(xr, pr, interpolation=pch)))
    cases.append(("linear random knots, exponential tails", Sketch(xr, pr, interpolation=lin)))
    # many knots: plotting positions of a sorted sample (p strictly inside (0, 1))
    n = 300
    xs = np.sort(rng.lognormal(0.0, 0.8, n))
    ps = (np.arange(1, n + 1) - 0.5) / n
    cases.append(("pchip many knots", Sketch(xs, ps, interpolation=pch)))
    cases.append(("linear many knots", Sketch(xs, ps, interpolation=lin)))
    cases.append(
        (
            "hostile name, units and notes",
            Sketch(
                [0, 1, 3],
                [0, 0.5, 1],
                name=HOSTILE["name"],
                units=HOSTILE["units"],
                provenance={
                    "author": "A. Analyst <a@example.org>",
                    "notes": HOSTILE["notes"],
                    "rationale": "Invented for the test vectors.",
                    "method": "by hand",
                    "data": cdfsketch.data_fingerprint([0.5, 1.0, 2.0], label="invented"),
                    "contributors": [{"name": "<b>expert</b>", "weight": 1.0}],
                    "decision": {"chosen": True},
                    "extra": {"__proto__": {"polluted": True}, "constructor": "x"},
                },
            ),
        )
    )
    return cases


def _x_points(s: Sketch, rng: np.random.Generator) -> np.ndarray:
    x = s.x
    span = float(x[-1] - x[0])
    knots = np.unique(x)
    if knots.size > 40:
        knots = knots[np.linspace(0, knots.size - 1, 40).round().astype(int)]
    pts = [knots, np.nextafter(knots, -np.inf), np.nextafter(knots, np.inf)]
    pts.append(0.5 * (knots[1:] + knots[:-1]))
    pts.append(0.1 * knots[1:] + 0.9 * knots[:-1])
    for side, tail in (("lower", s.lower_tail), ("upper", s.upper_tail)):
        edge = float(x[0] if side == "lower" else x[-1])
        sgn = -1.0 if side == "lower" else 1.0
        if isinstance(tail, BoundedTail):
            lim = tail.limit
            pts.append(np.array([lim, np.nextafter(lim, -np.inf), np.nextafter(lim, np.inf)]))
            pts.append(edge + (lim - edge) * np.array([0.25, 0.5, 0.75, 0.999]))
        scale = s.tail_scales[0 if side == "lower" else 1] or span
        pts.append(edge + sgn * scale * np.array([0.01, 0.5, 1.0, 5.0, 30.0, 700.0]))
    low, high = s.support
    ends = [v for v in (low, high) if math.isfinite(v)]
    pts.append(np.array([*ends, *(np.nextafter(ends, -np.inf)), *(np.nextafter(ends, np.inf))]))
    pts.append(np.array([x[0] - 2 * span, x[-1] + 2 * span, -1e300, 1e300, -np.inf, np.inf]))
    pts.append(rng.uniform(x[0] - 0.2 * span, x[-1] + 0.2 * span, 20))
    return np.unique(np.concatenate([np.asarray(a, dtype=float).ravel() for a in pts]))


def _u_points(s: Sketch, rng: np.random.Generator) -> np.ndarray:
    p = np.unique(s.p)
    if p.size > 40:
        p = p[np.linspace(0, p.size - 1, 40).round().astype(int)]
    pts = [np.array([0.0, 1.0, 0.5, 1e-300, 5e-324, 1.0 - 2.0**-53])]
    pts += [p, np.nextafter(p, 0.0), np.nextafter(p, 1.0)]
    pts.append(0.5 * (p[1:] + p[:-1]))
    for a in s.atoms:
        i = int(np.flatnonzero(s.x == a.x)[0])
        lo, hi = float(s.p[i]), float(s.p[i + 1])
        pts.append(np.array([lo, hi, 0.5 * (lo + hi), np.nextafter(hi, 0.0), np.nextafter(lo, 1)]))
    m_lo, m_hi = s.tail_mass
    pts.append(m_lo * np.array([1e-12, 0.01, 0.5, 0.999]))
    pts.append(1.0 - m_hi * np.array([1e-12, 0.01, 0.5, 0.999]))
    pts.append(rng.uniform(0.0, 1.0, 30))
    return np.unique(np.clip(np.concatenate(pts), 0.0, 1.0))


def _pieces_record(s: Sketch) -> dict[str, Any]:
    pc = s._pieces  # the piece table the JS reader rebuilds operation for operation

    def exp_tail(t: Any) -> dict[str, float] | None:
        return None if t is None else {"edge": t.edge, "mass": t.mass, "scale": t.scale}

    return {
        "xa": pc.xa.tolist(),
        "xb": pc.xb.tolist(),
        "h": pc.h.tolist(),
        "c": pc.c.tolist(),
        "e": pc.e.tolist(),
        "xm": pc.xm.tolist(),
        "pm": pc.pm.tolist(),
        "pl": pc.pl.tolist(),
        "pr": pc.pr.tolist(),
        "atom_x": pc.atom_x.tolist(),
        "atom_mass": pc.atom_mass.tolist(),
        "lower": exp_tail(pc.lower),
        "upper": exp_tail(pc.upper),
        "p_low": pc.p_low,
        "p_high": pc.p_high,
    }


def _spec(s: Sketch) -> dict[str, Any]:
    spec = s.to_spec(created=CREATED)
    # left out so that a version bump alone does not change the vectors
    spec["provenance"].pop("package_version")
    return spec


def _case(label: str, s: Sketch, rng: np.random.Generator) -> dict[str, Any]:
    spec = _spec(s)
    back = cdfsketch.load(spec)  # the vectors describe what load() reads back
    xs = _x_points(back, rng)
    us = _u_points(back, rng)
    return {
        "label": label,
        "spec": spec,
        "x": [encode(v) for v in xs],
        "cdf": [encode(v) for v in back.cdf(xs)],
        "sf": [encode(v) for v in back.sf(xs)],
        "pdf": [encode(v) for v in back.pdf(xs)],
        "u": [encode(v) for v in us],
        "ppf": [encode(v) for v in back.ppf(us)],
        "support": [encode(v) for v in back.support],
        "atoms": [[a.x, a.mass] for a in back.atoms],
        "tail_scales": list(back.tail_scales),
        "pieces": _pieces_record(back),
    }


def _bad_specs() -> list[dict[str, Any]]:
    """Specs load() rejects: (label, change, the field its message must name)."""
    base = _spec(Sketch([2, 3, 5, 9], [0.05, 0.3, 0.7, 0.9], interpolation="pchip"))
    bounded = _spec(Sketch([1, 2, 4], [0.1, 0.5, 1.0], lower_tail=BoundedTail(0.0)))

    def change(spec: dict[str, Any], path: list[Any], value: Any) -> dict[str, Any]:
        out = copy.deepcopy(spec)
        node = out
        for key in path[:-1]:
            node = node[key]
        if value is _DELETE:
            del node[path[-1]]
        else:
            node[path[-1]] = value
        return out

    stored = base["tails"]["upper"]["scale"]
    table = [
        ("unknown top-level key", base, ["colour"], "red", "'colour'"),
        ("format of another file", base, ["format"], "other-format", "format"),
        ("newer version", base, ["version"], 2, "version"),
        ("version not a number", base, ["version"], "1", "version"),
        ("missing interpolation", base, ["interpolation"], _DELETE, "'interpolation'"),
        ("unknown interpolation", base, ["interpolation"], "cubic", "interpolation"),
        ("name not a string", base, ["name"], 5, "name"),
        ("p given as a string", base, ["knots", "p", 1], "0.3", "knots.p[1]"),
        ("p as null (a NaN written by a lax writer)", base, ["knots", "p", 2], None, "knots.p[2]"),
        ("unknown key in knots", base, ["knots", "w"], [1, 1, 1, 1], "'w'"),
        ("p decreasing", base, ["knots", "p"], [0.05, 0.3, 0.2, 0.9], "p[2]"),
        ("x decreasing", base, ["knots", "x"], [2, 3, 1, 9], "x[2]"),
        ("three knots at one x", base, ["knots", "x"], [2, 3, 3, 3], "x[1]=x[2]=x[3]"),
        ("p above one", base, ["knots", "p"], [0.05, 0.3, 0.7, 1.5], "p[3]"),
        ("tail kind unknown", base, ["tails", "lower", "kind"], "normal", "tails.lower.kind"),
        ("stated scale negative", base, ["tails", "upper"],
         {"kind": "exponential", "scale": -1.0, "scale_rule": "stated"}, "tails.upper.scale"),
        ("scale rule unknown", base, ["tails", "upper", "scale_rule"], "guess",
         "tails.upper.scale_rule"),
        ("stored derived scale disagrees", base, ["tails", "upper", "scale"], stored * 1.01,
         "tails.upper.scale"),
        ("unknown key in a tail", base, ["tails", "upper", "shape"], 2, "'shape'"),
        ("bounded limit above the first knot", bounded, ["tails", "lower", "limit"], 1.5,
         "limit"),
        ("bounded density unknown", bounded, ["tails", "lower", "density"], "normal",
         "tails.lower.density"),
        ("bounded limit beyond 1e100", bounded, ["tails", "lower", "limit"], -1e300,
         "tails.lower.limit"),
        ("stated scale beyond 1e100", base, ["tails", "upper"],
         {"kind": "exponential", "scale": 1e300, "scale_rule": "stated"}, "tails.upper.scale"),
        ("unknown provenance key", base, ["provenance", "script"], "rm -rf /", "'script'"),
        ("provenance text not a string", base, ["provenance", "author"], ["a"],
         "provenance.author"),
        ("data digest not hex", base, ["provenance", "data"], {"sha256": "xyz", "n": 3},
         "provenance.data.sha256"),
        ("contributor weight negative", base, ["provenance", "contributors"],
         [{"name": "a", "weight": -1}], "provenance.contributors[0].weight"),
        ("name longer than 500 characters", base, ["name"], "n" * 501, "name"),
        ("units longer than 100 characters", base, ["units"], "u" * 101, "units"),
        ("data label not text", base, ["provenance", "data"],
         {"sha256": "0" * 64, "n": 3, "label": 7}, "provenance.data.label"),
        ("contributor summary not an object", base, ["provenance", "contributors"],
         [{"name": "a", "weight": 1, "summary": "high"}], "provenance.contributors[0].summary"),
        ("contributors null", base, ["provenance", "contributors"], None,
         "provenance.contributors"),
        ("stored derived scale negative", base, ["tails", "upper", "scale"], -1.0,
         "tails.upper.scale"),
        ("one knot", base, ["knots"], {"x": [2], "p": [0.5]}, "knots.x"),
    ]  # fmt: skip
    out = []
    for label, spec, path, value, field in table:
        bad = change(spec, path, value)
        try:
            cdfsketch.load(bad)
        except cdfsketch.SpecError as exc:
            message = str(exc)
        else:
            raise AssertionError(f"cdfsketch.load accepted the bad spec {label!r}.")
        if field not in message:
            raise AssertionError(f"The message for {label!r} does not name {field!r}: {message}")
        out.append({"label": label, "spec": bad, "field": field, "python_error": message})
    return out


_DELETE = object()


def build_vectors() -> dict[str, Any]:
    """The vectors as a JSON-ready dict (deterministic).

    Examples
    --------
    >>> v = build_vectors()
    >>> v["format"], len(v["cases"]) > 20
    ('cdfsketch-js-vectors', True)
    """
    rng = np.random.default_rng(SEED)
    cases = [_case(label, s, rng) for label, s in _cases(rng)]
    return {
        "format": "cdfsketch-js-vectors",
        "about": (
            "cdf, pdf and ppf of cdfsketch specs as the Python package evaluates them, for "
            "js/test/spec-reader.test.mjs. Generated by tests/data/make_js_vectors.py; do not "
            "edit by hand. Infinities are written as the strings 'inf' and '-inf'."
        ),
        "seed": SEED,
        "cases": cases,
        "bad_specs": _bad_specs(),
    }


def dumps(vectors: dict[str, Any]) -> str:
    """JSON text of the vectors (no NaN or Infinity), one case per line.

    Examples
    --------
    >>> print(dumps({"cases": [{"a": 1}], "b": 2}))
    {
     "cases": [
      {"a":1}
     ],
     "b": 2
    }
    """

    def compact(value: Any) -> str:
        return json.dumps(value, allow_nan=False, ensure_ascii=True, separators=(",", ":"))

    lines = []
    for key, value in vectors.items():
        if isinstance(value, list):
            items = ",\n".join(f"  {compact(item)}" for item in value)
            lines.append(f" {compact(key)}: [\n{items}\n ]")
        else:
            lines.append(f" {compact(key)}: {compact(value)}")
    return "{\n" + ",\n".join(lines) + "\n}\n"


def write_vectors(path: str | Path = DEFAULT_OUT) -> Path:
    """Build the vectors and write them to ``path``; returns the path."""
    target = Path(path)
    target.write_text(dumps(build_vectors()), encoding="utf-8")
    return target


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default=str(DEFAULT_OUT), help="where to write the JSON")
    args = parser.parse_args(argv)
    target = write_vectors(args.out)
    print(f"wrote {target} ({target.stat().st_size:,} bytes)")


if __name__ == "__main__":
    main()
