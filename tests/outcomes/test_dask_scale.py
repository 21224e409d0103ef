"""Dask: draws and consequence runs bit-identical across schedulers, workers and chunks.

The distributed checks run on a LocalCluster of two worker processes bound to
127.0.0.1, started and closed by the fixture.
"""

from __future__ import annotations

import sys

import dask.array  # noqa: F401  (the dask extra is a test dependency: required)
import numpy as np
import pytest

from cdfsketch import ExponentialTail, Sketch
from cdfsketch._extras import MissingExtraError
from cdfsketch._streams import root_seed
from cdfsketch.inputs import InputSet
from cdfsketch.outcomes import ModelError, consequences
from cdfsketch.scale import WINDOW, inputset_to_dask, sketch_to_dask, window_uniforms

HOURS = Sketch([1, 2, 4, 9], [0, 0.35, 0.8, 0.97], upper_tail=ExponentialTail(scale=3.0))
HOURS_ALT = Sketch([1, 3, 5, 10], [0, 0.3, 0.75, 0.97], upper_tail=ExponentialTail(scale=4.0))
RATE = Sketch([40, 55, 70], [0, 0.5, 1], interpolation="pchip")
PARTS = Sketch([100, 300, 900], [0, 0.6, 1])
INS = InputSet({"hours": HOURS, "rate": RATE, "parts": PARTS}, rank_corr={("hours", "parts"): 0.5})
SIZE = 3 * WINDOW + 1234  # four windows, the last one short


def budget(d):
    return {"cost": d["hours"] * d["rate"] + d["parts"], "hours": d["hours"] + 0.0}


def nan_above_12(d):
    out = np.array(d["hours"])
    out[out > 12] = np.nan
    return out


KW = {
    "vary": "hours",
    "candidates": [HOURS, HOURS_ALT],
    "size": SIZE,
    "rng": 2026,
    "thresholds": {"cost": [900.0]},
    "tolerance": {"cost": 5.0, "hours": 0.1},
    "quantiles": (0.5, 0.9),
}
EXACT = ("mean", "mean_se", "sd", "diff_mean", "diff_mean_se", "crn_gain", "diff_q0.9_se")


@pytest.fixture(scope="module")
def client():
    import cloudpickle
    import dask.distributed as distributed

    cloudpickle.register_pickle_by_value(sys.modules[__name__])  # workers cannot import tests
    with (
        distributed.LocalCluster(
            n_workers=2,
            threads_per_worker=1,
            host="127.0.0.1",
            processes=True,
            dashboard_address=None,
        ) as cluster,
        distributed.Client(cluster) as c,
    ):
        yield c
    cloudpickle.unregister_pickle_by_value(sys.modules[__name__])


def exact_columns(res):
    return [
        {k: r.get(k) for k in (*EXACT, "p_above_900", "diff_p_above_900_se")} for r in res.table()
    ]


# ---------------------------------------------------------------- sampling


@pytest.mark.parametrize("chunks", [WINDOW, 1000, 100_000, (SIZE - 5, 5)])
def test_sketch_to_dask_equals_the_input_set_sample_for_any_chunks(chunks):
    got = HOURS.to_dask(SIZE, chunks=chunks, rng=9).compute(scheduler="synchronous")
    want = InputSet({"x": HOURS}).sample(SIZE, rng=9)["x"]
    assert np.array_equal(got, want)


def test_the_function_forms_are_the_methods():
    a = sketch_to_dask(HOURS, 1000, chunks=300, rng=9, name="hours")
    b = HOURS.to_dask(1000, chunks=300, rng=9, name="hours")
    assert np.array_equal(a.compute(scheduler="synchronous"), b.compute(scheduler="synchronous"))
    arrs = inputset_to_dask(dict(INS.sketches), 1000, chunks=300, rng=9)
    want = InputSet(dict(INS.sketches)).sample(1000, rng=9)
    for name in INS.names:
        assert np.array_equal(arrs[name].compute(scheduler="synchronous"), want[name])


def test_streams_are_keyed_by_the_input_name():
    a = HOURS.to_dask(500, chunks=500, rng=9, name="a").compute(scheduler="synchronous")
    b = HOURS.to_dask(500, chunks=500, rng=9, name="b").compute(scheduler="synchronous")
    assert not np.array_equal(a, b)
    assert np.array_equal(a, InputSet({"a": HOURS, "b": RATE}).sample(500, rng=9)["a"])


