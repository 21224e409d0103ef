"""Automatic knots inside the DKW band (cdfsketch.autoknots.from_data)."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.stats as st
from hypothesis import given, settings
from hypothesis import strategies as hs

from cdfsketch import BoundedTail, Sketch, data_fingerprint, load
from cdfsketch.elicit import autoknots, from_data
from cdfsketch.empirical import ECDF, DataError


def _mixture(size, rng):
    a = st.norm(0, 1).rvs(size=size, random_state=rng)
    b = st.norm(5, 0.5).rvs(size=size, random_state=rng)
    return np.where(rng.random(size) < 0.6, a, b)


# seeded samples of scipy distributions (n=2000, seed 20240517). Knot counts observed when
# recorded with the minimum-link construction, (linear, pchip): normal (4, 9), gamma (5, 10),
# lognormal (5, 11), uniform (2, 2), mixture (6, 6); the greedy construction before it needed
# (4, 12), (6, 17), (8, 20), (2, 2), (7, 18). The bounds are the current counts, so a change
# that needs more knots is noticed.
CASES = {
    "normal": (lambda rng: st.norm(10, 2).rvs(size=2000, random_state=rng), 4, 9),
    "gamma": (lambda rng: st.gamma(2.0).rvs(size=2000, random_state=rng), 5, 10),
    "lognormal": (lambda rng: st.lognorm(0.8).rvs(size=2000, random_state=rng), 5, 11),
    "uniform": (lambda rng: st.uniform(0, 3).rvs(size=2000, random_state=rng), 2, 2),
    "mixture": (lambda rng: _mixture(2000, rng), 6, 6),
}


def _inside(sketch: Sketch, data: np.ndarray, level: float) -> float:
    """Largest excursion outside the band, checked independently of autoknots' own check."""
    band = ECDF(data).band(level=level)
    grid = np.linspace(data.min() - 1, data.max() + 1, 50_001)
    worst = max(
        np.max(band.lower(grid) - sketch.cdf(grid)), np.max(sketch.cdf(grid) - band.upper(grid))
    )
    # at every data value from both sides: the band steps there
    u = np.unique(data)
    left = np.nextafter(u, -np.inf)
    for pts in (u, left):
        worst = max(
            worst,
            np.max(band.lower(pts) - sketch.cdf(pts)),
            np.max(sketch.cdf(pts) - band.upper(pts)),
        )
    # just below the left neighbour of each data value: the upper edge of the previous step
    worst = max(worst, np.max(sketch.cdf(left) - band.upper(left)))
    return float(worst)


@pytest.mark.parametrize("name", list(CASES))
@pytest.mark.parametrize("interpolation", ["linear", "pchip"])
def test_inside_band_with_few_knots(name, interpolation):
    make, lin_bound, pchip_bound = CASES[name]
    data = make(np.random.default_rng(20240517))
    s = from_data(data, interpolation=interpolation)
    assert s.interpolation == interpolation
    assert _inside(s, data, 0.95) <= 0  # source: DKW-Massart band (Massart 1990)
    assert s.provenance["extra"]["max_excursion"] <= 0
    assert len(s) <= (lin_bound if interpolation == "linear" else pchip_bound), len(s)
    assert s.x[0] == data.min() and s.x[-1] == data.max()
    assert s.p[0] == 0.0 and s.p[-1] == 1.0


def test_uniform_needs_about_two_knots():
    # the true CDF of U(0, 3) is a single line: a band-consistent sketch needs no more than a
    # few knots (common practice, no source)
    data = st.uniform(0, 3).rvs(size=5000, random_state=np.random.default_rng(1))
    assert len(from_data(data)) <= 3


def test_level_changes_width_and_knots():
    data = st.norm().rvs(size=5000, random_state=np.random.default_rng(4))
    wide, narrow = from_data(data, level=0.999), from_data(data, level=0.5)
    assert wide.provenance["extra"]["eps"] > narrow.provenance["extra"]["eps"]
    assert len(wide) <= len(narrow)
    assert _inside(narrow, data, 0.5) <= 0


