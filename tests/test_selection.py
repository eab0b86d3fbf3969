"""Tests of the selection matrix: scenarios whose answer is known from the trade, figures equal
to the studies they come from, tables, ranking and bad input."""

import csv
import io
import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.loads import Breakaway, ConstantTorque, Fan, Gearing, Hoist
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.operating import operating_points, speed_regulation, starting
from dcchar.studies.selection import (AccelerationTime, ConstantPowerRange, Efficiency, LostField, LostLoad, Lowering,
                                      LowSpeed, Requirements, SelectionSettings, SpeedHold, SpeedRegulation,
                                      StartingCurrent, StartingTorque, TopSpeed, default_requirements, judge, rank,
                                      selection_matrix)
from dcchar.studies.starter_steps import single_starting_resistor

R = DEMO_RATING
T = R.torque


@pytest.fixture(scope="module")
def family():
    return demo_family()


def fan_load():
    return Fan(rated_speed=R.speed, rated_torque=0.9 * T)


def hoist_load():
    # gravity 0.6 x rated torque at the motor plus stiff breakaway friction: 1.63 x rated to break away
    h = Hoist(load_mass=1000.0, drum_diameter=0.4, gearing=Gearing(ratio=1961.33 / (0.6 * T), efficiency=0.95))
    return h + Breakaway(running_torque=0.05 * T, breakaway_torque=1.0 * T, release_speed=3.0)


@pytest.fixture(scope="module")
def fan_matrix(family):
    return selection_matrix(family, fan_load(), default_requirements("fan", R))


@pytest.fixture(scope="module")
def hoist_matrix(family):
    reqs = default_requirements("hoist", R).without("lowering").replace("starting_torque", value=1.4)
    return selection_matrix(family, hoist_load(), reqs)


# ---- scenarios (common practice, no source)
def test_fan_wide_speed_range_prefers_separate_or_shunt_field(fan_matrix):
    # common practice, no source: a fan with a wide speed range at steady speed wants a shunt or
    # separately excited field; a series motor's speed falls away with load.
    assert fan_matrix.leader in ("separately_excited", "shunt")
    c = fan_matrix.cell("series", "speed_regulation")
    assert c.verdict == "fail" and "above" in c.reason
    for k in ("long_shunt_compound", "short_shunt_compound"):
        assert fan_matrix.cell(k, "speed_regulation").verdict == "fail"
    # magnets have no field to weaken: they cannot reach above base speed
    pm = fan_matrix.cell("permanent_magnet", "top_speed")
    assert pm.verdict == "fail" and "no field to weaken" in pm.reason
    assert "leads" in fan_matrix.ranking.summary


def test_hoist_with_high_breakaway_prefers_series_characteristic(hoist_matrix):
    # common practice, no source: the series field gives the most starting torque per ampere, so
    # with the starter holding the current to 2 x rated a shunt motor cannot break the hoist away
    # while series and cumulative compound motors can.
    m = hoist_matrix
    for k in ("shunt", "separately_excited", "permanent_magnet"):
        assert m.cell(k, "starting_torque").verdict == "fail"
    for k in ("series", "long_shunt_compound", "short_shunt_compound"):
        assert m.cell(k, "starting_torque").verdict in ("pass", "marginal")
    assert m.leader in ("series", "long_shunt_compound", "short_shunt_compound")
    # the series motor starts the hoist but would race if the rope broke: the matrix says why it is not first
    assert "starting_torque" not in m.ranking["series"].fails and "lost_load" in m.ranking["series"].fails
    assert "breakaway" in m.cell("shunt", "starting_torque").reason
    assert any(c.code == "hoist_brake" for c in m.cautions)


