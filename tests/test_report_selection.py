"""The choice of connection in the report bundle: CSV figures equal the library's matrix, the
summary's verdicts equal the CSV's, figures at print size, the tolerance study only when asked."""

from __future__ import annotations

import csv
import io
import json
import tomllib
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from numpy.testing import assert_allclose

from dcchar.files import report as rp
from dcchar.files.report_selection import cell_table
from dcchar.files.scenario import load_scenario, scenario_from_dict
from dcchar.models.cautions import DEFERENCE

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _rows(text):
    rows = list(csv.reader(io.StringIO(text)))
    return rows[0], rows[1:]


def _num(text):
    return {"yes": True, "no": False}.get(text, None) if text in ("yes", "no") else float(text)


@pytest.fixture(scope="module")
def hoist():
    doc = tomllib.loads((EXAMPLES / "hoist.toml").read_text(encoding="utf-8"))
    doc["tolerance"] = {"samples": 300, "seed": 11}  # a small study keeps the test quick
    return scenario_from_dict(doc, EXAMPLES, source=EXAMPLES / "hoist.toml")


@pytest.fixture(scope="module")
def bundle(hoist, tmp_path_factory):
    out = tmp_path_factory.mktemp("choice") / "hoist"
    steps = []
    result = rp.write_report(hoist, out, progress=lambda d, t, w: steps.append((d, t, w)))
    return result, steps


def test_choice_files_are_written_and_listed(bundle):
    result, steps = bundle
    manifest = json.loads(result.file(rp.MANIFEST).read_text())
    for f in ("selection.csv", "tolerance.csv", "bands.csv", "pass_share.png", "pass_share.svg", "bands.png",
              "bands.svg"):
        assert f"raise_rated/{f}" in manifest["files"], f
    assert not result.file("empty_hook/selection.csv").exists()  # no requirements there
    assert manifest["clipped"] == {}
    counts = [d for d, _, _ in steps]
    assert counts == sorted(counts) and steps[-1][0] == steps[-1][1]
    tol = [w for _, _, w in steps if "tolerance study" in w and "%" in w]
    assert tol and tol[-1].endswith("100 %")  # progress within the study


def test_selection_csv_equals_the_library_matrix(bundle, hoist):
    result, _ = bundle
    m = hoist.selection("raise_rated")
    assert result.file("raise_rated/selection.csv").read_text(encoding="utf-8") == m.to_csv()
    heads, rows = _rows(result.file("raise_rated/selection.csv").read_text(encoding="utf-8"))
    assert len(rows) == len(m.keys) * len(m.requirements)
    for row in rows:
        r = dict(zip(heads, row))
        c = m.cell(r["candidate"], r["requirement"])
        assert _num(r["figure"]) == c.value  # repr: every bit
        assert _num(r["required"]) == c.required
        assert float(r["margin [-]"]) == c.margin
        assert r["verdict"] == c.verdict and r["reason"] == c.reason
        assert int(r["rank"]) == m.ranking[c.key].position


def test_markdown_has_the_verdicts_of_the_csv(bundle):
    result, _ = bundle
    _, rows = _rows(result.file("raise_rated/selection.csv").read_text(encoding="utf-8"))
    md = result.file("summary.md").read_text(encoding="utf-8")
    section = md.split("## Choice of connection: load `raise_rated`")[1].split("\n## ")[0]
    part = section.split("Every cell")[1].split("**Ranking.**")[0]
    table = [line for line in part.splitlines() if line.startswith("|")][2:]
    assert len(table) == len(rows)
    for line, row in zip(table, rows):
        cells = [c.strip() for c in line.strip("|").split("|")]
        assert cells[0] == row[0]  # rank
        assert cells[1] == row[2]  # connection
        assert cells[2] == row[3].replace("_", " ")  # requirement
        assert cells[6] == row[9]  # verdict
    # the glance table has one verdict per candidate and requirement, the same as the CSV
    glance = section.split("At a glance")[1].split("Every cell")[0]
    lines = [line for line in glance.splitlines() if line.startswith("|")]
    heads = [c.strip() for c in lines[0].strip("|").split("|")]
    for line in lines[2:]:
        cells = [c.strip() for c in line.strip("|").split("|")]
        for head, cell in zip(heads[2:], cells[2:]):
            row = next(r for r in rows if r[2] == cells[1] and r[3].replace("_", " ") == head)
            assert cell.split()[1] == row[9], (cells[1], head)


