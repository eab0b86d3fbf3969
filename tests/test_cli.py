"""The command line, run as a user runs it: a subprocess per command, exit codes, JSON numbers."""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

from dcchar.files.scenario import load_scenario
from dcchar.files.toml_writer import dumps

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "dcchar", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, timeout=300)


@pytest.mark.parametrize("name", ["hoist", "fan", "conveyor"])
def test_check_accepts_the_examples(name):
    r = run("check", EXAMPLES / f"{name}.toml")
    assert r.returncode == 0, r.stderr
    assert "valid" in r.stdout


def test_check_names_the_key_path_and_exits_2(tmp_path):
    import tomllib

    doc = tomllib.loads((EXAMPLES / "hoist.toml").read_text())
    doc["machines"]["family"]["rating"]["voltage_v"] = -5.0
    (tmp_path / "bad.toml").write_text(dumps(doc))
    r = run("check", tmp_path / "bad.toml")
    assert r.returncode == 2
    assert "machines.family.rating.voltage_v: -5.0 is not allowed: expected a number > 0" in r.stderr
    assert "Traceback" not in r.stderr
    r = run("check", tmp_path / "missing.toml")
    assert r.returncode == 2 and "cannot read" in r.stderr


def test_usage_errors_exit_2():
    assert run("nosuchcommand").returncode == 2
    assert run("report", EXAMPLES / "hoist.toml").returncode == 2  # -o is required


@pytest.mark.parametrize("name,load", [("hoist", None), ("hoist", "lower_braking"), ("conveyor", "restart_loaded"),
                                       ("fan", "damper_half")])
def test_solve_json_equals_the_library(name, load):
    args = ["solve", EXAMPLES / f"{name}.toml", "--json"] + (["--load", load] if load else [])
    r = run(*args)
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    s = load_scenario(EXAMPLES / f"{name}.toml")
    comparison = s.compare(load)
    assert data["load"] == (load or s.default_load)
    assert list(data["candidates"]) == list(comparison.candidates)
    for key, cand in comparison.candidates.items():
        got = data["candidates"][key]["figures"]
        for k, v in cand.row().items():
            if isinstance(v, float) and math.isnan(v):
                assert got[k] is None
            elif isinstance(v, float) and math.isinf(v):
                assert got[k] == ("inf" if v > 0 else "-inf")
            else:
                assert got[k] == v, (key, k)  # JSON floats are written with repr: equal to the bit
        assert len(data["candidates"][key]["points"]) == len(cand.operating.points)
        codes = [c["code"] for c in data["candidates"][key]["cautions"]]
        assert codes == [c.code for c in cand.cautions]


def test_solve_text_is_an_aligned_table():
    r = run("solve", EXAMPLES / "hoist.toml", "--load", "empty_hook")
    assert r.returncode == 0, r.stderr
    lines = r.stdout.splitlines()
    head = next(i for i, line in enumerate(lines) if line.startswith("connection"))
    rule = lines[head + 1]
    assert set(rule.replace(" ", "")) == {"-"}
    rows = lines[head + 2:head + 8]
    assert [row.split("  ")[0].strip() for row in rows][:3] == ["separately excited", "shunt", "series"]
    # the columns line up: every row is at most as long as the rule
    assert all(len(row) <= len(rule) for row in rows)
    s = load_scenario(EXAMPLES / "hoist.toml")
    series = s.compare("empty_hook").candidates["series"].point
    from dcchar.files.tables import format_value

    assert format_value(series.speed_rpm) in rows[2]
    assert "licensed" in r.stdout


def test_solve_unknown_load_exits_2():
    r = run("solve", EXAMPLES / "hoist.toml", "--load", "nosuch")
    assert r.returncode == 2 and "--load" in r.stderr


def test_report_writes_and_refuses_to_overwrite(tmp_path):
    out = tmp_path / "rep"
    r = run("report", EXAMPLES / "fan.toml", "-o", out, "--units", "us")
    assert r.returncode == 0, r.stderr
    assert "[" in r.stderr and "manifest.json" in r.stderr  # progress on stderr
    assert (out / "manifest.json").is_file() and (out / "duty" / "torque_speed.png").is_file()
    r = run("report", EXAMPLES / "fan.toml", "-o", out)
    assert r.returncode == 2 and "not empty" in r.stderr
    r = run("report", EXAMPLES / "fan.toml", "-o", out, "--force", "--figures", "uncoupled")
    assert r.returncode == 0, r.stderr
    assert (out / "uncoupled" / "speed_current.svg").is_file()


