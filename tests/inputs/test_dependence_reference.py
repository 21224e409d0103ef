"""Dependence and designs checked against outside sources (each named where it is used)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cdfsketch import Sketch
from cdfsketch._streams import root_seed
from cdfsketch.inputs import InputSet, nearest_correlation, nearest_rank_corr, spearman
from cdfsketch.inputs.dependence import copula_correlation, gaussian_copula, iman_conover
from cdfsketch.inputs.designs import U_MIN, design_uniforms

A = Sketch([0, 1, 4], [0, 0.5, 1], interpolation="pchip")
B = Sketch([10, 20, 50], [0, 0.7, 1])
C = Sketch([-3, 0, 3], [0.05, 0.5, 0.95])


def test_iman_conover_keeps_every_marginal_exactly():
    # Iman & Conover (1982): the method only re-pairs the given draws
    ins = InputSet({"a": A, "b": B, "c": C}, rank_corr={("a", "b"): 0.8, ("b", "c"): -0.5})
    dep = ins.sample(100_000, rng=4)
    ind = ins.sample(100_000, rng=4, dependence="independent")
    for name in ins.names:
        np.testing.assert_array_equal(np.sort(dep[name]), np.sort(ind[name]))


@pytest.mark.parametrize("design", ["random", "lhs"])
def test_achieved_spearman_within_sampling_error(design):
    # n = 1e5: the standard error of a Spearman estimate is about (1 - ρ²)/√n ≤ 0.0032;
    # Iman–Conover is far tighter than random sampling. Bound 0.01 (≈ 3 standard errors).
    target = {("a", "b"): 0.8, ("b", "c"): -0.5, ("a", "c"): -0.3}
    ins = InputSet({"a": A, "b": B, "c": C}, rank_corr=target)
    rows = ins.sample(100_000, rng=8, design=design).rank_corr_report()
    assert {(r.a, r.b) for r in rows} == set(target)
    for row in rows:
        assert abs(row.achieved - row.target) < 0.01, row


def test_gaussian_copula_identity():
    # Pearson (1907) / Kruskal (1958): for a bivariate normal, ρ_S = (6/π) arcsin(ρ/2);
    # ρ = 0.5 gives ρ_S = 0.4825837 (value computed from the formula).
    assert (6 / math.pi) * math.asin(0.5 / 2) == pytest.approx(0.4825837, abs=1e-7)
    r = copula_correlation(np.array([[1.0, 0.4825837], [0.4825837, 1.0]]))
    assert r[0, 1] == pytest.approx(0.5, abs=1e-6)
    # and sampled: the achieved Spearman is the target within sampling error (n = 1e5)
    u = np.random.default_rng(5).random((2, 100_000))
    out = gaussian_copula(u, np.array([[1.0, 0.5], [0.5, 1.0]]))
    assert spearman([out[0], out[1]])[0, 1] == pytest.approx(0.4825837, abs=0.01)


def test_lhs_one_point_per_stratum_in_every_margin():
    # McKay, Beckman & Conover (1979): each margin has one point in each of n strata
    n = 5000
    ins = InputSet({"a": A, "b": B, "c": C}, rank_corr={("a", "b"): 0.6})
    for dependence in ("iman-conover", "independent"):
        u = ins.uniforms(n, rng=3, design="lhs", dependence=dependence)
        for name in ins.names:
            strata = np.floor(u[name] * n).astype(int)
            np.testing.assert_array_equal(np.sort(strata), np.arange(n))


def test_sobol_first_points_through_ppf():
    # Joe & Kuo (2008) direction numbers, unscrambled 2-d Sobol sequence as produced by
    # scipy.stats.qmc.Sobol(d=2, scramble=False); the first point (0, 0) is moved inside (0, 1).
    expected = np.array(
        [[0.0, 0.0], [0.5, 0.5], [0.75, 0.25], [0.25, 0.75],
         [0.375, 0.375], [0.875, 0.875], [0.625, 0.125], [0.125, 0.625]]
    )  # fmt: skip
    u = design_uniforms("sobol", ["a", "b"], root_seed(0), 0, 8, scramble=False)
    expected[0] = U_MIN
    np.testing.assert_array_equal(np.column_stack([u["a"], u["b"]]), expected)
    from scipy.stats import qmc

    np.testing.assert_array_equal(qmc.Sobol(d=2, scramble=False).random(8)[1:], expected[1:])
    # through ppf: a uniform sketch on [0, 10] maps them to 10 u exactly
    lin = Sketch([0, 10], [0, 1]).sampler()
    np.testing.assert_array_equal(lin.ppf(u["a"][1:]), 10 * expected[1:, 0])


@pytest.mark.filterwarnings("ignore::statsmodels.tools.sm_exceptions.IterationLimitWarning")
def test_nearest_correlation_matches_statsmodels():
    # statsmodels.stats.correlation_tools.corr_nearest (Higham 2002 projections)
    from statsmodels.stats.correlation_tools import corr_nearest

    rng = np.random.default_rng(12)
    for k in (3, 5, 8):
        m = rng.uniform(-1, 1, (k, k))
        m = (m + m.T) / 2
        np.fill_diagonal(m, 1.0)
        ours = nearest_correlation(m)
        theirs = corr_nearest(m, threshold=1e-15, n_fact=1000)
        np.testing.assert_allclose(ours, theirs, atol=2e-5)
        assert np.linalg.eigvalsh(ours).min() > -1e-9
        np.testing.assert_array_equal(np.diag(ours), 1.0)
    # Higham (2002), section 4 example: [[1,1,0],[1,1,1],[0,1,1]] has the nearest
    # correlation matrix [[1, .7607, .1573], [.7607, 1, .7607], [.1573, .7607, 1]]
    near = nearest_correlation([[1, 1, 0], [1, 1, 1], [0, 1, 1]])
    np.testing.assert_allclose(
        near, [[1, 0.7607, 0.1573], [0.7607, 1, 0.7607], [0.1573, 0.7607, 1]], atol=1e-4
    )


def test_nearest_rank_corr_pairs():
    bad = {("a", "b"): 0.9, ("a", "c"): 0.9, ("b", "c"): -0.9}
    fixed = nearest_rank_corr(bad)
    InputSet({"a": A, "b": B, "c": C}, rank_corr=fixed)  # valid now


def test_spearman_matches_scipy_with_ties():
    # scipy.stats.spearmanr uses average ranks for ties
    from scipy.stats import spearmanr

    rng = np.random.default_rng(1)
    x = rng.integers(0, 5, 300).astype(float)
    y = x + rng.integers(0, 3, 300)
    assert spearman([x, y])[0, 1] == pytest.approx(spearmanr(x, y).statistic, abs=1e-12)


def test_iman_conover_small_blocks_unchanged():
    u = np.random.default_rng(0).random((3, 3))
    np.testing.assert_array_equal(iman_conover(u, np.eye(3)), u)


def test_perfect_rank_correlation_is_allowed():
    ins = InputSet({"a": A, "b": B}, rank_corr={("a", "b"): 1.0})
    row = ins.sample(10_000, rng=1).rank_corr_report()[0]
    assert row.achieved > 0.999