def test_atoms_where_ties_exceed_the_band():
    rng = np.random.default_rng(6)
    data = rng.poisson(3, 3000).astype(float)
    s = from_data(data)
    assert _inside(s, data, 0.95) <= 0
    atoms = {a.x for a in s.atoms}
    assert {0.0, 1.0, 2.0, 3.0} <= atoms
    zero_inflated = np.r_[np.zeros(300), rng.exponential(size=700)]
    z = from_data(zero_inflated)
    assert _inside(z, zero_inflated, 0.95) <= 0
    # the band forces a jump at 0 of any size within ε of the tie's share 0.3
    eps = z.provenance["extra"]["eps"]
    assert z.atoms[0].x == 0.0 and abs(z.atoms[0].mass - 0.3) <= eps


def test_provenance_and_spec_round_trip():
    data = st.gamma(3.0).rvs(size=500, random_state=np.random.default_rng(2))
    s = from_data(data, name="repair time", units="h", upper_tail=BoundedTail(100.0))
    prov = s.provenance
    assert prov["method"] == "automatic knots inside the 95% DKW band"
    assert prov["data"] == data_fingerprint(data)
    extra = prov["extra"]
    assert extra["knots"] == len(s) and extra["n"] == 500 and extra["level"] == 0.95
    assert extra["eps"] == pytest.approx(np.sqrt(np.log(40) / 1000))  # Massart 1990 formula
    back = load(s.to_json())
    np.testing.assert_array_equal(back.x, s.x)
    np.testing.assert_array_equal(back.p, s.p)
    assert back.upper_tail == BoundedTail(100.0)
    assert back.provenance["extra"] == extra and back.provenance["data"] == prov["data"]
    assert s.name == "repair time" and s.units == "h"


def test_top_level_from_data_is_the_elicit_one():
    import cdfsketch.elicit

    assert cdfsketch.elicit.from_data is from_data


def test_nan_dropped_with_warning():
    data = np.r_[st.norm().rvs(size=200, random_state=np.random.default_rng(3)), np.nan]
    with pytest.warns(UserWarning, match="Dropped 1 missing"):
        s = from_data(data)
    assert s.provenance["data"]["n"] == 200


@settings(max_examples=40, deadline=None)
@given(
    seed=hs.integers(0, 2**32 - 1),
    n=hs.integers(2, 3000),
    rounding=hs.sampled_from([None, 0, 1]),
    level=hs.sampled_from([0.5, 0.9, 0.95, 0.99]),
    interpolation=hs.sampled_from(["linear", "pchip"]),
)
def test_inside_band_property(seed, n, rounding, level, interpolation):
    rng = np.random.default_rng(seed)
    data = np.r_[0.0, 1.0, rng.standard_t(3, n) * 3]
    if rounding is not None:
        data = np.round(data, rounding)
    s = from_data(data, level=level, interpolation=interpolation)
    assert _inside(s, data, level) <= 0
    assert s.provenance["extra"]["max_excursion"] <= 0


def test_bimodal_audit_seeds_need_eight_knots():
    # issue audit: bimodal n = 1e4, seeds 1-5, 95 % band; an exhaustive minimum-link search
    # found 8 knots every time (the greedy construction needed 15, 8, 12, 11, 10)
    for seed in range(1, 6):
        rng = np.random.default_rng(seed)
        n = 10_000
        data = np.where(rng.random(n) < 0.6, rng.normal(0, 1, n), rng.normal(5, 0.5, n))
        s = from_data(data)
        assert len(s) == 8, (seed, len(s))
        assert _exact_excursion(data, s, 0.95) <= 0


@pytest.mark.parametrize("k", [2, 3, 4, 5, 6, 7])
def test_knot_budget_gives_at_most_k_knots_closest_found(k):
    data = _mixture(3000, np.random.default_rng(20240517))
    s = from_data(data, max_knots=k)
    extra = s.provenance["extra"]
    assert len(s) <= k and extra["max_knots"] == k
    exact = _exact_excursion(data, s, 0.95)
    assert exact <= extra["max_excursion"] + 1e-12  # stored excursion is the measured one
    assert extra["max_excursion"] <= extra["widening"] + 1e-9  # inside the widened band
    # the widening found is the smallest (to the stated precision) for which the
    # minimum-link count fits: a widening 1/(1+precision) smaller, on the exact windows,
    # needs more knots
    w = extra["widening"]
    if w > 0:
        lo0, hi0 = ECDF(data).band(level=0.95).windows()
        smaller = w / (1 + autoknots.BUDGET_PRECISION) * (1 - autoknots.BUDGET_OUTLINE)
        lo, hi = autoknots._widened(lo0, hi0, smaller)
        assert autoknots._linear_knots(ECDF(data).x, lo, hi, max_knots=k) is None


