"""InputSet: construction, streams rule, blocks, designs, uniforms ↔ sample."""

from __future__ import annotations

import contextlib
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from cdfsketch import Sketch
from cdfsketch._validate import InputError
from cdfsketch.inputs import WINDOW, Draws, InputSet

HOURS = Sketch([1, 3, 9], [0, 0.6, 1], name="repair time", units="h")
COST = Sketch([100, 250, 900], [0, 0.5, 1], interpolation="pchip", name="part cost")
DELAY = Sketch([0, 2, 5], [0.1, 0.5, 0.9], name="delay")  # tails past 0.1 and 0.9


def make(**kw):
    return InputSet({"hours": HOURS, "cost": COST, "delay": DELAY}, **kw)


# ---------------------------------------------------------------- the value


def test_names_sketches_read_only():
    ins = make(rank_corr={("cost", "hours"): 0.5})
    assert ins.names == ("hours", "cost", "delay")
    assert ins.rank_corr == {("cost", "hours"): 0.5}
    assert ins.dependent == ("cost", "hours")
    with pytest.raises(TypeError):
        ins.sketches["x"] = HOURS
    with pytest.raises(AttributeError):
        ins.name = "x"
    with pytest.raises(TypeError):
        ins.provenance["a"] = 1


def test_provenance_frozen_deep_and_copied():
    prov = {"author": "A", "extra": {"runs": [1, 2]}}
    ins = make(provenance=prov)
    prov["extra"]["runs"].append(3)
    assert ins.provenance["extra"]["runs"] == (1, 2)
    with pytest.raises(TypeError):
        ins.provenance["extra"]["k"] = 1


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"sketches": {}}, "sketches"),
        ({"sketches": {"": HOURS}}, "input name"),
        ({"sketches": {"a": 3.0}}, "sketches"),
        ({"sketches": {"a": HOURS}, "name": 5}, "name"),
        ({"sketches": {"a": HOURS}, "provenance": {"x": object()}}, "provenance"),
        ({"sketches": {"a": HOURS}, "provenance": {"x": float("nan")}}, "provenance"),
        ({"sketches": {"a": HOURS, "b": COST}, "rank_corr": {("a", "c"): 0.5}}, "rank_corr"),
        ({"sketches": {"a": HOURS, "b": COST}, "rank_corr": {("a", "a"): 0.5}}, "rank_corr"),
        ({"sketches": {"a": HOURS, "b": COST}, "rank_corr": {("a", "b"): 1.5}}, "rank_corr"),
        ({"sketches": {"a": HOURS, "b": COST}, "rank_corr": {("a", "b"): True}}, "rank_corr"),
        (
            {"sketches": {"a": HOURS, "b": COST}, "rank_corr": {("a", "b"): 0.5, ("b", "a"): 0.4}},
            "rank_corr",
        ),
        ({"sketches": {"a": HOURS, "b": COST}, "rank_corr": [("a", "b", 0.5)]}, "rank_corr"),
    ],
)
def test_bad_arguments_name_the_field(kwargs, field):
    sketches = kwargs.pop("sketches")
    with pytest.raises(InputError) as info:
        InputSet(sketches, **kwargs)
    assert info.value.field.startswith(field)
    assert len(str(info.value)) < 600


def test_not_psd_target_shows_nearest():
    bad = {("a", "b"): 0.9, ("a", "c"): 0.9, ("b", "c"): -0.9}
    with pytest.raises(InputError) as info:
        InputSet({"a": HOURS, "b": COST, "c": DELAY}, rank_corr=bad)
    msg = str(info.value)
    assert "positive semi-definite" in msg and "Higham" in msg
    near = info.value.nearest
    InputSet({"a": HOURS, "b": COST, "c": DELAY}, rank_corr=near)  # accepted


def test_changed_copies():
    ins = make(rank_corr={("cost", "hours"): 0.5})
    other = ins.with_sketch("hours", DELAY)
    assert other.sketches["hours"] is DELAY and ins.sketches["hours"] is HOURS
    assert ins.replace("hours", DELAY) == other
    assert ins.without("hours").names == ("cost", "delay")
    assert ins.without("hours").rank_corr == {}
    assert ins.replace(name="m").name == "m"


# ---------------------------------------------------------------- streams


