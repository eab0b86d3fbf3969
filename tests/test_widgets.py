"""The widget kit driven from Python (no browser): every figure it shows is the library's.

Each test moves the widgets themselves (slider values, menus, text boxes, the file upload) and
checks the results table, the cautions and the chart's line data against
:func:`dcchar.studies.comparison.compare`, :func:`dcchar.files.tables.display_table` and
:func:`dcchar.charts.curves.view_xy` called directly for the same settings. The demo machines and
loads are invented; the reference is the library itself, so these are wiring tests (the physics is
checked against published values in the tests of the models and studies).
"""

from __future__ import annotations

import asyncio
import concurrent.futures
import datetime
import html
import math
import re
import subprocess
import sys
import time

import numpy as np
import pytest

pytest.importorskip("ipywidgets")
pytest.importorskip("ipympl")

from dcchar.charts.curves import point_xy, view_xy  # noqa: E402
from dcchar.charts.style import style_key  # noqa: E402
from dcchar.errors import FormulaError  # noqa: E402
from dcchar.models.formula import parse_formula  # noqa: E402
from dcchar.files.tables import display_table, format_value, table_csv  # noqa: E402
from dcchar.models.loads import ConstantTorque, Fan, FormulaLoad, Gearing, Hoist, TableLoad  # noqa: E402
from dcchar.models.units import LBF_FT, POUND, RPM  # noqa: E402
from dcchar.studies.comparison import TABLE_COLUMNS, ControlSettings, compare, working_currents  # noqa: E402
from dcchar.studies.demo import DEMO_RATING, demo_armature, demo_family, demo_magnetization  # noqa: E402
from dcchar.studies.rating import DEFAULT_CONNECTIONS, equal_rating_family  # noqa: E402
from dcchar.widgets import Comparer  # noqa: E402
from dcchar.widgets.controls import Coalescer, from_front_end, nice_step  # noqa: E402
from dcchar.models.loads import LoweringHoist  # noqa: E402
from dcchar.widgets.panels import RESULT_COLUMNS  # noqa: E402

# the editor's default load: an invented 1.5 t hoist (demo data)
HOIST = Hoist(load_mass=1500.0, hook_mass=80.0, rope_mass=40.0, drum_diameter=0.4, reeving=2.0,
              gearing=Gearing(20.0, 0.92))


@pytest.fixture(scope="module")
def family():
    return demo_family()


@pytest.fixture
def comparer():
    return Comparer(title="Test hoist")


def same(a, b) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return (math.isnan(a) and math.isnan(b)) or a == b
    return a == b


def assert_rows_equal(got, want):
    assert len(got) == len(want)
    for g, w_ in zip(got, want):
        assert g.keys() == w_.keys()
        bad = {k: (g[k], w_[k]) for k in g if not same(g[k], w_[k])}
        assert not bad, bad


def cell(comparer, key, col) -> str:
    m = re.search(rf'<td data-key="{key}" data-col="{col}"[^>]*>(.*?)</td>', comparer.results_panel.value)
    assert m, (key, col)
    return html.unescape(m.group(1))


def assert_shows(comparer, expected, units="si"):
    """The comparer's comparison, table, cautions and chart lines equal ``expected``'s."""
    got = comparer.comparison
    assert list(got.candidates) == list(expected.candidates)
    assert_rows_equal(got.rows(), expected.rows())
    assert got.settings == expected.settings
    # the table: every cell as display_table and format_value give it
    headings, rows = display_table(expected, units)
    cols = list(TABLE_COLUMNS)
    for key, row in zip(expected.candidates, rows):
        for col in RESULT_COLUMNS:
            assert cell(comparer, key, col) == format_value(row[cols.index(col)]), (key, col)
    for h in headings[1:]:
        assert html.escape(h) in comparer.results_panel.value
    # the cautions: each one's text and reason, and the deference
    panel = html.unescape(comparer.cautions_panel.value)
    assert {k: [c.code for c in v] for k, v in got.cautions().items()} == \
        {k: [c.code for c in v] for k, v in expected.cautions().items()}
    for cautions in expected.cautions().values():
        for c in cautions:
            assert c.text in panel
            if c.reason:
                assert c.reason in panel
    # the chart: each connection's line is the library's characteristic over the working range,
    # as view_xy puts it on the view, and the settled operating point is marked on it
    view = comparer.chart.view
    for cand in expected.candidates.values():
        currents = working_currents(cand)
        rated = cand.machine.rating.current
        assert currents[0] <= 0.0 and currents[-1] >= min(2.0 * rated, cand.characteristic.locked_rotor_current)
        c = cand.machine.characteristic(cand.voltage, current=currents)
        line = comparer.chart.lines[style_key(c.machine)]
        x, y = view_xy(c, view, units)
        assert line.get_visible()
        np.testing.assert_array_equal(line.get_xdata(), x)
        np.testing.assert_array_equal(line.get_ydata(), y)
        p = cand.point
        if p is not None:
            assert currents[0] <= p.armature_current <= currents[-1]
            px, py = point_xy(p, view, units)
            marks = comparer.chart._markers[style_key(c.machine)][0 if p.stable else 1]
            assert any(mx == px and my == py for mx, my in zip(marks.get_xdata(), marks.get_ydata()))
    shown = {k for k, line in comparer.chart.lines.items() if line.get_visible()}
    assert shown == {style_key(c.machine) for c in expected.characteristics()}


