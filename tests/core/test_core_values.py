"""Values immutable all the way down, the shared protocol's breakpoints, out=, the summary's
support-end warning, the derived tail's continuation rule, and the core's import layering."""

from __future__ import annotations

import ast
from pathlib import Path

import numpy as np
import pytest

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch
from cdfsketch._limits import MAX_NAME_CHARS, MAX_UNITS_CHARS
from cdfsketch.summary import summary


def test_provenance_is_frozen_all_the_way_down():
    given = {"author": "A", "extra": {"runs": [1, 2], "inner": {"k": 1}}}
    s = Sketch([0, 1], [0, 1], provenance=given)
    given["extra"]["runs"].append(3)
    given["extra"]["inner"]["k"] = 99
    assert s.provenance["extra"]["runs"] == (1, 2)
    assert s.provenance["extra"]["inner"]["k"] == 1
    with pytest.raises(TypeError, match="read-only"):
        s.provenance["extra"]["inner"]["k"] = 2
    with pytest.raises(TypeError, match="read-only"):
        s.provenance["author"] = "B"
    # a changed copy goes through replace(); the original stays
    t = s.replace(provenance={**s.provenance, "author": "B"})
    assert t.provenance["author"] == "B" and s.provenance["author"] == "A"


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"name": "A" * (MAX_NAME_CHARS + 1)}, f"name must be at most {MAX_NAME_CHARS}"),
        ({"units": "u" * (MAX_UNITS_CHARS + 1)}, f"units must be at most {MAX_UNITS_CHARS}"),
        ({"name": "\ud800"}, "unpaired surrogate"),
        ({"units": "h\udfff"}, "unpaired surrogate"),
    ],
)
def test_name_and_units_within_the_limit_table(kwargs, match):
    with pytest.raises(ValueError, match=match):
        Sketch([0, 1], [0, 1], **kwargs)
    Sketch([0, 1], [0, 1], name="A" * MAX_NAME_CHARS, units="u" * MAX_UNITS_CHARS)


def test_breakpoints_are_knots_and_bounded_limits():
    s = Sketch(
        [0, 1, 1, 3],
        [0.1, 0.2, 0.5, 0.9],
        lower_tail=BoundedTail(-2.0, density="taper"),
        upper_tail=ExponentialTail(),
    )
    assert s.breakpoints.tolist() == [-2.0, 0.0, 1.0, 3.0]
    assert not s.breakpoints.flags.writeable
    # the density may jump or kink only there: between them it is smooth (here linear: flat)
    mids = np.array([-1.0, 0.5, 2.0])
    assert np.allclose(s.pdf(mids - 1e-6), s.pdf(mids + 1e-6), rtol=1e-4)


def test_sample_out_fills_in_place_and_matches_the_allocating_call():
    s = Sketch([0, 1, 4], [0.1, 0.5, 0.9], interpolation="pchip")
    fast = s.sampler()
    buf = np.full((300, 7), np.nan)
    assert fast.sample(rng=11, out=buf) is buf
    assert np.array_equal(buf, fast.sample((300, 7), rng=11))
    buf2 = np.empty(100_000)
    s.sample(100_000, rng=3, out=buf2)
    assert np.array_equal(buf2, s.sample(100_000, rng=3))


@pytest.mark.parametrize(
    ("out", "size", "match"),
    [
        (np.empty(10, dtype=np.float32), None, "dtype float32"),
        (np.empty((10, 2))[:, 0], None, "non-contiguous"),
        (np.empty(10), 5, r"shape \(10,\) for size=\(5,\)"),
        ([0.0] * 10, None, "a list"),
    ],
)
def test_sample_out_is_checked(out, size, match):
    with pytest.raises(ValueError, match=match):
        Sketch([0, 1], [0, 1]).sampler().sample(size, rng=1, out=out)
    ro = np.empty(4)
    ro.setflags(write=False)
    with pytest.raises(ValueError, match="read-only"):
        Sketch([0, 1], [0, 1]).sample(rng=1, out=ro)


def test_summary_warns_when_the_support_stops_at_a_knot():
    # e.g. a sketch made from 500 positive draws: 3 knots, no tails
    s = Sketch([0.2, 1.3, 7.9], [0, 0.5, 1])
    w = summary(s).warnings
    assert sum("support ends at 7.9: a simulation never draws above it" in m for m in w) == 1
    assert sum("support ends at 0.2" in m and "add a lower tail" in m for m in w) == 1
    # a stated tail (here a bounded limit) is an end the user chose: no warning
    stated = Sketch([0.2, 1.3, 7.9], [0, 0.5, 1], upper_tail=BoundedTail(9.0))
    assert not any("never draws above" in m for m in summary(stated).warnings)
    # mass beyond the knot: no warning
    tailed = Sketch([0.2, 1.3, 7.9], [0, 0.5, 0.95])
    assert not any("never draws above" in m for m in summary(tailed).warnings)