def test_summary_has_the_ranking_cautions_and_deference(bundle, hoist):
    result, _ = bundle
    m = hoist.selection("raise_rated")
    for name in ("summary.md", "summary.html"):
        text = result.file(name).read_text(encoding="utf-8")
        choice = text.split("Choice of connection")[1]
        assert m.ranking.summary.split(":")[0] in choice
        for e in m.ranking.entries:
            assert e.reason in choice
        for c in m.cautions:
            if c.code != "defer":
                assert c.text in choice
        assert DEFERENCE in choice.split("Spread of the figures")[0]
        assert "Tolerance study" in choice and "fragile" in choice
    ET.fromstring(result.file("summary.html").read_text(encoding="utf-8").replace("<!DOCTYPE html>", ""))


def test_tolerance_csv_equals_the_study(bundle, hoist):
    result, _ = bundle
    t = hoist.tolerance("raise_rated")
    heads, rows = _rows(result.file("raise_rated/tolerance.csv").read_text(encoding="utf-8"))
    assert len(rows) == len(t.study.shares)
    for row in rows:
        r = dict(zip(heads, row))
        s = t.study.share(r["candidate"], r["requirement"])
        assert float(r["pass share [-]"]) == s.passed and float(r["fail share [-]"]) == s.failed
        assert r["fragile"] == str(s.fragile)
    heads, rows = _rows(result.file("raise_rated/bands.csv").read_text(encoding="utf-8"))
    b = t.bands["series"]
    mine = [r for r in rows if r[0] == "series"]
    assert_allclose([float(r[1]) for r in mine], b.torque, rtol=1e-15)
    rpm = 2 * 3.141592653589793 / 60  # definition of the revolution per minute
    median = [float(r[3]) if r[3] else float("nan") for r in mine]
    assert_allclose(median, b.speed[1] / rpm, rtol=1e-12, equal_nan=True)


def test_figures_at_print_size(bundle):
    from PIL import Image

    from dcchar.charts.style import COLUMN_MM, DOUBLE_COLUMN_MM

    result, _ = bundle
    for stem, width in (("pass_share", DOUBLE_COLUMN_MM), ("bands", COLUMN_MM)):
        with Image.open(result.file(f"raise_rated/{stem}.png")) as im:
            assert_allclose(im.info["dpi"], (300, 300), atol=0.01)
            assert abs(im.size[0] - width / 25.4 * 300) <= 1  # 25.4 mm per inch, by definition
        root = ET.parse(result.file(f"raise_rated/{stem}.svg")).getroot()
        assert root.tag.endswith("svg")


def test_cell_table_follows_the_csv_order(hoist):
    m = hoist.selection()
    _, rows = _rows(m.to_csv())
    _, cells = cell_table(m)
    assert [(c[1], c[6]) for c in cells] == [(r[2], r[9]) for r in rows]


def test_default_report_runs_no_tolerance_study(tmp_path):
    s = load_scenario(EXAMPLES / "hoist.toml")
    res = rp.write_report(s, tmp_path / "r", figure_loads=())
    assert res.file("raise_rated/selection.csv").is_file() and res.file("raise_rated/pass_share.png").is_file()
    assert not res.file("raise_rated/tolerance.csv").exists() and not res.file("raise_rated/bands.png").exists()
    md = res.file("summary.md").read_text(encoding="utf-8")
    assert "Choice of connection" in md and "Spread of the figures" not in md
    plain = rp.write_report(s, tmp_path / "p", figure_loads=(), selection=False)
    assert not plain.file("raise_rated/selection.csv").exists()
    assert "Choice of connection" not in plain.file("summary.md").read_text(encoding="utf-8")
