"""Large-data paths (sums in blocks, no index arrays of the data's size) against scipy.

Each check shrinks the block sizes so that a few thousand points take the
many-block path a 10^7-point sample takes, and compares with the one-block
result and with scipy's own functions on the whole array.
"""

from __future__ import annotations

import importlib

import numpy as np
import pytest
import scipy.stats as st

from cdfsketch import Sketch
from cdfsketch.fit import _blockwise as blockwise
from cdfsketch.fit import engines, fit_family, fit_kde, fit_normal_mixture
from cdfsketch.metrics import anderson_darling, compare, cramer_von_mises, ks_distance
from cdfsketch.metrics.sample import EvenLevels, SortedSample

cmp = importlib.import_module("cdfsketch.metrics.compare")
scores = importlib.import_module("cdfsketch.metrics.scores")
sample = importlib.import_module("cdfsketch.metrics.sample")


@pytest.fixture
def small_blocks(monkeypatch):
    """Blocks of a few hundred points everywhere data are summed or scanned."""
    for mod, name, size in (
        (blockwise, "BLOCK", 257),
        (engines, "SUM_BLOCK", 300),
        (cmp, "_BLOCK", 211),
        (scores, "_BLOCK", 199),
        (sample, "_BLOCK", 223),
    ):
        monkeypatch.setattr(mod, name, size)


@pytest.fixture(scope="module")
def lognormal() -> np.ndarray:
    return np.random.default_rng(11).lognormal(1.0, 0.6, 6000)  # invented, seeded


def test_gumbel_in_blocks_matches_scipy(lognormal, small_blocks):
    x = np.random.default_rng(12).gumbel(3.0, 2.0, 5000)  # invented, seeded
    # reference: scipy.stats.gumbel_r.fit on the whole array (same equations, one sum)
    assert np.allclose(blockwise.gumbel_ml(x), st.gumbel_r.fit(x), rtol=1e-12, atol=0)
    # Weibull through -log X ~ gumbel_r; reference: scipy.stats.gumbel_r.fit of -log X
    w = fit_family("weibull", lognormal)
    gl, gs = st.gumbel_r.fit(-np.log(lognormal))
    assert w.params["c"] == pytest.approx(1.0 / gs, rel=1e-9)  # params keep 10 digits
    assert w.params["scale"] == pytest.approx(np.exp(-gl), rel=1e-9)
    # the log-likelihood summed in blocks: scipy.stats.weibull_min.logpdf summed at once
    ref = np.sum(st.weibull_min.logpdf(lognormal, 1.0 / gs, 0.0, np.exp(-gl)))
    assert w.loglik == pytest.approx(float(ref), rel=1e-12)


def test_every_family_in_blocks_matches_one_block(lognormal, monkeypatch):
    whole = {f: fit_family(f, lognormal) for f in ("normal", "gumbel", "weibull", "triangular")}
    for mod, name in ((blockwise, "BLOCK"), (engines, "SUM_BLOCK")):
        monkeypatch.setattr(mod, name, 500)
    for f, one in whole.items():
        many = fit_family(f, lognormal)
        assert many.loglik == pytest.approx(one.loglik, rel=1e-13), f
        for key, value in one.params.items():
            assert many.params[key] == pytest.approx(value, rel=1e-9), (f, key)


@pytest.mark.parametrize("block", [7, 64, 1 << 18])
def test_triangular_profile_in_blocks_matches_scipy(block, monkeypatch):
    monkeypatch.setattr(blockwise, "BLOCK", block)
    gen = np.random.default_rng(13)  # invented, seeded; rounded so that values tie
    x = np.sort(np.round(gen.triangular(1.0, 3.0, 8.0, 400), 1))
    a, b = 0.5, 8.5
    c, ll = blockwise.triangular_profile(x, a, b)
    # reference: scipy.stats.triang.logpdf summed at the returned mode ...
    ref = np.sum(st.triang.logpdf(x, (c - a) / (b - a), a, b - a))
    assert ll == pytest.approx(float(ref), rel=1e-12)
    # ... and no observation or end does better (the MLE mode is one of them)
    modes = np.r_[a, np.unique(x), b]
    best = max(np.sum(st.triang.logpdf(x, (m - a) / (b - a), a, b - a)) for m in modes)
    assert ll >= best - 1e-9 * abs(best)


