"""The constraint layer: strict checks, lenient projection, clamped moves."""

from __future__ import annotations

import numpy as np
import pytest

from cdfsketch import KnotError, check_knots, project_knots
from cdfsketch.knots import _pool_adjacent_violators, clamp_knot


@pytest.mark.parametrize(
    ("x", "p", "match"),
    [
        ([0, 1], [0, np.nan], r"finite; got p\[1\]=nan"),
        ([0, np.inf], [0, 1], r"finite; got x\[1\]=inf"),
        (["a", "b"], [0, 1], "must be numbers"),
        ([[0, 1]], [[0, 1]], "1-D sequence; got an array of shape"),
        ([], [], "at least 2 knots; got 0"),
        ([1], [0.5], "at least 2 knots; got 1"),
        ([0, 1, 2], [0, 1], "same length; got 3 x values and 2 p values"),
        ([0, 1], [0, 1.5], r"lie in \[0, 1\]; got p\[1\]=1.5"),
        ([0, 1], [-0.1, 1], r"lie in \[0, 1\]; got p\[0\]=-0.1"),
        ([0, 2, 1], [0, 0.5, 1], r"non-decreasing; got x\[2\]=1.0 < x\[1\]=2.0"),
        ([0, 1, 2], [0, 0.6, 0.5], r"non-decreasing; got p\[2\]=0.5 < p\[1\]=0.6"),
        ([0, 1, 1, 1], [0, 0.2, 0.4, 1], r"At most two knots may share an x"),
        ([0, 1, 1], [0, 0.5, 0.5], "must make a jump"),
        ([3, 3], [0, 1], "span a range of x"),
    ],
)
def test_check_knots_rejects_with_index_and_remedy(x, p, match):
    with pytest.raises(KnotError, match=match):
        check_knots(x, p)


def test_check_knots_error_names_remedy():
    with pytest.raises(KnotError, match="project_knots"):
        check_knots([0, 1, 2], [0, 0.6, 0.5])


def test_pool_adjacent_violators_matches_sklearn():
    # reference: scikit-learn's IsotonicRegression (the L2 isotonic projection)
    from sklearn.isotonic import IsotonicRegression

    rng = np.random.default_rng(4)
    for _ in range(20):
        y = rng.normal(size=rng.integers(2, 40))
        ref = IsotonicRegression().fit_transform(np.arange(y.size), y)
        np.testing.assert_allclose(_pool_adjacent_violators(y), ref, rtol=0, atol=1e-12)


def test_project_knots_is_l2_projection_not_running_max():
    # the running maximum would give [0.3, 0.5, 0.5]; PAV pools 0.5 and 0.1 into 0.3
    x, p = project_knots([0, 1, 2], [0.3, 0.5, 0.1])
    np.testing.assert_allclose(p, [0.3, 0.3, 0.3])
    assert x.tolist() == [0, 1, 2]


def test_project_knots_sorts_clips_and_drops_extra_ties():
    x, p = project_knots([1, 1, 1, 0, 2], [0.2, 0.5, 0.4, -1.0, 3.0])
    check_knots(x, p)
    assert x.tolist() == [0.0, 1.0, 1.0, 2.0]
    assert p.tolist() == [0.0, 0.2, 0.5, 1.0]


def test_project_knots_is_idempotent_and_valid():
    rng = np.random.default_rng(1)
    for _ in range(50):
        n = int(rng.integers(2, 12))
        x = rng.normal(size=n).round(1)
        p = rng.uniform(-0.2, 1.2, size=n)
        if np.ptp(x) == 0:
            continue
        x1, p1 = project_knots(x, p)
        check_knots(x1, p1)
        x2, p2 = project_knots(x1, p1)
        assert np.array_equal(x1, x2) and np.array_equal(p1, p2)


def test_project_knots_rejects_single_x():
    with pytest.raises(KnotError, match="span a range"):
        project_knots([1, 1], [0, 1])


def test_clamp_knot_never_crosses_neighbours_or_moves_others():
    x0, p0 = np.array([0.0, 1.0, 2.0, 3.0]), np.array([0.0, 0.3, 0.6, 1.0])
    x, p = clamp_knot(x0, p0, 1, new_x=10.0, new_p=2.0)
    assert x[0] < x[1] < x[2] and p[1] == 0.6
    assert np.array_equal(np.delete(x, 1), np.delete(x0, 1))
    assert np.array_equal(np.delete(p, 1), np.delete(p0, 1))
    x, p = clamp_knot(x0, p0, 0, new_x=-5.0, new_p=-1.0, x_low=-2.0)
    assert x[0] == -2.0 and p[0] == 0.0
    x, p = clamp_knot(x0, p0, -1, new_p=0.1)
    assert p[-1] == 0.6


def test_clamp_knot_keeps_jump_positive():
    x, p = clamp_knot([0, 1, 1, 2], [0, 0.3, 0.6, 1], 2, new_p=0.0)
    check_knots(x, p)
    assert p[2] > p[1]


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"i": 5}, r"integer in \[-3, 2\]; got 5"),
        ({"i": 1.0}, "integer"),
        ({"i": 1, "new_x": np.nan}, "new_x must be a finite number; got nan"),
        ({"i": 1, "new_p": "high"}, r"new_p must be a finite number; got .high. \(str\)"),
    ],
)
def test_clamp_knot_bad_input(kwargs, match):
    i = kwargs.pop("i")
    with pytest.raises(KnotError, match=match):
        clamp_knot([0, 1, 2], [0, 0.5, 1], i, **kwargs)