@pytest.mark.parametrize("design", ["random", "lhs"])
def test_streams_rule_add_remove_reorder(design):
    full = make(rank_corr={("cost", "hours"): 0.5})
    base = full.sample(1000, rng=11, design=design)
    reordered = InputSet(
        {"delay": DELAY, "cost": COST, "hours": HOURS}, rank_corr={("hours", "cost"): 0.5}
    ).sample(1000, rng=11, design=design)
    for name in full.names:
        np.testing.assert_array_equal(base[name], reordered[name])
    removed = full.without("delay").sample(1000, rng=11, design=design)
    added = full.with_sketch("extra", HOURS).sample(1000, rng=11, design=design)
    for name in ("hours", "cost"):
        np.testing.assert_array_equal(base[name], removed[name])
        np.testing.assert_array_equal(base[name], added[name])
    alone = InputSet({"delay": DELAY}).sample(1000, rng=11, design=design)
    np.testing.assert_array_equal(base["delay"], alone["delay"])


def test_sobol_reorder_free():
    a = make().sample(256, rng=3, design="sobol")
    b = InputSet({"delay": DELAY, "hours": HOURS, "cost": COST}).sample(256, rng=3, design="sobol")
    for name in a:
        np.testing.assert_array_equal(a[name], b[name])


@pytest.mark.parametrize(
    ("design", "dependence"),
    [
        ("random", "iman-conover"),
        ("lhs", "iman-conover"),
        ("sobol", "gaussian-copula"),
        ("random", "independent"),
    ],
)
def test_blocks_bit_identical_to_one_call(design, dependence):
    ins = make(rank_corr={("cost", "hours"): -0.4})
    n = WINDOW + 1000 if design != "sobol" else 2 * WINDOW
    whole = ins.sample(n, rng=5, design=design, dependence=dependence)
    for block in (999, WINDOW, 3 * WINDOW):
        parts = list(ins.blocks(n, block=block, rng=5, design=design, dependence=dependence))
        assert all(isinstance(p, Draws) for p in parts)
        assert [p.size for p in parts[:-1]] == [block] * (len(parts) - 1)
        for name in ins.names:
            np.testing.assert_array_equal(np.concatenate([p[name] for p in parts]), whole[name])


@pytest.mark.parametrize("design", ["random", "lhs", "sobol"])
@pytest.mark.parametrize("dependence", ["iman-conover", "gaussian-copula"])
def test_uniforms_through_ppf_equal_sample_exactly(design, dependence):
    ins = make(rank_corr={("cost", "hours"): 0.7, ("delay", "hours"): 0.2})
    u = ins.uniforms(4096, rng=9, design=design, dependence=dependence)
    x = ins.sample(4096, rng=9, design=design, dependence=dependence)
    for name in ins.names:
        assert u[name].min() > 0 and u[name].max() < 1
        np.testing.assert_array_equal(x[name], ins.sketches[name].sampler().ppf(u[name]))


def test_same_seed_same_draws_and_generator_advances():
    ins = make()
    a, b = ins.sample(50, rng=1), ins.sample(50, rng=1)
    np.testing.assert_array_equal(a["cost"], b["cost"])
    gen = np.random.default_rng(1)
    c, d = ins.sample(50, rng=gen), ins.sample(50, rng=gen)
    assert not np.array_equal(c["cost"], d["cost"])


def test_size_zero_and_bad_sizes():
    assert make().sample(0, rng=1).size == 0
    for bad in (-1, 1.5, True, "10"):
        with pytest.raises(InputError) as info:
            make().sample(bad)
        assert info.value.field == "size"
    with pytest.raises(InputError):
        list(make().blocks(10, block=0))
    with pytest.raises(InputError) as info:
        make().sample(10, design="halton")
    assert info.value.field == "design"


def test_sobol_warns_unless_power_of_two():
    with pytest.warns(UserWarning, match="power of two"):
        make().sample(1000, rng=1, design="sobol")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        make().sample(1024, rng=1, design="sobol")


def test_draws_mapping_and_pandas():
    d = make().sample(10, rng=2)
    with pytest.raises(TypeError):
        d["hours"] = 1
    frame = d.to_pandas()
    assert list(frame.columns) == ["hours", "cost", "delay"]
    np.testing.assert_array_equal(frame["cost"].to_numpy(), d["cost"])
    assert d.to_numpy().shape == (10, 3)


