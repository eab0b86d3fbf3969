"""Requirements and tolerance tables of scenario files: units, defaults and overrides, key paths in
every error, exact round trips, and the matrix equal to the library's own."""

from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

from dcchar.errors import ScenarioError
from dcchar.files import scenario_schema as schema
from dcchar.files.scenario import dump_scenario, load_scenario, loads_scenario, save_scenario, scenario_from_dict
from dcchar.studies.selection import (LOAD_KINDS, REQUIREMENT_TYPES, LowSpeed, SelectionSettings, SpeedHold,
                                      default_requirements, selection_matrix)
from dcchar.studies.tolerance import Spread, curve_bands, tolerance_study

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
RPM = 2 * math.pi / 60  # definition of the revolution per minute


def _doc(name):
    with open(EXAMPLES / f"{name}.toml", "rb") as fh:
        return tomllib.load(fh)


def _build(doc):
    return scenario_from_dict(doc, EXAMPLES)


def _error(doc) -> ScenarioError:
    with pytest.raises(ScenarioError) as info:
        _build(doc)
    return info.value


FULL = {  # every key of a requirements table once
    "defaults": "conveyor", "leave_out": ["efficiency"], "starter_multiple": 1.8,
    "speed_regulation_percent": 6.0, "top_speed_rpm": 1600.0, "low_speed_rpm": 300.0, "starting_torque_ratio": 1.4,
    "starting_current_a": 180.0, "acceleration_time_s": 9.0, "speed_hold_percent": 4.0, "lowering": True,
    "constant_power_range_ratio": 1.2, "lost_load_rpm": 2500.0, "lost_field": True,
    "details": {"top_speed": {"min_field_share": 0.5, "marginal_percent": 2.0},
                "low_speed": {"min_voltage_fraction": 0.2, "description": "creep at 300 r/min"},
                "starting_torque": {"basis": "running"}, "speed_hold": {"step_n_m": 30.0},
                "lowering": {"torque_n_m": 50.0}, "acceleration_time": {"target_fraction": 0.9},
                "speed_regulation": {"torque_n_m": 150.0}},
}


def test_schema_lists_match_the_library():
    # the schema names the figures and default kinds without importing the studies
    assert set(schema.REQUIREMENT_FIGURES) == set(REQUIREMENT_TYPES)
    assert set(schema.REQUIREMENT_DETAILS) == set(REQUIREMENT_TYPES)
    assert set(schema.REQUIREMENT_VALUE_KEYS.values()) == set(REQUIREMENT_TYPES)
    assert tuple(schema.REQUIREMENT_DEFAULTS) == tuple(LOAD_KINDS)


@pytest.mark.parametrize("name,load", [("hoist", "raise_rated"), ("fan", "duty"), ("conveyor", "restart_loaded")])
def test_examples_have_requirements(name, load):
    s = load_scenario(EXAMPLES / f"{name}.toml")
    assert s.requirement_loads == (load,)
    assert s.has_requirements(load) and not s.has_requirements(next(n for n in s.loads() if n != load))
    assert s.requirements_path(load) == f"loads.{load}.requirements"


def test_every_key_is_read_in_its_unit():
    doc = _doc("conveyor")
    doc["loads"]["restart_loaded"]["requirements"] = copy.deepcopy(FULL)
    s = _build(doc)
    r = s.requirements("restart_loaded")
    # the default conveyor set, efficiency left out, then the new figures in file order
    assert r.figures == ("starting_torque", "starting_current", "acceleration_time", "speed_hold", "lost_load",
                         "speed_regulation", "top_speed", "low_speed", "lowering", "constant_power_range", "lost_field")
    assert r["top_speed"].value == 1600.0 * RPM and r["top_speed"].min_field_share == 0.5
    assert r["top_speed"].marginal == 0.02
    assert r["low_speed"].value == 300.0 * RPM and r["low_speed"].min_voltage_fraction == 0.2
    assert r["low_speed"].describe() == "creep at 300 r/min"
    assert r["lost_load"].value == 2500.0 * RPM and r["lost_field"].value is None
    assert r["starting_torque"].basis == "running" and r["starting_torque"].value == 1.4
    assert r["speed_hold"].step == 30.0 and r["speed_hold"].value == 4.0
    assert r["lowering"].torque == 50.0 and r["acceleration_time"].target_fraction == 0.9
    assert r["speed_regulation"].torque == 150.0 and r["speed_regulation"].value == 6.0
    st = s.selection_settings("restart_loaded")
    assert st.starter_multiple == 1.8 and st.control == s.settings_for("restart_loaded")


def test_per_cent_becomes_a_share():
    doc = _doc("fan")
    doc["loads"]["duty"]["requirements"]["efficiency_percent"] = 87.0
    r = _build(doc).requirements("duty")
    assert r["efficiency"].value == 0.87  # 87/100, not 87*0.01 (which is 0.8700000000000001)


