"""Scenario files: round trips, key paths in every error, unit conversions, and a fuzzed loader."""

from __future__ import annotations

import copy
import datetime as dt
import math
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ScenarioError
from dcchar.files.scenario import (Scenario, dump_scenario, load_scenario, loads_scenario, save_scenario,
                                   scenario_from_dict)
from dcchar.files.toml_writer import dumps
from dcchar.models.loads import Breakaway, Conveyor, Fan, FormulaLoad, Hoist, SumLoad, TableLoad
from dcchar.studies.comparison import compare

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
EXAMPLE_FILES = sorted(EXAMPLES.glob("*.toml"))
RPM = 2 * math.pi / 60  # definition of the revolution per minute


def _doc(name):
    with open(EXAMPLES / f"{name}.toml", "rb") as fh:
        return tomllib.load(fh)


@pytest.fixture(scope="module")
def hoist():
    return load_scenario(EXAMPLES / "hoist.toml")


# ---------------------------------------------------------------------------- round trips

def test_three_examples_exist():
    assert {p.stem for p in EXAMPLE_FILES} >= {"hoist", "fan", "conveyor"}


@pytest.mark.parametrize("path", EXAMPLE_FILES, ids=lambda p: p.stem)
def test_example_round_trip_is_exact(path, tmp_path):
    s = load_scenario(path)
    text = dump_scenario(s)
    again = loads_scenario(text, base_dir=path.parent)
    assert again == s
    assert dump_scenario(again) == text  # the writer is stable
    out = save_scenario(s, tmp_path / "copy.toml")
    third = load_scenario(out)
    assert third == s and third.document == s.document
    # the machines built again are the same machines
    assert repr(third.machines()) == repr(s.machines())  # (a tabulated reaction compares by identity)
    # every load gives the same torque at a few speeds
    for name, load in s.loads().items():
        w = [-50.0, 0.0, 30.0, 120.0]
        assert_allclose(third.loads()[name].torque(w), load.torque(w), rtol=0, atol=0)


def test_hoist_example_is_the_demo_frame(hoist):
    # the hoist example restates the invented demonstration frame in the file format
    from dcchar.studies.demo import demo_family

    demo = demo_family()
    mine = hoist.machines()
    assert list(mine) == list(demo)
    for key in demo:
        assert mine[key].with_(name="") == demo[key].with_(name="")


def test_hoist_example_raises_and_lowers(hoist):
    raise_ = hoist.compare("raise_rated")
    lower = hoist.compare("lower_braking")
    assert hoist.settings_for("lower_braking").external_resistance == 6.5
    assert hoist.settings_for("first_notch").external_resistance == 2.2
    for key in raise_.candidates:
        assert raise_.candidates[key].point.speed > 0  # raising
        p = lower.candidates[key].point
        assert p.speed < 0 and p.mode == "braking"  # lowering, held back by the motor
        codes = {c.code for c in raise_.candidates[key].cautions}
        assert {"hoist_brake", "overhauling", "defer"} <= codes


def test_compare_equals_the_study(hoist):
    load = hoist.loads()["raise_proof"]
    direct = compare(hoist.machines(), load, hoist.settings, thresholds=hoist.thresholds)
    via = hoist.compare("raise_proof")
    assert [r["speed"] for r in via.rows()] == [r["speed"] for r in direct.rows()]


def test_units_of_the_file_are_converted():
    s = load_scenario(EXAMPLES / "hoist.toml")
    r = next(iter(s.machines().values())).rating
    assert r.speed == pytest.approx(1150.0 * RPM, rel=1e-15)
    assert r.output == 11000.0
    h = s.loads()["raise_rated"]
    assert isinstance(h, Hoist)
    # holding torque m*g*D/2/reeving/ratio, standard gravity 9.80665 m/s^2 (CGPM 1901)
    assert h.holding_torque == pytest.approx(2150.0 * 9.80665 * 0.25 / 2.0 / 32.0, rel=1e-12)
    fan = load_scenario(EXAMPLES / "fan.toml")
    duty = fan.loads()["duty"]
    assert isinstance(duty, Fan)
    # torque from power: 6.5 kW / (980 r/min in rad/s)
    assert duty.rated_torque == pytest.approx(6500.0 / (980.0 * RPM), rel=1e-12)
    assert isinstance(fan.loads()["damper_half"], FormulaLoad)
    conv = load_scenario(EXAMPLES / "conveyor.toml")
    loaded = conv.loads()["loaded"]
    assert isinstance(loaded, Conveyor)
    # lift pull m*g*sin(6 deg)
    assert loaded.lift_pull == pytest.approx(8000 * 9.80665 * math.sin(math.radians(6.0)), rel=1e-12)
    restart = conv.loads()["restart_loaded"]
    assert isinstance(restart, SumLoad) and isinstance(restart.loads[1], Breakaway)
    assert restart.breakaway_torque == pytest.approx(loaded.breakaway_torque + 60.0, rel=1e-12)
    assert conv.units == "us" and conv.settings.voltage == 440.0


