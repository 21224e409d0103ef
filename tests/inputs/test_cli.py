"""The command line: describe, check, sample, quantiles, table; one-line errors, exit codes."""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from cdfsketch import Sketch, load
from cdfsketch.cli import _parser, main
from cdfsketch.inputs import InputSet, read_inputset
from cdfsketch.inputs.output import write_draws

DATA = Path(__file__).parents[1] / "data"
GOLDEN = DATA / "spec-v1-linear-bounded.json"
EXPO = DATA / "spec-v1-pchip-atoms-exponential.json"
SET = DATA / "inputs-v1-inline.json"
ROOT = Path(__file__).parents[2]


def run(*args, cwd=None, env=None):
    full_env = {**os.environ, "PYTHONPATH": str(ROOT), **(env or {})}
    return subprocess.run(
        [sys.executable, "-m", "cdfsketch.cli", *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=full_env,
        timeout=120,
    )


# ---------------------------------------------------------------- check


def test_check_reports_every_file_one_line_each(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    spec = json.loads(GOLDEN.read_text())
    spec["knots"]["p"][1] = 2.0
    bad.write_text(json.dumps(spec))
    notjson = tmp_path / "broken.json"
    notjson.write_text("{")
    files = [GOLDEN, bad, tmp_path / "missing.json", notjson, tmp_path, SET]
    assert main(["check", *map(str, files)]) == 1
    out, err = capsys.readouterr()
    assert out.splitlines() == [f"{GOLDEN}: ok", f"{SET}: ok"]
    lines = err.splitlines()
    assert len(lines) == 4
    assert lines[0].startswith(f"{bad}: ") and "knots.p[1]" in lines[0]
    assert "no such file" in lines[1] and "valid JSON" in lines[2] and "folder" in lines[3]
    assert main(["check", str(GOLDEN), str(SET)]) == 0


def test_check_caps_what_a_message_quotes(tmp_path, capsys):
    spec = json.loads(GOLDEN.read_text())
    spec["name"] = "A" * 1_000_000
    big = tmp_path / "big.json"
    big.write_text(json.dumps(spec))
    assert main(["check", str(big)]) == 1
    err = capsys.readouterr().err
    assert len(err.splitlines()) == 1 and len(err) < 700


# ---------------------------------------------------------------- sample


def test_sample_single_spec_matches_python_api(tmp_path):
    out = tmp_path / "draws.npy"
    assert main(["sample", str(GOLDEN), "--size", "1000", "--seed", "5", "--out", str(out)]) == 0
    np.testing.assert_array_equal(np.load(out), load(GOLDEN).sample(1000, rng=5))
    # blocks continue one stream: a small --block gives the same draws
    out2 = tmp_path / "draws2.npy"
    args = ["sample", str(GOLDEN), "--size", "1000", "--seed", "5", "--block", "7", "-o", str(out2)]
    assert main(args) == 0
    np.testing.assert_array_equal(np.load(out2), np.load(out))
    record = json.loads((tmp_path / "draws.npy.json").read_text())
    assert record["seed"] == 5 and record["design"] == "random" and record["size"] == 1000
    assert set(record["spec_sha256"]) == {"spec-v1-linear-bounded"}


@pytest.mark.parametrize("suffix", [".npy", ".csv", ".parquet"])
@pytest.mark.parametrize("design", ["random", "lhs", "sobol"])
def test_sample_input_set_matches_inputset_sample(tmp_path, suffix, design):
    out = tmp_path / f"d{suffix}"
    n = 4096
    args = ["sample", str(SET), "--size", str(n), "--seed", "9", "--design", design]
    assert main([*args, "--block", "1000", "--out", str(out)]) == 0
    want = read_inputset(SET).sample(n, rng=9, design=design)
    if suffix == ".npy":
        got = np.load(out)
        record = json.loads(out.with_name(out.name + ".json").read_text())
    elif suffix == ".csv":
        assert out.read_text().splitlines()[0] == "repair_hours,part_cost,delay"
        got = np.loadtxt(out, delimiter=",", skiprows=1)
        record = json.loads(out.with_name(out.name + ".json").read_text())
    else:
        import pyarrow.parquet as pq

        table = pq.read_table(out)
        assert table.column_names == list(want)
        got = np.column_stack([table[c].to_numpy() for c in table.column_names])
        record = json.loads(table.schema.metadata[b"cdfsketch"])
        assert not out.with_name(out.name + ".json").exists()
    np.testing.assert_array_equal(got, want.to_numpy())
    assert record["design"] == design and record["seed"] == 9
    assert record["dependence"] == "iman-conover" and len(record["spec_sha256"]) == 3
    assert record["package_version"]


def test_sample_without_seed_records_the_one_used(tmp_path):
    out = tmp_path / "d.npy"
    assert main(["sample", str(SET), "--size", "100", "-o", str(out)]) == 0
    seed = json.loads((tmp_path / "d.npy.json").read_text())["seed"]
    np.testing.assert_array_equal(np.load(out), read_inputset(SET).sample(100, rng=seed).to_numpy())


def test_sample_size_accepts_scientific_and_underscores(tmp_path, capsys):
    assert main(["sample", str(GOLDEN), "--size", "1e3", "--seed", "1"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[0] == "spec-v1-linear-bounded" and len(lines) == 1001
    assert main(["sample", str(GOLDEN), "--size", "1_000", "--seed", "1"]) == 0
    assert len(capsys.readouterr().out.splitlines()) == 1001


def test_a_failed_write_leaves_nothing(tmp_path):
    def blocks():
        yield {"a": np.ones(3)}
        raise KeyboardInterrupt

    for suffix in (".npy", ".csv", ".parquet"):
        with pytest.raises(KeyboardInterrupt):
            write_draws(tmp_path / f"x{suffix}", ("a",), blocks(), 6, {"seed": 1})
    assert list(tmp_path.iterdir()) == []


def test_bad_out_is_found_before_sampling(tmp_path):
    start = time.perf_counter()
    res = run("sample", SET, "--size", "1e9", "--out", tmp_path / "nowhere" / "d.npy")
    assert res.returncode == 2 and "folder" in res.stderr
    assert time.perf_counter() - start < 20  # 1e9 draws would take minutes


# ---------------------------------------------------------------- describe, quantiles, table


def test_describe_text_and_json(capsys):
    assert main(["describe", str(GOLDEN)]) == 0
    text = capsys.readouterr().out
    for word in ("mean", "sd", "quantile", "support", "lower tail", "sha256", "provenance.author"):
        assert word in text
    assert main(["describe", str(EXPO), "--json"]) == 0
    rec = json.loads(capsys.readouterr().out)
    assert set(rec) >= {"name", "units", "support", "mean", "sd", "quantiles", "tails"}
    assert rec["mean"] == pytest.approx(load(EXPO).mean())
    assert main(["describe", str(SET), "--json"]) == 0
    rec = json.loads(capsys.readouterr().out)
    assert [i["input"] for i in rec["inputs"]] == ["repair_hours", "part_cost", "delay"]
    assert rec["rank_corr"][0]["rank_corr"] == 0.6
    assert main(["describe", str(SET)]) == 0
    assert "Spearman target" in capsys.readouterr().out


def test_quantiles_and_ppf_alias(capsys):
    assert main(["quantiles", str(GOLDEN), "0.05", "0.5"]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert [float(v.split()[1]) for v in lines] == list(load(GOLDEN).ppf([0.05, 0.5]))
    assert main(["ppf", str(GOLDEN), "0.5"]) == 0
    assert float(capsys.readouterr().out.split()[1]) == load(GOLDEN).ppf(0.5)
    assert main(["quantiles", str(SET), "0.5", "--json"]) == 0
    rec = json.loads(capsys.readouterr().out)
    assert rec["x"]["delay"] == [read_inputset(SET).sketches["delay"].ppf(0.5)]


def test_table_states_a_bound_that_holds(tmp_path):
    out = tmp_path / "t.csv"
    assert main(["table", str(EXPO), "--points", "201", "-o", str(out)]) == 0
    text = out.read_text()
    head = [ln for ln in text.splitlines() if ln.startswith("#")]
    assert any("Exact error bound" in ln for ln in head)
    rows = np.loadtxt(out, delimiter=",", comments="#", skiprows=len(head) + 1)
    u, x = rows[:, 0], rows[:, 1]
    sk = load(EXPO)
    assert u.size == 201 and u[0] == 0 and sk.support[0] == x[0]  # a bounded end: u = 0
    assert u[-1] == 1 - 0.5 / 200  # an exponential upper tail: that end moves in half a step
    np.testing.assert_array_equal(x, sk.ppf(u))
    # the stated bound: Kolmogorov distance of the linearly interpolated table ≤ max step in u
    grid = np.linspace(x[0], x[-1], 20_001)
    table_cdf = np.interp(grid, x, u)
    step = np.max(np.diff(u))
    assert np.max(np.abs(table_cdf - sk.cdf(grid))) <= step + 1e-12
    assert "at most 0.005 in probability" in text  # 1/(N-1) for N = 201


# ---------------------------------------------------------------- help


def test_every_argument_has_help():
    parser = _parser()
    subs = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    assert set(subs.choices) == {"describe", "check", "sample", "quantiles", "ppf", "table", "demo"}
    for name, sub in subs.choices.items():
        assert sub.description, name
        for action in sub._actions:
            assert action.help, (name, action.dest)
        assert main([name, "--help"]) == 0


# ---------------------------------------------------------------- one-line errors


def _bad_files(tmp: Path) -> dict[str, Path]:
    spec = json.loads(GOLDEN.read_text())
    (tmp / "broken.json").write_text("{not json")
    spec_bad = dict(spec, knots={"x": [0, 1], "p": [0.5, 0.2]})
    (tmp / "badspec.json").write_text(json.dumps(spec_bad))
    (tmp / "format.json").write_text(json.dumps({"format": "something-else"}))
    (tmp / "list.json").write_text("[1, 2]")
    (tmp / "nan.json").write_text('{"format": "cdfsketch-spec", "version": NaN}')
    (tmp / "latin1.json").write_bytes(b'{"name": "\xe9"}')
    escape = {
        "format": "cdfsketch-inputs",
        "version": 1,
        "inputs": [{"name": "a", "path": "../spec.json"}],
    }
    (tmp / "escape.json").write_text(json.dumps(escape))
    (tmp / "folder").mkdir()
    return {p.stem: p for p in tmp.iterdir()}


ERRORS = [
    # (label, args with {placeholders}, exit code, a word the line must hold)
    ("missing file", ["check", "{tmp}/missing.json"], 1, "no such file"),
    ("folder as input", ["describe", "{tmp}/folder"], 1, "folder"),
    ("bad JSON", ["describe", "{tmp}/broken.json"], 1, "valid JSON"),
    ("not an object", ["describe", "{tmp}/list.json"], 1, "format"),
    ("NaN in JSON", ["describe", "{tmp}/nan.json"], 1, "plain JSON"),
    ("not UTF-8", ["describe", "{tmp}/latin1.json"], 1, "UTF-8"),
    ("bad spec", ["sample", "{tmp}/badspec.json", "--size", "10"], 1, "{tmp}/badspec.json"),
    ("unknown format", ["quantiles", "{tmp}/format.json", "0.5"], 1, "format"),
    ("path escape", ["describe", "{tmp}/escape.json"], 1, "inside"),
    ("bad size word", ["sample", "{gold}", "--size", "lots"], 2, "--size"),
    ("size zero", ["sample", "{gold}", "--size", "0"], 2, "--size"),
    ("size fraction", ["sample", "{gold}", "--size", "1.5"], 2, "--size"),
    ("size negative", ["sample", "{gold}", "--size", "-3"], 2, "--size"),
    ("size infinite", ["sample", "{gold}", "--size", "inf"], 2, "--size"),
    ("missing size", ["sample", "{gold}"], 2, "--size"),
    ("bad seed", ["sample", "{gold}", "--size", "5", "--seed", "-1"], 2, "--seed"),
    ("seed word", ["sample", "{gold}", "--size", "5", "--seed", "abc"], 2, "--seed"),
    ("bad design", ["sample", "{gold}", "--size", "5", "--design", "halton"], 2, "--design"),
    ("out folder", ["sample", "{gold}", "--size", "5", "--out", "{tmp}/folder"], 2, "--out"),
    ("out suffix", ["sample", "{gold}", "--size", "5", "--out", "{tmp}/d.xlsx"], 2, "--out"),
    ("out no folder", ["sample", "{gold}", "--size", "5", "-o", "{tmp}/no/d.npy"], 2, "--out"),
    ("out unwritable", ["sample", "{gold}", "--size", "5", "-o", "/proc/d.npy"], 2, "--out"),
    ("disk too small", ["sample", "{gold}", "--size", "1e15", "-o", "{tmp}/d.npy"], 2, "--size"),
    ("memory", ["sample", "{set}", "--size", "10", "--block", "1e15"], 2, "memory"),
    ("sobol too big", ["sample", "{gold}", "--size", "2e9", "--design", "sobol"], 2, "--size"),
    ("bad probability", ["quantiles", "{gold}", "1.5"], 2, "probabilities"),
    ("table points", ["table", "{gold}", "--points", "1"], 2, "--points"),
    ("table out", ["table", "{gold}", "--points", "5", "-o", "{tmp}/t.npy"], 2, "--out"),
    ("removed summary", ["summary", "{gold}"], 2, "summary"),
    ("no command", [], 2, "COMMAND"),
]


@pytest.mark.parametrize(("label", "args", "code", "word"), ERRORS, ids=[e[0] for e in ERRORS])
def test_user_errors_are_one_line_with_documented_codes(tmp_path, label, args, code, word):
    if label == "out unwritable" and not Path("/proc").is_dir():
        pytest.skip("needs a read-only /proc")
    _bad_files(tmp_path)
    fill = {"tmp": tmp_path, "gold": GOLDEN, "set": SET}
    res = run(*(a.format(**fill) for a in args), cwd=tmp_path)
    assert res.returncode == code, (res.returncode, res.stderr)
    assert "Traceback" not in res.stderr + res.stdout
    lines = res.stderr.splitlines()
    assert len(lines) == 1, res.stderr
    assert word.format(**fill) in lines[0], lines[0]
    assert len(lines[0]) <= 601
    leftovers = [p.name for p in tmp_path.iterdir() if p.name.startswith((".d.", "d.", ".t."))]
    assert leftovers == []


@pytest.mark.parametrize(
    ("module", "args", "extra"),
    [
        ("pyarrow", [str(GOLDEN), "-o", "{tmp}/d.parquet"], "parquet"),
        ("scipy", [str(GOLDEN), "--design", "lhs"], "fit"),
        ("scipy", [str(SET)], "fit"),  # rank correlations need scipy
    ],
)
def test_missing_extras_are_one_line(tmp_path, module, args, extra):
    argv = ["sample", "--size", "5", *(a.format(tmp=tmp_path) for a in args)]
    code = (
        f"import sys; sys.modules[{module!r}] = None; from cdfsketch.cli import main; "
        f"sys.exit(main({argv!r}))"
    )
    res = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        env={**os.environ, "PYTHONPATH": str(ROOT)},
    )
    assert res.returncode == 2 and len(res.stderr.splitlines()) == 1
    assert f"cdfsketch[{extra}]" in res.stderr and "Traceback" not in res.stderr


def test_sobol_size_warning_is_one_line_and_run_succeeds(tmp_path):
    res = run("sample", GOLDEN, "--size", "1000", "--design", "sobol", "-o", tmp_path / "d.npy")
    assert res.returncode == 0 and len(res.stderr.splitlines()) == 1
    assert "power of two" in res.stderr


def test_inputset_round_trip_through_the_command_line(tmp_path):
    s = Sketch([0, 1, 3], [0, 0.4, 1], name="a")
    ins = InputSet({"a": s, "b": s}, rank_corr={("a", "b"): -0.5})
    path = tmp_path / "set.json"
    ins.to_json(path)
    out = tmp_path / "d.npy"
    assert main(["sample", str(path), "--size", "300", "--seed", "4", "-o", str(out)]) == 0
    np.testing.assert_array_equal(np.load(out), ins.sample(300, rng=4).to_numpy())
