"""The consequence run's contract: arguments, errors, verdicts, the result value."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from cdfsketch import Sketch
from cdfsketch._validate import InputError
from cdfsketch.inputs import InputSet
from cdfsketch.outcomes import Consequences, ModelError, consequences
from cdfsketch.outcomes.verdict import judge, overall, sentence

A = Sketch([1, 3, 8], [0, 0.6, 1], name="now")
B = Sketch([1, 4, 10], [0, 0.6, 1], name="longer")
RATE = Sketch([40, 60], [0, 1])
INS = InputSet({"hours": A, "rate": RATE})


def cost(d):
    return d["hours"] * d["rate"]


def run(model=cost, **kw):
    args = {"vary": "hours", "candidates": [A, B], "size": 2000, "rng": 1}
    args.update(kw)
    return consequences(model, INS, **args)


# ---------------------------------------------------------------- result value


def test_to_pandas_has_the_contract_columns_one_row_per_candidate_and_output():
    res = run(model=lambda d: {"cost": cost(d), "hours": d["hours"] + 0})
    df = res.to_pandas()
    for col in ("candidate", "output", "mean", "mean_se", "sd", "diff_mean", "diff_mean_se"):
        assert col in df.columns
    assert len(df) == 4
    assert set(zip(df["candidate"], df["output"], strict=True)) == {
        (c, o) for c in ("now", "longer") for o in ("cost", "hours")
    }


def test_records_curves_and_decision_record_are_plain_json():
    res = run(thresholds=[300], tolerance=10.0)
    recs = res.summary_records()
    json.dumps(recs, allow_nan=False)
    curves = res.output_curves(points=11)
    json.dumps(curves, allow_nan=False)
    for curve in curves.values():
        assert curve["p"][0] == 0 and curve["p"][-1] == 1 and len(curve["x"]) == 11
        assert np.all(np.diff(curve["x"]) >= 0)
    rec = res.decision_record("longer")
    json.dumps(rec, allow_nan=False)
    assert rec["chosen"] == "longer"
    assert rec["largest_difference"]["candidate"] == "now"
    assert rec["largest_difference"]["difference"] < 0
    assert "output 'output'" in rec["statement"]
    assert set(rec["figures"]["output"]) >= {"mean", "mean_se", "sd", "q0.9"}


def test_result_is_read_only():
    res = run()
    with pytest.raises(AttributeError):
        res.size = 3
    with pytest.raises(TypeError):
        res.tolerance["output"] = 1.0


def test_identity_model_answers_for_the_input_itself():
    res = consequences(None, INS, vary="hours", candidates=[A, B], size=50_000, rng=2)
    assert res.outputs == ("hours",)
    r = res.table()[1]
    assert abs(r["diff_mean"] - (B.mean() - A.mean())) < 4 * r["diff_mean_se"]


def test_mapping_of_sketches_is_independent_inputs():
    a = consequences(
        cost, {"hours": A, "rate": RATE}, vary="hours", candidates=[A], size=500, rng=3
    )
    b = consequences(cost, INS, vary="hours", candidates=[A], size=500, rng=3)
    assert a.table() == b.table()


def test_fitted_candidates_work_like_sketches():
    from cdfsketch.fit import fit_family

    fitted = fit_family("gamma", A.sample(500, rng=1))
    res = run(candidates=[A, fitted])
    assert res.candidates == ("now", "gamma")


def test_top_level_name_is_the_function():
    import cdfsketch.outcomes  # importing the package must not shadow the function

    assert cdfsketch.consequences is cdfsketch.outcomes.consequences
    assert isinstance(
        cdfsketch.consequences(cost, INS, vary="hours", candidates=[A], size=100, rng=1),
        Consequences,
    )


def test_same_seed_same_result_and_labels_deduplicated():
    assert run().table() == run().table()
    res = run(candidates=[A, A.replace(name="now")])
    assert res.candidates == ("now", "now #2")


def test_progress_is_reported_per_window_and_candidate():
    calls = []
    run(size=70_000, progress=lambda done, total, label: calls.append((done, total, label)))
    assert [c[0] for c in calls] == [1, 2, 3, 4]
    assert {c[1] for c in calls} == {4}
    assert [c[2] for c in calls] == ["now", "longer", "now", "longer"]


# ---------------------------------------------------------------- verdicts


def test_verdicts_follow_the_tolerance():
    big = run(size=20_000, tolerance=1e6).verdicts()["output"]
    small = run(size=20_000, tolerance=1.0).verdicts()["output"]
    assert big == "within the tolerance"
    assert small == "the choice changes this output by more than the tolerance you set"


def test_cannot_tell_names_a_sample_size_larger_than_the_run():
    # a tolerance at the exact mean difference cannot be decided by a small run
    exact = (B.mean() - A.mean()) * RATE.mean()
    res = run(size=200, tolerance=exact, quantiles=())
    row = res.table()[1]
    assert row["verdict_code"] == "cannot tell"
    assert row["draws_needed"] > 200
    assert (
        row["verdict"]
        == f"cannot tell at this sample size: use at least {row['draws_needed']} draws"
    )


def test_judge_picks_the_statistics_the_verdict_weighs():
    # the P90 moves much more than the median here; a tolerance between them
    res = run(size=50_000, quantiles=(0.5, 0.9))
    row = res.table()[1]
    tol = (abs(row["diff_q0.5"]) + abs(row["diff_q0.9"])) / 2
    on_median = run(size=50_000, quantiles=(0.5, 0.9), tolerance=tol, judge=["q0.5"])
    on_p90 = run(size=50_000, quantiles=(0.5, 0.9), tolerance=tol, judge=["q0.9"])
    assert on_median.table()[1]["verdict_code"] == "within"
    assert on_p90.table()[1]["verdict_code"] == "changes"
    assert on_p90.judge == ("q0.9",)


@pytest.mark.parametrize(
    ("d", "se", "tol", "code"),
    [
        (5.0, 1.0, 2.0, "changes"),
        (-5.0, 1.0, 2.0, "changes"),
        (0.0, 0.1, 2.0, "within"),
        (2.0, 0.0, 2.0, "within"),
        (2.5, 0.0, 2.0, "changes"),
        (1.9, 0.5, 2.0, "cannot tell"),
        (math.nan, 0.5, 2.0, "cannot tell"),
    ],
)
def test_judge_table(d, se, tol, code):
    assert judge(d, se, tol, 100, 1.96)[0] == code


def test_draws_needed_separates_the_interval_from_the_tolerance():
    # With N draws the SE is se*sqrt(n/N); the interval then just clears the gap.
    d, se, tol, n, z = 1.5, 1.0, 2.0, 1000, 1.96
    _, need = judge(d, se, tol, n, z)
    assert z * se * math.sqrt(n / need) <= abs(abs(d) - tol) + 1e-12
    assert z * se * math.sqrt(n / (need - 1)) > abs(abs(d) - tol)


def test_overall_and_sentences():
    assert overall([("within", None), ("changes", None)]) == ("changes", None)
    assert overall([("within", None), ("cannot tell", 50)]) == ("cannot tell", 50)
    assert sentence("within", None) == "within the tolerance"


# ---------------------------------------------------------------- model errors


def test_model_that_raises_names_the_candidate():
    def bad(d):
        if d["hours"].max() > 8.5:
            raise RuntimeError("boom")
        return d["hours"]

    with pytest.raises(ModelError, match=r"RuntimeError: 'boom' for candidate 'longer'"):
        run(model=bad)


def test_model_with_nan_counts_the_bad_draws():
    def nan_model(d):
        out = np.array(d["hours"])
        out[out > 7] = np.nan
        return out

    with pytest.raises(ModelError) as info:
        run(model=nan_model, size=5000)
    bad = int(np.sum(A.sampler().ppf(INS.uniforms(5000, rng=1)["hours"]) > 7))
    assert f"{bad} of 5000 draws NaN or infinite" in str(info.value)
    assert "candidate 'now'" in str(info.value)


def test_model_with_inf_and_wrong_shapes():
    with pytest.raises(ModelError, match="NaN or infinite"):
        run(model=lambda d: np.where(d["hours"] > 2, np.inf, d["hours"]))
    with pytest.raises(ModelError, match=r"shape \(2000,\).*got shape \(\)"):
        run(model=lambda d: 1.0)
    with pytest.raises(ModelError, match=r"got shape \(2000, 2\)"):
        run(model=lambda d: np.stack([d["hours"], d["rate"]], axis=1))
    with pytest.raises(ModelError, match="numbers"):
        run(model=lambda d: {"x": "text"})
    calls = iter([{"a": np.zeros(2000)}, {"b": np.zeros(2000)}])
    with pytest.raises(ModelError, match="same outputs"):
        run(model=lambda d: next(calls))


def test_model_cannot_change_the_shared_draws():
    def in_place(d):
        d["rate"] *= 2
        return d["rate"]

    with pytest.raises(ModelError, match="read-only"):
        run(model=in_place)


# ---------------------------------------------------------------- argument errors


@pytest.mark.parametrize(
    ("kw", "field"),
    [
        ({"vary": "minutes"}, "vary"),
        ({"candidates": []}, "candidates"),
        ({"candidates": [A, "gamma"]}, "candidates"),
        ({"size": 5}, "size"),
        ({"size": 2.5}, "size"),
        ({"design": "grid"}, "design"),
        ({"quantiles": [0.5, 1.0]}, "quantiles"),
        ({"tolerance": -1.0}, "tolerance"),
        ({"thresholds": "high"}, "thresholds"),
        ({"thresholds": {"profit": [1.0]}}, "thresholds"),
        ({"reference": "gamma"}, "reference"),
        ({"judge": ["q0.99"]}, "judge"),
        ({"judge": "mean"}, "judge"),
        ({"names": ["x"]}, "names"),
        ({"confidence": 1.0}, "confidence"),
        ({"chunks": 1000, "size": 200_000}, "chunks"),
    ],
)
def test_bad_arguments_name_the_field(kw, field):
    with pytest.raises(InputError) as info:
        run(**kw)
    assert info.value.field == field
    assert "; got " in str(info.value)


def test_bad_model_and_inputs():
    with pytest.raises(InputError, match="model must be a function"):
        consequences(3, INS, vary="hours", candidates=[A], size=100)
    with pytest.raises(InputError, match="InputSet"):
        consequences(cost, [A], vary="hours", candidates=[A], size=100)