def test_linear_bins_in_blocks_match_the_whole_array_rule(monkeypatch):
    z = np.random.default_rng(14).standard_normal(3000)  # invented, seeded
    lo = float(z.min())
    g1, m1 = blockwise.linear_bins(z, lo, 0.01)  # one block, grid in one array
    monkeypatch.setattr(blockwise, "BLOCK", 128)
    g2, m2 = blockwise.linear_bins(z, lo, 0.01)
    assert np.array_equal(g1, g2) and np.allclose(m1, m2, rtol=1e-14)
    far = np.r_[z, 1e6]  # a far outlier: the grid is too wide, numpy.unique does it
    g3, m3 = blockwise.linear_bins(far, lo, 0.01)
    assert g3.size < 5000 and m3.sum() == pytest.approx(far.size, rel=1e-14)
    # linear binning keeps every point's mass and mean (Wand 1994)
    assert m2.sum() == pytest.approx(z.size, rel=1e-13)
    assert np.dot(g2, m2) == pytest.approx(np.sum(z), abs=1e-9)


def test_kde_and_mixture_in_blocks_match_one_block(lognormal, monkeypatch):
    kde_one = fit_kde(lognormal)
    mix_one = fit_normal_mixture(lognormal, 2, rng=0)
    for mod, name in ((blockwise, "BLOCK"), (engines, "SUM_BLOCK")):
        monkeypatch.setattr(mod, name, 700)
    kde_many = fit_kde(lognormal)
    mix_many = fit_normal_mixture(lognormal, 2, rng=0)
    assert kde_many.loglik == pytest.approx(kde_one.loglik, rel=1e-13)
    grid = np.quantile(lognormal, [0.01, 0.5, 0.99])
    assert np.allclose(kde_many.cdf(grid), kde_one.cdf(grid), rtol=1e-13)
    assert mix_many.loglik == pytest.approx(mix_one.loglik, rel=1e-12)
    for key in ("weights", "means", "sds"):
        assert np.allclose(mix_many.params[key], mix_one.params[key], rtol=1e-9), key


def test_scores_in_blocks_match_scipy(small_blocks):
    x = np.random.default_rng(15).normal(0.2, 1.1, 3000)  # invented, seeded
    dist = st.norm(0.0, 1.0)
    # references: scipy.stats.ks_1samp and scipy.stats.cramervonmises on the whole array
    assert ks_distance(x, dist) == pytest.approx(st.ks_1samp(x, dist.cdf).statistic, abs=1e-15)
    assert cramer_von_mises(x, dist) == pytest.approx(
        st.cramervonmises(x, dist.cdf).statistic, rel=1e-12
    )
    # Anderson–Darling: the published formula (Stephens 1974) on the whole sorted array
    u = np.sort(dist.cdf(x))
    i = np.arange(1, x.size + 1)
    a2 = -x.size - np.sum((2 * i - 1) * (np.log(u) + np.log1p(-u[::-1]))) / x.size
    assert anderson_darling(x, dist) == pytest.approx(float(a2), rel=1e-10)


def test_compare_in_blocks_matches_one_block(monkeypatch):
    x = np.random.default_rng(16).lognormal(1.0, 0.6, 4000)  # invented, seeded
    models = [
        Sketch([0, 2, 5, 60], [0, 0.3, 0.8, 1], name="sketch"),
        st.lognorm(0.6, scale=np.e),
        fit_family("gumbel", x),
        fit_normal_mixture(x, 2, rng=0),
    ]
    one = compare(x, models, rng=3)
    for mod, name, size in (
        (blockwise, "BLOCK", 257),
        (engines, "SUM_BLOCK", 300),
        (cmp, "_BLOCK", 211),
        (scores, "_BLOCK", 199),
        (sample, "_BLOCK", 223),
    ):
        monkeypatch.setattr(mod, name, size)
    many = compare(x, models, rng=3)
    for r1, r2 in zip(one.rows, many.rows, strict=True):
        for key, v1 in r1.items():
            if isinstance(v1, float):
                assert r2[key] == pytest.approx(v1, rel=1e-9, abs=1e-15), (r1["name"], key)
            else:
                assert r2[key] == v1, (r1["name"], key)


def test_even_levels_are_the_ecdf_levels():
    # reference: the ECDF of n distinct values steps by 1/n (definition)
    s = SortedSample(np.array([0.3, 0.1, 0.2, 0.7, 0.5]))
    assert isinstance(s.levels, EvenLevels)
    assert np.asarray(s.levels).tolist() == (np.arange(1, 6) / 5).tolist()
    assert s.levels[2:4].tolist() == [0.6, 0.8] and s.levels[np.array([4])].tolist() == [1.0]
