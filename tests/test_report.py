"""The report bundle: numbers equal the library's, figure sizes, parsable SVG, no overwrite."""

from __future__ import annotations

import csv
import json
import math
import os
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.errors import ScenarioError
from dcchar.files import report as rp
from dcchar.files.scenario import load_scenario
from dcchar.files.tables import display_table, format_value
from dcchar.models.units import HP, LBF_FT, RPM

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.fixture(scope="module")
def hoist():
    return load_scenario(EXAMPLES / "hoist.toml")


@pytest.fixture(scope="module")
def bundle(hoist, tmp_path_factory):
    out = tmp_path_factory.mktemp("reports") / "hoist"
    steps = []
    result = rp.write_report(hoist, out, progress=lambda d, t, w: steps.append((d, t, w)))
    return result, steps


def _csv(path):
    with open(path, encoding="utf-8", newline="") as fh:
        rows = list(csv.reader(fh))
    return rows[0], rows[1:]


def test_every_file_is_there_and_listed(bundle):
    result, steps = bundle
    folder = result.folder
    manifest = json.loads((folder / rp.MANIFEST).read_text())
    on_disk = sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file())
    assert sorted(manifest["files"]) + [rp.MANIFEST] == sorted(on_disk) or \
        sorted(list(manifest["files"]) + [rp.MANIFEST]) == on_disk
    for name in ("raise_rated", "lower_braking", "empty_hook"):
        for f in ("comparison.csv", "operating_points.csv", "curves.csv"):
            assert (folder / name / f).is_file()
    for view in rp.FIGURE_VIEWS:
        assert (folder / "raise_rated" / f"{view}.png").is_file() and (folder / "raise_rated" / f"{view}.svg").is_file()
    assert not (folder / "lower_braking" / "torque_speed.png").exists()  # figures for the default load only
    assert steps[-1][0] == steps[-1][1]  # progress reaches the end
    assert result.clipped == {}
    # nothing is left beside the report
    assert [p.name for p in folder.parent.iterdir()] == ["hoist"]


def test_comparison_csv_equals_the_library(bundle, hoist):
    result, _ = bundle
    heads, rows = _csv(result.file("lower_braking/comparison.csv"))
    exp_heads, exp_rows = display_table(hoist.compare("lower_braking"), "si")
    assert heads == exp_heads
    for got, exp in zip(rows, exp_rows):
        for g, e in zip(got, exp):
            if isinstance(e, bool):
                assert g == str(e)
            elif isinstance(e, float):
                assert (g == "" and math.isnan(e)) or float(g) == e  # repr: every bit
            else:
                assert g == str(e)


def test_curves_csv_equals_the_characteristics(bundle, hoist):
    result, _ = bundle
    heads, rows = _csv(result.file("raise_rated/curves.csv"))
    assert heads[2:6] == ["armature current [A]", "supply current [A]", "field current [A]", "speed [r/min]"]
    comparison = hoist.compare("raise_rated")
    curves = rp.report_curves(comparison)
    for (key, cand), c in zip(comparison.candidates.items(), curves):
        mine = [r for r in rows if r[0] == key]
        ia = np.array([float(r[2]) for r in mine])
        assert_allclose(ia, c.armature_current, rtol=0, atol=0)
        # recompute from the model, independently of the report's sweep
        again = cand.machine.characteristic(cand.voltage, ia)
        assert_allclose([float(r[5]) for r in mine], again.speed / RPM, rtol=1e-15)
        assert_allclose([float(r[6]) for r in mine], again.shaft_torque, rtol=1e-15)
        eff = [float(r[10]) if r[10] else math.nan for r in mine]  # nan is an empty cell
        assert_allclose(eff, 100 * again.efficiency, rtol=1e-15, equal_nan=True)
        # the sweep passes through the operating point's current range
        assert ia.max() >= max(p.armature_current for p in cand.operating.points)


