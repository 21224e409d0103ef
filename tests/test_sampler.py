"""The compiled sampler: reproducibility, chunking, memory, bad input."""

from __future__ import annotations

import tracemalloc

import numpy as np
import pytest

from cdfsketch import Sampler, Sketch


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
    assert s.sampler() is s.sampler()


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
        (lambda f: f.sample(3, chunk=0), "chunk must be a positive integer"),
        (lambda f: f.ppf(2.0), r"probabilities in \[0, 1\]"),
        (lambda f: f.ppf(np.nan), "NaN"),
    ],
)
def test_bad_input(call, match):
    with pytest.raises(ValueError, match=match):
        call(Sketch([0, 1], [0, 1]).sampler())


def test_bad_tolerance():
    with pytest.raises(ValueError, match="u_tolerance must be a float"):
        Sampler(Sketch([0, 1], [0, 1]), u_tolerance=0.5)


def test_lower_exponential_tail_handles_u_zero():
    s = Sketch([0, 1], [0.5, 1])
    fast = s.sampler()
    assert fast.ppf(0.0) == -np.inf  # the support's end, by definition
    # a draw of exactly u = 0 (probability 2^-53) maps to a finite value far in the tail
    x = np.empty(1)
    fast._transform(np.zeros(1), x, fast._work(1))
    assert np.isfinite(x[0]) and x[0] < -10
