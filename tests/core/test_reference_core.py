"""The CDF model checked against sources outside the project.

Each check names its source beside it.
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from _helpers import u_error
from scipy import integrate, interpolate, stats

from cdfsketch import BoundedTail, ExponentialTail, Sketch, _pieces

# Fritsch & Carlson (1980), SIAM J Numer Anal 17:238-46, the RPN-14 data (their Table)
RPN14_X = [7.99, 8.09, 8.19, 8.7, 9.2, 10, 12, 15, 20]
RPN14_Y = [0, 2.76429e-5, 4.37498e-2, 0.169183, 0.469428, 0.943740, 0.998636, 0.999919, 0.999994]


def test_pchip_matches_scipy_pchipinterpolator():
    # reference: scipy.interpolate.PchipInterpolator (Fritsch-Butland slopes)
    rng = np.random.default_rng(11)
    for _ in range(25):
        n = int(rng.integers(2, 15))
        x = np.cumsum(rng.uniform(0.01, 3, n))
        p = np.sort(rng.uniform(0, 1, n))
        p[rng.uniform(size=n) < 0.2] = p[0]  # some flat stretches
        p = np.sort(p)
        if p[-1] == p[0]:
            continue
        # stated tail scales: a derived tail may change a zero end slope (see
        # test_derived_tail_continues_density), which scipy's end formula does not know
        tails = {"lower_tail": ExponentialTail(1.0), "upper_tail": ExponentialTail(1.0)}
        s = Sketch(x, p, interpolation="pchip", **tails)
        ref = interpolate.PchipInterpolator(x, p)
        v = np.linspace(x[0], x[-1], 2001)[:-1]
        np.testing.assert_allclose(s.cdf(v), ref(v), rtol=0, atol=1e-13)
        np.testing.assert_allclose(s.pdf(v), ref.derivative()(v), rtol=1e-9, atol=1e-10)


def test_pchip_monotone_on_rpn14_where_cubic_spline_overshoots():
    # Fritsch & Carlson (1980) RPN-14: an ordinary (not-a-knot) cubic spline overshoots
    # past 1 (max 1.16903, REFERENCES.md); the monotone cubic must not.
    v = np.linspace(RPN14_X[0], RPN14_X[-1], 200_001)
    spline = interpolate.CubicSpline(RPN14_X, RPN14_Y)(v)
    assert spline.max() == pytest.approx(1.16903, abs=5e-5)
    s = Sketch(RPN14_X, RPN14_Y, interpolation="pchip")
    f = s.cdf(v)
    assert np.all(np.diff(f) >= 0)
    assert f.max() <= RPN14_Y[-1]
    assert np.all(s.pdf(v) >= 0)


@pytest.mark.parametrize(
    "dist",
    [stats.gamma(2.5, scale=3.0), stats.lognorm(0.6, scale=20.0), stats.norm(5, 2)],
    ids=["gamma", "lognorm", "norm"],
)
def test_ppf_of_dense_quantile_sketch_matches_scipy(dist):
    # reference: scipy.stats ppf; a sketch through 400 quantiles (denser in the tails), pchip.
    # Measured: |dx| <= 2e-6 sd and |dF| <= 5e-8; bounds below leave a margin.
    u = stats.norm.cdf(np.linspace(-3.3, 3.3, 400))
    s = Sketch(dist.ppf(u), u, interpolation="pchip")
    q = np.linspace(0.001, 0.999, 997)
    np.testing.assert_allclose(s.ppf(q), dist.ppf(q), rtol=0, atol=1e-5 * dist.std())
    np.testing.assert_allclose(s.cdf(dist.ppf(q)), q, atol=2e-7)


def test_uniform_sketch_is_scipy_uniform():
    # reference: scipy.stats.uniform closed forms
    s, ref = Sketch([2, 7], [0, 1]), stats.uniform(2, 5)
    v = np.linspace(0, 9, 91)
    np.testing.assert_allclose(s.cdf(v), ref.cdf(v), atol=1e-15)
    np.testing.assert_allclose(s.pdf(v[(v != 2) & (v != 7)]), ref.pdf(v[(v != 2) & (v != 7)]))
    q = np.linspace(0, 1, 11)
    np.testing.assert_allclose(s.ppf(q), ref.ppf(q), atol=1e-14)
    for k in range(1, 5):
        assert s.moment(k) == pytest.approx(ref.moment(k), rel=1e-13)
    assert s.var() == pytest.approx(ref.var(), rel=1e-13)


def test_exponential_tail_is_scipy_expon():
    # reference: scipy.stats.expon, the tail beyond the last knot is 0.5 * Exp(loc=1, scale=2)
    s = Sketch([0, 1], [0, 0.5], upper_tail=ExponentialTail(2.0))
    ref = stats.expon(loc=1, scale=2)
    v = np.linspace(1, 30, 50)
    np.testing.assert_allclose(s.sf(v), 0.5 * ref.sf(v), rtol=1e-12)
    np.testing.assert_allclose(s.pdf(v), 0.5 * ref.pdf(v), rtol=1e-12)
    u = np.linspace(0.5, 0.999, 30)
    np.testing.assert_allclose(s.ppf(u), ref.ppf((u - 0.5) / 0.5), rtol=1e-12)
    # mixture: half U(0,1), half Exp(loc 1, scale 2); moments of each from scipy
    for k in (1, 2, 3):
        want = 0.5 * stats.uniform(0, 1).moment(k) + 0.5 * ref.moment(k)
        assert s.moment(k) == pytest.approx(want, rel=1e-12)


@pytest.mark.parametrize("index", range(11))
def test_moments_match_numerical_integration(zoo, index):
    # reference: scipy.integrate.quad of (x - c)^k f(x) between breakpoints, plus the atoms
    s = zoo[index]
    lo, hi = s.support
    a = s.ppf(1e-15) if np.isinf(lo) else lo
    b = s.ppf(1 - 1e-15) if np.isinf(hi) else hi
    edges = [lo, *np.unique(np.r_[s.x, a, b]), hi]
    edges = [e for i, e in enumerate(edges) if i == 0 or e != edges[i - 1]]
    center = float(np.median(s.x))
    for k in (1, 2, 3):

        def integrand(v, k=k):
            return (v - center) ** k * s.pdf(v)

        total = sum(
            integrate.quad(integrand, left, right, epsabs=1e-13, epsrel=1e-12, limit=200)[0]
            for left, right in itertools.pairwise(edges)
        )
        total += sum(m * (x - center) ** k for x, m in s.atoms)
        exact = _pieces.central_moment(s._pieces, k, center)
        assert exact == pytest.approx(total, rel=1e-8, abs=1e-9 * (1 + abs(center)) ** k)
    assert s.var() >= 0


def test_seeded_ks_test_of_draws_against_own_cdf(zoo):
    # reference: scipy.stats.kstest; 1e6 draws, continuous sketches only (KS assumes continuity)
    for s, seed in ((zoo[1], 1), (zoo[2], 2), (zoo[3], 3), (zoo[8], 4)):
        draws = s.sample(10**6, rng=seed)
        res = stats.kstest(draws, s.cdf)
        assert res.pvalue > 1e-3, (s, res)


def test_atom_frequency_within_binomial_interval():
    # reference: scipy.stats.binom; the count at the atom is Binomial(n, mass)
    s = Sketch([0, 1, 1, 2], [0, 0.2, 0.45, 1], interpolation="pchip")
    n = 10**6
    draws = s.sample(n, rng=2024)
    count = int(np.sum(draws == 1.0))
    lo, hi = stats.binom(n, 0.25).interval(1 - 1e-6)
    assert lo <= count <= hi


def test_scipy_protocol_matches_scipy_uniform():
    # reference: a scipy.stats frozen uniform has the same protocol and values
    d, ref = Sketch([2, 7], [0, 1]).to_scipy(), stats.uniform(2, 5)
    assert d.mean() == ref.mean() and d.var() == pytest.approx(ref.var())
    assert d.std() == pytest.approx(ref.std())
    assert d.support() == ref.support()
    assert d.interval(0.9) == pytest.approx(ref.interval(0.9))
    np.testing.assert_allclose(d.isf([0.1, 0.5]), ref.isf([0.1, 0.5]))
    np.testing.assert_allclose(d.sf([3, 6]), ref.sf([3, 6]))
    assert np.isnan(d.ppf(1.5)) and np.isnan(ref.ppf(1.5))
    assert d.rvs(size=5, random_state=3).shape == (5,)
    np.testing.assert_array_equal(d.rvs(5, random_state=3), Sketch([2, 7], [0, 1]).sample(5, rng=3))
    assert d.stats("mvsk")[2] == pytest.approx(0.0, abs=1e-12)
    assert d.stats("mvsk")[3] == pytest.approx(ref.stats("k"), rel=1e-12)


def test_bounded_taper_moments_match_scipy_triangular():
    # a taper tail alone is a right-triangular density: scipy.stats.triang(c=1)
    # all but 1e-12 of the mass in the taper on [0, 0.5]: density rising linearly to the knot
    t = Sketch([0.5, 2.0], [1.0 - 1e-12, 1.0], lower_tail=BoundedTail(0.0, density="taper"))
    ref = stats.triang(c=1.0, loc=0.0, scale=0.5)
    assert t.mean() == pytest.approx(ref.mean(), rel=1e-9)
    assert t.var() == pytest.approx(ref.var(), rel=1e-8)
    v = np.linspace(0, 0.5, 11)
    np.testing.assert_allclose(t.cdf(v), ref.cdf(v) * (1 - 1e-12), atol=1e-12)


def test_sampler_exact_for_linear_sketches():
    rng = np.random.default_rng(8)
    x = np.cumsum(rng.uniform(0.1, 2, 300))
    p = np.r_[0, np.sort(rng.uniform(size=298)), 1]
    s = Sketch(x, p)
    u = np.r_[rng.random(10**5), p, 0, 1]
    np.testing.assert_allclose(s.sampler().ppf(u), s.ppf(u), rtol=1e-13, atol=0)


@pytest.mark.parametrize("index", range(11))
def test_sampler_u_error_below_1e10(zoo, index):
    s = zoo[index]
    u = np.r_[
        np.linspace(0, 1, 200_001),
        np.random.default_rng(index).random(200_000),
        s.p,
        np.nextafter(s.p, 0),
        np.nextafter(s.p, 1),
    ]
    u = u[(u >= 0) & (u <= 1)]
    x = s.sampler().ppf(u)
    # 1e-10, plus what x's own rounding allows: density times a few ulps of x (this only
    # matters for the sketch placed at x ~ 1e6, where one ulp of x is 1.2e-10)
    finite = np.isfinite(x)
    floor = 8 * np.max(s.pdf(x[finite]) * np.spacing(np.abs(x[finite])))
    assert u_error(s, u, x) <= 1e-10 + floor
    assert u_error(s, u, s.ppf(u)) <= 1e-15 + floor
    assert np.all(np.diff(s.sampler().ppf(np.linspace(0, 1, 100_001))) >= 0)
    lo, hi = s.support
    assert np.all((x >= lo) & (x <= hi))
