"""ECDF, Kaplan–Meier, DKW band, data intake and step outline (cdfsketch.empirical)."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.stats as st
import statsmodels.datasets as sm_datasets
from hypothesis import given, settings
from hypothesis import strategies as hs

from cdfsketch._validate import InputError
from cdfsketch.empirical import (
    ECDF,
    DataError,
    DroppedValuesWarning,
    as_aligned_data,
    as_data,
    dkw_eps,
)


def _grid(values: np.ndarray) -> np.ndarray:
    """Every value, points between and beyond them."""
    u = np.unique(values)
    mids = 0.5 * (u[1:] + u[:-1])
    return np.r_[u[0] - 1, u, mids, u[-1] + 1]


# ------------------------------------------------------------ against scipy.stats.ecdf


def test_ecdf_matches_scipy_ecdf_with_ties():
    rng = np.random.default_rng(11)
    data = rng.integers(0, 20, 300).astype(float)  # many ties
    e = ECDF(data)
    ref = st.ecdf(data).cdf  # source: scipy.stats.ecdf (Kaplan–Meier without censoring)
    g = _grid(data)
    np.testing.assert_allclose(e.cdf(g), ref.evaluate(g), rtol=0, atol=1e-15)
    np.testing.assert_array_equal(e.x, ref.quantiles)
    np.testing.assert_allclose(e.p, ref.probabilities, atol=1e-15)


def test_kaplan_meier_matches_scipy_censored_data():
    rng = np.random.default_rng(5)
    t = np.round(rng.exponential(10, 200), 1)  # rounding makes ties of events and censorings
    c = rng.random(200) < 0.3
    e = ECDF(t, censored=c)
    # source: scipy.stats.ecdf with scipy.stats.CensoredData.right_censored (Kaplan–Meier;
    # scipy's confidence_interval is pointwise Greenwood, not simultaneous, and is not used)
    ref = st.ecdf(st.CensoredData.right_censored(t, c)).cdf
    g = _grid(t)
    np.testing.assert_allclose(e.cdf(g), ref.evaluate(g), rtol=0, atol=1e-12)


def _heart():
    h = sm_datasets.heart.load_pandas().data
    # statsmodels heart: 'censors' is 1 for an observed death, 0 for censored
    return h["survival"].to_numpy(), h["censors"].to_numpy() == 0


def test_kaplan_meier_heart_vs_scipy_and_statsmodels():
    import statsmodels.api as sm

    t, c = _heart()
    assert t.size == 69  # source: statsmodels heart dataset, 69 survival times
    e = ECDF(t, censored=c)
    assert e.n == 69 and e.censoring
    g = _grid(t)
    ref = st.ecdf(st.CensoredData.right_censored(t, c)).cdf  # source: scipy.stats.ecdf
    np.testing.assert_allclose(e.cdf(g), ref.evaluate(g), atol=1e-12)
    sf = sm.SurvfuncRight(t, (~c).astype(int))  # source: statsmodels SurvfuncRight
    np.testing.assert_allclose(1 - e.cdf(sf.surv_times), sf.surv_prob, atol=1e-12)
    np.testing.assert_array_equal(e.x, sf.surv_times)


def test_weighted_kaplan_meier_equals_repeated_rows():
    t, c = _heart()
    w = np.arange(69) % 3 + 1
    e = ECDF(t, censored=c, weights=w)
    r = ECDF(np.repeat(t, w), censored=np.repeat(c, w))  # identity: integer weights = copies
    g = _grid(t)
    np.testing.assert_allclose(e.cdf(g), r.cdf(g), atol=1e-12)


# ------------------------------------------------------------ open datasets


def test_nile_summaries():
    v = sm_datasets.nile.load_pandas().data["volume"]
    e = ECDF(v)  # a pandas Series goes in as it is
    # source: statsmodels nile dataset (n=100, min 456, max 1370, median 893.5, mean 919.35)
    assert e.n == 100
    assert e.support == (456.0, 1370.0)
    lower_half, upper_half = e.ppf(0.5), e.ppf(np.nextafter(0.5, 1))
    assert (lower_half + upper_half) / 2 == pytest.approx(893.5)
    mean = float(np.sum(e.x * np.diff(np.r_[0.0, e.p])))
    assert mean == pytest.approx(919.35, abs=1e-9)


def test_strikes_summaries_and_band():
    d = sm_datasets.strikes.load_pandas().data["duration"]
    e = ECDF(d)
    # source: statsmodels strikes dataset (n=62, min 1, max 216, median 27)
    assert e.n == 62 and e.support == (1.0, 216.0)
    assert (e.ppf(0.5) + e.ppf(np.nextafter(0.5, 1))) / 2 == 27.0
    # source: Massart 1990 constant, n=62 alpha=.05 -> 0.172479 (REFERENCES.md)
    assert e.band(level=0.95).eps == pytest.approx(0.172479, abs=5e-7)


# ------------------------------------------------------------ band


@pytest.mark.parametrize(
    ("n", "level", "eps"),
    [  # source: DKW with Massart's (1990) constant, eps = sqrt(ln(2/alpha)/(2n))
        (100, 0.95, 0.135810),
        (62, 0.95, 0.172479),
        (1000, 0.95, 0.042947),
        (100, 0.99, 0.162762),
    ],
)
def test_dkw_eps_published_values(n, level, eps):
    assert dkw_eps(n, level=level) == pytest.approx(eps, abs=5e-7)
    b = ECDF(np.arange(n, dtype=float)).band(level=level)
    assert b.eps == pytest.approx(eps, abs=5e-7) and b.n == n and b.level == level


def test_band_is_clipped_step_functions():
    e = ECDF([1.0, 2.0, 3.0, 4.0])
    b = e.band(level=0.5)
    g = _grid(e.x)
    np.testing.assert_allclose(b.lower(g), np.clip(e.cdf(g) - b.eps, 0, 1))
    np.testing.assert_allclose(b.upper(g), np.clip(e.cdf(g) + b.eps, 0, 1))
    assert b.lower(0.0) == 0.0 and b.upper(10.0) == 1.0


def test_band_coverage_by_simulation():
    # DKW-Massart guarantees coverage >= level for continuous F (Massart 1990); checked on
    # uniform samples (F(x)=x), seeded. eps*sqrt(n) = 1.3581 is also Kolmogorov's asymptotic 5 %
    # point, so the true coverage is only a little above 0.95: allow 3 Monte Carlo SEs.
    rng = np.random.default_rng(20240601)
    reps = 2000
    for n in (10, 50, 200):
        covered = 0
        for _ in range(reps):
            b = ECDF(rng.random(n)).band(level=0.95)
            covered += b.excursion(lambda x: np.clip(x, 0.0, 1.0)) <= 0
        assert covered / reps >= 0.95 - 3 * math.sqrt(0.95 * 0.05 / reps), (n, covered)
        # exact: P(D_n > eps) from scipy.stats.kstwo (Simard & L'Ecuyer 2011) is <= alpha
        assert st.kstwo.sf(dkw_eps(n, level=0.95), n) <= 0.05


def test_band_excursion_matches_scipy_ks_statistic():
    # A CDF leaves the band exactly when the KS distance D exceeds eps, and then by D - eps
    # (where it leaves, the clipping to [0, 1] cannot bind). D from scipy.stats.ks_1samp.
    rng = np.random.default_rng(3)
    outside = 0
    for _ in range(200):
        x = rng.normal(size=80)
        b = ECDF(x).band(level=0.3)  # a narrow band so that many samples leave it
        d = st.ks_1samp(x, st.norm.cdf).statistic
        exc = b.excursion(st.norm.cdf)
        assert (exc > 0) == (d > b.eps)
        if d > b.eps:
            outside += 1
            assert exc == pytest.approx(d - b.eps, abs=1e-12)
    assert 20 < outside < 180


def test_weighted_band_uses_kish_effective_n():
    w = np.array([1.0, 1.0, 2.0, 4.0])
    e = ECDF([1.0, 2.0, 3.0, 4.0], weights=w)
    kish = w.sum() ** 2 / (w**2).sum()  # Kish 1965 effective sample size
    assert e.n_effective == pytest.approx(kish)
    assert e.band(level=0.9).eps == pytest.approx(math.sqrt(math.log(2 / 0.1) / (2 * kish)))


def test_band_refuses_censored_data_naming_an_alternative():
    t, c = _heart()
    with pytest.raises(ValueError, match=r"needs uncensored data.*Hall–Wellner"):
        ECDF(t, censored=c).band()


@pytest.mark.parametrize("level", [0, 1, 1.5, -0.1, "high"])
def test_band_bad_level(level):
    with pytest.raises(ValueError, match="level must"):
        ECDF([1.0, 2.0]).band(level=level)


# ------------------------------------------------------------ weights, ppf, sample


def test_weights_equal_repeated_values():
    rng = np.random.default_rng(8)
    x = rng.normal(size=40).round(1)
    w = rng.integers(0, 4, 40)
    w[0] = 1
    e = ECDF(x, weights=w)
    r = ECDF(np.repeat(x, w))  # identity: integer weights = repeated observations
    g = _grid(x)
    np.testing.assert_allclose(e.cdf(g), r.cdf(g), atol=1e-14)
    np.testing.assert_array_equal(e.x, r.x)
    u = np.linspace(0, 1, 101)
    np.testing.assert_array_equal(e.ppf(u[1:-1]), r.ppf(u[1:-1]))


def test_ppf_is_generalized_inverse():
    rng = np.random.default_rng(2)
    e = ECDF(rng.integers(0, 10, 57).astype(float))
    u = np.r_[np.linspace(0, 1, 1001), e.p]
    # definition: smallest x (among jump points) with F(x) >= u
    brute = np.array([e.x[np.flatnonzero(e.p >= v)[0]] for v in u])
    np.testing.assert_array_equal(e.ppf(u), brute)
    assert isinstance(e.ppf(0.3), float) and isinstance(e.cdf(3.0), float)


def test_sample_frequencies_match_masses():
    e = ECDF([1.0, 2.0, 3.0], weights=[1, 2, 7])
    s = e.sample(200_000, rng=7)
    freq = np.array([(s == v).mean() for v in (1.0, 2.0, 3.0)])
    np.testing.assert_allclose(freq, [0.1, 0.2, 0.7], atol=0.005)  # ~5 binomial SEs
    assert np.array_equal(e.sample(10, rng=1), e.sample(10, rng=1))
    assert isinstance(e.sample(rng=1), float) and e.sample((2, 3), rng=1).shape == (2, 3)


def test_kaplan_meier_incomplete_sample_refuses_or_uses_largest():
    e = ECDF([1.0, 2.0, 3.0, 4.0], censored=[False, False, False, True])
    assert e.total_mass == pytest.approx(0.75)
    assert e.ppf(0.9) == np.inf
    with pytest.raises(ValueError, match=r"got F=0.75.*leftover='largest'"):
        e.sample(5, rng=0)
    s = e.sample(100_000, rng=0, leftover="largest")
    assert set(np.unique(s)) == {1.0, 2.0, 3.0, 4.0}
    assert (s == 4.0).mean() == pytest.approx(0.25, abs=0.01)


def test_bad_sample_and_ppf_arguments():
    e = ECDF([1.0, 2.0])
    with pytest.raises(ValueError, match="size must be a non-negative int"):
        e.sample(-1)
    with pytest.raises(ValueError, match=r"u must be probabilities in \[0, 1\]; got 1.5"):
        e.ppf([0.5, 1.5])
    with pytest.raises(ValueError, match="leftover must be"):
        e.sample(2, leftover="spread")
    with pytest.raises(ValueError, match="must not contain NaN"):
        e.cdf([np.nan])


# ------------------------------------------------------------ intake


def test_nan_dropped_with_counting_warning_and_alignment():
    with pytest.warns(DroppedValuesWarning, match="Dropped 2 missing value\\(s\\).*\\[1, 3\\]"):
        x, w, c = as_aligned_data(
            [1.0, np.nan, 2.0, np.nan, 3.0], weights=[1, 9, 2, 9, 3], censored=[0, 1, 1, 0, 0]
        )
    assert x.tolist() == [1.0, 2.0, 3.0]
    assert w.tolist() == pytest.approx([1 / 3, 2 / 3, 1.0])  # divided by the largest weight
    assert c.tolist() == [False, True, False]


def test_pandas_inputs():
    import pandas as pd

    s = pd.Series([3, None, 1, 2], dtype="Int64")
    with pytest.warns(DroppedValuesWarning, match="Dropped 1"):
        assert as_data(s).tolist() == [3.0, 1.0, 2.0]
    assert as_data(pd.Series([1.5, 2.5])).tolist() == [1.5, 2.5]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        as_data(np.array([1, 2, 3]))  # nothing to drop: no warning


@pytest.mark.parametrize(
    ("data", "match"),
    [
        ([1.0, np.inf, 2.0], "must be finite; got inf at index 1"),
        ([1.0, -np.inf], "must be finite; got -inf at index 1"),
        (["a", "b"], "must be real numbers; got values of dtype <U1"),
        ([1.0, "x"], "must be real numbers"),
        (np.array([1, "x"], dtype=object), "got 'x' \\(str\\) at index 1"),
        ([True, False], "got booleans"),
        (np.ones((3, 2)), "one-dimensional.*shape \\(3, 2\\).*np.ravel"),
        ([], "at least two distinct values; got none"),
        ([4.0, 4.0, 4.0], "at least two distinct values; got only 4.0"),
        ([1 + 2j, 3j], "must be real numbers"),
    ],
)
def test_bad_data_messages(data, match):
    with pytest.raises(DataError, match=match):
        as_data(data)


def test_all_missing_is_empty():
    with pytest.warns(DroppedValuesWarning), pytest.raises(DataError, match="all were missing"):
        as_data([np.nan, np.nan])


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"weights": [1, 2]}, "one entry per observation; got 2 weights for 3"),
        ({"weights": [1, -1, 1]}, "finite and non-negative; got weights\\[1\\]=-1.0"),
        ({"weights": [0, 0, 0]}, "positive sum"),
        ({"weights": [1, 0, 0]}, "at least two distinct values"),
        ({"censored": [0, 2, 1]}, "True/False \\(or 1/0\\); got 2 at index 1"),
        ({"censored": [True, True, True]}, "at least one observation must be uncensored"),
        ({"censored": [True]}, "one flag per observation"),
    ],
)
def test_bad_weights_and_censoring(kwargs, match):
    with pytest.raises(DataError, match=match):
        ECDF([1.0, 2.0, 3.0], **kwargs)


# ------------------------------------------------------------ step outline


def test_steps_exact_when_small():
    e = ECDF([1.0, 2.0, 2.0, 5.0])
    out = e.steps()
    assert out.x.tolist() == [1.0, 1.0, 2.0, 2.0, 5.0, 5.0]
    assert out.p.tolist() == [0.0, 0.25, 0.25, 0.75, 0.75, 1.0]
    assert out.tolerance == 0.0


def _drawn(out, t):
    """The staircase drawn from the outline: kept jump points and their values."""
    kx, kp = out.x[1::2], out.p[1::2]
    i = np.searchsorted(kx, t, side="right")
    return np.r_[0.0, kp][i]


@settings(max_examples=60, deadline=None)
@given(
    seed=hs.integers(0, 2**32 - 1),
    n=hs.integers(50, 20_000),
    levels=hs.integers(2, 10_000),
    max_points=hs.integers(8, 600),
)
def test_steps_tolerance_property(seed, n, levels, max_points):
    rng = np.random.default_rng(seed)
    e = ECDF(np.r_[0.0, 1.0, rng.integers(0, levels, n).astype(float)])
    out = e.steps(max_points=max_points)
    assert out.x.size <= max_points
    t = _grid(e.x)
    gap = e.cdf(t) - _drawn(out, t)
    # stated property: 0 <= F - D < tolerance everywhere (0 when exact)
    assert gap.min() >= 0
    if out.tolerance == 0:
        assert gap.max() == 0
    else:
        assert gap.max() < out.tolerance + 1e-12  # stated: up to rounding of p/tolerance
        assert gap.max() == pytest.approx(out.max_error, abs=1e-15)


def test_steps_large_sample_few_vertices():
    e = ECDF(np.random.default_rng(0).normal(size=1_000_000))
    out = e.steps()
    assert out.x.size <= 2000 and out.tolerance == 0.002
    assert out.max_error < 0.002


def test_steps_bad_options():
    e = ECDF(np.arange(10.0))
    with pytest.raises(ValueError, match="max_points must be an integer ≥ 8"):
        e.steps(max_points=4)
    with pytest.raises(InputError, match="max_points must be an integer") as err:
        e.steps(max_points=10.5)
    assert err.value.field == "max_points" and err.value.found == 10.5
    with pytest.raises(InputError, match="tolerance must be a finite number in \\(0, 1\\]"):
        e.steps(tolerance=0)
    with pytest.raises(InputError, match=r"may need up to 40000.*Raise max_points"):
        e.steps(tolerance=1e-4)


# ------------------------------------------------------------ one sort, chunked passes


@pytest.mark.parametrize("chunk", [1, 3, 64])
def test_ecdf_chunked_levels_match_statsmodels(chunk, monkeypatch):
    from statsmodels.distributions.empirical_distribution import ECDF as SmECDF

    import cdfsketch.empirical.ecdf as ecdf_module

    monkeypatch.setattr(ecdf_module, "_LEVEL_CHUNK", chunk)  # runs of ties across chunks
    rng = np.random.default_rng(21)
    for data in (rng.integers(0, 30, 500).astype(float), rng.normal(size=257), [2.0, 1, 1, 2]):
        e = ECDF(data)
        u = np.unique(data)
        # source: statsmodels.distributions.empirical_distribution.ECDF (right-continuous)
        np.testing.assert_allclose(e.p, SmECDF(data)(u), rtol=0, atol=1e-15)
        np.testing.assert_array_equal(e.x, u)
        # the same arithmetic as unchunked: (index of the last copy + 1) / n, bit for bit
        last = np.searchsorted(np.sort(data), u, side="right") - 1
        np.testing.assert_array_equal(e.p, (last + 1) / len(data))


def test_ecdf_of_sorted_input_neither_copies_it_into_place_nor_freezes_it():
    data = np.sort(np.random.default_rng(3).normal(size=1000))
    e = ECDF(data)
    assert data.flags.writeable and not np.shares_memory(e.x, data)
    e2, xs = ECDF._with_sorted(data)
    assert xs is data and data.flags.writeable and not np.shares_memory(e2.x, data)
    shuffled = np.random.default_rng(4).permutation(data)
    e3, xs3 = ECDF._with_sorted(shuffled)  # sorted once: the ECDF's x is that sorted copy
    assert np.shares_memory(e3.x, xs3) and not e3.x.flags.writeable
    np.testing.assert_array_equal(e3.x, data)
    np.testing.assert_array_equal(e3.p, np.arange(1, 1001) / 1000)  # i/n, exactly


@pytest.mark.parametrize("where", [0, 5, 6, 11, 12])
def test_order_check_by_chunks_sees_every_pair(where, monkeypatch):
    import cdfsketch.empirical.intake as intake

    monkeypatch.setattr(intake, "_ORDER_CHUNK", 6)
    x = np.arange(13.0)
    assert intake._is_sorted(x)
    y = x.copy()
    y[where] = 100.0 if where < 12 else -1.0  # out of order at one pair only
    assert not intake._is_sorted(y)
    y = x.copy()
    y[where] = np.nan
    assert not intake._is_sorted(y)
    assert not intake._is_sorted(np.array([np.nan])) and not intake._is_sorted(np.zeros(0))