def test_an_override_drops_the_default_words_and_keeps_the_rest():
    doc = _doc("hoist")
    s = _build(doc)
    rating = next(iter(s.machines().values())).rating
    base = default_requirements("hoist", rating)
    got = s.requirements("raise_rated")
    assert got["starting_torque"].value == 2.3 and got["starting_torque"].basis == base["starting_torque"].basis
    assert "2.3 x the breakaway torque" in got["starting_torque"].describe()
    # a changed value without words of its own: the default's words would state the old number
    assert got["acceleration_time"].value == 2.0 and "3 s" not in got["acceleration_time"].describe()
    # unchanged: kept as the default set has it, words included
    assert got["efficiency"] == base["efficiency"] and got["lost_load"] == base["lost_load"]


def test_selection_equals_the_library_matrix():
    s = load_scenario(EXAMPLES / "fan.toml")
    m = s.selection()
    rating = next(iter(s.machines().values())).rating
    reqs = default_requirements("fan", rating).replace("low_speed", value=350.0 * RPM, description="")
    reqs = reqs.replace("top_speed", value=1100.0 * RPM, description="")
    direct = selection_matrix(s.machines(), s.loads()["duty"], reqs, SelectionSettings(control=s.settings_for("duty")))
    assert m.ranking.order == direct.ranking.order and m.leader == direct.leader
    for key in direct.keys:
        for f in direct.requirements.figures:
            a, b = m.cell(key, f), direct.cell(key, f)
            assert (a.value, a.required, a.verdict) == (b.value, b.required, b.verdict)
            assert a.margin == b.margin or (math.isnan(a.margin) and math.isnan(b.margin))


def test_top_level_requirements_serve_every_load_without_its_own():
    doc = _doc("conveyor")
    doc["requirements"] = {"speed_hold_percent": 3.0, "details": {"speed_hold": {"step_n_m": 20.0}},
                           "lost_load": True}
    s = _build(doc)
    assert set(s.requirement_loads) == set(s.loads())
    assert s.requirements_path("empty") == "requirements"
    assert s.requirements("empty").figures == ("speed_hold", "lost_load")
    assert s.requirements("empty")["speed_hold"] == SpeedHold(value=3.0, step=20.0)
    # a load's own table wins
    assert s.requirements("restart_loaded")["speed_hold"].step == 40.0
    assert s.selection("empty").requirements.figures == ("speed_hold", "lost_load")


def test_no_requirements_is_a_clear_error():
    s = load_scenario(EXAMPLES / "hoist.toml")
    with pytest.raises(ScenarioError) as info:
        s.selection("empty_hook")
    assert info.value.path == "loads.empty_hook.requirements" and "defaults" in str(info.value)


@pytest.mark.parametrize("table,path,words", [
    ({"defaults": "hoist", "speed_regulaton_percent": 3.0}, "speed_regulaton_percent",
     "did you mean 'speed_regulation_percent'?"),
    ({"defaults": "hoist", "speed_regulation_pct": 3.0}, "speed_regulation_pct", "did you mean"),
    ({"defaults": "crane"}, "defaults", "one of ('hoist', 'fan', 'pump', 'conveyor', 'winder')"),
    ({"defaults": "hoist", "efficiency_percent": 150.0}, "efficiency_percent", "<= 100"),
    ({"defaults": "hoist", "starting_current_a": -1.0}, "starting_current_a", "> 0"),
    ({"defaults": "hoist", "lowering": "yes"}, "lowering", "true or false"),
    ({"defaults": "hoist", "leave_out": ["top_speed"]}, "leave_out[0]", "a figure of the default set"),
    ({"defaults": "hoist", "leave_out": ["lowering"], "lowering": True}, "leave_out[0]", "not also required"),
    ({"lost_load": True, "lost_load_rpm": 1000.0}, "lost_load", "not both"),
    ({"starting_torque_ratio": 2.0, "starter_multiple": 2.0, "starting_resistance_ohm": 1.0},
     "starting_resistance_ohm", "not both"),
    ({}, "", "no requirement given"),
    ({"speed_hold_percent": 3.0}, "details.speed_hold.step_n_m", "missing"),
    ({"defaults": "hoist", "details": {"top_speed": {"min_field_share": 0.5}}}, "details.top_speed",
     "no such requirement"),
    ({"defaults": "fan", "details": {"top_speed": {"min_field_share": 1.5}}}, "details.top_speed.min_field_share",
     "< 1"),
    ({"defaults": "fan", "details": {"top_sped": {}}}, "details.top_sped", "did you mean 'top_speed'?"),
    ({"defaults": "fan", "details": {"top_speed": {"basis": "running"}}}, "details.top_speed.basis",
     "unknown key"),
    ({"defaults": "hoist", "lowering": False, "details": {"lowering": {"torque_n_m": 3.0}}}, "details.lowering",
     "left out"),
    ({"defaults": "hoist", "leave_out": ["starting_torque", "starting_current", "acceleration_time", "lowering",
                                         "efficiency", "lost_load"]}, "", "no requirement is left"),
])
def test_requirement_errors_name_the_key_path(table, path, words):
    doc = _doc("hoist")
    doc["loads"]["raise_rated"]["requirements"] = table
    e = _error(doc)
    assert e.path == "loads.raise_rated.requirements" + (f".{path}" if path else ""), str(e)
    assert words in str(e)