def test_builds_on_the_demo_family_and_default_hoist(comparer, family):
    assert comparer.load == HOIST
    assert_shows(comparer, compare(family, HOIST, ControlSettings()))
    assert "kit-comparer" in comparer.widget._dom_classes
    assert "kit-figure" in comparer.canvas._dom_classes
    assert comparer.canvas.header_visible is False
    assert "updated in" in comparer.status_line.value


def test_voltage_slider_gives_the_library_operating_points(comparer, family):
    comparer.controls["voltage"].value = 200.0
    expected = compare(family, HOIST, ControlSettings(voltage=200.0))
    assert_shows(comparer, expected)
    # the shunt machine at 200 V runs slower than at the rated 230 V
    assert comparer.comparison.candidates["shunt"].point.speed < compare(family, HOIST).candidates["shunt"].point.speed


def test_every_setting_reaches_the_study(comparer, family):
    c = comparer.controls
    c["field_rheostat"].value = 30.0
    c["external_resistance"].value = 0.5
    c["diverter_on"].value = True
    c["diverter"].value = 0.2
    c["winding_temperature"].value = 100.0
    c["magnet_temperature"].value = 60.0
    c["voltage"].value = 220.0
    settings = ControlSettings(voltage=220.0, field_rheostat=30.0, diverter_resistance=0.2, external_resistance=0.5,
                               winding_temperature=100.0, magnet_temperature=60.0)
    assert comparer.current_settings() == settings
    assert_shows(comparer, compare(family, HOIST, settings))


def test_series_share_rederives_the_family(comparer):
    comparer.controls["series_share"].value = 0.5
    fam = equal_rating_family(demo_armature(), DEMO_RATING, magnetization=demo_magnetization(),
                              connections=DEFAULT_CONNECTIONS, series_share=0.5, name="demo frame")
    expected = compare(dict(fam), HOIST, ControlSettings())
    assert_shows(comparer, expected)
    # the compounds changed, and a compound's series turns with them
    assert (comparer.comparison.candidates["long_shunt_compound"].machine.series_turns
            != demo_family()["long_shunt_compound"].series_turns)


def test_unticked_connection_leaves_table_and_chart(comparer, family):
    comparer.candidates["series"].value = False
    comparer.candidates["permanent_magnet"].value = False
    keep = {k: m for k, m in family.items() if k not in ("series", "permanent_magnet")}
    assert_shows(comparer, compare(keep, HOIST))
    assert 'data-key="series"' not in comparer.results_panel.value
    assert not comparer.chart.lines["series"].get_visible()


def test_hoist_boxes_build_the_hoist_and_lowering_reverses(comparer, family):
    ed = comparer.load_editor
    ed.params[("hoist", "load_mass")].value = 1200.0
    ed.params[("hoist", "reeving")].value = 4.0
    want = Hoist(load_mass=1200.0, hook_mass=80.0, rope_mass=40.0, drum_diameter=0.4, reeving=4.0,
                 gearing=Gearing(20.0, 0.92))
    assert comparer.load == want
    assert_shows(comparer, compare(family, want))
    ed.direction.value = "lowering"
    low = LoweringHoist.of(want)
    assert comparer.load == low
    assert_shows(comparer, compare(family, low))
    # the lowering load is the hoist's gravity torque, reversed, referred through the gear
    # (driving side: T_d*eff/ratio); its cautions are still the hoist's
    assert float(low.torque(50.0)) == pytest.approx(-want.lowering_torque, rel=1e-15)
    assert all("hoist_brake" in [c.code for c in v] for v in comparer.comparison.cautions().values())
    assert "series" in comparer.comparison.candidates
    assert comparer.comparison.candidates["series"].operating.reason == "runs away"


