"""The one holdout split (cdfsketch.holdout): the rule, its chunked passes, its subsample."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.stats as st

import cdfsketch.holdout as holdout
from cdfsketch import _streams
from cdfsketch._validate import InputError
from cdfsketch.holdout import holdout_split, holdout_subsample


def _slow_rule(n: int, fraction: float, seed: int) -> np.ndarray:
    """The rule written the slow way: the k smallest keys by a stable sort (key, then index)."""
    keys = _streams.generator(_streams.root_seed(seed), "holdout").random(n)
    return np.sort(np.argsort(keys, kind="stable")[: round(fraction * n)])


@pytest.mark.parametrize("chunk", [7, 1 << 20])
@pytest.mark.parametrize(
    ("n", "fraction", "seed"),
    [(10, 0.3, 7), (1, 0.9, 0), (0, 0.3, 1), (500, 0.0, 2), (999, 0.77, 9)],
)
def test_split_is_the_smallest_keys_in_any_chunking(n, fraction, seed, chunk, monkeypatch):
    monkeypatch.setattr(holdout, "_CHUNK", chunk)
    train, test = holdout_split(n, fraction=fraction, rng=seed)
    np.testing.assert_array_equal(test, _slow_rule(n, fraction, seed))
    np.testing.assert_array_equal(np.sort(np.r_[train, test]), np.arange(n))
    assert test.size == round(fraction * n)
    few, held = holdout_subsample(n, fraction=fraction, size=4, rng=seed)
    assert held == test.size and few.size == min(4, held)
    np.testing.assert_array_equal(few, _slow_rule(n, few.size / n if n else 0.0, seed))
    assert np.isin(few, test).all()


def test_pinned_split():
    # the split's values, pinned (numpy's desired-array habit): a change here changes every
    # holdout score; say so in the change's message
    _train, test = holdout_split(20, fraction=0.25, rng=2026)
    np.testing.assert_array_equal(test, [1, 6, 13, 14, 16])
    np.testing.assert_array_equal(
        holdout_subsample(20, fraction=0.25, size=2, rng=2026)[0], [1, 16]
    )


def test_subsample_is_the_smallest_keys_of_the_held_out_ones():
    n, seed = 20_000, 5
    keys = _streams.generator(_streams.root_seed(seed), "holdout").random(n)
    few, held = holdout_subsample(n, fraction=0.3, size=50, rng=seed)
    np.testing.assert_array_equal(few, np.sort(np.argsort(keys, kind="stable")[:50]))
    assert held == 6000 and np.isin(few, holdout_split(n, fraction=0.3, rng=seed)[1]).all()
    whole, _ = holdout_subsample(n, fraction=0.3, size=10**9, rng=seed)
    np.testing.assert_array_equal(whole, holdout_split(n, fraction=0.3, rng=seed)[1])


def test_smaller_fractions_hold_out_subsets():
    tests = [holdout_split(300, fraction=f, rng=11)[1] for f in (0.1, 0.2, 0.5)]
    assert np.isin(tests[0], tests[1]).all() and np.isin(tests[1], tests[2]).all()


def test_every_observation_equally_likely_held_out():
    n, k, m, seeds = 40, 12, 3, 3000
    in_test = np.zeros(n)
    in_sub = np.zeros(n)
    sub_given_test = 0
    for seed in range(seeds):
        test = holdout_split(n, fraction=k / n, rng=seed)[1]
        few = holdout_subsample(n, fraction=k / n, size=m, rng=seed)[0]
        in_test[test] += 1
        in_sub[few] += 1
        sub_given_test += np.isin(few, test).sum()
    assert sub_given_test == m * seeds
    # reference: scipy.stats.chisquare (uniform inclusion, k/n and m/n per observation)
    assert st.chisquare(in_test).pvalue > 1e-4
    assert st.chisquare(in_sub).pvalue > 1e-4


def test_ties_at_the_cut_go_to_the_lower_index(monkeypatch):
    def fake_keys(_root, n):
        keys = np.array([0.5, 0.1, 0.5, 0.5, 0.9, 0.99, 0.995, 0.999])[:n]
        for start in range(0, n, 2):  # the tied keys fall in two chunks
            yield start, keys[start : start + 2]

    monkeypatch.setattr(holdout, "_keys", fake_keys)
    # the 3rd smallest key 0.5 is tied three times: indices 0 and 2 are held out, not 3
    np.testing.assert_array_equal(holdout_split(8, fraction=0.375, rng=0)[1], [0, 1, 2])
    np.testing.assert_array_equal(holdout_subsample(8, fraction=0.375, size=3, rng=0)[0], [0, 1, 2])


def test_a_window_that_misses_the_cut_is_widened(monkeypatch):
    keys = 0.99 + 0.009 * np.random.default_rng(8).random(10_000)  # all far above 0.3

    def fake_keys(_root, n):
        for start in range(0, n, 4096):
            yield start, keys[start : start + 4096]

    monkeypatch.setattr(holdout, "_keys", fake_keys)
    order = np.argsort(keys, kind="stable")
    np.testing.assert_array_equal(
        holdout_split(10_000, fraction=0.3, rng=0)[1], np.sort(order[:3000])
    )
    np.testing.assert_array_equal(
        holdout_subsample(10_000, fraction=0.3, size=40, rng=0)[0], np.sort(order[:40])
    )


def test_split_generator_rng_advances_and_options_are_checked():
    gen = np.random.default_rng(1)
    a = holdout_split(50, fraction=0.2, rng=gen)[1]
    b = holdout_split(50, fraction=0.2, rng=gen)[1]
    assert not np.array_equal(a, b)  # a Generator passed twice gives two draws
    with pytest.raises(InputError, match="fraction"):
        holdout_split(10, fraction=1.0)
    with pytest.raises(InputError, match="size"):
        holdout_subsample(10, fraction=0.2, size=-1)
    with pytest.raises(InputError, match="n"):
        holdout_split(-1, fraction=0.2)
