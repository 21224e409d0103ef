"""Per-block statistics: exact combination, quantile bounds, and interval coverage."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cdfsketch import Sketch
from cdfsketch._validate import InputError
from cdfsketch.outcomes import consequences
from cdfsketch.outcomes.stats import (
    block_stats,
    combine,
    histogram_quantile,
    order_ranks,
    sorted_quantile,
)

A = Sketch([1, 3, 8], [0, 0.6, 1], name="a")
B = Sketch([1, 4, 10], [0, 0.6, 1], name="b")


def test_combine_does_not_depend_on_block_order():
    rng = np.random.default_rng(1)
    y = rng.lognormal(3.0, 1.0, size=(2, 10_000)) + 1e6  # a large offset stresses rounding
    blocks = [block_stats(y[:, i : i + 997], [1e6 + 20], [0.5], 1) for i in range(0, 10_000, 997)]
    a = combine(blocks)
    b = combine(blocks[::-1])
    c = combine([blocks[i] for i in rng.permutation(len(blocks))])
    for key in ("mean", "var", "pair_mean", "pair_var", "exceed", "pair_exceed_var"):
        assert np.array_equal(a[key], b[key]) and np.array_equal(a[key], c[key])
    # and agrees with numpy's two-pass figures on the whole array (to rounding)
    assert np.allclose(a["mean"], y.mean(axis=1), rtol=0, atol=1e-9)
    assert np.allclose(a["var"], y.var(axis=1, ddof=1), rtol=1e-9)
    assert np.allclose(a["pair_var"][0, 1], np.var(y[1] - y[0], ddof=1), rtol=1e-9)


def test_histogram_quantile_is_within_one_bin_of_the_exact_order_statistic():
    y = np.random.default_rng(2).gamma(2.0, 3.0, size=50_001)
    counts, edges = np.histogram(y, bins=512)
    width = edges[1] - edges[0]
    for p in (0.01, 0.1, 0.5, 0.9, 0.999):
        exact = np.quantile(y, p, method="inverted_cdf")  # numpy's generalised inverse
        assert abs(histogram_quantile(counts, edges, p, 1.96)[0] - exact) <= width
        assert sorted_quantile(np.sort(y), p, 1.96)[0] == exact


def test_order_ranks_match_the_binomial_interval():
    # The ranks n p ∓ z sqrt(n p (1-p)) approximate the exact binomial interval
    # (scipy.stats.binom.ppf) within one rank for moderate n.
    from scipy.stats import binom

    for n, p in ((100, 0.5), (1000, 0.9), (5000, 0.05)):
        _, lo, hi = order_ranks(n, p, 1.96)
        assert abs(lo - binom.ppf(0.025, n, p)) <= 1
        assert abs(hi - (binom.ppf(0.975, n, p) + 1)) <= 1


def test_quantile_and_difference_intervals_cover_the_truth():
    # 200 independent runs: the 95 % intervals q ± 1.96 se for A's 0.9 quantile
    # and for the paired difference B - A (identity model, exact from ppf)
    # should cover the exact values about 95 % of the time (binomial sd 1.5 %).
    true_q = A.ppf(0.9)
    true_d = B.ppf(0.9) - A.ppf(0.9)
    hit_q = hit_d = 0
    reps = 200
    for s in range(reps):
        res = consequences(
            None, {"x": A}, vary="x", candidates=[A, B], size=2000, rng=s, quantiles=[0.9]
        )
        ra, rb = res.table()
        hit_q += abs(ra["q0.9"] - true_q) <= 1.96 * ra["q0.9_se"]
        hit_d += abs(rb["diff_q0.9"] - true_d) <= 1.96 * rb["diff_q0.9_se"]
    assert 0.89 <= hit_q / reps <= 0.99
    assert 0.85 <= hit_d / reps <= 0.99  # sectioning: 20 sections, a t-quantile would widen it


def test_settings_for_unknown_outputs_fail_on_the_first_block():
    calls = []

    def model(d):
        calls.append(1)
        return {"cost": d["x"]}

    with pytest.raises(InputError) as info:
        consequences(
            model, {"x": A}, vary="x", candidates=[A, B], size=200_000, tolerance={"profit": 1.0}
        )
    assert info.value.field == "tolerance"
    assert len(calls) == 2  # one window, both candidates; not the whole run


def test_output_curves_need_a_histogram_on_dask():
    res = consequences(
        None,
        {"x": A},
        vary="x",
        candidates=[A],
        size=100,
        chunks=100,
        quantiles=(),
        scheduler="synchronous",
    )
    with pytest.raises(InputError, match="quantiles"):
        res.output_curves()
    assert math.isfinite(res.table()[0]["mean"])