def test_unexpected_failure_exits_1_without_traceback(tmp_path):
    # a failure that is not bad input, simulated inside the report writer
    code = ("import sys, dcchar.cli as c, dcchar.files.report as r\n"
            "def boom(*a, **k): raise RuntimeError('simulated')\n"
            "r.write_report = boom\n"
            "sys.exit(c.main(sys.argv[1:]))\n")
    args = ["report", str(EXAMPLES / "fan.toml"), "-o", str(tmp_path / "x")]
    r = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, timeout=300)
    assert r.returncode == 1
    assert "unexpected failure: RuntimeError: simulated" in r.stderr and "Traceback" not in r.stderr
    r = subprocess.run([sys.executable, "-c", code, "--debug", *args], capture_output=True, text=True, timeout=300)
    assert r.returncode == 1 and "Traceback" in r.stderr


def test_demo_reports_a_bad_port():
    # the app module validates the port itself and says so; the command passes its exit code on
    r = run("demo", "--port", "70000")
    assert r.returncode != 0
    assert "port" in r.stderr


def test_console_script_entry_point():
    from importlib.metadata import entry_points

    eps = [e for e in entry_points(group="console_scripts") if e.name == "dcchar"]
    assert eps and eps[0].value == "dcchar.cli:main"


# ---------------------------------------------------------------------------- select

def _json_value(v):
    if isinstance(v, float) and math.isnan(v):
        return None
    if isinstance(v, float) and math.isinf(v):
        return "inf" if v > 0 else "-inf"
    return v


@pytest.mark.parametrize("name", ["hoist", "fan"])
def test_select_json_equals_the_library(name):
    r = run("select", EXAMPLES / f"{name}.toml", "--json")
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    s = load_scenario(EXAMPLES / f"{name}.toml")
    m = s.selection()
    assert data["ranking"]["leader"] == m.leader
    assert [e["candidate"] for e in data["ranking"]["entries"]] == list(m.ranking.order)
    assert len(data["cells"]) == len(m.keys) * len(m.requirements)
    for c in data["cells"]:
        cell = m.cell(c["candidate"], c["requirement"])
        # JSON floats are written with repr: equal to the bit
        assert c["figure"] == _json_value(cell.value) and c["required"] == _json_value(cell.required)
        assert c["margin"] == _json_value(cell.margin)
        assert c["verdict"] == cell.verdict and c["reason"] == cell.reason
    assert [c["code"] for c in data["cautions"]] == [c.code for c in m.cautions if c.code != "defer"]
    assert "licensed" in data["deference"] and data["tolerance"] is None


def test_select_text_is_an_aligned_table():
    r = run("select", EXAMPLES / "hoist.toml")
    assert r.returncode == 0, r.stderr
    lines = r.stdout.splitlines()
    head = next(i for i, line in enumerate(lines) if line.startswith("rank  connection"))
    rule = lines[head + 1]
    assert set(rule.replace(" ", "")) == {"-"}
    s = load_scenario(EXAMPLES / "hoist.toml")
    m = s.selection()
    rows = lines[head + 2:head + 2 + len(m.keys)]
    assert all(len(row) <= len(rule) for row in rows)
    for row, key in zip(rows, m.ranking.order):
        assert row.startswith(str(m.ranking[key].position)) and m.label(key) in row
        symbols = [t for t in row.split() if t in ("+", "~", "x")]
        expected = {"pass": "+", "marginal": "~", "fail": "x"}
        assert symbols == [expected[m.cell(key, f).verdict] for f in m.requirements.figures]
    assert m.ranking.summary in r.stdout and "cautions for the leading candidate" in r.stdout
    assert "licensed practitioners" in r.stdout


def test_select_exit_codes():
    r = run("select", EXAMPLES / "hoist.toml", "--load", "empty_hook")
    assert r.returncode == 2 and "loads.empty_hook.requirements" in r.stderr and "Traceback" not in r.stderr
    r = run("select", EXAMPLES / "hoist.toml", "--load", "nosuch")
    assert r.returncode == 2 and "--load" in r.stderr
    assert run("select").returncode == 2  # the scenario is required


def test_select_tolerance_shares_equal_the_library(tmp_path):
    doc = load_scenario(EXAMPLES / "conveyor.toml").document
    import copy

    doc = copy.deepcopy(doc)
    doc["tolerance"]["samples"] = 200
    (tmp_path / "c.toml").write_text(dumps(doc))
    r = run("select", tmp_path / "c.toml", "--load", "restart_loaded", "--json")
    assert r.returncode == 0, r.stderr
    assert "tolerance study" in r.stderr and "100 %" in r.stderr  # progress on stderr
    data = json.loads(r.stdout)
    t = load_scenario(tmp_path / "c.toml").tolerance("restart_loaded")
    assert data["tolerance"]["samples"] == 200 and data["tolerance"]["seed"] == 7
    for x in data["tolerance"]["shares"]:
        s = t.study.share(x["candidate"], x["requirement"])
        assert (x["passed"], x["marginal"], x["failed"], x["fragile"]) == (s.passed, s.marginal, s.failed, s.fragile)
    r = run("select", tmp_path / "c.toml", "--load", "restart_loaded", "--no-tolerance")
    assert r.returncode == 0 and "share of samples" not in r.stdout and r.stderr == ""
