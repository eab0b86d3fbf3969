"""The panels of the widget kit driven from Python (no browser): what they show is what the studies compute.

Each test sets values on the widgets themselves (requirement boxes, text areas, buttons) and
checks the HTML, the images and the comparer's candidates against
:func:`dcchar.studies.selection.selection_matrix`,
:func:`dcchar.studies.tolerance.tolerance_study`,
:func:`dcchar.studies.identification.estimate_from_nameplate`,
:func:`dcchar.studies.identification.magnetization_test` and
:func:`dcchar.studies.identification.swinburne_test` called directly. The machines, loads and
readings are invented demo data; these are wiring tests (the physics is checked against published
values in the tests of the studies).
"""

from __future__ import annotations

import html
import re

import numpy as np
import pytest

pytest.importorskip("ipywidgets")

from dcchar.charts.identification import magnetization_fit_chart  # noqa: E402
from dcchar.errors import ParameterError  # noqa: E402
from dcchar.models.units import RPM  # noqa: E402
from dcchar.studies.comparison import ControlSettings  # noqa: E402
from dcchar.studies.demo import demo_family  # noqa: E402
from dcchar.studies.identification import (estimate_from_nameplate, magnetization_test, output_from_hp,  # noqa: E402
                                           swinburne_test)
from dcchar.studies.selection import SelectionSettings, default_requirements, selection_matrix  # noqa: E402
from dcchar.studies.selection.requirements import format_value  # noqa: E402
from dcchar.studies.tolerance import Spread, tolerance_study  # noqa: E402
from dcchar.widgets.identification_panel import IdentificationPanel, parse_two_columns  # noqa: E402
from dcchar.widgets.load_editor import LoadEditor  # noqa: E402
from dcchar.widgets.selection_panel import SelectionPanel  # noqa: E402

PNG = b"\x89PNG\r\n\x1a\n"

# Invented open-circuit readings of a small shunt machine at 1500 r/min (demo data).
POINTS = "field current [A]  EMF [V]\n0.1 40\n0.2 78\n0.4 140\n0.6 182\n0.8 208\n1.0 225\n1.2 236\n"


@pytest.fixture(scope="module")
def family():
    return demo_family()


@pytest.fixture(scope="module")
def hoist():
    return LoadEditor(None).load


def cells_shown(markup: str) -> dict:
    """(key, figure) -> (verdict, margin, text of the cell) from the matrix HTML."""
    out = {}
    for m in re.finditer(r'<td class="kit-v-(\w+)" data-key="([^"]+)" data-figure="([^"]+)" data-verdict="(\w+)" '
                         r'data-margin="([^"]+)">(.*?)</td>', markup, re.S):
        klass, key, fig, verdict, margin, body = m.groups()
        assert klass == verdict
        out[(key, fig)] = (verdict, float(margin), html.unescape(re.sub(r"<[^>]+>", " ", body)))
    return out


# ---------------------------------------------------------------------------- selection
def test_selection_matrix_shows_the_study(family, hoist):
    panel = SelectionPanel(family, hoist)
    reqs = default_requirements("hoist", next(iter(family.values())).rating)
    ref = selection_matrix(family, hoist, reqs, SelectionSettings(control=ControlSettings()))
    shown = cells_shown(panel.matrix_panel.value)
    assert set(shown) == set(ref.cells)
    for (key, fig), cell in ref.cells.items():
        verdict, margin, text = shown[(key, fig)]
        assert verdict == cell.verdict
        assert margin == cell.margin or (np.isnan(margin) and np.isnan(cell.margin))
        assert cell.reason in text
        req = reqs[fig]
        assert format_value(cell.value, req.unit) in text
        if req.comparison != "yes/no":
            assert format_value(cell.required, req.unit) in text
    # ranked order, with each candidate's reason, and the leader's cautions
    order = re.findall(r'<tr data-key="([^"]+)">', panel.matrix_panel.value)
    assert order == list(ref.ranking.order)
    for entry in ref.ranking.entries:
        assert html.escape(entry.reason) in panel.ranking_panel.value
    for c in ref.cautions:
        assert html.escape(c.text) in panel.cautions_panel.value
    assert "kit-selection" in panel.widget._dom_classes
    assert "kit-matrix" in panel.matrix_panel._dom_classes and "kit-ranking" in panel.ranking_panel._dom_classes