def test_other_load_kinds(comparer, family):
    ed = comparer.load_editor
    ed.kind.value = "fan"
    assert isinstance(comparer.load, Fan)
    ed.params[("fan", "rated_speed")].value = 1000.0  # r/min on screen
    fan = comparer.load
    assert fan.rated_speed == pytest.approx(1000.0 * RPM, rel=1e-15)
    assert_shows(comparer, compare(family, fan))
    ed.kind.value = "constant_torque"
    ed.params[("constant_torque", "load_torque")].value = 60.0
    ed.active.value = True
    assert comparer.load == ConstantTorque(60.0, active=True)
    assert_shows(comparer, compare(family, ConstantTorque(60.0, active=True)))


def test_bad_formula_shows_its_pointer_and_keeps_the_last_good_load(comparer, family):
    ed = comparer.load_editor
    ed.kind.value = "formula"
    ed.formula.value = "15 + 60*(n/1150)**2"
    good = FormulaLoad("15 + 60*(n/1150)**2")
    assert comparer.load == good
    before = comparer.comparison
    assert_shows(comparer, compare(family, good))
    ed.formula.value = "15 + 60*(n/1150)^2"
    message = html.unescape(ed.formula_error.value)
    assert "'^'" in message and "**" in message
    # the pointer line: a caret under the offending character, where the parser puts it
    with pytest.raises(FormulaError) as err:
        parse_formula("15 + 60*(n/1150)^2")
    assert err.value.position == "15 + 60*(n/1150)^2".index("^")
    lines = message.splitlines()
    text_line = next(i for i, s in enumerate(lines) if s.strip() == "15 + 60*(n/1150)^2")
    assert lines[text_line + 1].index("^") - lines[text_line].index("1") == err.value.position
    assert comparer.load == good and comparer.comparison is before
    ed.formula.value = "15 + 50*(n/1150)**2"
    assert ed.formula_error.value == ""
    assert_shows(comparer, compare(family, FormulaLoad("15 + 50*(n/1150)**2")))


def test_bad_parameter_keeps_the_last_good_load(comparer):
    before = comparer.comparison
    comparer.load_editor.params[("hoist", "drum_diameter")].value = 0.0
    assert "drum_diameter" in comparer.load_editor.error.value
    assert comparer.load == HOIST and comparer.comparison is before


def _upload(comparer, name, text):
    comparer.load_editor.upload.value = ({"name": name, "type": "text/csv", "size": len(text),
                                          "content": memoryview(text.encode()),
                                          "last_modified": datetime.datetime(2024, 1, 1, tzinfo=datetime.timezone.utc)},)


def test_csv_upload_good_then_bad(comparer, family):
    good = "# invented conveyor test table\nspeed_rpm,torque_n_m\n0,30\n600,36\n1200,45\n1600,52\n"
    _upload(comparer, "belt.csv", good)
    table = comparer.load
    assert isinstance(table, TableLoad) and table.source == "belt.csv"
    assert table.speed == pytest.approx((0.0, 600 * RPM, 1200 * RPM, 1600 * RPM), rel=1e-15)
    fresh = TableLoad(speed=table.speed, torque_values=table.torque_values, source="belt.csv")
    with pytest.warns(RuntimeWarning, match="outside its speed range"):  # asked beyond the table's last speed
        expected = compare(family, fresh)
    assert_shows(comparer, expected)
    assert "outside its speed range" in comparer.status_line.value  # the kit shows that note too
    before = comparer.comparison
    _upload(comparer, "broken.csv", "speed_rpm,torque_n_m\n0,30\n600,abc\n")
    msg = html.unescape(comparer.load_editor.upload_error.value)
    assert "broken.csv:3" in msg and "'abc'" in msg
    assert "dcchar-upload" not in msg  # the temporary folder is not shown
    assert comparer.load is table and comparer.comparison is before


def test_units_switch_converts_table_chart_and_boxes(comparer, family):
    comparer.units.value = "us"
    assert comparer.chart.units == "us"
    assert "lbf·ft" in comparer.chart.axes.get_xlabel()
    expected = compare(family, HOIST)
    assert_shows(comparer, expected, units="us")
    payload = comparer.load_editor.params[("hoist", "load_mass")]
    assert payload.value == pytest.approx(1500.0 / POUND, rel=1e-12)
    assert "[lb]" in payload.description
    assert comparer.load == HOIST  # the load itself did not change
    t = comparer.comparison.candidates["shunt"].point.torque
    assert cell(comparer, "shunt", "torque") == format_value(t / LBF_FT)