def test_no_runaway_on_loss_of_load_fails_series(family):
    # common practice, no source: a series motor that loses its load races away.
    m = selection_matrix(family, ConstantTorque(0.8 * T), [LostLoad(), SpeedRegulation(value=30.0)])
    c = m.cell("series", "lost_load")
    assert c.verdict == "fail" and c.value > family["series"].safe_speed
    for k in ("shunt", "separately_excited", "permanent_magnet", "long_shunt_compound"):
        assert m.cell(k, "lost_load").verdict == "pass"
    assert m.leader != "series" and m.ranking.order[-1] == "series"


def test_series_cannot_regenerate_without_reconnection(family):
    m = selection_matrix(family, ConstantTorque(0.8 * T), [Lowering()])
    c = m.cell("series", "lowering")
    assert c.verdict == "fail" and "series motor cannot regenerate" in c.reason
    for k in ("shunt", "separately_excited", "permanent_magnet"):
        assert m.cell(k, "lowering").verdict == "pass" and m.cell(k, "lowering").value is True


# ---- every figure is the study's own
def test_matrix_figures_equal_the_studies(family):
    load = ConstantTorque(0.8 * T, load_inertia=0.5)
    reqs = [SpeedRegulation(value=10), StartingCurrent(value=150), StartingTorque(value=1.5, basis="breakaway"),
            Efficiency(value=0.8), LostLoad(), AccelerationTime(value=5), SpeedHold(value=5, step=10),
            ConstantPowerRange(value=1.5), LostField(), TopSpeed(value=R.speed), LowSpeed(value=0.5 * R.speed)]
    m = selection_matrix(family, load, reqs)
    for k, mach in family.items():
        reg = speed_regulation(mach)
        assert m.cell(k, "speed_regulation").value == reg.percent
        rx = single_starting_resistor(R.voltage, mach.loop_resistance(), 2 * R.current, mach.brush_drop).external_resistance
        st = starting(mach, R.voltage, rx).with_resistance
        assert m.cell(k, "starting_current").value == st.supply_current
        assert m.cell(k, "starting_torque").value == st.torque / load.breakaway_torque
        op = operating_points(mach, load)
        assert m.cell(k, "efficiency").value == op.point.efficiency
        assert m.cell(k, "lost_load").value == mach.characteristic(R.voltage, [0.0]).no_load_speed
        step = operating_points(mach, load + ConstantTorque(10.0))
        assert m.cell(k, "speed_hold").value == pytest.approx((op.point.speed - step.point.speed) / op.point.speed * 100,
                                                              rel=1e-12)
        i = np.array([R.current])
        assert m.cell(k, "constant_power_range").value <= mach.safe_speed / mach.state_arrays(R.voltage, i)["speed"][0]


def test_run_up_time_matches_constant_torque_law():
    # Newton's law, t = J*dw/T (Fruge, "Practical motor starting", PDH E161, Eq. 2): an ideal
    # separately excited motor with a stiff, lossless characteristic has a torque that falls
    # linearly with speed, T = T0*(1 - w/w0); against a constant load T_L the accelerating torque
    # is a - b*w (a = T0 - T_L, b = T0/w0) and the run-up to w1 takes (J/b)*ln(a/(a - b*w1)).
    from dcchar.models.connections import SeparatelyExcited
    from dcchar.models.magnetics import LinearMagnetization

    mach = SeparatelyExcited(armature_resistance=0.5, magnetization=LinearMagnetization(200.0, 100.0),
                             field_resistance=100.0, field_voltage=100.0, inertia=2.0)  # kphi = 2 at 1 A
    load = ConstantTorque(10.0)
    m = selection_matrix({"se": mach}, load, [AccelerationTime(value=10.0, target_fraction=0.9)],
                         SelectionSettings(starter_multiple=None, control=__import__(
                             "dcchar.studies.comparison", fromlist=["x"]).ControlSettings(voltage=200.0)))
    k, r_ = 2.0, 0.5
    w0, t0 = 200.0 / k, k * 200.0 / r_
    a, b = t0 - 10.0, t0 / w0
    w1 = 0.9 * a / b  # 90 % of the settled speed
    expected = 2.0 / b * math.log(a / (a - b * w1))
    assert_allclose(m.cell("se", "acceleration_time").value, expected, rtol=1e-3)