def test_selection_edit_a_limit_in_display_units(family, hoist):
    panel = SelectionPanel(family, hoist)
    use, box = panel.editors["starting_current"]
    assert box.value == pytest.approx(panel.requirements["starting_current"].value)
    box.value = 50.0  # A: below every candidate's starting current
    reqs = default_requirements("hoist", next(iter(family.values())).rating).replace("starting_current", value=50.0)
    ref = selection_matrix(family, hoist, reqs, SelectionSettings(control=ControlSettings()))
    shown = cells_shown(panel.matrix_panel.value)
    for key in family:
        assert shown[(key, "starting_current")][0] == ref.cell(key, "starting_current").verdict == "fail"
    # untick a requirement: its column goes
    panel.editors["efficiency"][0].value = False
    assert "efficiency" not in panel.matrix.requirements.figures
    assert not any(f == "efficiency" for _, f in cells_shown(panel.matrix_panel.value))


def test_selection_speeds_edited_in_rpm(family):
    from dcchar.models.loads import Fan

    fan = Fan(rated_speed=150.0, rated_torque=40.0)
    panel = SelectionPanel(family, fan)
    assert panel.kind.value == "fan"
    box = panel.editors["top_speed"][1]
    si = panel.requirements["top_speed"].value
    assert box.value == pytest.approx(si / RPM)
    box.value = 1000.0
    assert panel.matrix.requirements["top_speed"].value == pytest.approx(1000.0 * RPM)


def test_selection_error_keeps_last_good(family, hoist):
    panel = SelectionPanel(family, hoist)
    good = panel.matrix
    before = panel.matrix_panel.value
    panel.editors["efficiency"][1].value = float("nan")  # not a number a requirement can hold
    assert panel.matrix is good and panel.matrix_panel.value == before
    assert "kit-error" in panel.error_line.value and "efficiency" in panel.error_line.value
    panel.editors["efficiency"][1].value = 0.9
    assert panel.error_line.value == "" and panel.matrix is not good


def test_selection_follows_comparer_settings(family, hoist):
    panel = SelectionPanel(family, hoist)
    settings = ControlSettings(voltage=180.0, external_resistance=0.5)
    few = {k: family[k] for k in ("shunt", "series")}
    panel.update(few, hoist, settings)
    ref = selection_matrix(few, hoist, panel.requirements, SelectionSettings(control=settings))
    assert panel.matrix.keys == ("shunt", "series")
    for (key, fig), cell in ref.cells.items():
        assert panel.matrix.cell(key, fig).value == cell.value
        assert cells_shown(panel.matrix_panel.value)[(key, fig)][0] == cell.verdict


def test_tolerance_button_progress_and_pass_shares(family, hoist):
    few = {k: family[k] for k in ("shunt", "series", "long_shunt_compound")}
    panel = SelectionPanel(few, hoist, samples=200, seed=3)
    seen = []
    panel.progress.observe(lambda ch: seen.append(ch["new"]), names="value")
    panel.tolerance_button.click()
    assert panel.last_error is None
    assert seen and seen[-1] == pytest.approx(1.0) and seen == sorted(seen)
    ref = tolerance_study(panel.matrix, Spread(), samples=200, seed=3)
    for k, s in ref.shares.items():
        assert panel.tolerance_study.shares[k].passed == s.passed
    assert bytes(panel.tolerance_image.value).startswith(PNG)
    texts = [t.get_text() for t in panel.tolerance_figure.axes[0].texts]
    key = ("series", "lowering")
    assert any(f"{100 * ref.share(*key).passed:.0f} %" in t for t in texts)


