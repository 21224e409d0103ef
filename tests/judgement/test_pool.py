"""Pooling several experts' sketches: linear opinion pool and quantile averaging."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch
from cdfsketch.elicit import from_distribution, pool


@pytest.fixture(scope="module")
def normals():
    # N(0,1) and N(2,1) as sketches from dense quantiles (max |ΔF| ≤ 1e-5 to scipy)
    return {
        interp: [
            from_distribution(stats.norm(m, 1), interpolation=interp, tolerance=1e-5)
            for m in (0.0, 2.0)
        ]
        for interp in ("linear", "pchip")
    }


@pytest.mark.parametrize("interp", ["linear", "pchip"])
def test_equal_linear_pool_of_two_normals(normals, interp):
    # analytic (REFERENCES check table): equal mixture of N(0,1), N(2,1) has mean 1 and
    # variance 1 + 1 (within-component variance plus the spread of the means)
    s = pool(normals[interp])
    assert s.mean() == pytest.approx(1.0, abs=2e-4)
    assert s.var() == pytest.approx(2.0, abs=2e-3)
    x = np.linspace(-8, 10, 4001)
    mix = 0.5 * stats.norm(0, 1).cdf(x) + 0.5 * stats.norm(2, 1).cdf(x)
    assert np.max(np.abs(s.cdf(x) - mix)) <= 1e-4 + 2e-5  # pool tolerance + inputs' error
    assert s.provenance["method"] == "linear pool"
    assert s.interpolation == interp


@pytest.mark.parametrize("interp", ["linear", "pchip"])
def test_quantile_average_of_two_normals_is_n_1_1(normals, interp):
    # analytic: averaging the quantile functions of N(0,1) and N(2,1) gives N(1,1)
    s = pool(normals[interp], method="quantile")
    ref = stats.norm(1, 1)
    assert s.mean() == pytest.approx(1.0, abs=1e-3)
    assert s.var() == pytest.approx(1.0, abs=2e-3)
    u = np.linspace(1e-4, 1 - 1e-4, 4001)
    assert np.max(np.abs(ref.cdf(s.ppf(u)) - u)) <= 1e-4 + 2e-5
    x = np.linspace(-5, 7, 4001)
    assert np.max(np.abs(s.cdf(x) - ref.cdf(x))) <= 1e-4 + 2e-5
    assert s.provenance["method"] == "quantile average"


A = Sketch([0, 1, 1, 3], [0.1, 0.2, 0.5, 1.0], lower_tail=BoundedTail(-2.0))  # atom at 1
B = Sketch([0.5, 2, 2.5, 4], [0, 0.6, 0.6, 0.9], upper_tail=BoundedTail(6.0))  # flat gap
C = Sketch([-1, 0, 2], [0.0, 0.3, 1.0])


def _mixture_cdf(sketches, w, x):
    return sum(wi * np.asarray(s.cdf(x)) for s, wi in zip(sketches, w, strict=True))


def test_linear_pool_of_linear_sketches_is_exact_everywhere():
    sks, w = [A, B, C], np.array([1.0, 3.0, 2.0])
    s = pool(sks, weights=w)
    wn = w / w.sum()
    assert s.provenance["extra"]["exact"] is True
    assert s.interpolation == "linear"
    # dense grid including beyond the support, every knot, and just left/right of them
    knots = np.unique(np.r_[A.x, B.x, C.x, -2.0, 6.0])
    x = np.r_[np.linspace(-4, 8, 20001), knots, np.nextafter(knots, -np.inf)]
    assert np.max(np.abs(s.cdf(x) - _mixture_cdf(sks, wn, x))) <= 1e-14
    # the atom of A survives with its weight
    assert s.atoms == (cdfsketch.Atom(1.0, pytest.approx(0.3 * wn[0], abs=1e-15)),)
    assert s.support == (-2.0, 6.0)
    # first and second moments of a mixture are the weighted moments (linearity)
    assert s.mean() == pytest.approx(sum(wi * k.mean() for k, wi in zip(sks, wn, strict=True)))
    assert s.moment(2) == pytest.approx(
        sum(wi * k.moment(2) for k, wi in zip(sks, wn, strict=True))
    )


def test_linear_pool_sampling_frequencies_match_the_mixture():
    sks, w = [A, B, C], np.array([1.0, 3.0, 2.0]) / 6.0
    s = pool(sks, weights=w)
    draws = s.sample(40_000, rng=20240611)
    # chi-square on bins (scipy.stats.chisquare), one bin edge at each side of the atom
    edges = np.r_[-2.0, np.linspace(-1.5, 0.9, 9), 0.999999, 1.0, np.linspace(1.5, 5.5, 9), 6.0]
    counts = np.histogram(draws, bins=edges)[0]
    # histogram bins are [a, b); cdf differences give (a, b]: use left limits at the edges
    probs = np.diff(_mixture_cdf(sks, w, np.nextafter(edges, -np.inf)))
    probs[-1] += 1.0 - probs.sum()
    res = stats.chisquare(counts, probs * draws.size)
    assert res.pvalue > 1e-3
    # KS test of the continuous part would be disturbed by the atom: test a continuous pool
    D = Sketch([-1, 0.5, 2], [0.0, 0.4, 1.0])
    p2 = pool([C, D], weights=[0.3, 0.7])
    d2 = p2.sample(20_000, rng=7)
    ks = stats.kstest(d2, lambda x: _mixture_cdf([C, D], [0.3, 0.7], x))
    assert ks.pvalue > 1e-3


def test_linear_pool_exact_with_shared_exponential_tail():
    e1 = Sketch(
        [0, 1, 3], [0.05, 0.5, 0.9], lower_tail=BoundedTail(-1.0), upper_tail=ExponentialTail(2.0)
    )
    e2 = Sketch([0.5, 2, 3], [0.0, 0.3, 0.8], upper_tail=ExponentialTail(2.0))
    s = pool([e1, e2], weights=[0.4, 0.6])
    assert s.provenance["extra"]["exact"] is True
    assert s.tail_mass[1] == pytest.approx(0.4 * 0.1 + 0.6 * 0.2)
    assert s.tail_scales[1] == 2.0
    x = np.r_[np.linspace(-2, 40, 20001)]
    assert np.max(np.abs(s.cdf(x) - _mixture_cdf([e1, e2], [0.4, 0.6], x))) <= 1e-14


def test_linear_pool_of_different_exponential_tails_is_reknotted_within_tolerance():
    e1 = Sketch([0, 1, 3], [0.05, 0.5, 0.9])  # default tails, derived scales
    e2 = Sketch([0.5, 2, 4], [0.1, 0.3, 0.8], upper_tail=ExponentialTail(5.0))
    s = pool([e1, e2], tolerance=1e-4)
    assert s.provenance["extra"]["exact"] is False
    assert s.provenance["extra"]["max_abs_cdf_error"] <= 1e-4
    x = np.r_[np.linspace(-30, 80, 40001)]
    assert np.max(np.abs(s.cdf(x) - _mixture_cdf([e1, e2], [0.5, 0.5], x))) <= 1.2e-4
    assert s.support == (-np.inf, np.inf)


def test_quantile_average_of_linear_sketches_is_exact():
    sks, w = [A, C], np.array([0.25, 0.75])
    # A has a bounded lower tail (uniform: linear quantile function), C none
    s = pool(sks, weights=w, method="quantile")
    assert s.provenance["extra"]["exact"] is True
    u = np.linspace(0, 1, 10001)
    expected = sum(wi * np.asarray(k.ppf(u)) for k, wi in zip(sks, w, strict=True))
    assert np.max(np.abs(s.ppf(u) - expected)) <= 1e-12
    # same mean as the linear pool (Lichtendahl, Grushka-Cockayne & Winkler 2013)
    assert s.mean() == pytest.approx(pool(sks, weights=w).mean(), abs=1e-12)
    # sharper: variance no larger than the linear pool's
    assert s.var() <= pool(sks, weights=w).var()


def test_quantile_average_with_a_flat_gap():
    s = pool([B, C], method="quantile")
    u = np.linspace(0, 1, 5001)
    expected = 0.5 * np.asarray(B.ppf(u)) + 0.5 * np.asarray(C.ppf(u))
    assert np.max(np.abs(s.ppf(u) - expected)) <= 1e-12


def test_quantile_average_of_exponential_tails_with_equal_mass():
    e1 = Sketch(
        [0, 1, 3],
        [0.05, 0.5, 0.95],
        lower_tail=ExponentialTail(1.0),
        upper_tail=ExponentialTail(2.0),
    )
    e2 = Sketch(
        [2, 4, 5],
        [0.05, 0.6, 0.95],
        lower_tail=ExponentialTail(3.0),
        upper_tail=ExponentialTail(0.5),
    )
    s = pool([e1, e2], method="quantile")
    assert s.provenance["extra"]["exact"] is True
    # Q(u) = x_k + s_k log(u / m_k) in each lower tail: the average has scale (1 + 3)/2
    assert s.tail_scales == (2.0, 1.25)
    u = np.r_[np.geomspace(1e-9, 1 - 1e-9, 2001)]
    expected = 0.5 * np.asarray(e1.ppf(u)) + 0.5 * np.asarray(e2.ppf(u))
    assert np.max(np.abs(s.ppf(u) - expected)) <= 1e-11


def test_pool_provenance_and_spec():
    s = pool([A, C], weights=[2, 6], names=["Ana", "Ben"], name="delay")
    prov = s.provenance
    assert prov["method"] == "linear pool"
    assert [(c["name"], c["weight"]) for c in prov["contributors"]] == [
        ("Ana", 0.25),
        ("Ben", 0.75),
    ]
    assert prov["contributors"][0]["summary"] == {"mean": A.mean(), "median": A.median()}
    back = cdfsketch.load(s.to_json())
    assert back.provenance["contributors"] == prov["contributors"]
    assert back.name == "delay"
    cdfsketch.validate_spec(s.to_spec())
    q = pool([A, C], method="quantile")
    assert q.provenance["method"] == "quantile average"
    assert "Lichtendahl" in q.provenance["extra"]["method_source"]
    assert cdfsketch.pool is pool


def test_zero_weight_sketch_is_left_out():
    s = pool([A, C], weights=[0, 1])
    x = np.linspace(-3, 4, 2001)
    assert np.max(np.abs(s.cdf(x) - C.cdf(x))) <= 1e-15
    assert [c["weight"] for c in s.provenance["contributors"]] == [0.0, 1.0]


@pytest.mark.parametrize(
    ("args", "options", "exc", "match"),
    [
        (([A, C],), {"weights": [1, -1]}, ValueError, r"non-negative; got weights\[1\]=-1.0"),
        (([A, C],), {"weights": [0, 0]}, ValueError, r"must not all be zero"),
        (
            ([A, C],),
            {"weights": [1, 2, 3]},
            ValueError,
            r"one number per sketch; got shape \(3,\) for 2",
        ),
        (
            ([A, C],),
            {"weights": [1, np.nan]},
            ValueError,
            r"weights must not contain NaN; got NaN at flat index 1",
        ),
        (([A, C],), {"names": ["x"]}, ValueError, r"one name per sketch; got 1 for 2"),
        (
            ([A, C],),
            {"method": "log"},
            ValueError,
            "method must be one of 'linear', 'quantile'",
        ),
        (([A, "C"],), {}, TypeError, r"sketches\[1\] must be a Sketch; got str"),
        (([],), {}, ValueError, r"at least one sketch"),
        (
            ([A.replace(units="min"), C.replace(units="h")],),
            {},
            ValueError,
            r"different units \['h', 'min'\]",
        ),
        (
            ([A, C],),
            {"tolerance": 1.0},
            ValueError,
            r"tolerance must be a finite number in \(0, 0.5\); got 1.0",
        ),
    ],
)
def test_pool_bad_inputs(args, options, exc, match):
    with pytest.raises(exc, match=match):
        pool(*args, **options)


def test_pool_carries_the_one_stated_unit():
    assert pool([A, C.replace(units="h")]).units == "h"


def test_quantiles_pool_and_automatic_knots_need_numpy_only():
    # the numpy-only base install serves these; scipy (the "fit" extra) is loaded only by
    # from_three_points. Checked in a fresh interpreter.
    import subprocess
    import sys

    code = (
        "import sys, numpy as np\n"
        "import cdfsketch.elicit as e\n"
        "a = e.from_quantiles({0.1: 1, 0.9: 2}); b = e.from_quantiles({0.1: 1.5, 0.9: 3})\n"
        "e.pool([a, b]); e.pool([a, b], method='quantile')\n"
        "e.from_data(np.random.default_rng(0).normal(size=500), max_knots=4)\n"
        "e.reknot(a)\n"
        "print(any(m == 'scipy' or m.startswith('scipy.') for m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
