"""Core regressions found in review: sampler, exact inverse, evaluation (each names its guard)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from cdfsketch import BoundedTail, ExponentialTail, KnotError, Sketch


@pytest.mark.parametrize(
    "sketch",
    [
        Sketch([0, 1], [0.5, 0.5]),
        Sketch([0, 1, 2], [0.3, 0.3, 0.3]),
        Sketch([0, 1], [0.5, 0.5], lower_tail=ExponentialTail(1.0)),
    ],
)
def test_sampler_handles_a_body_without_mass(sketch):
    draws = sketch.sample(1000, rng=1)
    assert np.all(np.isfinite(draws))
    np.testing.assert_allclose(sketch.sampler().ppf([0.3, 0.5]), sketch.ppf([0.3, 0.5]), atol=1e-9)


def test_table_ppf_at_the_body_start_matches_exact_ppf():
    # generalized inverse at u == p[0] with a flat first piece: the first knot itself
    s = Sketch(
        [4, 5, 6, 7, 7],
        [0.1, 0.1, 0.25, 0.25, 1],
        lower_tail=ExponentialTail(2.0),
        upper_tail=ExponentialTail(2.0),
    )
    assert s.sampler().ppf(0.1) == s.ppf(0.1) == 4.0
    t = Sketch([0, 1, 3, 7], [0.5, 0.5, 0.75, 0.75], interpolation="pchip")
    assert t.sampler().ppf(0.5) == t.ppf(0.5) == 0.0  # Sobol's second point is 0.5
    rng = np.random.default_rng(0)
    for _ in range(50):
        x = np.cumsum(rng.uniform(0.5, 2, 6))
        p = np.sort(rng.uniform(0, 1, 6).round(1))
        if p[-1] == p[0]:
            continue
        for interp in ("linear", "pchip"):
            k = Sketch(x, p, interpolation=interp)
            np.testing.assert_allclose(k.sampler().ppf(k.p), k.ppf(k.p), rtol=0, atol=1e-9)


def test_scipy_stats_exact_far_from_zero():
    # reference: scipy.stats.uniform; the linear sketch through these knots is U(1e6-1, 1e6+1)
    ref = stats.uniform(1e6 - 1, 2)
    s = Sketch([1e6 - 1, 1e6, 1e6 + 1], [0, 0.5, 1])
    m, v, sk, ku = s.to_scipy().stats("mvsk")
    assert m == pytest.approx(ref.mean(), rel=1e-15)
    assert v == pytest.approx(ref.var(), rel=1e-12)
    assert sk == pytest.approx(0.0, abs=1e-9)
    assert ku == pytest.approx(float(ref.stats("k")), rel=1e-9)
    with pytest.raises(ValueError, match="letters"):
        s.to_scipy().stats("mx")


def test_table_never_crosses_below_an_atom_or_the_support():
    s = Sketch([0, 0, 1, 1], [0, 0.3, 0.6, 1])  # zero-inflated, support [0, 1]
    u = np.r_[np.nextafter(0.3, 1), np.nextafter(0.6, 0), np.linspace(0, 1, 10001)]
    x = s.sampler().ppf(u)
    assert np.all((x >= 0) & (x <= 1))
    assert np.all(x[u < 0.6] < 1)


def test_isf_exact_deep_in_the_upper_tail():
    # reference: the tail is 0.1 * Exp(scale) beyond x = 1: isf(q) = 1 + scale log(0.1 / q)
    s = Sketch([0, 1], [0, 0.9])
    scale = s.tail_scales[1]
    q = np.array([1e-12, 1e-17, 1e-300])
    np.testing.assert_allclose(s.isf(q), 1 + scale * np.log(0.1 / q), rtol=1e-14)
    np.testing.assert_allclose(s.to_scipy().isf(q), s.isf(q), rtol=0)


def test_knot_magnitudes_are_kept_moderate():
    with pytest.raises(KnotError, match="larger units"):
        Sketch([0, 1e101], [0, 1])
    with pytest.raises(KnotError, match="smaller units"):
        Sketch([0, 1e-120, 1], [0, 0.5, 1])


def test_piece_ends_are_the_knots_probabilities_even_when_xa_plus_h_rounds_up():
    # -248588.658 + 524288.658 rounds to 275700.00000000006 > x[-1]; the last piece must
    # still end at p = 2/3 (then the atom), not at 1 (found by hypothesis)
    s = Sketch([-248589.0, -248588.658, 275700.0, 275700.0], [2 / 3, 2 / 3, 2 / 3, 1.0])
    assert s._pieces.pr.tolist() == [2 / 3, 2 / 3]
    assert s.cdf(275699.0) == 2 / 3 and s.cdf(275700.0) == 1.0
    assert s.sample(100, rng=1).max() == 275700.0


def test_slow_path_stays_below_an_atom_after_a_wide_piece():
    # found by hypothesis: a cubic piece from -322211.751 to an atom at 0; rounding at that
    # magnitude put the table inverse at u = p[1] a hair above the atom's x
    s = Sketch(
        [-322211.751, 0.0, 0.0, 1.9, 640732.021, 892263.412, 1000000.0],
        [
            0.0,
            0.2622616537988003,
            0.40050778192200964,
            0.40050778192200964,
            0.40050778192200964,
            0.40050778192200964,
            0.6375219533417462,
        ],
        interpolation="pchip",
        lower_tail=BoundedTail(-983317.6265),
        upper_tail=BoundedTail(1661105.8755, density="taper"),
    )
    u = np.r_[np.linspace(0, 1, 20001), s.p]
    u.sort()
    x = s.sampler().ppf(u)
    assert np.all(np.diff(x) >= 0)
    assert s.sampler().ppf(s.p[1]) <= 0.0


def test_table_ppf_monotone_across_a_knot_at_large_x():
    # found by hypothesis: at u = 0.95 the interval's end rounded one ulp above the knot
    # x = 435829.197 where the next (steep) piece starts
    s = Sketch(
        [0.0, 0.0, 365907.049, 435829.197, 435830.0, 435831.0],
        [0.0, 0.8608876763943829, 0.8608876763943829, 0.95, 0.9666666666666667, 0.9666666666666667],
    )
    u = np.r_[np.linspace(0, 1, 2001), s.p, np.nextafter(s.p, 1)]
    u.sort()
    assert np.all(np.diff(s.sampler().ppf(u)) >= 0)
    assert s.sampler().ppf(0.95) <= 435829.197