# ---- verdicts, ranking, tables
def test_judge_bands():
    assert judge("at most", 9.0, 10.0, 0.05)[0] == "pass"
    assert judge("at most", 9.7, 10.0, 0.05)[0] == "marginal"
    assert judge("at most", 10.1, 10.0, 0.05)[0] == "fail"
    assert judge("at least", 1.02, 1.0, 0.05)[0] == "marginal"
    assert judge("at least", math.nan, 1.0, 0.05)[0] == "fail"
    assert judge("at most", math.inf, 10.0, 0.05)[0] == "fail"
    assert judge("yes/no", 1.0, True, 0.05)[0] == "pass"
    v, _ = judge("at most", np.array([1.0, 9.8, 11.0]), 10.0, 0.05)
    assert v.tolist() == ["pass", "marginal", "fail"]


_FIGURES = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.sampled_from([0.0, -0.0, 1.0]))


@given(comparison=st.sampled_from(["at least", "at most", "yes/no"]), value=_FIGURES,
       required=st.one_of(_FIGURES, st.booleans()), marginal=st.floats(0.0, 0.5))
def test_judge_one_figure_equals_the_array_rule(comparison, value, required, marginal):
    # the matrix judges one float at a time in plain Python; the tolerance study judges arrays:
    # both must give the same verdict and margin (reference: the numpy path)
    verdict, margin = judge(comparison, value, required, marginal)
    v, m = judge(comparison, np.array([value]), required, marginal)
    assert verdict == v[0]
    assert margin == m[0] or (math.isnan(margin) and math.isnan(m[0]))


def test_ranking_rule():
    titles = {"a": "A", "b": "B"}
    r = rank(["x", "y", "z"], {"x": "X", "y": "Y", "z": "Z"},
             {"x": {"a": "pass", "b": "fail"}, "y": {"a": "marginal", "b": "pass"}, "z": {"a": "pass", "b": "pass"}},
             titles, {"x": 0.95, "y": 0.99, "z": 0.80})
    assert r.order == ("z", "y", "x") and r.leader == "z"
    assert "fails B" in r["x"].reason
    r2 = rank(["x"], {"x": "X"}, {"x": {"a": "fail"}}, {"a": "A"}, {"x": 0.9})
    assert r2.leader is None and "closest is X" in r2.summary


def test_tables(fan_matrix):
    m = fan_matrix
    rows = m.to_rows()
    assert len(rows) == len(m.cases) * len(m.requirements)
    assert "figure [%]" in rows[0] or any("figure [" in k for k in rows[0])
    parsed = list(csv.DictReader(io.StringIO(m.to_csv())))
    assert len(parsed) == len(rows) and parsed[0]["rank"] == "1"
    md = m.to_markdown()
    assert m.label(m.leader) in md and "Rule:" in md
    assert "<table" in m.to_html() and "<table" in m._repr_html_()


def test_requirements_editing_and_bad_input():
    reqs = default_requirements("conveyor", R)
    assert "speed_hold" in reqs.figures
    assert "speed_hold" not in reqs.without("speed_hold").figures
    assert reqs.replace("efficiency", value=0.9)["efficiency"].value == 0.9
    with pytest.raises(ParameterError):
        Requirements([LostLoad(), LostLoad()])
    with pytest.raises(ParameterError):
        StartingTorque(value=1.0, basis="peak")
    with pytest.raises(ParameterError):
        default_requirements("crusher", R)
    with pytest.raises(ParameterError):
        Efficiency(value=1.5)
    with pytest.raises(ParameterError):
        selection_matrix({}, fan_load(), reqs)
    for kind in ("hoist", "fan", "pump", "conveyor", "winder"):
        assert len(default_requirements(kind, R)) >= 5
