"""Metrics and the comparison table, checked against scipy, published tables and data."""

from __future__ import annotations

import csv
import math

import numpy as np
import pytest
import scipy.stats as st

from cdfsketch import BoundedTail, Sketch
from cdfsketch._validate import InputError
from cdfsketch.empirical import ECDF, DataError, DroppedValuesWarning
from cdfsketch.fit import fit_candidates
from cdfsketch.metrics import (
    ComparisonTable,
    anderson_darling,
    compare,
    cramer_von_mises,
    crps,
    ks_distance,
    wasserstein1,
)


# ---------------------------------------------------------------- KS
@pytest.mark.parametrize("dist", [st.norm(0.1, 1.1), st.logistic(0, 0.6), st.uniform(-3, 6)])
def test_ks_matches_scipy_ks_1samp(dist):
    x = np.random.default_rng(0).normal(size=200)
    assert ks_distance(x, dist) == pytest.approx(st.ks_1samp(x, dist.cdf).statistic, abs=1e-15)


def test_ks_with_atoms_and_ties_by_brute_force():
    s = Sketch([0, 1, 1, 4], [0, 0.3, 0.6, 1])  # an atom of 0.3 at 1
    y = np.array([0.5, 1.0, 1.0, 1.0, 2.0, 3.9])
    grid = np.unique(
        np.r_[
            np.linspace(-1, 5, 20001), y, np.nextafter(y, -np.inf), 1.0, np.nextafter(1.0, -np.inf)
        ]
    )
    fn = np.searchsorted(np.sort(y), grid, side="right") / y.size
    brute = np.max(np.abs(fn - s.cdf(grid)))
    assert ks_distance(y, s) == pytest.approx(brute, abs=1e-12)


def test_ks_exact_critical_values_massey():
    # Massey 1951 / scipy.stats.kstwo.ppf(0.95, n) (REFERENCES.md)
    table = {5: 0.56328, 10: 0.40925, 20: 0.29408, 50: 0.18841}
    for n, d in table.items():
        assert st.kstwo.ppf(0.95, n) == pytest.approx(d, abs=5e-6)
    # our statistic's null rejection rate at those critical values (seeded simulation)
    gen = np.random.default_rng(2024)
    reps = 3000
    u01 = st.uniform()
    for n in (10, 50):
        stats = np.array([ks_distance(gen.random(n), u01) for _ in range(reps)])
        rate = np.mean(stats > table[n])
        assert abs(rate - 0.05) < 4 * math.sqrt(0.05 * 0.95 / reps)


def test_ks_asymptotic_critical_value_stephens():
    # Stephens 1974; scipy.stats.kstwobign: sqrt(n) D at 10/5/1 %: 1.22385/1.35810/1.62762
    for a, c in ((0.10, 1.22385), (0.05, 1.35810), (0.01, 1.62762)):
        assert st.kstwobign.isf(a) == pytest.approx(c, abs=5e-6)
    gen = np.random.default_rng(77)
    n, reps = 400, 2000
    stats = np.array([ks_distance(gen.normal(size=n), st.norm()) for _ in range(reps)])
    rate = np.mean(math.sqrt(n) * stats > 1.358)
    # the asymptotic value is slightly conservative at n=400 (common practice, no source)
    assert abs(rate - 0.05) < 4 * math.sqrt(0.05 * 0.95 / reps)


# ---------------------------------------------------------------- AD
def test_ad_matches_scipy_anderson_normal_and_exponential():
    x = np.random.default_rng(1).normal(5, 2, 150)
    # scipy.stats.anderson(x, "norm") standardises with the mean and std(ddof=1)
    ref = st.anderson(x, "norm", method="interpolate").statistic
    assert anderson_darling(x, st.norm(x.mean(), x.std(ddof=1))) == pytest.approx(ref, rel=1e-12)
    e = np.random.default_rng(2).exponential(3.0, 150)
    # scipy.stats.anderson(x, "expon") uses loc 0 and scale = mean
    ref = st.anderson(e, "expon", method="interpolate").statistic
    assert anderson_darling(e, st.expon(0, e.mean())) == pytest.approx(ref, rel=1e-12)


def test_ad_case0_critical_values_stephens_1974():
    # Stephens 1974, Table 1A (case 0, F fully specified): 1.610/1.933/2.492/3.070/3.857
    # at 15/10/5/2.5/1 %; checked by seeded simulation under the null
    crit = {0.15: 1.610, 0.10: 1.933, 0.05: 2.492, 0.025: 3.070, 0.01: 3.857}
    gen = np.random.default_rng(1974)
    reps, n = 4000, 40
    u01 = st.uniform()
    stats = np.array([anderson_darling(gen.random(n), u01) for _ in range(reps)])
    for a, c in crit.items():
        rate = np.mean(stats > c)
        assert abs(rate - a) < 4 * math.sqrt(a * (1 - a) / reps), (a, rate)