# ---------------------------------------------------------------------------- identification
def test_parse_two_columns():
    x, y = parse_two_columns("I E\n# a note\n0.1, 40\n0.2\t78\n\n0.4;140")
    assert x.tolist() == [0.1, 0.2, 0.4] and y.tolist() == [40.0, 78.0, 140.0]
    with pytest.raises(ParameterError, match="line 3"):
        parse_two_columns("0.1 40\n0.2 78\n0.4")
    with pytest.raises(ParameterError, match="line 2"):
        parse_two_columns("0.1 40\n0.2 abc")


def test_identification_estimate_table_matches_the_study():
    panel = IdentificationPanel(voltage=220.0, current=40.0, speed_rpm=1500.0, output_kw=7.5, connection="shunt")
    ref = estimate_from_nameplate(220.0, 40.0, 1500.0 * RPM, 7500.0, "shunt")
    page = panel.table.value
    for name, (value, unit) in ref.parameters.items():
        m = re.search(rf'data-name="{re.escape(name)}">.*?<td data-col="value">([^<]+)</td>', page, re.S)
        assert m, name
        assert m.group(1) == f"{value:.4g}"
        lo, hi = ref.ranges[name]
        assert f"<td>{lo:.4g}</td><td>{hi:.4g}</td>" in page
    for name, (value, unit, basis) in ref.assumptions.items():
        assert html.escape(basis) in page
    assert panel.machine.armature_resistance == ref.machine.armature_resistance
    assert "kit-identify" in panel.widget._dom_classes and "kit-identify-table" in panel.table._dom_classes


def test_identification_hp_and_connection():
    panel = IdentificationPanel()
    panel.inputs["output_unit"].value = "hp"
    panel.inputs["output"].value = 10.0
    panel.inputs["connection"].value = "series"
    panel.estimate_button.click()
    ref = estimate_from_nameplate(220.0, 40.0, 1500.0 * RPM, output_from_hp(10.0), "series")
    assert panel.machine.connection == "series"
    assert panel.estimate.parameters["emf"][0] == ref.parameters["emf"][0]
    assert panel.machine.series_resistance == ref.machine.series_resistance


def test_identification_fit_and_swinburne():
    panel = IdentificationPanel()
    panel.inputs["points"].value = POINTS
    panel.inputs["no_load_current"].value = 3.0
    panel.inputs["hot_armature_resistance"].value = 0.4
    panel.inputs["test_field_current"].value = 0.8
    panel.estimate_button.click()
    assert panel.last_error is None
    If, E = parse_two_columns(POINTS)
    est = estimate_from_nameplate(220.0, 40.0, 1500.0 * RPM, 7500.0, "shunt")
    mt = magnetization_test(If, E, 1500.0 * RPM, machine=est.machine)
    sw = swinburne_test(220.0, 3.0, armature_resistance=0.4, field_current=0.8, connection="shunt",
                        speed=1500.0 * RPM)
    assert panel.magnetization.parameters == mt.parameters
    assert panel.machine.magnetization == mt.froehlich
    assert panel.machine.rotational_loss == sw.machine.rotational_loss
    assert panel.swinburne.constant_loss == sw.constant_loss
    assert f"{mt.parameters['a']:.4g}" in panel.table.value
    assert f"{sw.constant_loss:.4g}" in panel.table.value
    assert bytes(panel.image.value).startswith(PNG)
    # the chart draws the points and the fitted curve of the study
    art = magnetization_fit_chart(mt)
    x, y = art["curve"].get_data()
    assert np.allclose(y, mt.froehlich.emf(x))
    assert np.array_equal(art["points"].get_data()[1], mt.emf)


def test_froehlich_fit_recovers_exact_curve():
    # Points on E = 500*F/(2 + F) exactly (a = 500 V, b = 2 A): the fit must return them
    # (constructed data, an exact function; not published).
    F = np.array([0.5, 1.0, 2.0, 4.0, 8.0])
    panel = IdentificationPanel()
    panel.inputs["points"].value = "\n".join(f"{f:g} {500 * f / (2 + f):.6f}" for f in F)
    panel.inputs["test_speed"].value = 1500.0
    panel.run()
    assert panel.magnetization.parameters["a"] == pytest.approx(500.0, rel=1e-5)
    assert panel.magnetization.parameters["b"] == pytest.approx(2.0, rel=1e-5)