def test_table_load_is_read_relative_to_the_file(tmp_path):
    doc = _doc("fan")
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / "fan.csv").write_text("# invented fan test\nspeed_rpm,torque_n_m\n0,2\n500,15\n1000,60\n")
    doc["loads"]["measured"] = {"kind": "table", "file": "data/fan.csv"}
    (tmp_path / "s.toml").write_text(dumps(doc))
    s = load_scenario(tmp_path / "s.toml")
    t = s.loads()["measured"]
    assert isinstance(t, TableLoad)
    assert_allclose(t.torque([500 * RPM]), [15.0], rtol=1e-12)
    # saved elsewhere, the relative path is rewritten to reach the same file
    (tmp_path / "other").mkdir()
    out = save_scenario(s, tmp_path / "other" / "s.toml")
    moved = load_scenario(out)
    assert moved.document["loads"]["measured"]["file"] == "../data/fan.csv"
    assert_allclose(moved.loads()["measured"].torque([500 * RPM]), [15.0], rtol=1e-12)


# ---------------------------------------------------------------------------- errors

def _error(doc) -> ScenarioError:
    with pytest.raises(ScenarioError) as info:
        scenario_from_dict(doc, EXAMPLES)
    return info.value


def test_bad_number_names_path_value_and_allowed():
    doc = _doc("hoist")
    doc["machines"]["family"]["rating"]["voltage_v"] = -5
    e = _error(doc)
    assert e.path == "machines.family.rating.voltage_v"
    assert str(e) == "machines.family.rating.voltage_v: -5 is not allowed: expected a number > 0"


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, "230", True, [1.0], {"a": 1}])
def test_non_numbers_are_refused(value):
    doc = _doc("hoist")
    doc["supply"]["voltage_v"] = value
    assert _error(doc).path == "supply.voltage_v"


def test_unknown_key_suggests_the_nearest():
    doc = _doc("hoist")
    doc["loads"]["raise_rated"]["drum_diameter"] = 0.5
    e = _error(doc)
    assert e.path == "loads.raise_rated.drum_diameter" and "did you mean 'drum_diameter_m'?" in str(e)
    doc = _doc("hoist")
    doc["machines"]["famliy"] = doc["machines"].pop("family")
    assert "did you mean 'family'" in str(_error(doc))
    doc = _doc("hoist")
    doc["contrl"] = {}
    assert "did you mean 'control'?" in str(_error(doc))


def test_missing_keys_are_named():
    doc = _doc("hoist")
    del doc["machines"]["family"]["rating"]["current_a"]
    assert _error(doc).path == "machines.family.rating.current_a"
    doc = _doc("hoist")
    del doc["study"]["title"]
    assert _error(doc).path == "study.title"
    doc = _doc("fan")
    del doc["loads"]["duty"]["rated_power_kw"]
    assert "exactly one of rated_torque_n_m or rated_power_kw" in str(_error(doc))


def test_newer_schema_is_refused():
    doc = _doc("fan")
    doc["schema_version"] = 2
    e = _error(doc)
    assert e.path == "schema_version" and "newer" in str(e) and "update dcchar" in str(e)
    del doc["schema_version"]
    assert _error(doc).path == "schema_version"


def test_model_errors_come_back_with_the_key_path():
    doc = _doc("conveyor")
    doc["loads"]["idler_stiction"]["breakaway_torque_n_m"] = -1.0  # below the running torque
    e = _error(doc)
    assert e.path == "loads.idler_stiction.breakaway_torque_n_m" and "running_torque" in str(e)
    doc = _doc("hoist")
    doc["machines"]["family"]["rating"]["output_kw"] = 100.0  # above V*I: impossible
    e = _error(doc)
    assert e.path == "machines.family.rating.output_kw" and "voltage*current" in str(e)
    doc = _doc("hoist")
    doc["machines"]["family"]["rating"]["speed_rpm"] = 100.0  # out of this armature's reach
    assert _error(doc).path.startswith("machines.family")
    doc = _doc("fan")
    doc["loads"]["damper_half"]["torque_n_m"] = "2 + n^2"
    e = _error(doc)
    assert e.path == "loads.damper_half.torque_n_m" and "^" in str(e)


def test_cross_references_are_checked():
    doc = _doc("conveyor")
    doc["loads"]["restart_loaded"]["parts"] = ["loaded", "nosuch"]
    assert _error(doc).path == "loads.restart_loaded.parts[1]"
    doc = _doc("hoist")
    doc["study"]["load"] = "raise_rate"
    assert "did you mean 'raise_rated'?" in str(_error(doc))
    doc = _doc("hoist")
    doc["machines"]["shunt"] = {"connection": "permanent_magnet", "armature_resistance_ohm": 1.0,
                                "kphi_v_s_per_rad": 1.0}
    assert _error(doc).path == "machines.shunt"