def test_ad_infinite_outside_support():
    assert anderson_darling([0.5, 2.0], st.uniform(0, 1)) == math.inf


# ---------------------------------------------------------------- CvM
def test_cvm_matches_scipy_and_docstring_example():
    # scipy.stats.cramervonmises docstring example (REFERENCES.md): seed
    # 165417232101553420507139617764912913465, 500 normal draws
    rng = np.random.default_rng(165417232101553420507139617764912913465)
    x = st.norm.rvs(size=500, random_state=rng)
    res = st.cramervonmises(x, "norm")
    assert res.statistic == pytest.approx(0.1072085112565724, rel=1e-12)
    assert res.pvalue == pytest.approx(0.55084822382034, rel=1e-10)
    assert cramer_von_mises(x, st.norm()) == pytest.approx(0.1072085112565724, rel=1e-12)
    y = np.random.default_rng(3).gamma(2, 1, 80)
    d = st.gamma(2.1, 0, 0.9)
    assert cramer_von_mises(y, d) == pytest.approx(st.cramervonmises(y, d.cdf).statistic, rel=1e-12)


# ---------------------------------------------------------------- W1
def test_w1_scipy_docstring_examples():
    # scipy.stats.wasserstein_distance docstring: 5.0; 0.25; 4.0781331438047861
    assert wasserstein1([0, 1, 3], ECDF([5, 6, 8])) == pytest.approx(5.0, abs=1e-12)
    assert wasserstein1([0, 1], ECDF([0, 1], weights=[2, 2]), weights=[3, 1]) == pytest.approx(
        0.25, abs=1e-12
    )
    got = wasserstein1(
        [3.4, 3.9, 7.5, 7.8], ECDF([4.5, 1.4], weights=[3.2, 3.5]), weights=[1.4, 0.9, 3.1, 7.2]
    )
    assert got == pytest.approx(4.0781331438047861, rel=1e-12)


def test_w1_uniform_closed_form_and_scipy():
    y = np.sort(np.random.default_rng(5).random(30))
    # closed form: ∫_0^1 |F_n(x) - x| dx summed piece by piece (|L - x| integrates exactly)
    edges = np.r_[0.0, y, 1.0]
    levels = np.arange(31) / 30
    exact = 0.0
    for a, b, lv in zip(edges[:-1], edges[1:], levels, strict=True):
        c = min(max(lv, a), b)
        exact += ((lv - a) ** 2 - (lv - c) ** 2) / 2 + ((b - lv) ** 2 - (c - lv) ** 2) / 2
    assert wasserstein1(y, st.uniform()) == pytest.approx(exact, rel=1e-12)
    # scipy.stats.wasserstein_distance against a fine quantile grid of N(0.2, 1.3)
    x = np.random.default_rng(6).normal(size=100)
    d = st.norm(0.2, 1.3)
    grid = d.ppf((np.arange(400000) + 0.5) / 400000)
    assert wasserstein1(x, d) == pytest.approx(st.wasserstein_distance(x, grid), rel=1e-4)


def test_w1_infinite_without_mean():
    assert wasserstein1([0.0, 1.0], st.cauchy()) == math.inf


# ---------------------------------------------------------------- CRPS
def test_crps_closed_forms_gneiting_raftery():
    # Gneiting & Raftery 2007: N(0,1) at 0 → 2φ(0) - 1/√π = 0.2336950; U(0,1) at 0.5 → 1/12
    assert crps(0.0, st.norm()) == pytest.approx(0.2336950, abs=5e-8)
    assert crps(0.5, st.uniform()) == pytest.approx(1 / 12, rel=1e-12)
    # the normal closed form σ[z(2Φ(z) - 1) + 2φ(z) - 1/√π] at several points
    mu, sig = 1.0, 2.5
    for y in (-7.0, 0.3, 1.0, 4.0, 12.0):
        z = (y - mu) / sig
        ref = sig * (z * (2 * st.norm.cdf(z) - 1) + 2 * st.norm.pdf(z) - 1 / math.sqrt(math.pi))
        assert crps(y, st.norm(mu, sig)) == pytest.approx(ref, rel=1e-9)
    # the mean over several observations is the mean of the single scores
    ys = np.array([-1.0, 0.0, 2.5])
    assert crps(ys, st.norm()) == pytest.approx(np.mean([crps(v, st.norm()) for v in ys]))