@pytest.mark.parametrize(
    ("call", "match"),
    [
        ({"size": 0, "chunks": 5}, "size must be"),
        ({"size": 10, "chunks": 0}, "chunks must be"),
        ({"size": 10, "chunks": (4, 4)}, "chunks must add up to size"),
        ({"size": 10, "chunks": 5, "name": ""}, "name"),
    ],
)
def test_bad_dask_arguments_say_what_must_hold(call, match):
    with pytest.raises(ValueError, match=match):
        HOURS.to_dask(**call)


@pytest.mark.parametrize(
    ("design", "dependence", "size"),
    [
        ("random", "iman-conover", SIZE),
        ("lhs", "gaussian-copula", SIZE),
        ("sobol", "iman-conover", 1 << 17),
    ],
)
def test_inputset_to_dask_equals_sample_with_designs_and_dependence(design, dependence, size):
    arrs = INS.to_dask(size, chunks=50_000, rng=4, design=design, dependence=dependence)
    want = INS.sample(size, rng=4, design=design, dependence=dependence)
    for name in INS.names:
        assert np.array_equal(arrs[name].compute(scheduler="synchronous"), want[name])


def test_window_uniforms_are_the_slices_of_one_uniforms_call():
    u = INS.uniforms(SIZE, rng=5)
    root = root_seed(5)
    for k in range(4):
        lo, hi = k * WINDOW, min((k + 1) * WINDOW, SIZE)
        w = window_uniforms(INS, root, k, hi - lo)
        for name in INS.names:
            assert np.array_equal(w[name], u[name][lo:hi])


def test_missing_dask_is_a_clear_error(monkeypatch):
    monkeypatch.setitem(sys.modules, "dask", None)
    monkeypatch.setitem(sys.modules, "dask.array", None)
    with pytest.raises(MissingExtraError, match=r"pip install 'cdfsketch\[dask\]'"):
        HOURS.to_dask(10, chunks=5)
    with pytest.raises(MissingExtraError, match="dask"):
        INS.to_dask(10, chunks=5)
    with pytest.raises(MissingExtraError, match="dask"):
        consequences(None, INS, vary="hours", candidates=[HOURS], size=100, chunks=WINDOW)


# ---------------------------------------------------------------- consequence runs


def test_consequences_on_dask_equal_in_memory_and_across_chunks():
    memory = consequences(budget, INS, **KW)
    one = consequences(budget, INS, chunks=WINDOW, scheduler="synchronous", **KW)
    two = consequences(budget, INS, chunks=2 * WINDOW, scheduler="synchronous", **KW)
    whole = consequences(budget, INS, chunks=SIZE, scheduler="threads", **KW)
    assert exact_columns(memory) == exact_columns(one) == exact_columns(two) == exact_columns(whole)
    assert one.table() == two.table() == whole.table()
    # Dask quantiles come from a histogram: within the stated bound of the exact ones
    for m, d in zip(memory.table(), one.table(), strict=True):
        assert d["quantile_error_bound"] > 0
        for q in ("q0.5", "q0.9"):
            assert abs(m[q] - d[q]) <= d["quantile_error_bound"]


def test_distributed_cluster_gives_the_same_bits(client):
    sync = consequences(budget, INS, chunks=WINDOW, scheduler="synchronous", **KW)
    dist = consequences(budget, INS, chunks=WINDOW, **KW)  # the fixture's client is active
    assert dist.method["engine"] == "dask"
    assert dist.table() == sync.table()
    got = HOURS.to_dask(SIZE, chunks=70_000, rng=3).compute()
    assert np.array_equal(got, InputSet({"x": HOURS}).sample(SIZE, rng=3)["x"])
    arrs = INS.to_dask(SIZE, chunks=WINDOW, rng=3)
    assert np.array_equal(arrs["parts"].compute(), INS.sample(SIZE, rng=3)["parts"])


def test_bad_draws_are_counted_over_all_blocks_on_dask():
    u = INS.uniforms(SIZE, rng=2026)["hours"]
    bad = int(np.sum(HOURS.sampler().ppf(u) > 12))  # the first candidate's bad draws
    assert bad > 0
    assert int(np.sum(HOURS.sampler().ppf(u[:WINDOW]) > 12)) < bad
    kw = {**KW, "thresholds": None, "tolerance": None}
    with pytest.raises(ModelError, match=f"{bad} of {SIZE} draws NaN or infinite") as info:
        consequences(nan_above_12, INS, chunks=WINDOW, scheduler="synchronous", **kw)
    assert "candidate 'candidate 1'" in str(info.value)
