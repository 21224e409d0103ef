"""The main command (`cdfsketch demo`) tells the story, names its files and writes only them."""

from __future__ import annotations

import subprocess
import sys

import numpy as np

import cdfsketch
from cdfsketch.demo import CALL_OUT_FEE, FILES, repair_cost, repair_hours


def test_demo_runs_names_its_files_and_writes_nothing_else(tmp_path):
    out = tmp_path / "demo"
    done = subprocess.run(
        [sys.executable, "-m", "cdfsketch.cli", "demo", "--out", str(out)],
        capture_output=True, text=True, cwd=tmp_path, timeout=300,
    )  # fmt: skip
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""  # no noise from the machinery
    story = done.stdout
    for step in (
        "1. Data",
        "2. Automatic start",
        "3. Adjusted sketch",
        "4. Compared",
        "5. Decision",
        "6. Spec written",
        "7. Reloaded",
        "8. Review page written",
    ):
        assert step in story, step
    assert "INVENTED" in story and "licensed practice" in story
    written = sorted(p.name for p in tmp_path.rglob("*") if p.is_file())
    assert written == sorted(FILES)
    for name in FILES:
        assert story.count(str(out / name)) >= 1
    spec = cdfsketch.load(out / FILES[0])
    assert spec.provenance["decision"]["chosen"] == "sketch"
    assert np.isfinite(spec.sample(1000, rng=1)).all()
    # whether the choice changes an (invented) model's answer travels with the spec
    checked = spec.provenance["decision"]["consequences"]
    assert checked["vary"] == "hours" and checked["chosen"] == "sketch"
    assert "Does the choice change a model's answer?" in story
    assert "The spec records: We checked that the choice matters by" in " ".join(story.split())
    page = (out / FILES[1]).read_text(encoding="utf-8")
    assert page.startswith("<!DOCTYPE html>") and "invented" in page
    assert '"consequences": {"title": "Does the choice change the model' in page


def test_demo_cost_model_is_the_stated_formula():
    # hours · rate + the call-out fee, by hand: 2 h · 40 EUR/h + 90 EUR = 170 EUR
    cost = repair_cost({"hours": np.array([2.0, 0.0]), "rate": np.array([40.0, 55.0])})
    assert cost["repair cost"].tolist() == [2 * 40 + CALL_OUT_FEE, CALL_OUT_FEE] == [170.0, 90.0]


def test_demo_data_are_the_seeded_invented_ones():
    hours = repair_hours()
    assert hours.size == 64 and np.unique(hours).size < 64  # lumpy: logged to the half hour
    assert np.array_equal(hours, repair_hours())
