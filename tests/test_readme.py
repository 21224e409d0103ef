"""The README's promises: the commands it gives and the demo data it embeds."""

from __future__ import annotations

import re
import sys
from pathlib import Path

ROOT = Path(__file__).parents[1]


def readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text()
    return re.findall(r"```bash\n(.+?)\n```", text)


def test_readme_gives_two_setup_commands():
    commands = readme_commands()
    assert len(commands) == 2
    assert commands[0].endswith("cdfsketch demo")
    assert commands[1].endswith("python -m pytest")


def test_ci_runs_exactly_the_readme_test_command():
    ci = (ROOT / ".ci" / "run").read_text().strip().splitlines()
    assert ci[-1] == readme_commands()[1]


def test_readme_opens_with_the_job_and_carries_the_caution():
    text = (ROOT / "README.md").read_text()
    first_paragraph = text.split("\n\n")[1]
    assert "simulation" in first_paragraph and "CDF" in first_paragraph
    assert "safety- or money-critical" in text and "licensed" in text


def test_demo_data_file_is_what_the_seeded_script_writes():
    sys.path.insert(0, str(ROOT / "notebooks"))
    try:
        import make_demo_data
    finally:
        sys.path.pop(0)
    committed = (ROOT / "notebooks" / "data" / "pump_repair_hours.csv").read_text()
    assert committed == make_demo_data.csv_text()
    assert "INVENTED DATA" in committed


def test_every_dotted_name_the_readme_mentions_resolves():
    # issue 11: `cdfsketch.fit.fit_candidates(data)` must work right after `import cdfsketch`
    import importlib

    text = (ROOT / "README.md").read_text()
    names = sorted(set(re.findall(r"`(cdfsketch(?:\.[A-Za-z_]\w*)+)", text)))
    assert "cdfsketch.fit.fit_candidates" in names and "cdfsketch.consequences" in names
    for dotted in names:
        obj = importlib.import_module("cdfsketch")
        for part in dotted.split(".")[1:]:
            obj = getattr(obj, part)  # AttributeError names the broken one


def test_demo_files_named_in_the_readme_are_the_ones_it_writes():
    from cdfsketch.demo import FILES

    text = (ROOT / "README.md").read_text()
    for name in FILES:
        assert f"cdfsketch-demo/{name}" in text