@pytest.mark.parametrize("text, words", [
    ("0.1 40\n0.2 78", "at least 3 points"),
    ("0.1 40\n0.2 30\n0.4 140\n0.6 180", "non-monotone"),
    ("0.1 40\n0.2 x", "line 2"),
])
def test_identification_errors_keep_last_good(text, words):
    panel = IdentificationPanel()
    panel.inputs["points"].value = POINTS
    panel.run()
    good, table, image = panel.machine, panel.table.value, bytes(panel.image.value)
    panel.inputs["points"].value = text
    panel.estimate_button.click()
    assert isinstance(panel.last_error, ParameterError)
    assert words in html.unescape(panel.error_line.value)
    assert "kit-identify-error" in panel.error_line._dom_classes
    assert panel.machine is good and panel.table.value == table and bytes(panel.image.value) == image


def test_identification_bad_nameplate_keeps_last_good():
    panel = IdentificationPanel()
    good = panel.machine
    panel.inputs["output"].value = 100.0  # 100 kW from 220 V x 40 A: more out than in
    panel.estimate_button.click()
    assert "output" in panel.error_line.value and panel.machine is good


# ---------------------------------------------------------------------------- in the comparer
def test_comparer_hosts_panels_and_use_adds_candidate():
    pytest.importorskip("ipympl")
    from dcchar.widgets import Comparer

    comparer = Comparer(title="Panels")
    panels = comparer.add_panels()
    sel = panels["choice of connection"]
    ident = panels["nameplate and tests"]
    assert comparer.panel_tabs in comparer.widget.children
    # a slider change reaches the matrix
    comparer.controls["voltage"].value = 200.0
    comparer.refresh()
    assert sel.matrix.settings.control == comparer.current_settings()
    ref = selection_matrix(comparer.selected(), comparer.load, sel.requirements, sel.selection_settings())
    for (key, fig), cell in ref.cells.items():
        assert cells_shown(sel.matrix_panel.value)[(key, fig)][0] == cell.verdict
    # unticking a candidate takes it out of the matrix
    comparer.candidates["series"].value = False
    comparer.refresh()
    assert "series" not in sel.matrix.keys
    # the fitted machine joins the candidates, the comparison and the matrix
    ident.inputs["points"].value = POINTS
    ident.estimate_button.click()
    before = set(comparer.candidates)
    ident.use_button.click()
    comparer.refresh()
    (new,) = set(comparer.candidates) - before
    assert comparer.machines()[new] is ident.machine
    assert new in comparer.comparison.candidates and new in sel.matrix.keys
    # a new series share keeps the added candidate
    comparer.controls["series_share"].value = 0.5
    comparer.refresh()
    assert comparer.machines()[new] is ident.machine
    # the start panel follows the ticked candidates and simulates them on the button
    start = panels["start-up and duty"]
    assert set(start.machines) == set(comparer.selected()) and start.stale
    comparer.candidates["series"].value = True
    comparer.refresh()
    assert "series" in start.machines