@pytest.mark.parametrize("side", ["upper", "lower"])
def test_derived_tail_continues_the_density(side):
    # issue 14 §2: README's sketch had pdf(45 - 1e-6) = 5.1e-10 and pdf(45 + 1e-6) = 0.0048.
    # Rule: where the monotone cubic's end slope is zero, a derived exponential tail sets it
    # to the outer segment's secant, so the density continues (Fritsch-Carlson: the piece
    # stays monotone since both end slopes are at most three secants).
    if side == "upper":
        s = Sketch([2, 4, 20, 45], [0.1, 0.55, 0.85, 0.97], interpolation="pchip")
        edge, mass, scale = 45.0, 0.03, s.tail_scales[1]
    else:
        s = Sketch([0, 25, 41, 43], [0.03, 0.15, 0.45, 0.9], interpolation="pchip")
        edge, mass, scale = 0.0, 0.03, s.tail_scales[0]
    inside, outside = s.pdf([edge - 1e-9, edge + 1e-9])[:: 1 if side == "upper" else -1]
    assert inside > 0 and outside == pytest.approx(inside, rel=1e-6)
    assert scale == pytest.approx(mass / inside, rel=1e-6)
    u = np.linspace(0.001, 0.999, 4001)  # still monotone through the changed end slope
    assert np.all(np.diff(s.ppf(u)) > 0)


def test_derived_tail_jumps_only_where_the_outer_segment_is_flat():
    # no density to continue: the tail keeps its mass with the average density's scale
    s = Sketch([0, 1, 2, 3], [0, 0.5, 0.9, 0.9], interpolation="pchip")
    assert s.pdf(3 - 1e-9) == 0.0 and s.pdf(3 + 1e-9) > 0
    assert s.tail_scales[1] == pytest.approx(0.1 / (0.9 / 3))


def test_stated_scale_is_kept_and_pchip_ends_match_scipy():
    s = Sketch(
        [2, 4, 20, 45],
        [0.1, 0.55, 0.85, 0.97],
        interpolation="pchip",
        upper_tail=ExponentialTail(5.0),
    )
    assert s.tail_scales[1] == 5.0 and s.pdf(45 - 1e-9) < 1e-6


CORE = Path(cdfsketch.__file__).parent
BELOW_SKETCH = [
    "knots",
    "tails",
    "_pieces",
    "_inverse",
    "_distribution",
    "_tables",
    "sampler",
    "summary",
    "scipy_adapter",
]


@pytest.mark.parametrize("name", BELOW_SKETCH)
def test_core_modules_never_import_sketch_or_spec_at_run_time(name):
    # imports only point down: these modules sit below sketch (counting imports inside
    # functions; TYPE_CHECKING blocks are not run)
    tree = ast.parse((CORE / f"{name}.py").read_text())
    checking = {
        id(n)
        for node in ast.walk(tree)
        if isinstance(node, ast.If) and ast.unparse(node.test) == "TYPE_CHECKING"
        for n in ast.walk(node)
    }
    found = []
    for node in ast.walk(tree):
        if id(node) in checking:
            continue
        if isinstance(node, ast.ImportFrom):
            mod = node.module or ""
            names = [a.name for a in node.names]
            if mod in ("sketch", "spec", "elicit", "autoknots") or (
                mod == "" and set(names) & {"sketch", "spec", "elicit", "autoknots"}
            ):
                found.append(ast.unparse(node))
    assert found == [], found


def test_sketch_imports_spec_only_inside_functions():
    tree = ast.parse((CORE / "sketch.py").read_text())
    top = [ast.unparse(n) for n in tree.body if isinstance(n, ast.ImportFrom)]
    assert not any("spec" in t or "elicit" in t or "autoknots" in t for t in top), top
    assert not hasattr(Sketch, "from_quantiles") and not hasattr(Sketch, "from_data")


def test_frozen_provenance_still_writes_and_loads():
    prov = {"contributors": [{"name": "a", "weight": 1.0}], "extra": {"k": [1, 2]}}
    s = Sketch([0, 1], [0, 1], provenance=prov)
    back = cdfsketch.load(s.to_json())
    assert back.provenance["contributors"][0]["name"] == "a"
    assert list(back.provenance["extra"]["k"]) == [1, 2]