def test_view_change_redraws_without_solving_again(comparer, family):
    before = comparer.comparison
    comparer.view.value = "efficiency_power"
    assert comparer.comparison is before
    assert comparer.chart.view == "efficiency_power"
    assert_shows(comparer, compare(family, HOIST))


def test_slider_steps_blit_and_a_revisited_value_gives_the_same_pixels(comparer):
    canvas, chart = comparer.canvas, comparer.chart
    canvas.syncing_data_url = False  # as with a browser attached
    canvas.draw()
    pixels = {}
    for v in (220.0, 219.0, 220.0):
        comparer.controls["voltage"].value = v
        if v in pixels:
            made = dict(chart._glyphs.stats)
        else:
            pixels[v] = np.asarray(canvas.buffer_rgba()).copy()
    assert chart.stats["blit"] >= 3
    np.testing.assert_array_equal(np.asarray(canvas.buffer_rgba()), pixels[220.0])
    # the labels' text came from the kept layouts and glyphs: none made again
    comparer.controls["voltage"].value = 219.0
    assert {k: chart._glyphs.stats[k] for k in ("layouts", "glyphs")} == {k: made[k] for k in ("layouts", "glyphs")}
    # the frame sent to the browser is the difference from the last one
    assert canvas._current_image_mode == "diff"


def test_label_boxes_placed_again_only_when_their_points_move_a_pixel(comparer, monkeypatch):
    import dcchar.charts.live as live

    chart = comparer.chart
    placed, real = [], live.place_labels
    monkeypatch.setattr(live, "place_labels", lambda *a, **k: placed.append(1) or real(*a, **k))

    def points_px():
        return chart.axes.transData.transform([a.xy for a in chart.annotations])

    comparer.canvas.syncing_data_url = False  # as with a browser attached
    comparer.canvas.draw()  # the layout engine sizes the axes: the boxes are placed for it
    assert placed == [1]
    placed.clear()
    start = points_px()
    comparer.controls["voltage"].value = 229.9  # a tenth of a volt: the points move well under a pixel
    assert np.abs(points_px() - start).max() < live._STILL_PX
    assert placed == []
    comparer.controls["voltage"].value = 200.0  # far: placed again
    assert placed == [1]
    comparer.canvas.draw()  # (the boxes' patches are sized when drawn)
    boxes = [a.get_bbox_patch().get_window_extent(chart.figure.canvas.get_renderer()) for a in chart.annotations]
    ax_box = chart.axes.bbox
    assert all(ax_box.x0 <= b.x0 and b.x1 <= ax_box.x1 and ax_box.y0 <= b.y0 and b.y1 <= ax_box.y1 for b in boxes)


def test_reset_returns_to_the_scenario(comparer, family):
    comparer.controls["voltage"].value = 180.0
    comparer.controls["external_resistance"].value = 1.0
    comparer.candidates["shunt"].value = False
    comparer.reset()
    assert comparer.current_settings() == ControlSettings()
    assert_shows(comparer, compare(family, HOIST))


def test_scenario_settings_start_the_sliders(family):
    s = ControlSettings(voltage=210.0, field_rheostat=12.0, external_resistance=0.25)
    c = Comparer(family, HOIST, s)
    assert c.controls["voltage"].value == 210.0
    assert c.current_settings() == s
    assert_shows(c, compare(family, HOIST, s))
    assert c.controls["series_share"].disabled  # no family spec was given


def test_error_in_a_callback_is_shown_and_the_last_state_kept(comparer, monkeypatch):
    import dcchar.widgets.comparer as mod

    before = comparer.comparison
    table_before = comparer.results_panel.value

    def broken(*args, **kwargs):
        raise RuntimeError("solver went missing")

    monkeypatch.setattr(mod, "compare", broken)
    comparer.controls["voltage"].value = 205.0
    assert "solver went missing" in comparer.status_line.value
    assert "kit-error" in comparer.status_line.value
    assert isinstance(comparer.last_error, RuntimeError)
    assert comparer.comparison is before and comparer.results_panel.value == table_before


def test_export_writes_chart_and_table(comparer, tmp_path):
    from PIL import Image

    comparer.controls["voltage"].value = 215.0
    folder = tmp_path / "new" / "folder"
    comparer.export_folder.value = str(folder)
    comparer.export_button.click()
    names = sorted(p.name for p in folder.iterdir())
    assert names == ["test-hoist-torque_speed-table.csv", "test-hoist-torque_speed.png", "test-hoist-torque_speed.svg"]
    status = comparer.status_line.value
    assert all(n in status for n in names)
    with Image.open(folder / "test-hoist-torque_speed.png") as im:
        assert im.info["dpi"] == pytest.approx((300, 300), abs=0.01)
        assert im.size[0] == pytest.approx(85.0 / 25.4 * 300, abs=2)  # one page column, 85 mm
    assert (folder / "test-hoist-torque_speed.svg").read_text().lstrip().startswith("<?xml")
    headings, rows = display_table(comparer.comparison, "si")
    assert (folder / "test-hoist-torque_speed-table.csv").read_text() == table_csv(headings, rows)