# ---------------------------------------------------------------------------- start-up and duty
def test_start_panel_shows_the_simulated_starts(family, hoist):
    from dcchar.studies.comparison import apply_settings
    from dcchar.studies.duty_machine import MachineSegment, duty_summary
    from dcchar.studies.series_starter import stepped_starter
    from dcchar.studies.transients import simulate_start
    from dcchar.widgets.start_panel import StartPanel

    few = {k: family[k] for k in ("shunt", "series")}
    settings = ControlSettings(voltage=210.0)
    panel = StartPanel(few, hoist, settings, sections=3, limit=2.0, run_time=20.0, rest_time=40.0)
    panel.brake.value = True
    panel.run_button.click()
    assert panel.last_error is None and not panel.stale
    for key, m0 in few.items():
        m = apply_settings(m0, settings)
        design = stepped_starter(m, 2.0 * m.rating.current, sections=3, voltage=210.0)
        tr = simulate_start(m, hoist, 210.0, starter=design, holding_brake=True)
        assert panel.transients[key].peak_current == tr.peak_current
        row = re.search(rf'<tr data-key="{key}">.*?</tr>', panel.start_table.value, re.S).group(0)
        assert f'<td data-col="peak_current">{tr.peak_current:.4g}</td>' in row
        duty = duty_summary(m, [MachineSegment(kind="start", transient=tr),
                                MachineSegment(duration=20.0, load=hoist, kind="run"),
                                MachineSegment(duration=40.0, kind="rest")], voltage=210.0)
        row = re.search(rf'<tr data-key="{key}">.*?</tr>', panel.duty_table.value, re.S).group(0)
        assert f'<td data-col="rms_current">{duty.rms_current:.4g}</td>' in row
        assert f'<td data-col="energy_drawn">{duty.energy_drawn / 1e3:.4g}</td>' in row
        assert html.escape(duty.duty.designation) in row
        # the chart draws the study's current against time
        assert np.array_equal(panel.chart["current"][key].get_ydata(), tr.armature_current)
        assert np.allclose(panel.chart["speed"][key].get_ydata(), tr.speed / RPM)
        assert [ln.get_xdata()[0] for ln in panel.chart["switches"][key]] == list(tr.switch_times)
    assert bytes(panel.image.value).startswith(PNG)
    assert "kit-start" in panel.start_table._dom_classes and "kit-duty" in panel.duty_table._dom_classes


def test_start_panel_brake_follows_the_kind_of_load(family, hoist):
    # a hoist is started against a holding brake (common practice, no source): ticked for a hoist,
    # including the panel's own default load, and reset when the kind of load changes
    from dcchar.models.loads import Fan
    from dcchar.widgets.start_panel import StartPanel

    assert StartPanel({"shunt": family["shunt"]}).brake.value
    panel = StartPanel({"shunt": family["shunt"]}, hoist)
    assert panel.brake.value
    panel.update(load=Fan(rated_speed=100.0, rated_torque=50.0))
    assert not panel.brake.value
    panel.update(load=hoist)
    assert panel.brake.value


def test_start_panel_export_and_stale(family, hoist, tmp_path):
    from dcchar.widgets.start_panel import StartPanel

    panel = StartPanel({"shunt": family["shunt"]}, hoist, run_time=10.0, rest_time=0.0)
    panel.run()
    paths = panel.export(tmp_path)
    assert sorted(p.suffix for p in paths) == [".png", ".svg"]
    assert paths[0].read_bytes()[:8] == PNG or paths[1].read_bytes()[:8] == PNG
    good = panel.transients
    panel.update(settings=ControlSettings(voltage=200.0))
    assert panel.stale and panel.transients is good
    panel.update(machines={})
    panel.run_button.click()
    assert isinstance(panel.last_error, ParameterError) and "candidate" in panel.error_line.value
    assert panel.transients is good and bytes(panel.image.value).startswith(PNG)


def test_browser_drag_defers_the_panels_until_quiet():
    """A slider change from the browser redraws chart and table at once and brings the panels up
    to date only after the quiet time; a change from code updates them at once."""
    import asyncio
    import concurrent.futures

    from dcchar.widgets import Comparer

    comparer = Comparer(title="panels")
    calls = []

    import ipywidgets

    class Probe:
        widget = ipywidgets.HTML()

        def update(self, machines, load, settings):
            calls.append(settings.voltage)

    comparer.attach(Probe(), "probe")
    comparer.PANEL_DELAY = 0.05

    before = len(calls)  # attaching brings the panel up to date once

    async def drag():
        comparer._from_front = True
        comparer._recompute()
        immediate = len(calls)
        await asyncio.sleep(0.2)
        return immediate

    with concurrent.futures.ThreadPoolExecutor(1) as pool:
        immediate = pool.submit(asyncio.run, drag()).result()
    assert immediate == before and len(calls) == before + 1
    comparer.controls["voltage"].value = 200.0  # from code: at once
    assert calls[-1] == 200.0