def test_crps_finite_with_atoms_and_gaps():
    s = Sketch([0, 0, 1, 3, 3, 4], [0, 0.2, 0.5, 0.5, 0.8, 1])  # atoms at 0 and 3, gap (1, 3)
    y = 2.0
    # brute force: trapezoid on a fine grid of ∫(F - 1{x ≥ y})² (independent of the module)
    grid = np.linspace(-1, 5, 600001)
    f = (s.cdf(grid) - (grid >= y)) ** 2
    brute = float(np.sum((f[1:] + f[:-1]) / 2 * np.diff(grid)))
    got = crps(y, s)
    assert math.isfinite(got)
    assert got == pytest.approx(brute, abs=2e-5)


# ---------------------------------------------------------------- the table
def test_table_sort_html_csv_pandas(tmp_path):
    t = ComparisonTable(
        [
            {"name": "<b>a</b>", "ks": 0.3, "log_score": -math.inf},
            {"name": "b", "ks": float("nan"), "log_score": -1.0},
            {"name": "c", "ks": 0.1, "log_score": None},
        ],
        columns=("name", "ks", "log_score"),
    )
    assert [r["name"] for r in t.sort_by("ks").rows] == ["c", "<b>a</b>", "b"]
    assert [r["name"] for r in t.sort_by("ks", ascending=False).rows] == ["<b>a</b>", "c", "b"]
    h = t._repr_html_()
    assert "&lt;b&gt;a&lt;/b&gt;" in h and "<b>a</b>" not in h
    assert "-inf" in h
    with pytest.raises(KeyError, match=r"No column 'aic'; the columns are"):
        t.sort_by("aic")
    path = tmp_path / "t.csv"
    t.to_csv(path)
    with open(path, newline="", encoding="utf-8") as fh:
        back = list(csv.reader(fh))
    assert back[0] == ["name", "ks", "log_score"]
    assert back[1] == ["<b>a</b>", "0.3", "-inf"]
    df = t.to_pandas()
    assert list(df.columns) == ["name", "ks", "log_score"] and len(df) == 3


# ---------------------------------------------------------------- compare on open data
def test_nile_summary_values(nile):
    # statsmodels 0.15 nile dataset (REFERENCES.md): n=100, min 456, max 1370, median 893.5,
    # mean 919.35
    assert nile.size == 100
    assert (nile.min(), nile.max()) == (456.0, 1370.0)
    assert np.median(nile) == 893.5
    assert nile.mean() == pytest.approx(919.35, abs=1e-9)


def test_compare_on_nile(nile):
    cands = fit_candidates(nile, rng=0)
    sketch = Sketch([500, 800, 900, 1000, 1300], [0, 0.25, 0.5, 0.8, 1], name="judgement")
    table = compare(nile, [*cands, sketch, ECDF(nile)], rng=1)
    assert len(table) == len(cands) + 2
    rows = {r["name"]: r for r in table.rows}
    normal = cands.by_name("normal")
    # KS / CvM / AD distances on all the data agree with scipy's statistics for the fitted normal
    assert rows["normal"]["ks"] == pytest.approx(st.ks_1samp(nile, normal.cdf).statistic)
    assert rows["normal"]["cvm"] == pytest.approx(
        st.cramervonmises(nile, normal.cdf).statistic, rel=1e-10
    )
    assert rows["normal"]["aic"] == pytest.approx(normal.aic)
    # p-values only where valid: refit candidates on held-out data, never for the sketch / ECDF
    for name, r in rows.items():
        if r["holdout_fit"] == "refit on training split":
            assert 0 <= r["ks_holdout_pvalue"] <= 1, name
        else:
            assert r["ks_holdout_pvalue"] is None, name
    assert rows["judgement"]["holdout_fit"] == "not refit (judgement)"
    assert rows["resampled data"]["holdout_fit"] == "resampled training split"
    # the resampled data put mass only on training values: a held-out point scores -inf
    # unless it ties with a training value (the nile volumes have ties)
    res = rows["resampled data"]
    assert res["log_score"] == -math.inf and res["n_outside"] > 0
    assert res["n_outside"] + res["n_at_atoms"] == table.info["n_test"] == 30
    assert rows["resampled data"]["ks"] == 0.0
    # the sketch's support [500, 1300] misses 456 and 1370 (and any other point outside)
    outside_all = int(np.sum((nile < 500) | (nile > 1300)))
    assert outside_all >= 2
    counts = []
    for seed in range(6):
        r = compare(nile, [sketch], rng=seed).rows[0]
        counts.append(r["n_outside"])
        assert (r["log_score"] == -math.inf) == (r["n_outside"] > 0)
        assert math.isfinite(r["crps_holdout"])
        assert r["n_outside"] <= outside_all
    assert max(counts) > 0
    # DKW excursion agrees with the band's own check (cdfsketch.empirical)
    band = ECDF(nile).band(level=0.95)
    assert rows["judgement"]["dkw_excursion"] == pytest.approx(band.excursion(sketch.cdf))
    # reproducible with the same seed
    again = compare(nile, [*cands, sketch, ECDF(nile)], rng=1)
    np.testing.assert_equal(again.rows, table.rows)  # NaN (the KDE's AIC) compares equal
    assert "ks_holdout_pvalue" in table.notes and table.info["eps"] == pytest.approx(0.13581)


