"""A review that says whether the choice changes the model's answer (issue 12, "In the review").

The review takes a consequence run (or runs one on its own candidates), the
page and the board show the output's CDF per candidate and a table of the
output figures, and the decision keeps what the run found for the chosen
candidate. Candidates and models are invented. Outside references are named
beside each check.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

import cdfsketch
from cdfsketch import Sketch
from cdfsketch._numfmt import figure
from cdfsketch._validate import InputError
from cdfsketch.empirical import ECDF
from cdfsketch.review import CAUTION, Review, page_html
from cdfsketch.review.consequence_view import TITLE, consequence_presentation
from cdfsketch.review.page import page_payload
from cdfsketch.review.palette import DASH_ARRAY, style

ROOT = Path(__file__).parents[2]
MARK = "unmistakable_model_token_4711"  # appears in the model's source, never in a page


def experts() -> list[Sketch]:
    a = Sketch([0, 4, 10], [0, 0.5, 1], name="expert A", units="h")
    b = Sketch([1, 6, 14], [0, 0.5, 1], name="expert <B>", units="h")
    return [a, b]


class CountingModel:
    """cost = hours · rate + parts (invented), counting its calls."""

    def __init__(self) -> None:
        self.calls = 0

    def __call__(self, d):
        self.calls += 1
        unmistakable_model_token_4711 = 1.0  # this model's code must never reach the page
        return {"cost": d["hours"] * d["rate"] * unmistakable_model_token_4711 + d["parts"]}


@pytest.fixture(scope="module")
def inputs() -> dict[str, Sketch]:
    rate = Sketch([50, 70], [0, 1], name="rate", units="EUR/h")  # uniform, mean 60
    parts = Sketch([100, 300], [0, 1], name="parts", units="EUR")  # uniform, mean 200
    return {"hours": experts()[0], "rate": rate, "parts": parts}


@pytest.fixture
def review(inputs) -> Review:
    return Review(
        None, experts(), units="h", name="repair time (invented)", model=CountingModel(),
        inputs=inputs, vary="hours", size=20_000, rng=5, output_units="EUR",
        consequence_options={"tolerance": 5.0, "thresholds": [800, 1000], "quantiles": (0.5, 0.9)},
    )  # fmt: skip


# ---------------------------------------------------------------- closed-form cases


def test_identity_model_output_cdf_is_the_candidates_cdf() -> None:
    # Reference: the Dvoretzky–Kiefer–Wolfowitz inequality with Massart's constant (1990):
    # P(sup |F_n - F| > eps) <= 2 exp(-2 n eps^2). The identity model's output is the
    # candidate itself, so its curve (the sample quantiles) lies within eps of the
    # candidate's exact CDF; eps for a failure chance of 1e-6, plus one grid step of p.
    cands = experts()
    n = 20_000
    res = cdfsketch.consequences(None, {"hours": cands[0]}, vary="hours", candidates=cands,
                                 size=n, rng=11)  # fmt: skip
    r = Review(None, cands, units="h", consequences=res)
    out = consequence_presentation(r)["outputs"][0]
    assert out["name"] == "hours" and out["unit"] == "h"  # the varied input's units
    eps = math.sqrt(math.log(2 / 1e-6) / (2 * n)) + 1 / n
    for curve, cand in zip(out["curves"], cands, strict=True):
        x, p = np.asarray(curve["x"]), np.asarray(curve["p"])
        assert np.max(np.abs(cand.cdf(x) - p)) <= eps, cand.name
        # and the curve is the result's own accessor, unchanged
        assert curve["x"] == res.output_curves(output="hours")[cand.name]["x"]


def test_sum_of_independent_inputs_means_add() -> None:
    # Reference: linearity of expectation, E[X + Y] = E[X] + E[Y]; the exact means of the
    # linear sketches are (0+4)/2·0.5 + (4+10)/2·0.5 = 4.5 h and (1+6)/2·0.5 + (6+14)/2·0.5
    # = 6.75 h (hand-computed), and of Y uniform on [2, 4] 3 h.
    cands = experts()
    y = Sketch([2, 4], [0, 1], name="y")
    res = cdfsketch.consequences(lambda d: d["hours"] + d["y"], {"hours": cands[0], "y": y},
                                 vary="hours", candidates=cands, size=40_000, rng=2)  # fmt: skip
    r = Review(None, cands, consequences=res, output_units="h")
    rows = {row["name"]: row for row in consequence_presentation(r)["outputs"][0]["rows"]}
    for cand, exact in zip(cands, (4.5, 6.75), strict=True):
        cell = rows[cand.name]["cells"]["mean"]
        assert abs(cell["value"] - (exact + 3.0)) <= 5 * cell["se"], cand.name
        assert abs(cand.mean() - exact) < 1e-12
    # the difference of the means is the difference of the candidates' means (Y cancels)
    diff = rows["expert <B>"]["cells"]["mean"]
    assert abs(diff["diff"] - 2.25) <= 5 * diff["diffSe"]


# ---------------------------------------------------------------- what is shown


def test_table_cells_are_the_result_figures(review: Review) -> None:
    res = review.consequences
    pres = consequence_presentation(review)
    assert pres["title"] == TITLE and pres["reference"] == res.reference == "expert A"
    records = {r["candidate"]: r for r in res.summary_records()}
    out = pres["outputs"][0]
    assert out["verdict"] == res.verdicts()["cost"]
    assert out["toleranceText"] == "tolerance 5 EUR"
    assert [c["key"] for c in out["columns"]] == [
        "mean", "sd", "q0.5", "q0.9", "p_above_800", "p_above_1000",
    ]  # fmt: skip
    assert [c["label"] for c in out["columns"]][2:] == [
        "Median", "90 % quantile", "P(> 800)", "P(> 1000)",
    ]  # fmt: skip
    for row in out["rows"]:
        rec = records[row["name"]]
        cells = row["cells"]
        assert cells["mean"]["text"] == f"{figure(rec['mean'])} ± {figure(rec['mean_se'])}"
        assert cells["sd"]["text"] == figure(rec["sd"]) and cells["sd"]["diffText"] == ""
        assert cells["q0.9"]["text"] == f"{figure(rec['q0.9'])} ± {figure(rec['q0.9_se'])}"
        p, se = rec["p_above_800"], rec["p_above_800_se"]
        assert cells["p_above_800"]["text"] == f"{figure(100 * p)} ± {figure(100 * se)}"
        if row["reference"]:
            assert row["verdict"] == "reference" and cells["mean"]["diffText"] == ""
        else:
            d, dse = rec["diff_mean"], rec["diff_mean_se"]
            assert cells["mean"]["diffText"] == f"Δ {figure(d)} ± {figure(dse)}"
            assert row["verdict"] == "changes"  # 2.25 h · 60 EUR/h ≫ the 5 EUR tolerance


def test_reference_follows_the_choice(review: Review) -> None:
    before = consequence_presentation(review)["outputs"][0]["rows"]
    review.choose("expert <B>", by="group", rationale="longer repairs seen")
    after = consequence_presentation(review)
    assert after["reference"] == "expert <B>"
    rows = after["outputs"][0]["rows"]
    assert [r["chosen"] for r in rows] == [False, True] and rows[1]["reference"]
    # the mean difference is antisymmetric: A − B = −(B − A), on the same draws
    assert rows[0]["cells"]["mean"]["diff"] == -before[1]["cells"]["mean"]["diff"]


def test_colours_and_dashes_are_the_input_panels(review: Review) -> None:
    payload = page_payload(review)
    out = payload["consequences"]["outputs"][0]
    for i, c in enumerate(payload["candidates"]):
        st = style(i)  # the palette is the one home of each candidate's look
        for item in (out["rows"][i], out["curves"][i]):
            assert item["index"] == i and item["name"] == c["name"]
            assert (item["colour"], item["dash"], item["marker"]) == (
                c["colour"], c["dash"], c["marker"],
            )  # fmt: skip
            assert (item["colour"], item["dash"]) == (st.colour, DASH_ARRAY[st.dash])


def test_page_holds_numbers_only_and_runs_nothing(review: Review, tmp_path: Path) -> None:
    # the review keeps the result, never the model
    assert not any(isinstance(v, CountingModel) for v in vars(review).values())
    html = page_html(review)
    assert MARK not in html and "CountingModel" not in html
    payload = page_payload(review)
    text = json.dumps(payload["consequences"], allow_nan=False)  # plain JSON: no code objects
    assert MARK not in text
    assert payload["consequences"]["note"].startswith("Only the computed numbers and curves")
    assert CAUTION in html  # the caution still shows on the page


def test_model_runs_once_per_block_and_never_for_the_page(inputs) -> None:
    model = CountingModel()
    r = Review(None, experts(), model=model, inputs=inputs, vary="hours", size=1000, rng=1)
    calls = model.calls
    assert calls >= 2  # at least once per candidate
    page_html(r)
    r.choose("expert A", by="g", rationale="r")
    r.chosen_spec()
    page_html(r)
    assert model.calls == calls


# ---------------------------------------------------------------- the decision record


def test_decision_record_lands_in_the_chosen_spec(review: Review) -> None:
    d = review.choose("expert A", by="review group", rationale="closest to the logs")
    want = review.consequences.decision_record("expert A")
    assert json.loads(json.dumps(d["consequences"])) == json.loads(json.dumps(want))
    spec = review.chosen_spec()
    cdfsketch.validate_spec(spec)  # the shipped schema and the reader's rules
    rec = spec["provenance"]["decision"]["consequences"]
    assert rec["statement"].startswith("We checked that the choice matters by ")
    assert rec["largest_difference"]["output"] == "cost"
    assert rec["figures"]["cost"]["mean"] == want["figures"]["cost"]["mean"]
    again = cdfsketch.load(json.dumps(spec))
    assert again.provenance["decision"]["consequences"]["chosen"] == "expert A"
    with pytest.raises(TypeError, match="read-only"):
        d["consequences"]["figures"]["cost"]["mean"] = 0.0


def test_js_reader_accepts_the_spec(review: Review, tmp_path: Path) -> None:
    node = shutil.which("node")
    if node is None:
        if os.environ.get("CI"):
            pytest.fail("node is not installed; CI must check the JS reader (install nodejs).")
        pytest.skip("node is not installed: the JS reader check did not run")
    review.choose("expert <B>", by="g", rationale="r")
    path = tmp_path / "spec.json"
    path.write_text(json.dumps(review.chosen_spec()), encoding="utf-8")
    reader = (ROOT / "js" / "spec-reader.mjs").as_uri()
    code = (
        f'import {{ readSpec }} from "{reader}"; import {{ readFileSync }} from "node:fs";'
        f"const s = readSpec(JSON.parse(readFileSync({json.dumps(str(path))}, 'utf8')));"
        "console.log(s.provenance.decision.consequences.chosen);"
    )
    done = subprocess.run([node, "--input-type=module", "-e", code], capture_output=True,
                          text=True, timeout=60)  # fmt: skip
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "expert <B>"


def test_attaching_after_the_choice_adds_the_record(inputs) -> None:
    r = Review(None, experts())
    r.choose("expert A", by="g", rationale="r", when="2026-01-05T10:00:00+00:00")
    assert "consequences" not in r.decision
    res = cdfsketch.consequences(CountingModel(), inputs, vary="hours", candidates=experts(),
                                 size=1000, rng=3)  # fmt: skip
    r.attach_consequences(res, output_units={"cost": "EUR"})
    assert r.decision["consequences"]["chosen"] == "expert A"
    assert r.decision["when"] == "2026-01-05T10:00:00+00:00"
    assert r.output_units == {"cost": "EUR"}


def test_run_on_an_existing_review_uses_its_names(inputs) -> None:
    data = np.random.default_rng(4).gamma(2.0, 2.0, 120)  # invented
    r = Review(data, [*experts(), ECDF(data)], rng=1, progress=False)
    res = r.run_consequences(CountingModel(), inputs, vary="hours", size=2000, rng=9)
    assert res.candidates == r.names == ("expert A", "expert <B>", "resampled data")
    assert consequence_presentation(r)["outputs"][0]["unit"] == ""


# ---------------------------------------------------------------- errors


def test_mismatched_names_give_a_clear_error(inputs) -> None:
    res = cdfsketch.consequences(CountingModel(), inputs, vary="hours", candidates=experts(),
                                 names=["expert A", "gamma"], size=500, rng=1)  # fmt: skip
    with pytest.raises(InputError) as err:
        Review(None, experts(), consequences=res)
    msg = str(err.value)
    assert err.value.field == "consequences"
    assert "must be the review's candidates ['expert A', 'expert <B>']" in msg
    assert "not run: ['expert <B>']" in msg and "not in the review: ['gamma']" in msg
    assert "names=list(review.names)" in msg  # the remedy


@pytest.mark.parametrize(
    ("kwargs", "field", "words"),
    [
        ({"consequences": "a table"}, "consequences", "must be the result of cdfsketch"),
        ({"model": CountingModel(), "vary": "hours", "size": 100}, "inputs", "no inputs"),
        ({"model": 3, "inputs": {}, "vary": "hours", "size": 100}, "model", "must be a function"),
        ({"vary": "hours"}, "model", "no model"),
        ({"output_units": "EUR"}, "output_units", "needs a consequence run"),
    ],
)
def test_bad_arguments_by_message(kwargs, field, words) -> None:
    with pytest.raises(InputError) as err:
        Review(None, experts(), **kwargs)
    assert err.value.field == field and words in str(err.value)


def test_bad_options_and_units(inputs) -> None:
    res = cdfsketch.consequences(CountingModel(), inputs, vary="hours", candidates=experts(),
                                 size=500, rng=1)  # fmt: skip
    with pytest.raises(InputError, match="exclude each other"):
        Review(None, experts(), consequences=res, model=CountingModel())
    with pytest.raises(InputError, match="may set only") as err:
        Review(None, experts(), model=CountingModel(), inputs=inputs, vary="hours", size=500,
               consequence_options={"names": ["a", "b"]})  # fmt: skip
    assert err.value.field == "consequence_options"
    with pytest.raises(InputError, match="must name outputs of the model") as err:
        Review(None, experts(), consequences=res, output_units={"costs": "EUR"})
    assert "Use the model's output names" in str(err.value)
