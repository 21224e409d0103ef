"""The compiled sampler: reproducibility, chunking, memory, bad input."""

from __future__ import annotations

import tracemalloc

import numpy as np
import pytest

from cdfsketch import BoundedTail, Sampler, Sketch


def test_bit_identical_whatever_the_chunk(zoo):
    for s in zoo:
        fast = s.sampler()
        ref = fast.sample(10_001, rng=77)
        for chunk in (1, 7, 1000, 1 << 14, 1 << 20):
            np.testing.assert_array_equal(fast.sample(10_001, rng=77, chunk=chunk), ref)


def test_sample_equals_table_ppf_of_the_generators_uniforms(zoo):
    # the draws are sampler.ppf applied to rng.random(n) from the same seed
    for s in zoo:
        u = np.random.default_rng(5).random(5000)
        np.testing.assert_array_equal(s.sample(5000, rng=5), s.sampler().ppf(u))


def test_sampler_is_cached_and_sketch_stays_immutable():
    s = Sketch([0, 1, 3], [0, 0.5, 1], interpolation="pchip")
    before = (s.x.copy(), s.p.copy(), s.cdf(np.linspace(-1, 4, 50)), hash(s))
    assert s.sampler() is s.sampler()
    s.sample(100, rng=1)
    after = (s.x, s.p, s.cdf(np.linspace(-1, 4, 50)), hash(s))
    assert all(np.array_equal(a, b) for a, b in zip(before[:3], after[:3], strict=True))
    assert before[3] == after[3]
    with pytest.raises(AttributeError, match="immutable"):
        s.x = np.array([0.0, 2.0])  # type: ignore[misc]
    with pytest.raises(ValueError, match="read-only"):
        s.x[0] = 5.0
    with pytest.raises(ValueError, match="read-only"):
        s.sampler()._a[0] = 1.0  # the compiled tables are shared by threads: read-only


def test_memory_is_order_chunk_not_n():
    s = Sketch([0, 1, 3, 4], [0.05, 0.5, 0.7, 0.99], interpolation="pchip")
    fast = s.sampler()
    peaks = []
    for n in (10**5, 10**6):
        tracemalloc.start()
        out = fast.sample(n, rng=1)
        peaks.append(tracemalloc.get_traced_memory()[1] - out.nbytes)
        tracemalloc.stop()
    assert peaks[1] < 2 * peaks[0] + 100_000  # does not grow with n
    assert peaks[1] < 4_000_000


@pytest.mark.parametrize(
    ("call", "match"),
    [
        (lambda f: f.sample(-1), "non-negative integer"),
        (lambda f: f.sample((2, "a")), "non-negative integer"),
        (lambda f: f.sample(3, chunk=0), r"chunk must be an integer ≥ 1; got 0"),
        (lambda f: f.ppf(2.0), r"probabilities in \[0, 1\]"),
        (lambda f: f.ppf(np.nan), "NaN"),
    ],
)
def test_bad_input(call, match):
    with pytest.raises(ValueError, match=match):
        call(Sketch([0, 1], [0, 1]).sampler())


def test_bad_tolerance():
    with pytest.raises(ValueError, match=r"u_tolerance must be a finite number in \(0, 0.001\)"):
        Sampler(Sketch([0, 1], [0, 1]), u_tolerance=0.5)


def test_lower_exponential_tail_handles_u_zero():
    s = Sketch([0, 1], [0.5, 1])
    fast = s.sampler()
    assert fast.ppf(0.0) == -np.inf  # the support's end, by definition
    # a draw of exactly u = 0 (probability 2^-53) maps to a finite value far in the tail
    x = np.empty(1)
    fast._fill(x, 1, lambda buf, lo: buf.fill(0.0))  # as sample() does, with u = 0
    assert np.isfinite(x[0]) and x[0] < -10