def test_markdown_table_has_the_csv_numbers(bundle):
    result, _ = bundle
    heads, rows = _csv(result.file("raise_rated/comparison.csv"))
    md = result.file("summary.md").read_text(encoding="utf-8")
    section = md.split("## Load `raise_rated`")[1].split("## Load")[0]
    table = [line for line in section.splitlines() if line.startswith("|")]
    assert [c.strip() for c in table[0].strip("|").split("|")] == heads
    for line, row in zip(table[2:], rows):
        cells = [c.strip() for c in line.strip("|").split("|")]
        for cell, value, head in zip(cells, row, heads):
            if value in ("True", "False"):
                assert cell == ("yes" if value == "True" else "no")
            elif value == "":
                assert cell in ("–", ""), head  # nan, or an empty note
            else:
                try:
                    x = float(value)
                except ValueError:
                    assert cell == value, head
                else:
                    assert cell == format_value(x), head
    assert len(table) - 2 == len(rows)


def test_summary_carries_cautions_and_deference(bundle):
    result, _ = bundle
    from dcchar.models.cautions import DEFERENCE

    for name in ("summary.md", "summary.html"):
        text = result.file(name).read_text(encoding="utf-8")
        assert DEFERENCE in text
        assert "mechanical holding brake" in text  # the hoist caution
        assert "never run without load" in text
    ET.fromstring(result.file("summary.html").read_text(encoding="utf-8").replace("<!DOCTYPE html>", ""))


def test_png_size_and_dpi(bundle):
    from PIL import Image

    from dcchar.charts.style import COLUMN_MM

    result, _ = bundle
    for view in rp.FIGURE_VIEWS:
        with Image.open(result.file(f"raise_rated/{view}.png")) as im:
            dpi = im.info["dpi"]
            assert_allclose(dpi, (300, 300), atol=0.01)
            # a column wide: 85 mm at 300 dpi = 1003.9 px (25.4 mm per inch, by definition)
            assert abs(im.size[0] - COLUMN_MM / 25.4 * 300) <= 1
            assert 600 < im.size[1] < 1400


def test_svg_parses(bundle):
    result, _ = bundle
    for view in rp.FIGURE_VIEWS:
        root = ET.parse(result.file(f"raise_rated/{view}.svg")).getroot()
        assert root.tag.endswith("svg")
        assert root.get("width").endswith("pt")


def test_refuses_to_overwrite_without_force(bundle, hoist, tmp_path):
    out = tmp_path / "r"
    out.mkdir()
    (out / "mine.txt").write_text("keep me")
    with pytest.raises(ScenarioError, match="not empty"):
        rp.write_report(hoist, out, figure_loads=())
    assert sorted(p.name for p in out.iterdir()) == ["mine.txt"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r"]  # no temporary folder left
    # with force the report goes in; files it did not write stay
    res = rp.write_report(hoist, out, figure_loads=(), force=True, units="us")
    assert (out / "mine.txt").read_text() == "keep me" and (out / rp.MANIFEST).is_file()
    assert res.units == "us"
    heads, _ = _csv(out / "raise_rated" / "comparison.csv")
    assert "shaft torque [lbf·ft]" in heads and "output [hp]" in heads


def test_us_units_use_the_stated_factors(hoist, tmp_path):
    res = rp.write_report(hoist, tmp_path / "us", units="us", figure_loads=())
    heads, rows = _csv(res.file("raise_rated/operating_points.csv"))
    comparison = hoist.compare("raise_rated")
    p = comparison.candidates["shunt"].point
    row = next(r for r in rows if r[0] == "shunt" and r[2] == "True")
    assert float(row[heads.index("shaft torque [lbf·ft]")]) == p.torque / LBF_FT
    assert float(row[heads.index("output power [hp]")]) == p.output_power / HP


def test_a_failure_midway_leaves_nothing(hoist, tmp_path, monkeypatch):
    def broken(*args, **kwargs):
        raise RuntimeError("disk full")

    monkeypatch.setattr(rp, "_summary", broken)
    with pytest.raises(RuntimeError):
        rp.write_report(hoist, tmp_path / "half", figure_loads=())
    assert list(tmp_path.iterdir()) == []


def test_bad_arguments(hoist, tmp_path):
    with pytest.raises(ScenarioError, match="figure_loads"):
        rp.write_report(hoist, tmp_path / "x", figure_loads=["nosuch"])
    with pytest.raises(ScenarioError, match="does not exist"):
        rp.write_report(hoist, tmp_path / "no" / "x", figure_loads=())
    (tmp_path / "file").write_text("")
    with pytest.raises(ScenarioError, match="is a file"):
        rp.write_report(hoist, tmp_path / "file", figure_loads=())
    assert os.listdir(tmp_path) == ["file"]