def test_toml_syntax_and_missing_files_are_scenario_errors(tmp_path):
    with pytest.raises(ScenarioError, match="not valid TOML"):
        loads_scenario("schema_version = = 1")
    with pytest.raises(ScenarioError, match="cannot read"):
        load_scenario(tmp_path / "nothing.toml")
    doc = _doc("fan")
    doc["loads"]["t"] = {"kind": "table", "file": "missing.csv"}
    assert _error(doc).path == "loads.t.file"


# ---------------------------------------------------------------------------- the writer

_scalars = st.one_of(st.booleans(), st.integers(-2**63, 2**63 - 1), st.floats(allow_nan=False),
                     st.text(max_size=20), st.dates())
_keys = st.text(min_size=1, max_size=8)


@settings(max_examples=300, deadline=None)
@given(st.dictionaries(_keys, st.one_of(_scalars, st.lists(_scalars, max_size=4),
                                         st.dictionaries(_keys, _scalars, max_size=4)), max_size=6))
def test_writer_reads_back_exactly_with_tomllib(doc):
    # tomllib (Python standard library) is the reference reader of the TOML 1.0 text we write
    assert tomllib.loads(dumps(doc)) == doc


def test_writer_floats_keep_every_bit():
    values = [0.1, 1e-320, 5e-324, 1.7976931348623157e308, -0.0, 1e16, 123456789.123456789, math.inf, -math.inf]
    back = tomllib.loads(dumps({"x": values}))["x"]
    assert [math.copysign(1, v) for v in back] == [math.copysign(1, v) for v in values]
    assert back == values


# ---------------------------------------------------------------------------- fuzzing the loader

def _paths(node, prefix=()):
    """Every key path in a document (dicts and list items)."""
    out = []
    if isinstance(node, dict):
        for k, v in node.items():
            out.append(prefix + (k,))
            out += _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            out.append(prefix + (i,))
    return out


_garbage = st.recursive(
    st.one_of(st.none(), st.booleans(), st.integers(), st.integers(-10**400, 10**400),
              st.floats(allow_nan=True, allow_infinity=True), st.sampled_from([1e308, -1e308, 1e-308, 0.0, -1.0]),
              st.text(max_size=12), st.dates(), st.datetimes(), st.sampled_from(["shunt", "hoist", "froehlich", "si"])),
    lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=10), inner, max_size=4)),
    max_leaves=12)

_BASES = {name: _doc(name) for name in ("hoist", "fan", "conveyor")}


def _check_outcome(doc):
    try:
        s = scenario_from_dict(doc, EXAMPLES)
    except ScenarioError as exc:
        assert str(exc)  # the message says something
        return None
    assert isinstance(s, Scenario)
    return s


@settings(max_examples=500, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(base=st.sampled_from(sorted(_BASES)), data=st.data())
def test_fuzzed_mutations_give_a_scenario_or_a_scenario_error(base, data):
    doc = copy.deepcopy(_BASES[base])
    for _ in range(data.draw(st.integers(1, 3), label="mutations")):
        paths = _paths(doc)
        if not paths:
            break
        path = data.draw(st.sampled_from(paths), label="path")
        parent = doc
        for k in path[:-1]:
            parent = parent[k]
        action = data.draw(st.sampled_from(["replace", "delete", "add_unknown", "scale"]), label="action")
        key = path[-1]
        if action == "replace":
            parent[key] = data.draw(_garbage, label="value")
        elif action == "delete" and isinstance(parent, dict):
            del parent[key]
        elif action == "add_unknown" and isinstance(parent, dict):
            parent[data.draw(st.text(min_size=1, max_size=10), label="new key")] = data.draw(_garbage)
        elif action == "scale" and isinstance(parent[key], float):
            parent[key] = parent[key] * data.draw(st.sampled_from([-1.0, 0.0, 1e-9, 1e9, 1e300, 1e-300]))
    s = _check_outcome(doc)
    if s is not None:  # a valid scenario writes and reads back the same
        assert loads_scenario(dump_scenario(s), base_dir=EXAMPLES) == s


@settings(max_examples=500, deadline=None)
@given(st.dictionaries(st.sampled_from(["schema_version", "study", "machines", "loads", "control", "supply",
                                        "thresholds", "junk"]), _garbage, max_size=7),
       st.sampled_from([None, 1, 2, "1", 1.0]))
def test_fuzzed_documents_from_garbage(doc, version):
    if version is not None:
        doc["schema_version"] = version
    _check_outcome(doc)


@settings(max_examples=100, deadline=None)
@given(st.text(max_size=200))
def test_fuzzed_text(text):
    try:
        loads_scenario("schema_version = 1\n" + text)
    except ScenarioError:
        pass


def test_dates_are_kept_as_written():
    doc = _doc("fan")
    assert isinstance(scenario_from_dict(doc).date, dt.date)
    doc["study"]["date"] = "spring 2024"
    assert scenario_from_dict(doc).date == "spring 2024"