LINEAR_CASES = [
    # knots exactly on cell edges (a 3-piece sketch has 4096 cells)
    Sketch([0, 1, 2, 5], [0, 1024 / 4096, 3072 / 4096, 1]),
    # atoms, one of them exactly on a cell edge
    Sketch([0, 1, 1, 2, 2, 3], [0, 0.25, 0.5, 0.6, 0.6 + 2**-12, 1]),
    # a steep piece through x = 0 at high u (a line anchored at u = 0 would cancel here)
    Sketch([-1, -1e-3, 1e-3, 1], [0, 0.9, 0.9 + 1e-7, 1]),
    # far from zero, narrow in x
    Sketch([1e6, 1e6 + 1e-3, 1e6 + 2e-3], [0, 0.3, 1]),
    # an atom ending one ulp below a cell edge: the next cell's rounded start would fall
    # below the atom, so that cell must stay on the slow path (found by a search over edges)
    Sketch([-0.9, 0.1, 0.1, 1.1], [0, 0.3, float(np.nextafter(1401 / 4096, 0)), 1]),
    # many knots, uneven spacing
    Sketch(
        np.cumsum(np.r_[0, np.random.default_rng(4).uniform(1e-3, 3, 499)]), np.linspace(0, 1, 500)
    ),
]


@pytest.mark.parametrize("index", range(len(LINEAR_CASES)))
def test_linear_sketches_sample_their_exact_inverse_to_rounding(index):
    # Each cell holds x = a + b τ, a the exact inverse at the cell's start and b the step
    # to its end: the result is the closed form to a few roundings of x and of the knots
    # around it, eps (|x| + |x_left| + |x_right|) (standard floating-point error analysis of
    # a multiply-add; Higham 2002, sec. 2.2)
    s = LINEAR_CASES[index]
    fast = s.sampler()
    assert not fast._cubic
    cells = fast._cells
    edges = np.arange(cells + 1) / cells
    u = np.r_[
        np.random.default_rng(index).random(100_000),
        edges,
        np.nextafter(edges, 0),
        s.p,
        np.nextafter(s.p, 0),
        np.nextafter(s.p, 1),
    ]
    u = np.sort(u[(u >= 0) & (u <= 1)])
    x = fast.ppf(u)
    exact = s.ppf(u)
    k = np.clip(np.searchsorted(s.x, exact), 1, s.x.size - 1)
    scale = np.abs(x) + np.abs(s.x[k - 1]) + np.abs(s.x[k])
    assert np.all(np.abs(x - exact) <= 4 * np.finfo(float).eps * scale)
    for atom in s.atoms:  # draws strictly inside an atom's jump land on its own x
        jump = (u > s.cdf(np.nextafter(atom.x, -np.inf))) & (u < s.cdf(atom.x))
        assert jump.sum() > 10 and np.all(x[jump] == atom.x)
    assert np.all(np.diff(x) >= 0)  # monotone across cells and pieces
    lo, hi = s.support
    assert np.all((x >= lo) & (x <= hi))


def test_never_steps_down_at_cell_edges(zoo):
    # every cell's values lie between the inverse at its two edges (the sampler's own
    # edges, within a few ulps of the exact ppf): checked at the edges themselves and one
    # ulp either side, where fast and slow cells meet
    rng = np.random.default_rng(0)
    for s in zoo:
        fast = s.sampler()
        edges = np.arange(fast._cells + 1) / fast._cells
        u = np.r_[rng.random(20_000), edges, np.nextafter(edges, 0), np.nextafter(edges, 1)]
        u = np.unique(np.r_[u, s.p, np.nextafter(s.p, 0), np.nextafter(s.p, 1)])
        u = u[(u >= 0) & (u <= 1)]
        x = fast.ppf(u)
        assert np.all(np.diff(x) >= 0), s
        at_edges, own = fast.ppf(edges[:-1]), fast._edges[:-1]
        assert np.all((at_edges >= own[:-1]) & (at_edges <= own[1:])), s
        exact = s.ppf(edges)
        near = np.isfinite(exact)
        tol = 8 * np.finfo(float).eps * (np.abs(exact[near]) + np.abs(s.x).max())
        assert np.all(np.abs(own[near] - exact[near]) <= tol), s


def test_many_linear_pieces_keep_few_slow_cells_with_a_taper_tail():
    # a performance cliff found in review: one taper tail (a quadratic piece) used to cut a
    # 1000-piece linear sketch to 4096 cells, a quarter of them slow
    x = np.cumsum(np.r_[1.0, np.random.default_rng(2).uniform(0.1, 1.0, 999)])
    s = Sketch(x, np.linspace(0.01, 1, 1000), lower_tail=BoundedTail(0.0, density="taper"))
    fast = s.sampler()
    assert fast.n_slow_cells < 0.02 * fast._cells, (fast.n_slow_cells, fast._cells)