def test_compare_on_invented_data_with_atom():
    # invented dataset (seeded): repair times with 15 % exact zeros (no-fault visits)
    gen = np.random.default_rng(31)
    x = np.where(gen.random(400) < 0.15, 0.0, gen.lognormal(1.0, 0.5, 400))
    cands = fit_candidates(x, rng=0)
    assert "needs all data > 0" in cands.skipped["gamma"]
    sk = Sketch(
        [0, 0, 1, 3, 6, 12],
        [0, 0.15, 0.25, 0.65, 0.92, 1],
        interpolation="pchip",
        name="repair sketch",
    )
    t = compare(x, [*cands, sk], rng=2)
    r = {row["name"]: row for row in t.rows}["repair sketch"]
    assert r["n_at_atoms"] > 0  # held-out zeros scored by the atom's mass
    assert math.isfinite(r["log_score"]) or r["n_outside"] > 0
    assert math.isfinite(r["crps"]) and math.isfinite(r["crps_holdout"])
    sorted_t = t.sort_by("crps_holdout")
    vals = [v for v in sorted_t.column("crps_holdout") if v is not None]
    assert vals == sorted(vals)


def test_compare_uses_mixed_density_at_atoms():
    sk = Sketch([0, 0, 2], [0, 0.4, 1], upper_tail=BoundedTail(2.0))
    data = np.r_[np.zeros(40), np.linspace(0.05, 1.95, 60)]  # invented
    r = compare(data, [sk], rng=0).rows[0]
    # each held-out zero scores log 0.4, others log 0.3 (density 0.6/2)
    n0 = r["n_at_atoms"]
    expect = (n0 * math.log(0.4) + (30 - n0) * math.log(0.3)) / 30
    assert r["log_score"] == pytest.approx(expect)


# ---------------------------------------------------------------- bad inputs
def test_compare_bad_inputs(nile):
    s = Sketch([400, 1400], [0, 1])
    with pytest.raises(InputError, match=r"holdout must be a finite number in \(0, 1\)"):
        compare(nile, [s], holdout=1.5)
    with pytest.raises(InputError, match=r"holdout must be a finite number.*\(str\)"):
        compare(nile, [s], holdout="a")
    with pytest.raises(InputError, match=r"candidates\[1\] must be a Sketch, a fitted Candidate"):
        compare(nile, [s, 3.0])
    with pytest.raises(InputError, match=r"candidates must be an iterable of models"):
        compare(nile, s)
    with pytest.raises(InputError, match=r"candidates must hold at least one model"):
        compare(nile, [])
    with pytest.raises(DataError, match=r"inf"):
        compare([1.0, 2.0, np.inf], [s])
    with pytest.raises(InputError, match=r"at least 2 points for training and 1 held out"):
        compare([1.0, 2.0, 3.0], [s], holdout=0.9)
    with pytest.raises(InputError, match=r"level must be a finite number in \(0, 1\)"):
        compare(nile, [s], level=1.0)
    assert compare(nile, [s], holdout=None).rows[0]["log_score"] is None


def test_metric_bad_inputs():
    d = st.norm()
    with pytest.raises(DataError, match=r"one-dimensional.*; got shape \(2, 2\)"):
        ks_distance([[1, 2], [3, 4]], d)
    # one data door: a missing value is dropped with a counted warning, as everywhere
    with pytest.warns(DroppedValuesWarning, match="Dropped 1 missing"):
        assert cramer_von_mises([1.0, np.nan], d) == pytest.approx(cramer_von_mises([1.0], d))
    with pytest.raises(DataError, match=r"at least one value; got none"):
        anderson_darling([], d)
    with pytest.raises(DataError, match=r"got 1 weights for 2 values"):
        wasserstein1([1.0, 2.0], d, weights=[1.0])
    with pytest.raises(DataError, match=r"weights\[0\]=-1.0"):
        wasserstein1([1.0, 2.0], d, weights=[-1.0, 2.0])
    with pytest.raises(InputError, match=r"object with cdf, sf, pdf, ppf, support"):
        crps(0.0, object())