def test_knot_budget_inside_the_band_when_enough():
    data = _mixture(2000, np.random.default_rng(20240517))
    needed = len(from_data(data))
    s = from_data(data, max_knots=needed)
    assert len(s) == needed and s.provenance["extra"]["widening"] == 0.0
    assert _inside(s, data, 0.95) <= 0
    fewer = [from_data(data, max_knots=k).provenance["extra"]["max_excursion"] for k in (2, 4)]
    assert fewer[0] >= fewer[1] > 0  # fewer knots, further outside


@pytest.mark.parametrize("kind", ["skewed", "heavy", "ties", "unsorted"])
def test_knot_budget_on_large_samples_of_any_shape(kind):
    rng = np.random.default_rng(3)
    n = 300_000
    data = {
        "skewed": rng.lognormal(0, 1.2, n),
        "heavy": rng.standard_t(1.5, n),
        "ties": np.round(np.where(rng.random(n) < 0.6, rng.normal(20, 3, n), rng.normal(50, 5, n))),
        "unsorted": rng.permutation(np.linspace(0, 1, n) ** 3),
    }[kind]
    s = from_data(data, max_knots=7)
    assert len(s) <= 7
    assert _exact_excursion(data, s, 0.95) <= s.provenance["extra"]["max_excursion"] + 1e-12


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"interpolation": "cubic"}, "interpolation must be one of 'linear', 'pchip'"),
        ({"level": 1.0}, "level must be a finite number in \\(0, 1\\)"),
        ({"max_knots": 1}, "max_knots must be an integer ≥ 2"),
        ({"max_knots": 2.5}, "max_knots must be an integer ≥ 2"),
    ],
)
def test_bad_options(kwargs, match):
    with pytest.raises(ValueError, match=match):
        from_data([1.0, 2.0, 3.0], **kwargs)


@pytest.mark.parametrize(
    ("data", "match"),
    [
        ([5.0, 5.0], "at least two distinct values; got only 5.0"),
        ([1.0, np.inf], "must be finite"),
        (np.ones((2, 2)), "one-dimensional"),
    ],
)
def test_bad_data(data, match):
    with pytest.raises(DataError, match=match):
        from_data(data)


def _exact_excursion(data: np.ndarray, sketch, level: float) -> float:
    """Excursion from the DKW band, straight from the definitions on every data value.

    F_n(t) = #{x_i <= t} / n (the textbook ECDF) at and just below every distinct value;
    eps = sqrt(ln(2 / alpha) / (2 n)) (Massart 1990, Ann. Probab. 18:1269, tight constant).
    """
    xs = np.sort(data)
    n = xs.size
    eps = np.sqrt(np.log(2 / (1 - level)) / (2 * n))
    u = np.unique(xs)
    f = np.searchsorted(xs, u, side="right") / n
    f_left = np.searchsorted(xs, u, side="left") / n
    g = sketch.cdf(u)
    g_left = sketch.cdf(np.nextafter(u, -np.inf))
    return float(
        max(np.max(np.maximum(f - eps, 0) - g), np.max(g_left - np.minimum(f_left + eps, 1)))
    )


@pytest.mark.parametrize("interp", ["linear", "pchip"])
@pytest.mark.parametrize("kind", ["lognormal", "ties"])
def test_large_samples_use_the_outline_and_stay_inside_the_exact_band(kind, interp):
    rng = np.random.default_rng(21)
    n = 250_000
    if kind == "lognormal":
        x = rng.lognormal(0.0, 1.0, n)
    else:  # many distinct values and one tie heavier than the band's width (an atom)
        x = np.r_[rng.normal(0, 1, n), np.full(4000, 0.25)]
    assert np.unique(x).size > autoknots.DECIMATE_ABOVE
    s = from_data(x, interpolation=interp)
    extra = s.provenance["extra"]
    eps = extra["eps"]
    assert 0 < extra["outline_tolerance"] < eps / 16  # decimated, with the stated tolerance
    assert extra["max_excursion"] <= 0
    exact = _exact_excursion(x, s, 0.95)
    assert exact <= 0  # inside the exact band on the full data
    assert exact <= extra["max_excursion"] + 1e-12  # the stored value is an upper bound
    if kind == "ties":
        assert any(a.x == 0.25 for a in s.atoms)