def test_pinned_draws():
    # numpy's "desired" habit: a change in the streams is seen here
    d = make(rank_corr={("cost", "hours"): 0.5}).sample(5, rng=2026)
    got = {k: v.round(6).tolist() for k, v in d.items()}
    assert got == PINNED, got


PINNED = {
    "hours": [1.904093, 8.802098, 5.036543, 2.509276, 2.603749],
    "cost": [285.669479, 466.879912, 198.769805, 301.94361, 353.487221],
    "delay": [4.997468, 0.974331, 2.73777, -1.026357, 6.229366],
}


def test_import_and_independent_random_draws_stay_numpy_only():
    import subprocess
    import sys
    from pathlib import Path

    code = (
        "import sys, cdfsketch.inputs, cdfsketch.cli\n"
        "from cdfsketch import Sketch\n"
        "from cdfsketch.inputs import InputSet\n"
        "s = Sketch([0, 1], [0, 1])\n"
        "InputSet({'a': s, 'b': s}).sample(100, rng=1)\n"
        "heavy = ('scipy', 'pandas', 'jsonschema', 'pyarrow', 'tqdm', 'ipywidgets', 'matplotlib')\n"
        "print([m for m in heavy if m in sys.modules])\n"
    )
    root = Path(__file__).parents[2]
    res = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        check=True,
        env={"PYTHONPATH": str(root), "PATH": ""},
    )
    assert res.stdout.strip() == "[]"


@contextlib.contextmanager
def small_window():
    # a window of 700 points, so that many window edges fall inside a short run
    from cdfsketch.inputs import designs, windows

    old = windows.WINDOW
    windows.WINDOW = designs.WINDOW = 700
    try:
        yield
    finally:
        windows.WINDOW = designs.WINDOW = old


@settings(max_examples=25, deadline=None)
@given(
    n=st.integers(0, 3 * 700 + 5),
    block=st.integers(1, 900),
    design=st.sampled_from(["random", "lhs"]),
)
def test_blocks_equal_one_call_for_any_cut(n, block, design):
    ins = make(rank_corr={("cost", "hours"): 0.5})
    with small_window():
        whole = ins.sample(n, rng=1, design=design)
        parts = list(ins.blocks(n, block=block, rng=1, design=design))
    assert sum(p.size for p in parts) == n
    for name in ins.names:
        got = np.concatenate([p[name] for p in parts]) if parts else np.empty(0)
        np.testing.assert_array_equal(got, whole[name])


def test_pickles_for_workers():
    import pickle

    assert pickle.loads(pickle.dumps(HOURS)) == HOURS  # the sketches pickle first
    ins = make(rank_corr={("cost", "hours"): 0.5}, name="m", provenance={"a": [1]})
    again = pickle.loads(pickle.dumps(ins))
    assert again == ins
    np.testing.assert_array_equal(again.sample(10, rng=1)["cost"], ins.sample(10, rng=1)["cost"])


def test_the_sobol_balance_warning_points_at_the_callers_line():
    ins = make()
    calls = {
        "sample": lambda: ins.sample(3, rng=1, design="sobol"),
        "uniforms": lambda: ins.uniforms(3, rng=1, design="sobol"),
        "blocks": lambda: ins.blocks(3, block=2, rng=1, design="sobol"),
        "to_dask": lambda: ins.to_dask(3, chunks=2, rng=1, design="sobol"),
    }
    for what, call in calls.items():
        with pytest.warns(UserWarning, match="power of two") as rec:
            call()
        assert rec[0].filename == __file__, (what, rec[0].filename)


def test_an_input_set_reaches_a_worker_once_and_whole():
    import pickle

    from cdfsketch._blocks import from_portable, to_portable

    many = InputSet(
        {f"x{i}": Sketch([0, 1 + i, 10 + i], [0, 0.5, 1], name=f"x{i}") for i in range(40)},
        provenance={"author": "A. Analyst (invented)"},
    )
    packed = pickle.loads(pickle.dumps(to_portable(many)))  # as a task carries it
    first = from_portable(packed)
    assert first == many and first.provenance["author"] == "A. Analyst (invented)"
    again = from_portable(pickle.loads(pickle.dumps(to_portable(many))))
    assert again is first  # one cached value per worker: its samplers compiled once
