"""Candidate fits checked against scipy.stats, scikit-learn and published equivalences."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.stats as st

from cdfsketch import Sketch
from cdfsketch._validate import InputError
from cdfsketch.empirical import DataError
from cdfsketch.fit import (
    FAMILIES,
    Candidate,
    CandidateList,
    SmallSampleWarning,
    fit_candidates,
    fit_family,
    fit_kde,
    fit_normal_mixture,
)


@pytest.fixture(scope="module")
def positive() -> np.ndarray:
    # invented data: seeded gamma draws
    return np.random.default_rng(20240601).gamma(3.0, 2.0, 400)


# ---------------------------------------------------------------- MLE vs scipy.stats
# Reference: scipy.stats.<dist>.fit with the same fixed parameters. Where scipy
# uses a generic optimiser we require our log-likelihood to be at least as high
# (to 1e-6) and the parameters to agree to optimiser precision.
SCIPY_FITS = [
    ("normal", st.norm, {}, ("loc", "scale")),
    ("lognormal", st.lognorm, {"floc": 0}, ("s", "loc", "scale")),
    ("gamma", st.gamma, {"floc": 0}, ("a", "loc", "scale")),
    ("weibull", st.weibull_min, {"floc": 0}, ("c", "loc", "scale")),
    ("exponential", st.expon, {"floc": 0}, ("loc", "scale")),
    ("logistic", st.logistic, {}, ("loc", "scale")),
    ("gumbel", st.gumbel_r, {}, ("loc", "scale")),
    ("loglogistic", st.fisk, {"floc": 0}, ("c", "loc", "scale")),
]


@pytest.mark.parametrize(("family", "dist", "fixed", "names"), SCIPY_FITS)
def test_mle_matches_scipy_fit(positive, family, dist, fixed, names):
    cand = fit_family(family, positive)
    ref = dist.fit(positive, **fixed)
    ref_ll = float(np.sum(dist.logpdf(positive, *ref)))
    assert cand.loglik >= ref_ll - 1e-6
    assert cand.loglik == pytest.approx(ref_ll, abs=1e-3)
    for name, value in zip(names, ref, strict=True):
        assert cand.params[name] == pytest.approx(float(value), rel=2e-4, abs=1e-6), name
    # the candidate's own cdf is scipy's distribution at those parameters
    grid = np.quantile(positive, [0.1, 0.5, 0.9])
    assert np.allclose(cand.cdf(grid), dist.cdf(grid, *ref), atol=1e-4)


def test_beta_on_bounds_matches_scipy(positive):
    bounds = (0.0, 40.0)
    cand = fit_family("beta", positive, bounds=bounds)
    ref = st.beta.fit(positive, floc=0.0, fscale=40.0)  # scipy.stats.beta.fit, loc/scale fixed
    assert cand.params["a"] == pytest.approx(ref[0], rel=1e-5)
    assert cand.params["b"] == pytest.approx(ref[1], rel=1e-5)
    assert cand.n_params == 2 and cand.support == bounds


def test_uniform_observed_and_stated(positive):
    obs = fit_family("uniform", positive)
    ref = st.uniform.fit(positive)  # scipy.stats.uniform.fit: the ML ends are min and max
    assert (obs.params["loc"], obs.params["scale"]) == pytest.approx(ref, rel=1e-6)
    stated = fit_family("uniform", positive, bounds=(0, 50))
    assert stated.support == (0.0, 50.0) and stated.n_params == 0
    assert stated.loglik == pytest.approx(-positive.size * math.log(50))


def test_triangular_at_least_as_good_as_scipy():
    x = np.random.default_rng(7).triangular(1.0, 3.0, 8.0, 300)  # invented, seeded
    cand = fit_family("triangular", x)
    c, loc, scale = st.triang.fit(x)  # scipy.stats.triang.fit (generic optimiser)
    ref_ll = float(np.sum(st.triang.logpdf(x, c, loc, scale)))
    assert np.isfinite(ref_ll)
    assert cand.loglik >= ref_ll - 1e-6
    assert cand.params["loc"] == pytest.approx(loc, abs=0.15)
    assert cand.params["loc"] + cand.params["scale"] == pytest.approx(loc + scale, abs=0.15)
    # with stated ends only the mode is fitted; it is one of the observations (Oliver 1972,
    # from memory) and beats every other observation as a mode
    fixed = fit_family("triangular", x, bounds=(0.5, 9.0))
    mode = 0.5 + fixed.params["c"] * 8.5
    assert np.min(np.abs(x - mode)) < 1e-5
    modes = (np.sort(x)[::10] - 0.5) / 8.5
    others = [np.sum(st.triang.logpdf(x, m, 0.5, 8.5)) for m in modes]
    assert fixed.loglik >= max(others) - 1e-9


def test_aic_bic_definitions(positive):
    c = fit_family("gamma", positive)
    assert c.aic == pytest.approx(2 * 2 - 2 * c.loglik)
    assert c.bic == pytest.approx(2 * math.log(positive.size) - 2 * c.loglik)


# ---------------------------------------------------------------- skipping
def test_families_that_do_not_apply_are_skipped_with_reason():
    x = np.random.default_rng(1).normal(0.0, 1.0, 200)  # invented: has negatives
    cands = fit_candidates(x, mixtures=(), kde=False)
    assert isinstance(cands, CandidateList)
    for fam in ("lognormal", "gamma", "weibull", "exponential", "loglogistic"):
        assert fam in cands.skipped
        assert "needs all data > 0" in cands.skipped[fam]
        assert "data[" in cands.skipped[fam]
    assert "bounds" in cands.skipped["beta"]
    names = {c.name for c in cands}
    assert names | set(cands.skipped) == set(FAMILIES)
    assert "skipped" in repr(cands)


def test_explicit_family_skipped_warns():
    with (
        pytest.warns(UserWarning, match=r"beta: needs a stated range"),
        pytest.warns(SmallSampleWarning, match=r"Only 3 data points: too few to judge normal"),
    ):
        cands = fit_candidates([1.0, 2.0, 3.5], families=["beta", "normal"], mixtures=(), kde=False)
    assert [c.name for c in cands] == ["normal"]


def test_beta_skipped_when_data_touch_bounds():
    with pytest.warns(UserWarning, match="strictly inside"):
        cands = fit_candidates(
            [0.0, 0.2, 0.5, 1.0], families=["beta"], mixtures=(), kde=False, bounds=(0, 1)
        )
    assert "data[0]=0.0" in cands.skipped["beta"]


# ---------------------------------------------------------------- mixtures vs scikit-learn
def _sklearn_mixture(x, k):
    from sklearn.mixture import GaussianMixture  # test-only dependency

    gm = GaussianMixture(
        n_components=k, n_init=5, tol=1e-10, max_iter=5000, reg_covar=0.0, random_state=0
    ).fit(x.reshape(-1, 1))
    order = np.argsort(gm.means_.ravel())
    return (
        gm.weights_[order],
        gm.means_.ravel()[order],
        np.sqrt(gm.covariances_.ravel()[order]),
        gm.score(x.reshape(-1, 1)) * x.size,
    )


@pytest.mark.parametrize("n", [600, 12000])  # exact EM path and the binned path (> 5000)
def test_mixture_matches_sklearn(n):
    gen = np.random.default_rng(42)  # invented, seeded data
    x = np.r_[gen.normal(0, 1, n // 3), gen.normal(4, 0.7, n // 3), gen.normal(9, 1.5, n // 3)]
    ours = fit_normal_mixture(x, 3, rng=1)
    w, mu, sd, ll = _sklearn_mixture(x, 3)
    assert np.allclose(ours.params["weights"], w, atol=2e-3)
    assert np.allclose(ours.params["means"], mu, atol=5e-3)
    assert np.allclose(ours.params["sds"], sd, atol=5e-3)
    assert ours.loglik == pytest.approx(ll, abs=1e-3 * n / 600)
    assert ours.loglik >= ll - 1e-3 * n / 600
    assert ours.n_params == 8


def test_mixture_chosen_by_bic():
    gen = np.random.default_rng(5)  # invented, seeded bimodal data
    x = np.r_[gen.normal(0, 1, 500), gen.normal(7, 1, 500)]
    cands = fit_candidates(x, families=["normal"], rng=3, kde=False)
    mix = cands.by_name("normal mixture (k=2)")
    assert "k chosen by BIC" in mix.notes
    bics = {k: fit_normal_mixture(x, k, rng=3).bic for k in (1, 2, 3, 4)}
    assert min(bics, key=bics.get) == 2
    assert mix.bic == pytest.approx(bics[2], abs=1e-3)


def test_mixture_ppf_and_sample():
    gen = np.random.default_rng(9)
    x = np.r_[gen.normal(0, 1, 300), gen.normal(5, 2, 300)]
    m = fit_normal_mixture(x, 2, rng=0)
    u = np.array([1e-9, 0.01, 0.3, 0.5, 0.97, 1 - 1e-9])
    assert np.allclose(m.cdf(m.ppf(u)), u, rtol=1e-9, atol=1e-15)
    draws = m.sample(4000, rng=11)
    assert np.array_equal(draws, m.sample(4000, rng=11))
    # seeded: a correct sampler passes the exact KS test (scipy.stats.ks_1samp)
    assert st.ks_1samp(draws, m.cdf).pvalue > 1e-3


# ---------------------------------------------------------------- KDE vs scipy.stats.gaussian_kde
@pytest.mark.parametrize("rule", ["scott", "silverman"])
def test_kde_exact_matches_scipy(rule):
    x = np.random.default_rng(3).lognormal(0, 0.6, 300)  # invented, seeded
    ours = fit_kde(x, bandwidth=rule)
    ref = st.gaussian_kde(x, bw_method=rule)  # scipy.stats.gaussian_kde
    assert ours.params["bandwidth"] == pytest.approx(math.sqrt(ref.covariance[0, 0]), rel=1e-12)
    grid = np.linspace(-1, 6, 41)
    assert np.allclose(ours.pdf(grid), ref(grid), rtol=1e-10, atol=1e-15)
    cdf_ref = [ref.integrate_box_1d(-np.inf, g) for g in grid]
    assert np.allclose(ours.cdf(grid), cdf_ref, atol=1e-12)
    assert ours.loglik == pytest.approx(float(np.sum(ref.logpdf(x))), rel=1e-10)
    assert math.isnan(ours.aic)


def test_kde_binned_close_to_scipy():
    x = np.random.default_rng(4).gamma(2.0, 1.0, 20000)  # invented, seeded; binned path
    ours = fit_kde(x)
    ref = st.gaussian_kde(x)
    grid = np.linspace(0, 12, 25)
    # binning widens each kernel by < 0.05 % (see fit_kde): relative pdf error ~1e-3 at most
    assert np.allclose(ours.pdf(grid), ref(grid), rtol=2e-3, atol=1e-6)
    cdf_ref = np.array([ref.integrate_box_1d(-np.inf, g) for g in grid])
    assert np.max(np.abs(ours.cdf(grid) - cdf_ref)) < 2e-4
    u = np.array([0.001, 0.2, 0.5, 0.999])
    assert np.allclose(ours.cdf(ours.ppf(u)), u, atol=1e-12)


@pytest.mark.parametrize(
    "x",
    [
        np.random.default_rng(5).gamma(2.0, 3.0, 30_000),  # invented, seeded
        np.random.default_rng(6).lognormal(0.0, 1.5, 5000),
        np.random.default_rng(7).standard_cauchy(3000),
    ],
)
def test_binned_kde_cdf_table_within_the_hermite_error_bound(x, monkeypatch):

    from cdfsketch.fit import kde as kde_module

    model = fit_kde(x).engine
    assert model.table is not None
    h = model.h
    pts = np.r_[
        np.random.default_rng(0).uniform(model.c[0] - 10 * h, model.c[-1] + 10 * h, 100_000),
        model.c,
        model.c + 0.5 * h / 128,
    ]
    exact = model.direct_cdf(pts)
    # cubic Hermite error <= max|F⁗| step⁴ / 384 (Burden & Faires, Numerical Analysis,
    # Thm 3.9, from memory); F⁗ is the density's third derivative, at most
    # max|φ‴| / h⁴ with max|φ‴| = max |z³ - 3z| φ(z) = 0.5506 (computed, near z = 0.74)
    bound = 0.5506 / 128**4 / 384
    assert np.max(np.abs(model.cdf(pts) - exact)) <= bound + 1e-15
    # too many nodes for a table: each value is summed directly
    monkeypatch.setattr(kde_module, "_KDE_TABLE_MAX", 10)
    direct = fit_kde(x).engine
    assert direct.table is None
    np.testing.assert_array_equal(direct.cdf(pts), exact)


def test_binned_kde_table_is_lazy_exact_outside_and_refused_when_x_rounding_dominates():

    x = np.random.default_rng(9).normal(0.0, 1.0, 5000)  # invented, seeded
    model = fit_kde(x).engine
    assert model.tabled and not model.table_built  # fitting alone builds no table
    far = np.array([model.c[0] - 30 * model.h, np.nan, model.c[-1] + 30 * model.h])
    got = model.cdf(far)
    assert model.table_built
    direct = model.direct_cdf(far)
    assert got[0] == direct[0] and 0 < got[0] < 1e-150  # the direct sum, not a floor
    assert np.isnan(got[1]) and got[2] == direct[2] == pytest.approx(1.0, abs=1e-12)
    # a spread of 1e-4 at 1e8: one ulp of x is 1.5e-8 of h, so a table would mislead (a
    # review found 2.8e-5 errors with inexact node positions); the direct sum is used
    tight = fit_kde(1e8 + np.random.default_rng(10).normal(0, 1e-4, 5000)).engine
    assert not tight.tabled and tight.table is None


def test_kde_near_the_float64_limit_is_fitted_on_rescaled_data():
    # issue 16: data near 1e306 used to overflow the bandwidth; now rescaled internally
    x = np.random.default_rng(1).normal(size=3000) * 1e306
    k = fit_kde(x)
    assert np.isfinite(k.loglik) and 0 < k.params["bandwidth"] < np.inf
    assert k.cdf(0.0) == pytest.approx(np.mean(x <= 0), abs=0.05)


def test_kde_sample_is_smoothed_bootstrap():
    x = np.random.default_rng(8).normal(size=200)
    k = fit_kde(x)
    draws = k.sample(3000, rng=2)
    assert st.ks_1samp(draws, k.cdf).pvalue > 1e-3  # seeded: exact KS test (scipy)


# ---------------------------------------------------------------- fit_candidates as a whole
def test_defaults_on_positive_data(positive):
    cands = fit_candidates(positive, rng=0)
    names = [c.name for c in cands]
    assert names[:8] == [
        "normal",
        "lognormal",
        "gamma",
        "weibull",
        "exponential",
        "logistic",
        "gumbel",
        "loglogistic",
    ]
    assert any(n.startswith("normal mixture") for n in names)
    assert names[-1] == "kde (scott)"
    assert set(cands.skipped) == {"beta"}
    assert all(isinstance(c, Candidate) for c in cands)
    # seeded lognormal data (invented): the generating family has the best AIC
    x = np.random.default_rng(2).lognormal(1.0, 0.8, 3000)
    param = fit_candidates(x, mixtures=(), kde=False)
    assert min(param, key=lambda c: c.aic).name == "lognormal"


def test_rng_reproducible(positive):
    a = fit_candidates(positive, families=[], rng=12, kde=False)
    b = fit_candidates(positive, families=[], rng=12, kde=False)
    assert a[0].params == b[0].params


def test_progress_callable(positive):
    calls = []
    fit_candidates(
        positive,
        families=["normal", "gamma"],
        mixtures=(1, 2),
        rng=0,
        progress=lambda d, t, label: calls.append((d, t, label)),
    )
    assert [c[0] for c in calls] == [1, 2, 3, 4, 5]
    assert all(c[1] == 5 for c in calls)
    assert [c[2] for c in calls] == ["normal", "gamma", "mixture k=1", "mixture k=2", "kde"]


def test_to_sketch(positive):
    cand = fit_family("gamma", positive)
    s = cand.to_sketch(knots=15, name="repair time")
    assert isinstance(s, Sketch) and len(s) >= 15  # refined until within tolerance
    assert s.provenance["method"] == "from candidate fit gamma"
    assert s.provenance["extra"]["params"] == cand.params
    assert np.allclose(cand.cdf(s.x[1:]), s.p[1:], atol=1e-9)
    assert s.x[0] == 0.0 and s.p[0] == 0.0  # support starts at 0 (loc fixed)
    assert s.to_spec()["provenance"]["method"] == "from candidate fit gamma"
    normal = fit_family("normal", positive)
    lin = normal.to_sketch(knots=5, interpolation="linear")
    grid = np.linspace(*normal.ppf([0.02, 0.98]), 2001)
    worst = np.max(np.abs(lin.cdf(grid) - normal.cdf(grid)))
    assert worst <= 1e-3  # reknot's default tolerance
    kde_sketch = fit_kde(positive).to_sketch()
    assert kde_sketch.provenance["method"] == "from candidate fit kde (scott)"


def test_candidate_is_frozen(positive):
    c = fit_family("normal", positive)
    with pytest.raises(AttributeError):
        c.loglik = 0.0  # type: ignore[misc]


def test_refit(positive):
    c = fit_family("gamma", positive)
    r = c.refit(positive[:100])
    assert r.n == 100 and r.family == "gamma"
    assert r.params["a"] == pytest.approx(st.gamma.fit(positive[:100], floc=0)[0], rel=1e-4)


# ---------------------------------------------------------------- bad inputs
@pytest.mark.parametrize(
    ("kwargs", "exc", "match"),
    [
        ({"families": ["normal", "cauchy"]}, InputError, r"families\[1\] must be one of.*'cauchy'"),
        ({"families": "normal"}, InputError, r"Wrap it in a list"),
        ({"mixtures": (1, 0)}, InputError, r"mixtures\[1\] must be an integer ≥ 1; got 0"),
        ({"kde": "wide"}, InputError, r"kde must be one of True, False"),
        ({"bounds": (3, 1)}, InputError, r"low < high"),
        ({"bounds": "ab"}, InputError, r"pair \(low, high\)"),
        ({"bounds": (0, 5)}, DataError, r"within bounds=\(0.0, 5.0\); got data\[3\]=9.0"),
        ({"progress": "yes"}, TypeError, r"progress must be None"),
    ],
)
def test_fit_candidates_bad_options(kwargs, exc, match):
    with pytest.raises(exc, match=match):
        fit_candidates(
            [1.0, 2.0, 3.0, 9.0],
            mixtures=kwargs.pop("mixtures", ()),
            kde=kwargs.pop("kde", False),
            **kwargs,
        )


@pytest.mark.parametrize(
    ("data", "match"),
    [
        ([1.0, np.inf], r"inf"),
        ([[1.0, 2.0], [3.0, 4.0]], r"one-dimensional|1-D|dimension"),
        ([], r"empty|no values|at least"),
        ([2.0, 2.0], r"at least two distinct values"),
        (["a", "b"], r"numeric|number"),
    ],
)
def test_bad_data(data, match):
    with pytest.raises(DataError, match=match):
        fit_candidates(data)


def test_nan_dropped_with_warning():
    with pytest.warns(UserWarning, match="1"):
        c = fit_family("normal", [1.0, np.nan, 2.0, 4.0])
    assert c.n == 3


def test_family_and_mixture_bad_inputs():
    with pytest.raises(InputError, match=r"family must be one of.*got 'pareto'") as err:
        fit_family("pareto", [1.0, 2.0])
    assert err.value.field == "family" and err.value.found == "pareto"
    with pytest.raises(DataError, match=r"must apply to the data; got needs all data > 0.*\[0\]"):
        fit_family("gamma", [-1.0, 2.0])
    with pytest.raises(InputError, match=r"k must be an integer ≥ 1; got 0"):
        fit_normal_mixture([1.0, 2.0, 3.0], 0)
    with pytest.raises(DataError, match=r"needs at least 8 observations; got 3"):
        fit_normal_mixture([1.0, 2.0, 3.0], 4)
    with pytest.raises(InputError, match=r"starts must be an integer ≥ 1"):
        fit_normal_mixture([1.0, 2.0, 3.0], 1, starts=0)
    with pytest.raises(InputError, match=r"bandwidth must be one of 'scott', 'silverman'"):
        fit_kde([1.0, 2.0], bandwidth="isj")
    c = fit_family("normal", [1.0, 2.0, 4.0])
    with pytest.raises(InputError, match=r"knots must be an integer ≥ 3; got 1"):
        c.to_sketch(knots=1)
    with pytest.raises(InputError, match=r"tail_mass must be a finite number in \(0, 0.5\)"):
        c.to_sketch(tail_mass=0.7)
    with pytest.raises(ValueError, match=r"probabilities in \[0, 1\]; got 1.5 at flat index 1"):
        c.ppf([0.5, 1.5])
    with pytest.raises(ValueError, match=r"NaN at flat index 0"):
        c.cdf([np.nan])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert c.ppf(0.5) == pytest.approx(7 / 3)
