"""Sketches from judgement: from_quantiles, from_three_points, from_distribution, summary."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import cdfsketch
from cdfsketch import BoundedTail, ExponentialTail, Sketch
from cdfsketch.elicit import (
    JudgementError,
    from_distribution,
    from_quantiles,
    from_three_points,
    reknot,
)
from cdfsketch.summary import SketchSummary, summary

# ---------------------------------------------------------------- from_quantiles

CASES = [
    {0.05: 12, 0.5: 20, 0.95: 41},
    {0.1: -3.5, 0.25: -1.0, 0.5: 0.1, 0.75: 0.3, 0.9: 7.0},
    {0.01: 1e-3, 0.5: 0.2, 0.99: 1e3},
    {0.3: 0.1, 0.7: 0.3},
]


@pytest.mark.parametrize("q", CASES)
@pytest.mark.parametrize("interpolation", ["linear", "pchip"])
@pytest.mark.parametrize(
    "options",
    [{}, {"lower": -1e4, "upper": 1e4}, {"upper_tail": ExponentialTail(2.0)}],
)
def test_from_quantiles_reproduces_every_stated_quantile(q, interpolation, options):
    # the defining property of the method (issue 4): every statement P(X ≤ x) = p holds
    s = from_quantiles(q, interpolation=interpolation, **options)
    for p, x in q.items():
        assert float(s.cdf(x)) == p  # exactly
        assert float(s.ppf(p)) == pytest.approx(x, rel=1e-13, abs=1e-13)
    assert s.provenance["method"] == "from stated quantiles"
    stated = s.provenance["extra"]["stated_quantiles"]  # frozen: pairs are tuples
    assert stated == tuple(sorted((p, float(x)) for p, x in q.items()))


def test_from_quantiles_bounds_and_tails():
    s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41}, lower=0, upper=100)
    assert s.support == (0.0, 100.0)
    assert s.tail_mass == (0.0, 0.0)
    # linear between knots: P(X ≤ 6) is halfway between P(0)=0 and P(12)=0.05
    assert s.cdf(6) == pytest.approx(0.025, abs=1e-15)
    b = from_quantiles({0.1: 5, 0.9: 9}, lower=BoundedTail(1.0), upper_tail=BoundedTail(20.0))
    assert b.support == (1.0, 20.0)
    assert b.tail_mass == pytest.approx((0.1, 0.1))
    assert b.tails_given == (True, True)
    d = from_quantiles({0.1: 5, 0.9: 9})
    assert d.tails_given == (False, False)
    assert isinstance(d.lower_tail, ExponentialTail)


def test_from_quantiles_spec_round_trip():
    s = from_quantiles(
        {0.05: 12, 0.5: 20, 0.95: 41}, name="cost", units="k$", author="A", rationale="why"
    )
    back = cdfsketch.load(s.to_json())
    assert back.provenance["extra"]["stated_quantiles"] == ((0.05, 12.0), (0.5, 20.0), (0.95, 41.0))
    assert back.provenance["author"] == "A"
    assert back.name == "cost"
    assert np.array_equal(back.x, s.x)
    cdfsketch.validate_spec(s.to_spec())


@pytest.mark.parametrize(
    ("q", "options", "match"),
    [
        ({0.05: 12, 0.5: 30, 0.95: 25}, {}, r"P\(X ≤ 30\) = 0.5 and P\(X ≤ 25\) = 0.95 clash"),
        ({0.0: 12, 0.5: 20}, {}, r"strictly between 0 and 1.*p=0.0: 12.*lower= / upper="),
        ({0.5: 20, 1.2: 30}, {}, r"strictly between 0 and 1.*p=1.2"),
        ({0.25: 20, 0.75: 20}, {}, r"same value for two probabilities.*point mass of 0.5 at 20"),
        ([(0.5, 20), (0.5, 22)], {}, r"same probability: p=0.5: 20 and p=0.5: 22"),
        ({0.05: 12, 0.95: 41}, {"lower": 15}, r"lower bound 15 must lie below.*P\(X ≤ 12\)"),
        ({0.05: 12, 0.95: 41}, {"upper": 41}, r"upper bound 41 must lie above.*P\(X ≤ 41\)"),
        (
            {0.05: 12, 0.95: 41},
            {"upper_tail": BoundedTail(30.0)},
            r"upper bound 30 must lie above.*P\(X ≤ 41\) = 0.95",
        ),
        ({0.5: 20}, {}, r"One statement .* add a bound"),
        ({}, {}, r"q is empty"),
        ({0.1: 1, 0.9: 2}, {"lower": 0, "lower_tail": BoundedTail(-1.0)}, r"not both"),
        ({0.1: "a", 0.9: 2}, {}, r"value of statement 0 .* must be a finite number; got 'a'"),
        ({0.1: float("inf"), 0.9: 2}, {}, r"must be a finite number; got inf"),
        (42, {}, r"q must map probabilities to values"),
    ],
)
def test_from_quantiles_bad_inputs(q, options, match):
    with pytest.raises(JudgementError, match=match):
        from_quantiles(q, **options)


def test_from_quantiles_other_bad_options():
    with pytest.raises(ValueError, match="interpolation must be one of"):
        from_quantiles({0.1: 1, 0.9: 2}, interpolation="cubic")
    with pytest.raises(ValueError, match="name must be a str"):
        from_quantiles({0.1: 1, 0.9: 2}, name=3)
    with pytest.raises(TypeError, match=r"positional"):
        from_quantiles({0.1: 1, 0.9: 2}, "linear")


# ---------------------------------------------------------------- three points

TRIPLES = [(2.0, 5.0, 14.0), (0.0, 0.5, 1.0), (10.0, 10.0, 20.0), (-3.0, 4.0, 4.0), (1, 2, 9)]


@pytest.mark.parametrize(("a", "m", "b"), TRIPLES)
def test_pert_mean_and_variance(a, m, b):
    s = from_three_points(a, m, b, shape="pert", tolerance=1e-5)
    # PERT (Malcolm et al. 1959, λ = 4): mean = (a + 4m + b)/6; for the PERT Beta
    # var = (μ − a)(b − μ)/7 (= (μ−a)(b−μ)/(λ+3); Vose 2008, Risk Analysis, from memory)
    mu = (a + 4 * m + b) / 6
    var = (mu - a) * (b - mu) / 7
    # |mean error| ≤ ∫|ΔF| dx ≤ tolerance · (b − a)
    assert s.mean() == pytest.approx(mu, abs=1e-5 * (b - a))
    assert s.var() == pytest.approx(var, rel=2e-3)
    # independent reference: scipy.stats.beta with α = 1 + 4(m−a)/(b−a), β = 1 + 4(b−m)/(b−a)
    ref = stats.beta(1 + 4 * (m - a) / (b - a), 1 + 4 * (b - m) / (b - a), loc=a, scale=b - a)
    assert ref.mean() == pytest.approx(mu, rel=1e-12, abs=1e-12)
    assert ref.var() == pytest.approx(var, rel=1e-12)
    grid = np.linspace(a, b, 2001)
    assert np.max(np.abs(s.cdf(grid) - ref.cdf(grid))) <= 1e-5 * 1.2
    assert s.provenance["extra"]["max_abs_cdf_error"] <= 1e-5
    assert s.support == (a, b)


PERT_CASES = [*TRIPLES, (0.0, 1.0, 100.0), (5.0, 99.0, 100.0), (1e3, 1.2e3, 5e3)]


@pytest.mark.parametrize(("a", "m", "b"), PERT_CASES)
@pytest.mark.parametrize("interpolation", ["linear", "pchip"])
@pytest.mark.parametrize("coverage", [1.0, 0.9])
def test_pert_summary_states_the_pert_moments_at_the_default_tolerance(
    a, m, b, interpolation, coverage
):
    # issue: at the default |ΔF| tolerance the variance was 0.27-1.4 % high; the summary of a
    # PERT sketch must state the PERT moments to within 0.1 %. Reference:
    # scipy.stats.beta(α, β, loc=a, scale=b−a).mean()/.var() on the ends the sketch was built on
    s = from_three_points(a, m, b, shape="pert", interpolation=interpolation, coverage=coverage)
    lo, hi = s.provenance["extra"]["ends"]
    ref = stats.beta(1 + 4 * (m - lo) / (hi - lo), 1 + 4 * (hi - m) / (hi - lo), loc=lo,
                     scale=hi - lo)  # fmt: skip
    shown = summary(s)
    assert abs(shown.mean - ref.mean()) <= 1e-3 * ref.std()
    assert shown.sd**2 == pytest.approx(ref.var(), rel=1e-3)
    moments = s.provenance["extra"]["moments"]
    assert moments["mean"] == pytest.approx(ref.mean(), rel=1e-12)
    assert moments["variance"] == pytest.approx(ref.var(), rel=1e-12)
    assert s.provenance["extra"]["max_moment_error"] <= 5e-4


@pytest.mark.parametrize(("a", "c", "b"), TRIPLES)
def test_triangular_mean_and_variance(a, c, b):
    s = from_three_points(a, c, b, shape="triangular", tolerance=1e-5)
    # triangular: mean (a+b+c)/3, var (a²+b²+c²−ab−ac−bc)/18 (standard formulas; Johnson,
    # Kotz & Balakrishnan, Continuous Univariate Distributions vol. 2, from memory)
    mu = (a + b + c) / 3
    var = (a * a + b * b + c * c - a * b - a * c - b * c) / 18
    assert s.mean() == pytest.approx(mu, abs=1e-5 * (b - a))
    assert s.var() == pytest.approx(var, rel=2e-3)
    ref = stats.triang((c - a) / (b - a), loc=a, scale=b - a)  # scipy reference
    assert ref.mean() == pytest.approx(mu, rel=1e-12, abs=1e-12)
    grid = np.linspace(a, b, 2001)
    assert np.max(np.abs(s.cdf(grid) - ref.cdf(grid))) <= 1e-5 * 1.2


@pytest.mark.parametrize("shape", ["pert", "triangular"])
@pytest.mark.parametrize("coverage", [0.9, 0.8, 0.5])
def test_three_points_with_coverage_solves_the_ends(shape, coverage):
    low, mode, high = 20.0, 30.0, 60.0
    s = from_three_points(low, mode, high, shape=shape, coverage=coverage)
    pl, ph = (1 - coverage) / 2, (1 + coverage) / 2
    assert float(s.cdf(low)) == pl  # the stated points are knots
    assert float(s.cdf(high)) == ph
    a, b = s.provenance["extra"]["ends"]
    assert a < low and b > high
    assert s.support == (a, b)
    # the solved ends really give those quantiles: recompute with scipy from the formulas
    if shape == "pert":
        ref = stats.beta(
            1 + 4 * (mode - a) / (b - a), 1 + 4 * (b - mode) / (b - a), loc=a, scale=b - a
        )
    else:
        ref = stats.triang((mode - a) / (b - a), loc=a, scale=b - a)
    assert ref.cdf(low) == pytest.approx(pl, abs=1e-9)
    assert ref.cdf(high) == pytest.approx(ph, abs=1e-9)
    grid = np.linspace(a, b, 4001)
    assert np.max(np.abs(s.cdf(grid) - ref.cdf(grid))) <= 1e-3 * 1.2
    assert s.provenance["extra"]["stated_quantiles"] == ((pl, low), (ph, high))


def test_three_points_summary_warns_about_solved_tails():
    s = from_three_points(20, 30, 60, coverage=0.9)
    out = summary(s)
    assert [b.side for b in out.beyond_stated] == ["lower", "upper"]
    assert out.beyond_stated[0].mass == pytest.approx(0.05, abs=1e-12)
    assert not out.beyond_stated[0].stated
    assert any(
        "McBride, Fidler & Burgman 2012" in w and "below the stated point 20" in w
        for w in out.warnings
    )


@pytest.mark.parametrize(
    ("args", "options", "match"),
    [
        ((5, 3, 1), {}, r"low < high; got low=5, high=1"),
        ((1, 7, 5), {}, r"mode must lie between low and high; got low=1, mode=7, high=5"),
        ((1, 2, 5), {"coverage": 0}, r"coverage must lie in \(0, 1\]"),
        ((1, 2, 5), {"coverage": 1.5}, r"coverage must lie in \(0, 1\]"),
        ((1, 2, 5), {"shape": "normal"}, "shape must be one of 'pert', 'triangular'"),
        ((1, 2, 5), {"knots": 2}, r"knots must be an integer ≥ 3"),
        ((1, 2, 5), {"tolerance": 0}, r"tolerance must be a finite number in \(0, 0.5\); got 0.0"),
        ((1, float("nan"), 5), {}, r"mode must be a finite number; got nan"),
    ],
)
def test_three_points_bad_inputs(args, options, match):
    with pytest.raises(ValueError, match=match):
        from_three_points(*args, **options)


# ---------------------------------------------------------------- from_distribution

DISTS = [
    stats.norm(10, 2),
    stats.gamma(2.5, scale=3.0),
    stats.gamma(0.7),
    stats.lognorm(0.9, scale=5.0),
    stats.beta(2, 5),
    stats.beta(0.6, 0.8),
]


@pytest.mark.parametrize("dist", DISTS, ids=lambda d: d.dist.name + str(d.args))
@pytest.mark.parametrize(
    ("interpolation", "tail", "tol"),
    [("pchip", "exponential", 1e-3), ("linear", "bounded", 1e-3), ("pchip", "bounded", 1e-4)],
)
def test_from_distribution_within_tolerance_of_scipy(dist, interpolation, tail, tol):
    s = from_distribution(dist, interpolation=interpolation, tail=tail, tolerance=tol)
    achieved = s.provenance["extra"]["max_abs_cdf_error"]
    assert achieved <= tol
    # independent check grid (not the one used for refinement): scipy's ppf on a dense
    # probability grid plus a uniform x grid, compared with scipy's cdf
    u = np.linspace(1e-7, 1 - 1e-7, 20001)
    xq = dist.ppf(u)
    xu = np.linspace(xq[0], xq[-1], 20001)
    for x in (xq, xu):
        assert np.max(np.abs(s.cdf(x) - dist.cdf(x))) <= tol * 1.2
    # ppf: the sketch's u-quantile has source probability within tolerance of u
    assert np.max(np.abs(dist.cdf(s.ppf(u)) - u)) <= tol * 1.2
    lo, hi = dist.support()
    if np.isfinite(lo):
        assert s.support[0] == lo
    if np.isfinite(hi):
        assert s.support[1] == hi
    if tail == "bounded":
        assert np.all(np.isfinite(s.support))


def test_from_distribution_exponential_tails_on_infinite_sides():
    s = from_distribution(stats.norm(0, 1), tolerance=1e-3)
    assert s.support == (-np.inf, np.inf)
    assert s.tail_mass == pytest.approx((1e-3, 1e-3))
    assert s.tails_given == (True, True)
    # the tail continues the source's density: tail density at the knot = norm.pdf there
    x0 = float(s.x[0])
    assert s.tail_mass[0] / s.tail_scales[0] == pytest.approx(stats.norm.pdf(x0), rel=1e-12)
    g = from_distribution(stats.gamma(3.0))
    assert g.support[0] == 0.0 and g.support[1] == np.inf


def test_from_distribution_bad_inputs():
    with pytest.raises(TypeError, match=r"callable ppf and cdf.*without 'ppf'"):
        from_distribution(object())
    with pytest.raises(ValueError, match="knots must be an integer ≥ 3; got 2"):
        from_distribution(stats.norm(), knots=2)
    with pytest.raises(ValueError, match="tail must be one of 'exponential', 'bounded'"):
        from_distribution(stats.norm(), tail="gpd")
    with pytest.raises(
        ValueError, match=r"tolerance must be a finite number in \(0, 0.5\); got -0.1"
    ):
        from_distribution(stats.norm(), tolerance=-0.1)
    with pytest.raises(ValueError, match=r"must return finite values .*got array\(\[nan"):
        from_distribution(stats.uniform(3, 0))  # scipy gives NaN for a zero scale

    class PointMass:
        def ppf(self, u):
            return np.full(np.shape(u), 3.0)

        def cdf(self, x):
            return (np.asarray(x) >= 3.0).astype(float)

    with pytest.raises(
        ValueError, match=r"must have some spread; got ppf\(0.25\) = ppf\(0.75\) = 3.0"
    ):
        from_distribution(PointMass())


def test_from_distribution_warns_when_max_knots_is_too_small():
    with pytest.warns(UserWarning, match="reached max_knots=12"):
        s = from_distribution(stats.lognorm(1.5), knots=10, max_knots=12, tolerance=1e-6)
    assert s.provenance["extra"]["max_abs_cdf_error"] > 1e-6


# ---------------------------------------------------------------- summary


def test_summary_values_match_the_sketch():
    s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41}, lower=0, upper=100)
    out = summary(s)
    assert isinstance(out, SketchSummary)
    assert out.mean == s.mean() and out.sd == s.std()
    assert out.iqr == pytest.approx(float(s.ppf(0.75) - s.ppf(0.25)))
    assert [p for p, _ in out.quantiles] == [0.05, 0.25, 0.5, 0.75, 0.95]
    assert dict(out.quantiles)[0.5] == 20.0
    # linear: highest density segment is 12..20 (0.45 over 8)
    assert out.mode_interval == (12.0, 20.0) and out.mode == 16.0
    assert out.warnings == ()  # bounds stated: nothing left at a default


def test_summary_mode_of_pchip_is_the_density_argmax():
    # analytic mode: normal → μ; gamma(k, θ) → (k − 1)θ
    assert summary(from_distribution(stats.norm(3, 1), tolerance=1e-5)).mode == pytest.approx(
        3.0, abs=0.02
    )
    g = from_distribution(stats.gamma(4.0, scale=2.0), tolerance=1e-5)
    assert summary(g).mode == pytest.approx(6.0, abs=0.05)


def test_summary_warns_on_default_tails_and_shows_what_holds_them():
    s = from_quantiles({0.05: 12, 0.5: 20, 0.95: 41}, name="<b>cost</b>")
    out = summary(s)
    assert out.tail_mass == pytest.approx((0.05, 0.05))
    assert "exponential" in out.tail_models[0] and "default" in out.tail_models[0]
    assert len(out.warnings) == 2
    assert all("Teigen & Jørgensen 2005" in w for w in out.warnings)
    text = str(out)
    assert "5 % — exponential" in text and "warning:" in text
    page = out._repr_html_()
    assert "&lt;b&gt;cost&lt;/b&gt;" in page and "<b>cost</b>" not in page
    stated = from_quantiles(
        {0.05: 12, 0.95: 41}, lower_tail=ExponentialTail(3.0), upper_tail=BoundedTail(80.0)
    )
    out2 = summary(stated)
    assert out2.warnings == ()
    assert [b.stated for b in out2.beyond_stated] == [True, True]
    plain = summary(Sketch([0, 1, 2], [0.1, 0.5, 1]))
    # the default lower tail, and the support ending at the last knot (no upper tail)
    assert len(plain.warnings) == 2 and "lower tail holds 10 %" in plain.warnings[0]
    assert "support ends at 2" in plain.warnings[1]


def test_summary_atoms_and_bad_probabilities():
    out = summary(Sketch([0, 1, 1, 3], [0, 0.2, 0.5, 1]))
    assert len(out.atoms) == 1 and out.atoms[0].x == 1.0
    assert out.atoms[0].mass == pytest.approx(0.3, abs=1e-15)
    assert "atoms" in str(out)
    with pytest.raises(ValueError, match=r"strictly inside \(0, 1\); got probabilities\[1\]=1.0"):
        summary(Sketch([0, 1], [0, 1]), probabilities=(0.5, 1.0))
    with pytest.raises(TypeError, match="needs a Sketch"):
        summary([0, 1])


# ---------------------------------------------------------------- reknot: target → knots

REKNOT_TARGETS = [
    stats.norm(10, 2),
    stats.gamma(2.0, scale=3.0),
    stats.lognorm(0.9, scale=5.0),
    stats.beta(0.8, 3.0, loc=1.0, scale=4.0),  # unbounded density at the lower end
    stats.weibull_min(1.5, scale=2.0),
    stats.t(4, loc=1.0),
]


@pytest.mark.parametrize("dist", REKNOT_TARGETS, ids=lambda d: d.dist.name)
@pytest.mark.parametrize("interpolation", ["linear", "pchip"])
@pytest.mark.parametrize("tol", [1e-3, 1e-4])
def test_reknot_accuracy_contract_against_scipy(dist, interpolation, tol):
    # the stated contract: |F_sketch − F_dist| ≤ tolerance on the knots' range and at most the
    # tail mass beyond the outer knots; checked here on an independent dense grid against the
    # scipy distribution's own cdf
    s = reknot(dist, interpolation=interpolation, tolerance=tol)
    extra = s.provenance["extra"]
    assert extra["max_abs_cdf_error"] <= tol
    lo_mass, hi_mass = extra["tail_mass"]
    inner = np.linspace(s.x[0], s.x[-1], 200_001)
    assert np.max(np.abs(s.cdf(inner) - dist.cdf(inner))) <= tol * 1.05  # between grid points
    far = np.r_[
        np.linspace(dist.ppf(1e-9), s.x[0], 2001), np.linspace(s.x[-1], dist.ppf(1 - 1e-9), 2001)
    ]
    assert np.max(np.abs(s.cdf(far) - dist.cdf(far))) <= max(lo_mass, hi_mass, tol) + 1e-12
    assert s.provenance["method"] == "re-knotted from a distribution"


def test_reknot_takes_any_model_with_cdf_and_ppf_and_keeps_its_atoms():
    # a sketch with a point mass, passed as a plain model: knots reproduce the jump exactly
    target = Sketch([0.0, 2.0, 2.0, 5.0], [0.0, 0.3, 0.6, 1.0], interpolation="linear")
    s = reknot(target, interpolation="linear", tolerance=1e-6)
    assert [(a.x, round(a.mass, 12)) for a in s.atoms] == [(2.0, 0.3)]
    grid = np.linspace(-1, 6, 7001)
    assert np.max(np.abs(s.cdf(grid) - target.cdf(grid))) <= 1e-6

    class Uniform:  # duck-typed: a support tuple, no pdf, no atoms
        support = (1.0, 3.0)

        def cdf(self, x):
            return np.clip((np.asarray(x, float) - 1.0) / 2.0, 0.0, 1.0)

        def ppf(self, u):
            return 1.0 + 2.0 * np.asarray(u, float)

    u = reknot(Uniform(), interpolation="linear")
    assert u.x.tolist()[0] == 1.0 and u.x.tolist()[-1] == 3.0 and u.tail_mass == (0.0, 0.0)


def test_reknot_bad_model():
    with pytest.raises(TypeError, match="model must have callable ppf and cdf"):
        reknot(object())
    with pytest.raises(ValueError, match="tail_mass must be a finite number in"):
        reknot(stats.norm(), tail_mass=0.7)