def test_front_end_updates_are_detected():
    import ipywidgets as w

    s = w.FloatSlider(value=1.0)
    seen = []
    s.observe(lambda ch: seen.append(from_front_end(ch)), names="value")
    s.value = 2.0
    s.set_state({"value": 3.0})  # what a message from the browser does
    assert seen == [False, True]


def test_coalescer_drops_stale_states_in_a_burst():
    state = {"value": 0, "seen": []}

    def work():
        state["seen"].append(state["value"])
        time.sleep(0.01)

    async def burst():
        c = Coalescer(work, delay=0.02)
        for v in range(1, 21):
            state["value"] = v
            c.request(defer=True)
            await asyncio.sleep(0.001)
        await asyncio.sleep(0.1)
        return c

    # a thread of its own, so that an event loop left running by another test (the browser
    # fixture's) does not stand in the way of asyncio.run
    with concurrent.futures.ThreadPoolExecutor(1) as pool:
        c = pool.submit(asyncio.run, burst()).result()
    assert state["seen"][0] == 1  # the first event is answered at once
    assert state["seen"][-1] == 20  # the newest value is always processed
    assert len(state["seen"]) < 10  # and most of the stale ones were dropped
    assert c.stats["requests"] == 20


def test_coalescer_reports_errors():
    errors = []
    c = Coalescer(lambda: 1 / 0, report=errors.append)
    c.request()
    assert isinstance(errors[0], ZeroDivisionError)


def test_nice_step():
    assert nice_step(230.0 * 1.0) == 1.0
    assert nice_step(4.4) == 0.02
    assert nice_step(1.0, 100) == 0.01


def test_from_scenario_matches_the_scenarios_own_comparison():
    scenario_mod = pytest.importorskip("dcchar.files.scenario")
    if not hasattr(scenario_mod, "load_scenario"):
        pytest.skip("dcchar.files.scenario has no load_scenario yet")
    path = __import__("pathlib").Path(__file__).resolve().parents[1] / "examples" / "hoist.toml"
    if not path.is_file():
        pytest.skip("no example hoist scenario")
    sc = scenario_mod.load_scenario(path)
    c = Comparer.from_scenario(sc)
    assert c.title == sc.title
    expected = sc.compare()
    assert_rows_equal(c.comparison.rows(), expected.rows())
    assert {k: [x.code for x in v] for k, v in c.comparison.cautions().items()} == \
        {k: [x.code for x in v] for k, v in expected.cautions().items()}


def test_serve_refuses_a_missing_notebook(tmp_path, capsys):
    from dcchar.widgets.app import serve

    assert serve(tmp_path / "missing.ipynb") == 2
    assert "not found" in capsys.readouterr().err
    nb = tmp_path / "x.ipynb"
    nb.write_text("{}")
    assert serve(nb, port=-1) == 2


def test_serve_runs_voila_on_loopback_and_stops_on_ctrl_c(tmp_path, isolated_env):
    import signal
    import urllib.request

    nb = tmp_path / "tiny.ipynb"
    nb.write_text('{"cells": [], "metadata": {}, "nbformat": 4, "nbformat_minor": 5}')
    env = dict(isolated_env)
    code = f"from dcchar.widgets.app import serve; raise SystemExit(serve({str(nb)!r}))"
    proc = subprocess.Popen([sys.executable, "-c", code], env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                            text=True)
    try:
        url = None
        deadline = time.monotonic() + 60
        lines = []
        while time.monotonic() < deadline:
            line = proc.stdout.readline()
            if not line:
                break
            lines.append(line)
            m = re.search(r"open (http://127\.0\.0\.1:\d+/)", line)
            if m:
                url = m.group(1)
                break
        assert url, "".join(lines)
        assert "Ctrl+C" in proc.stdout.readline()
        opener = urllib.request.build_opener(urllib.request.ProxyHandler({}))
        with opener.open(url + "voila/static/favicon.ico", timeout=5) as r:
            assert r.status == 200
        proc.send_signal(signal.SIGINT)
        assert proc.wait(30) == 0
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait(10)
        proc.stdout.close()
