"""The consequence run against closed forms and textbook formulas (each source named)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cdfsketch import BoundedTail, ExponentialTail, Sketch
from cdfsketch.inputs import InputSet
from cdfsketch.outcomes import consequences

# Invented shapes with no meaning: a right-skewed one with an exponential tail,
# a pchip one, a plain linear one.
HOURS = Sketch([1, 2, 4, 9], [0, 0.35, 0.8, 0.97], upper_tail=ExponentialTail(scale=3.0))
HOURS_ALT = Sketch([1, 3, 5, 10], [0, 0.3, 0.75, 0.97], upper_tail=ExponentialTail(scale=4.0))
RATE = Sketch([40, 55, 70], [0, 0.5, 1], interpolation="pchip")
PARTS = Sketch([100, 300, 900], [0.05, 0.6, 1], lower_tail=BoundedTail(50.0))
N = 200_000


def row(res, candidate, output=None, reference=None):
    out = output or res.outputs[0]
    return next(
        r for r in res.table(reference) if r["candidate"] == candidate and r["output"] == out
    )


def test_identity_model_mean_and_se_match_exact_moments():
    # Exact sketch moments (Sketch.mean/var, closed form per piece) against the
    # Monte Carlo mean; the standard error of a mean is sd/sqrt(n) (textbook:
    # Rice, Mathematical Statistics and Data Analysis, 3rd ed., §7.3 — from memory).
    res = consequences(None, {"hours": HOURS}, vary="hours", candidates=[HOURS], size=N, rng=11)
    r = row(res, "candidate 1", "hours")
    exact_se = HOURS.std() / math.sqrt(N)
    assert r["mean_se"] == pytest.approx(exact_se, rel=0.03)
    assert r["mean_se"] == pytest.approx(r["sd"] / math.sqrt(N), rel=1e-12)
    assert abs(r["mean"] - HOURS.mean()) < 4 * exact_se
    assert r["sd"] == pytest.approx(HOURS.std(), rel=0.02)


def test_sum_of_independent_inputs_adds_means_and_variances():
    # For independent X, Y: E[X+Y] = E X + E Y and Var(X+Y) = Var X + Var Y (any
    # probability textbook; from memory). The moments are the sketches' exact ones.
    ins = InputSet({"hours": HOURS, "parts": PARTS})
    res = consequences(
        lambda d: d["hours"] + d["parts"], ins, vary="hours", candidates=[HOURS], size=N, rng=3
    )
    r = row(res, "candidate 1")
    mean, var = HOURS.mean() + PARTS.mean(), HOURS.var() + PARTS.var()
    assert abs(r["mean"] - mean) < 4 * math.sqrt(var / N)
    assert r["sd"] ** 2 == pytest.approx(var, rel=0.02)


def test_linear_pool_mean_is_the_weighted_mean():
    # The linear opinion pool F = sum w_k F_k has mean sum w_k mean_k (Stone 1961;
    # a mixture's mean). Checked on the pooled sketch's exact mean and on the run.
    from cdfsketch.elicit import pool

    a, b = Sketch([0, 2, 5], [0, 0.5, 1]), Sketch([1, 3, 8], [0, 0.6, 1])  # exact pool case
    w = [0.3, 0.7]
    pooled = pool([a, b], weights=w, name="pool")
    target = w[0] * a.mean() + w[1] * b.mean()
    assert pooled.mean() == pytest.approx(target, rel=1e-12)
    res = consequences(None, {"hours": a}, vary="hours", candidates=[pooled], size=N, rng=4)
    r = row(res, "pool", "hours")
    assert abs(r["mean"] - target) < 4 * r["mean_se"]


def test_threshold_exceedance_matches_exact_sf_with_binomial_se():
    # P(X > t) against the sketch's exact sf; SE of a proportion sqrt(p(1-p)/n)
    # (binomial; textbook, from memory).
    t = 6.0
    res = consequences(
        None, {"hours": HOURS}, vary="hours", candidates=[HOURS], size=N, rng=5, thresholds=t
    )
    r = row(res, "candidate 1", "hours")
    p = HOURS.sf(t)
    assert r["p_above_6_se"] == pytest.approx(math.sqrt(p * (1 - p) / N), rel=0.05)
    assert abs(r["p_above_6"] - p) < 4 * r["p_above_6_se"]


def test_quantile_matches_exact_ppf_within_its_se():
    # Order-statistic interval for a quantile (Conover 1999 §3.2, from memory); the
    # asymptotic SE sqrt(p(1-p)/n)/f(x_p) (Serfling 1980 §2.3, from memory) as a check.
    res = consequences(
        None,
        {"hours": HOURS},
        vary="hours",
        candidates=[HOURS],
        size=N,
        rng=6,
        quantiles=[0.5, 0.9],
    )
    r = row(res, "candidate 1", "hours")
    for p in (0.5, 0.9):
        x = HOURS.ppf(p)
        asym = math.sqrt(p * (1 - p) / N) / HOURS.pdf(x)
        assert r[f"q{p:g}_se"] == pytest.approx(asym, rel=0.15)
        assert abs(r[f"q{p:g}"] - x) < 4 * r[f"q{p:g}_se"]


def test_reported_mean_se_matches_the_spread_of_repeated_runs():
    # The SE is what it claims: the sd of 200 independent runs' means equals the
    # exact sd/sqrt(n) within the sampling error of an sd from 200 values (~5 %).
    n = 400
    means = [
        row(
            consequences(None, {"h": HOURS}, vary="h", candidates=[HOURS], size=n, rng=s),
            "candidate 1",
            "h",
        )["mean"]
        for s in range(200)
    ]
    assert np.std(means, ddof=1) == pytest.approx(HOURS.std() / math.sqrt(n), rel=0.2)


def test_difference_of_means_matches_exact_and_crn_reduces_variance():
    # Identity model: the paired mean difference estimates HOURS_ALT.mean() - HOURS.mean()
    # exactly. Common random numbers on a monotone model give a positive variance
    # reduction (common practice; Law & Kelton, Simulation Modeling and Analysis,
    # ch. 11 — from memory): Var(Y1 - Y0) < Var(Y1) + Var(Y0).
    ins = InputSet({"hours": HOURS, "rate": RATE})
    res = consequences(
        lambda d: d["hours"] * d["rate"],
        ins,
        vary="hours",
        candidates=[HOURS, HOURS_ALT],
        size=N,
        rng=7,
        names=["now", "alt"],
    )
    r = row(res, "alt")
    exact = (HOURS_ALT.mean() - HOURS.mean()) * RATE.mean()  # independent inputs
    assert abs(r["diff_mean"] - exact) < 4 * r["diff_mean_se"]
    assert r["crn_gain"] > 1.0
    independent_se = math.hypot(r["mean_se"], row(res, "now")["mean_se"])
    assert r["diff_mean_se"] < independent_se / 2
    assert r["diff_mean_se"] ** 2 * r["crn_gain"] == pytest.approx(independent_se**2, rel=1e-9)


def test_crn_draws_are_shared_and_equal_the_input_set_sample():
    # The other inputs' draws are the same for every candidate and equal
    # InputSet.sample with the same rng; the varied input is candidate.ppf(u).
    ins = InputSet({"hours": HOURS, "rate": RATE}, rank_corr={("hours", "rate"): 0.5})
    seen: list[dict[str, np.ndarray]] = []

    def model(d):
        seen.append({k: np.array(v) for k, v in d.items()})
        return d["hours"] * d["rate"]

    consequences(model, ins, vary="hours", candidates=[HOURS, HOURS_ALT], size=5000, rng=8)
    assert len(seen) == 2
    expected = ins.sample(5000, rng=8)
    u = ins.uniforms(5000, rng=8)["hours"]
    assert np.array_equal(seen[0]["rate"], expected["rate"])
    assert np.array_equal(seen[1]["rate"], expected["rate"])
    assert np.array_equal(seen[0]["hours"], expected["hours"])
    assert np.array_equal(seen[1]["hours"], HOURS_ALT.sampler().ppf(u))


def test_reference_switch_flips_differences():
    res = consequences(
        None,
        {"h": HOURS},
        vary="h",
        candidates=[HOURS, HOURS_ALT],
        size=20_000,
        rng=9,
        names=["a", "b"],
    )
    ab, ba = row(res, "b", "h"), row(res, "a", "h", reference="b")
    assert ab["diff_mean"] == -ba["diff_mean"]
    assert ab["diff_mean_se"] == ba["diff_mean_se"]
    assert ab["diff_q0.9"] == -ba["diff_q0.9"]