def test_defaults_need_a_rated_candidate():
    doc = _doc("fan")
    for spec in doc["machines"].values():
        spec.pop("rating")
    e = _error(doc)
    assert e.path == "loads.duty.requirements.defaults" and "rating" in str(e)
    # stating every requirement needs no rating
    doc["loads"]["duty"]["requirements"] = {"low_speed_rpm": 350.0, "lost_load": True}
    assert _build(doc).requirements("duty")["low_speed"] == LowSpeed(value=350.0 * RPM)


@pytest.mark.parametrize("table,path", [
    ({"resistance_percent": 95.0}, "tolerance.resistance_percent"),
    ({"winding_temperature_c": [110.0, 40.0]}, "tolerance.winding_temperature_c"),
    ({"winding_temperature_c": [40.0]}, "tolerance.winding_temperature_c"),
    ({"magnet_temperature_c": [20.0, 400.0]}, "tolerance.magnet_temperature_c[1]"),
    ({"samples": 0}, "tolerance.samples"),
    ({"samples": 10.5}, "tolerance.samples"),
    ({"seed": -1}, "tolerance.seed"),
    ({"distribution": "gauss"}, "tolerance.distribution"),
    ({"sigma": 2.0}, "tolerance.sigma"),
])
def test_tolerance_errors_name_the_key_path(table, path):
    doc = _doc("conveyor")
    doc["tolerance"] = table
    e = _error(doc)
    assert e.path == path, str(e)


def test_tolerance_table_is_read_in_its_units():
    s = load_scenario(EXAMPLES / "conveyor.toml")
    assert s.has_tolerance
    assert s.spread == Spread(resistance=0.05, winding_temperature=(40.0, 110.0), magnetization=0.04,
                              supply_voltage=0.06, distribution="uniform")
    assert not load_scenario(EXAMPLES / "hoist.toml").has_tolerance
    assert load_scenario(EXAMPLES / "hoist.toml").spread == Spread()


def test_scenario_tolerance_equals_the_library_study():
    s = load_scenario(EXAMPLES / "conveyor.toml")
    seen = []
    t = s.tolerance("restart_loaded", progress=seen.append, samples=300)
    assert t.samples == 300 and t.seed == 7 and t.load == "restart_loaded"
    assert seen == sorted(seen) and seen[-1] == pytest.approx(1.0) and 0 < seen[0]
    m = s.selection("restart_loaded")
    study = tolerance_study(m, s.spread, samples=300, seed=7)
    bands = curve_bands(m, s.spread, samples=300, seed=7)
    for k, share in study.shares.items():
        assert t.study.shares[k] == share
    for key, b in bands.items():
        np.testing.assert_array_equal(t.bands[key].speed, b.speed)
    assert "2000" not in t.describe() and "300 samples" in t.describe()


def test_round_trip_with_every_key_is_exact(tmp_path):
    doc = _doc("conveyor")
    doc["loads"]["restart_loaded"]["requirements"] = copy.deepcopy(FULL)
    doc["requirements"] = {"defaults": "winder", "starting_resistance_ohm": 0.0}
    doc["tolerance"] = {"resistance_percent": 4.0, "magnet_temperature_c": [20.0, 80.0], "sigmas": 3.0,
                        "distribution": "normal", "samples": 500, "seed": 3, "robust_share_percent": 80.0}
    s = _build(doc)
    text = dump_scenario(s)
    again = loads_scenario(text, base_dir=EXAMPLES)
    assert again == s and dump_scenario(again) == text
    # (Requirements compares by identity; its items are frozen dataclasses)
    assert tuple(again.requirements("restart_loaded")) == tuple(s.requirements("restart_loaded"))
    assert tuple(again.requirements("empty")) == tuple(s.requirements("empty"))
    assert again.spread == s.spread
    third = load_scenario(save_scenario(s, tmp_path / "c.toml"))
    assert third.document == s.document
    assert isinstance(third.document["tolerance"]["samples"], int)
