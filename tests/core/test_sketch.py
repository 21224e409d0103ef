"""The Sketch value: behaviour, editing, immutability, bad input."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cdfsketch import Atom, BoundedTail, ExponentialTail, KnotError, Sketch


def test_scalars_in_scalars_out_and_arrays_keep_shape():
    s = Sketch([0, 1, 3], [0, 0.5, 1])
    assert isinstance(s.cdf(1.0), float)
    assert isinstance(s.ppf(0.5), float)
    assert isinstance(s.pdf(0.5), float)
    assert s.cdf(np.zeros((2, 3))).shape == (2, 3)
    assert s.ppf(np.full((4, 1), 0.3)).shape == (4, 1)


def test_linear_is_piecewise_uniform():
    s = Sketch([0, 1, 3], [0, 0.5, 1])
    np.testing.assert_allclose(s.pdf([0.5, 2.0, -1, 4]), [0.5, 0.25, 0, 0])
    np.testing.assert_allclose(s.cdf([0.5, 2.0]), [0.25, 0.75])
    np.testing.assert_allclose(s.ppf([0.25, 0.75]), [0.5, 2.0])


def test_atoms_right_continuous_cdf_and_generalized_inverse():
    s = Sketch([0, 1, 1, 2], [0, 0.2, 0.7, 1])
    assert s.atoms == (Atom(1.0, pytest.approx(0.5)),)
    assert s.cdf(1.0) == 0.7  # right-continuous
    assert s.cdf(np.nextafter(1.0, 0)) == pytest.approx(0.2)
    # smallest x with F(x) >= u
    np.testing.assert_allclose(s.ppf([0.2, 0.2000001, 0.5, 0.7]), [1, 1, 1, 1])
    assert s.ppf(0.7000001) > 1


def test_flat_stretch_gets_no_mass():
    s = Sketch([0, 1, 2, 3], [0, 0.5, 0.5, 1])
    assert s.prob_between(1, 2) == 0
    assert s.ppf(0.5) == 1.0  # smallest x: the left end of the flat stretch
    assert s.ppf(0.5000001) == pytest.approx(2.0, abs=1e-5)


def test_support_and_ppf_ends():
    assert Sketch([0, 1], [0, 1]).support == (0.0, 1.0)
    s = Sketch([0, 1], [0.1, 0.9])
    assert s.support == (-math.inf, math.inf)
    assert s.ppf(0) == -math.inf and s.ppf(1) == math.inf
    b = Sketch([0, 1], [0.1, 0.9], lower_tail=BoundedTail(-2.0), upper_tail=BoundedTail(3.0))
    assert b.support == (-2.0, 3.0)
    assert b.ppf(0) == -2.0 and b.ppf(1) == 3.0
    # leading flat knot: the mass starts at the second knot
    assert Sketch([0, 1, 2], [0, 0, 1]).support == (1.0, 2.0)


def test_tail_mass_is_exactly_what_outer_knots_leave():
    s = Sketch(
        [2, 3, 5],
        [0.2, 0.6, 0.8],
        lower_tail=BoundedTail(0.0),
        upper_tail=ExponentialTail(scale=4.0),
    )
    assert s.cdf(2.0) == 0.2
    assert s.cdf(0.0) == 0.0
    assert s.tail_mass == (0.2, pytest.approx(0.2))
    assert s.sf(5.0) == pytest.approx(0.2, abs=1e-15)
    assert s.cdf(1e6) == 1.0


def test_taper_tail_density_falls_to_zero_at_limit():
    s = Sketch([2, 3], [0.3, 1], lower_tail=BoundedTail(0.0, density="taper"))
    assert s.pdf(0.0) == 0.0
    assert s.pdf(1.0) == pytest.approx(0.15)  # 2 m (x - L) / (x0 - L)^2
    assert s.cdf(1.0) == pytest.approx(0.3 * 0.25)


def test_derived_exponential_scale_continues_density():
    s = Sketch([0, 1, 2], [0.1, 0.5, 0.9])
    lower, upper = s.tail_scales
    # linear: the outer segment density is 0.4; scale = mass / density
    assert lower == pytest.approx(0.1 / 0.4) and upper == pytest.approx(0.1 / 0.4)
    assert s.pdf(np.nextafter(0.0, -1)) == pytest.approx(s.pdf(0.0))
    assert s.pdf(2.0) == pytest.approx(s.pdf(np.nextafter(2.0, 0)))


def test_derived_scale_falls_back_to_knot_range_when_density_is_zero():
    # all knots at one p: no density to continue; the x range of the knots is used
    assert Sketch([0, 4], [0.5, 0.5]).tail_scales == (4.0, 4.0)
    s = Sketch([0, 1], [0.5, 0.5], lower_tail=ExponentialTail(1.0), upper_tail=ExponentialTail(2.0))
    assert s.mean() == pytest.approx(0.5 * (0 - 1) + 0.5 * (1 + 2))


def test_derived_scale_never_zero_and_at_most_a_stated_scales_limit():
    # mass / density underflows to 0: the knot span instead (found in review)
    assert Sketch([0, 1e-67, 1], [1e-263, 0.5, 1]).tail_scales[0] == 1.0
    # 5e109 by the rule: capped at 1e100 so it can be restated, e.g. by pool()
    s = Sketch([0, 1e100], [0.5, 0.5 + 1e-10])
    assert s.tail_scales == (1e100, 1e100)
    assert Sketch([0, 1e100], [0.5, 0.6], lower_tail=ExponentialTail(s.tail_scales[0]))


def test_immutable_and_read_only_arrays():
    s = Sketch([0, 1], [0, 1])
    with pytest.raises(AttributeError, match="immutable"):
        s.x = np.array([0, 2])
    with pytest.raises(ValueError, match="read-only"):
        s.x[0] = 5
    with pytest.raises(ValueError, match="read-only"):
        s.p[0] = 0.5


def test_constructor_copies_input():
    x = np.array([0.0, 1.0])
    s = Sketch(x, [0, 1])
    x[1] = 5
    assert s.x[1] == 1.0


def test_move_knot_clamps_and_leaves_others():
    s = Sketch([0, 1, 2, 3], [0, 0.2, 0.6, 1])
    t = s.move_knot(2, x=-10, p=0.99)
    assert t.x[1] < t.x[2] and t.p[2] == 0.99
    assert s.move_knot(2, p=1.5).p[2] == 1.0
    assert np.array_equal(np.delete(t.x, 2), np.delete(s.x, 2))
    assert s.x[2] == 2  # original unchanged
    b = Sketch([1, 2], [0.2, 1], lower_tail=BoundedTail(0.0))
    assert b.move_knot(0, x=-5).x[0] > 0.0


def test_with_and_without_knot():
    s = Sketch([0, 2], [0, 1])
    t = s.with_knot(1, 5.0)
    assert t.p.tolist() == [0, 1, 1]
    j = s.with_knot(2, 0.5)  # a knot at an existing x makes a jump
    assert j.atoms == (Atom(2.0, 0.5),) and j.p.tolist() == [0, 0.5, 1]
    with pytest.raises(KnotError, match="At most two knots"):
        j.with_knot(2, 0.7)
    assert t.without_knot(1).x.tolist() == [0, 2]
    with pytest.raises(KnotError, match="at least 2 knots"):
        s.without_knot(0)
    with pytest.raises(KnotError, match="integer"):
        t.without_knot(7)


def test_replace_validates_and_rejects_unknown_fields():
    s = Sketch([0, 1], [0, 1], name="delay", units="h")
    t = s.replace(interpolation="pchip")
    assert t.name == "delay" and t.interpolation == "pchip"
    with pytest.raises(TypeError, match=r"replace\(\) takes only x, p"):
        s.replace(colour="red")


@pytest.mark.parametrize(
    ("args", "kwargs", "exc", "match"),
    [
        (([0, 1], [0, 1]), {"interpolation": "cubic"}, ValueError, "interpolation must be one of"),
        (([0, 1], [0, 1]), {"lower_tail": "bounded"}, ValueError, "lower_tail must be a Bounded"),
        (([0, 1], [0, 1]), {"name": 3}, ValueError, "name must be a str; got int 3"),
        (([0, 1], [0, 1]), {"provenance": [1]}, ValueError, "provenance must be a mapping"),
        (([0, 1], [0.5, 1]), {"lower_tail": BoundedTail(0.5)}, KnotError, "limit below"),
        (([0, 1], [0, 0.5]), {"upper_tail": BoundedTail(1.0)}, KnotError, "limit above"),
        ((["a", "b"], [0, 1]), {}, KnotError, "must be numbers"),
    ],
)
def test_constructor_bad_input(args, kwargs, exc, match):
    with pytest.raises(exc, match=match):
        Sketch(*args, **kwargs)


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda s: s.ppf(1.5), r"probabilities in \[0, 1\]; got 1.5"),
        (lambda s: s.ppf([0.2, -0.1]), "flat index 1"),
        (lambda s: s.cdf(np.nan), "must not contain NaN"),
        (lambda s: s.cdf("abc"), "must be numbers"),
        (lambda s: s.moment(-1), "moment order k must be an integer ≥ 0"),
        (lambda s: s.sample(-3), "non-negative integer"),
        (lambda s: s.sample(2.5), "non-negative integer"),
        (lambda s: s.prob_between(3, 1), "a ≤ b"),
    ],
)
def test_method_bad_input(call, match):
    with pytest.raises((ValueError, TypeError), match=match):
        call(Sketch([0, 1, 3], [0, 0.5, 1]))


@pytest.mark.parametrize(
    ("make", "match"),
    [
        (lambda: BoundedTail(np.inf), "finite"),
        (lambda: BoundedTail("x"), r"limit must be a finite number .*\(str\)"),
        # like knot positions (|x| ≤ 1e100): a limit at 1e308 overflows the tail's slope
        (lambda: BoundedTail(-1e308), r"limit must be a finite number in \[-1e\+100, 1e\+100\]"),
        (lambda: BoundedTail(0.0, density="steep"), "density must be one of"),
        (lambda: ExponentialTail(-1.0), r"scale must be a finite number in \(0, 1e\+100\]"),
        (lambda: ExponentialTail("big"), r"scale must be a finite number .*\(str\).*or scale=None"),
    ],
)
def test_tail_bad_input(make, match):
    with pytest.raises(ValueError, match=match):
        make()


def test_equality_and_hash():
    a = Sketch([0, 1], [0, 1], name="a")
    b = Sketch([0.0, 1.0], [0.0, 1.0], name="a")
    assert a == b and hash(a) == hash(b)
    assert a != a.replace(interpolation="pchip")


def test_sample_shapes_and_rng_semantics():
    s = Sketch([0, 1, 3], [0, 0.5, 1])
    assert isinstance(s.sample(rng=1), float)
    assert s.sample((3, 2), rng=1).shape == (3, 2)
    assert s.sample(0, rng=1).shape == (0,)
    g = np.random.default_rng(5)
    a, b = s.sample(4, rng=g), s.sample(4, rng=g)
    assert not np.array_equal(a, b)  # a Generator is used (and advanced), not copied
    np.testing.assert_array_equal(
        s.sample(4, rng=5),
        np.random.default_rng(5).random(4) * 0 + s.ppf(np.random.default_rng(5).random(4)),
    )


def test_prob_helpers_match_cdf():
    s = Sketch([0, 1, 1, 3], [0, 0.4, 0.6, 1])
    assert s.prob_between(0.5, 1) == pytest.approx(s.cdf(1) - s.cdf(0.5))
    assert s.prob_above(1) == pytest.approx(0.4)


def test_knots_are_reproduced_exactly():
    # regression: a piece end computed as xa + h can round past the next knot
    # (-1 + 1.1 = 0.10000000000000009); F must still take the knot's p there
    s = Sketch([-3.5, -1, 0.1, 0.3, 7], [0.1, 0.25, 0.5, 0.75, 0.9])
    assert s.ppf(0.75) == 0.3
    rng = np.random.default_rng(3)
    for interp in ("linear", "pchip"):
        for _ in range(200):
            n = int(rng.integers(2, 9))
            x = np.sort(rng.uniform(-10, 10, n).round(1))
            p = np.sort(rng.uniform(0, 1, n).round(2))
            if np.any(np.diff(x) == 0) or np.any(np.diff(p) == 0):
                continue
            t = Sketch(x, p, interpolation=interp)
            np.testing.assert_array_equal(t.cdf(x), p)
            np.testing.assert_allclose(t.ppf(p), x, rtol=0, atol=1e-12)