def test_outline_path_needs_about_as_many_knots_as_the_exact_path(monkeypatch):
    x = np.random.default_rng(5).gamma(3.0, 2.0, 60_000)
    exact = from_data(x)
    monkeypatch.setattr(autoknots, "DECIMATE_ABOVE", 1000)
    fast = from_data(x)
    assert fast.provenance["extra"]["outline_tolerance"] > 0
    assert exact.provenance["extra"]["outline_tolerance"] == 0
    assert _exact_excursion(x, fast, 0.95) <= 0
    # a band narrower by < eps/16 on one side: a knot or two more at most (common
    # practice, no source); never fewer, as the exact path is the minimum
    assert len(exact) <= len(fast) <= len(exact) + 2


# ---------------------------------------------------------------- minimum-link optimality


def _random_corridor(rng):
    b = int(rng.integers(3, 7))
    x = np.sort(rng.uniform(0, 10, b + 1))
    if rng.random() < 0.3:  # clustered values: gaps much smaller than the distances
        x = np.round(x, 0) + np.arange(b + 1) * 1e-3
    p = np.sort(rng.uniform(0, 1, b + 1))
    p[0], p[-1] = 0.0, 1.0
    eps = rng.uniform(0.04, 0.3)
    lo = np.maximum(p - eps, 0.0)
    hi = np.minimum(np.r_[0.0, p[:-1]] + eps, 1.0)
    s0 = rng.uniform(0, 0.05)
    start = (s0, s0 + rng.uniform(0, 0.05)) if rng.random() < 0.4 else (0.0, 0.0)
    end = (0.0, 1.0) if rng.random() < 0.3 else (1.0, 1.0)
    ok = not np.any(lo[1:-1] > hi[1:-1]) and start[0] <= hi[1] and not np.any(lo[1:-1] > end[1])
    return (x, lo, hi, start, end) if ok else None


def test_fewest_links_is_the_minimum_against_exhaustive_search():
    # every path shape of 1, 2, … links checked by linear feasibility (scipy.optimize.linprog)
    from _minlink_brute import brute_min_links

    from cdfsketch.elicit.minlink import fewest_links

    checked = 0
    for seed in range(100):
        case = _random_corridor(np.random.default_rng(seed))
        if case is None:
            continue
        x, lo, hi, start, end = case
        kx, ky = fewest_links(x, lo, hi, start, end)
        assert len(kx) - 1 == brute_min_links(x, lo, hi, start, end, max_links=7), seed
        g = np.interp(x[1:-1], kx, ky)  # continuous: both sides of each window alike
        assert np.all(g >= lo[1:-1] - 1e-9) and np.all(g <= hi[1:-1] + 1e-9), seed
        assert start[0] - 1e-12 <= ky[0] <= start[1] + 1e-12
        assert end[0] - 1e-12 <= ky[-1] <= end[1] + 1e-12
        assert np.all(np.diff(kx) >= 0) and np.all(np.diff(ky) >= 0)
        checked += 1
    assert checked >= 30


@pytest.mark.parametrize("seed", range(8))
def test_from_data_is_minimal_on_small_samples(seed):
    # small samples in general position: the sketch's link count equals the exhaustive
    # minimum through the same (margin-narrowed) windows, and it is inside the band
    from _minlink_brute import brute_min_links

    rng = np.random.default_rng(100 + seed)
    data = rng.gamma(2.0, 1.0, int(rng.integers(6, 10)))
    level = 0.3
    s = from_data(data, level=level)
    assert _inside(s, data, level) <= 0
    e = ECDF(data)
    lo0, hi0 = e.band(level=level).windows()
    lo, hi = autoknots._narrowed(lo0, hi0)
    if lo[0] > 0 or hi[-1] < 1 or np.any(lo > hi):
        pytest.skip("the band forces an atom here")
    assert len(s) - 1 == brute_min_links(e.x, lo, hi, (0.0, 0.0), (1.0, 1.0), max_links=7)


def test_from_ecdf_is_from_data_on_a_built_ecdf():
    from cdfsketch.elicit import from_ecdf

    data = _mixture(1500, np.random.default_rng(8))
    fp = data_fingerprint(data)
    for k in (None, 4):
        a = from_data(data, max_knots=k)
        b = from_ecdf(ECDF(data), fingerprint=fp, max_knots=k)
        assert np.array_equal(a.x, b.x) and np.array_equal(a.p, b.p)
        assert a.provenance == b.provenance
    assert "data" not in from_ecdf(ECDF(data)).provenance
    with pytest.raises(TypeError, match="must be a cdfsketch ECDF"):
        from_ecdf(data)
