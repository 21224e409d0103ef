"""Property tests (hypothesis): the constraint layer and the CDF model's invariants."""

from __future__ import annotations

import numpy as np
from _helpers import u_error
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays

from cdfsketch import BoundedTail, ExponentialTail, Sketch, check_knots, load, project_knots

finite = st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False)
probs = st.floats(-0.5, 1.5, allow_nan=False)


@st.composite
def knot_arrays(draw, min_size=2, max_size=12):
    n = draw(st.integers(min_size, max_size))
    x = draw(arrays(float, n, elements=finite))
    p = draw(arrays(float, n, elements=probs))
    return x, p


@st.composite
def sketches(draw):
    x, p = draw(knot_arrays())
    assume(np.ptp(x) > 1e-3 * max(1.0, np.abs(x).max()))
    x, p = project_knots(np.round(x, 3), p)
    assume(np.ptp(x) > 0 and p[-1] > p[0])
    interp = draw(st.sampled_from(["linear", "pchip"]))
    span = float(x[-1] - x[0])
    lower = draw(st.sampled_from([None, "bounded", "taper", "stated"]))
    upper = draw(st.sampled_from([None, "bounded", "taper", "stated"]))

    def tail(kind, side):
        if kind is None:
            return None
        if kind == "stated":
            return ExponentialTail(scale=span / 3)
        limit = x[0] - span / 2 if side == "lower" else x[-1] + span / 2
        return BoundedTail(float(limit), density="uniform" if kind == "bounded" else "taper")

    return Sketch(
        x, p, interpolation=interp, lower_tail=tail(lower, "lower"), upper_tail=tail(upper, "upper")
    )


@given(knot_arrays())
@settings(max_examples=200, deadline=None)
def test_projection_valid_and_idempotent(xp):
    x, p = xp
    assume(np.ptp(x) > 1e-90)  # positions closer than knots.MIN_SPACING merge
    x1, p1 = project_knots(x, p)
    check_knots(x1, p1)
    x2, p2 = project_knots(x1, p1)
    assert np.array_equal(x1, x2) and np.array_equal(p1, p2)


@given(sketches(), st.data())
@settings(max_examples=100, deadline=None)
def test_move_knot_never_breaks_validity(s, data):
    for _ in range(5):
        i = data.draw(st.integers(0, len(s) - 1))
        nx = data.draw(st.one_of(st.none(), finite))
        np_ = data.draw(st.one_of(st.none(), probs))
        t = s.move_knot(i, x=nx, p=np_)
        check_knots(t.x, t.p)
        others = np.arange(len(s)) != i
        assert np.array_equal(t.x[others], s.x[others])
        assert np.array_equal(t.p[others], s.p[others])
        s = t


@given(sketches())
@settings(max_examples=60, deadline=None)
def test_ppf_monotone_inside_support_and_inverts_cdf(s):
    u = np.r_[0.0, np.linspace(0, 1, 2001)[1:-1], 1.0, s.p]
    u.sort()
    x = s.ppf(u)
    assert np.all(np.diff(x) >= 0)
    lo, hi = s.support
    assert np.all((x >= lo) & (x <= hi))
    inner = (u > 0) & (u < 1)
    finite_x = np.isfinite(x)
    floor = 8 * np.max(s.pdf(x[finite_x]) * np.spacing(np.abs(x[finite_x])), initial=0)
    assert u_error(s, u[inner], x[inner]) <= 1e-12 + floor
    fast = s.sampler().ppf(u)
    assert np.all(np.diff(fast) >= 0)
    assert u_error(s, u[inner], fast[inner]) <= 1e-10 + floor
    # where fast and slow cells meet: every cell edge and one ulp either side
    edges = np.arange(s.sampler()._cells + 1) / s.sampler()._cells
    ue = np.unique(np.r_[edges, np.nextafter(edges, 0), np.nextafter(edges, 1), u])
    ue = ue[(ue >= 0) & (ue <= 1)]
    assert np.all(np.diff(s.sampler().ppf(ue)) >= 0)


@given(sketches(), st.integers(0, 2**32 - 1))
@settings(max_examples=40, deadline=None)
def test_samples_inside_support(s, seed):
    pc = s._pieces
    # every piece that holds mass has a positive rise in its polynomial
    assert np.all((pc.pr > pc.pl) <= (pc.c[1:].sum(axis=0) > 0)), (s.x, s.p)
    draws = s.sample(2000, rng=seed)
    lo, hi = s.support
    assert np.all((draws >= lo) & (draws <= hi)) and np.all(np.isfinite(draws))


@given(sketches(), st.integers(0, 2**32 - 1))
@settings(max_examples=40, deadline=None)
def test_spec_round_trip_identical_sketch_and_draws(s, seed):
    t = load(s.to_json())
    assert np.array_equal(t.x, s.x) and np.array_equal(t.p, s.p)
    assert t.interpolation == s.interpolation and t.support == s.support
    assert np.array_equal(t.sample(300, rng=seed), s.sample(300, rng=seed))
    again = load(t.to_json())
    assert again == t
