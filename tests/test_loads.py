"""Tests of the load models (dcchar.models.loads)."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import FormulaError, ParameterError, ScenarioError
from dcchar.models.loads import (STANDARD_GRAVITY, Breakaway, ConstantPower, ConstantTorque, Conveyor, Fan,
                                 FormulaLoad, Gearing, Hoist, Linear, Load, Pump, Quadratic, SumLoad, TableLoad,
                                 affinity_flow, affinity_head, affinity_power)
from dcchar.models.units import LBF_FT, RPM

DATA = Path(__file__).parent / "data"


# --------------------------------------------------------------------------------------------
# Dubey, Fundamentals of Electrical Drives, 2nd ed., Ex. 2.1 (p. 16): motor J0 = 0.2 kg*m^2 at
# 1420 r/min; rotating load J1 = 10 kg*m^2, T1 = 10 N*m through a 0.1 reduction at 90 %; a mass
# of 1000 kg lifted at 1.5 m/s through a coupling at 85 %; g = 9.81. Book: J = 0.4018 kg*m^2
# (book prints 0.4), T_L = 117.53 N*m, P = 17.48 kW (recomputed, see REFERENCE-VALUES).
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("drum_diameter, reeving", [(0.5, 1), (0.3, 2), (1.2, 4)])
def test_dubey_ex_2_1_inertia_and_torque(drum_diameter, reeving):
    w_m = 1420 * RPM
    rope = Gearing(ratio=1 / 0.1, efficiency=0.9)
    # any drum and reeving giving 1.5 m/s at the hook at 1420 r/min is the book's hoist
    ratio = w_m * (drum_diameter / 2) / (1.5 * reeving)
    hoist = Hoist(load_mass=1000, drum_diameter=drum_diameter, reeving=reeving,
                  gearing=Gearing(ratio, 0.85), g=9.81)
    drive = ConstantTorque(10.0, gearing=rope, load_inertia=10.0) + hoist
    assert_allclose(hoist.hook_speed(w_m), 1.5, rtol=1e-12)
    j_total = 0.2 + drive.inertia
    t_load = float(drive.torque(w_m))
    # book answers printed to 4 and 5 significant figures: half a unit of the last digit
    assert_allclose(j_total, 0.4018, atol=5e-5)
    assert_allclose(t_load, 117.53, atol=5e-3)
    assert_allclose(t_load * w_m, 17.48e3, atol=5.0)
    # and the book's formulas recomputed from the same data, to rounding
    assert_allclose(j_total, 0.2 + 0.1**2 * 10 + 1000 * (1.5 / w_m) ** 2, rtol=1e-12)
    assert_allclose(t_load, 0.1 * 10 / 0.9 + 1000 * 9.81 * 1.5 / (0.85 * w_m), rtol=1e-12)


def test_hoist_direction_and_gear_efficiency():
    # Referring through a gear: efficiency divides when the motor drives, multiplies when the
    # load drives (mechanics of a lossy transmission; common practice, no source).
    h = Hoist(load_mass=2000, hook_mass=100, rope_mass=50, drum_diameter=0.6, reeving=2,
              gearing=Gearing(30, 0.9))
    t_drum = 2150 * STANDARD_GRAVITY * 0.3 / 2
    w = np.array([50.0, 0.0, -50.0])
    raising, holding, lowering = h.torque(w)
    assert_allclose([raising, holding, lowering], [t_drum / (30 * 0.9), t_drum / 30, t_drum * 0.9 / 30])
    assert raising > holding > lowering > 0  # gravity always opposes raising
    assert h.direction(w).tolist() == ["raising", "holding", "lowering"]
    assert_allclose(h.breakaway_torque, raising)
    assert_allclose(h.holding_torque, holding)
    assert_allclose(h.lowering_torque, lowering)
    assert_allclose(h.rope_speed(30.0), 0.3)     # 1 rad/s at the drum
    assert_allclose(h.hook_speed(30.0), 0.15)    # two parts of line
    assert_allclose(h.motor_speed(0.15), 30.0)
    assert_allclose(h.inertia, 2150 * (0.3 / (2 * 30)) ** 2)
    assert np.all(h.slope(w) == 0.0)
    assert "hoist" in h.describe() and "kg" in h.describe()


@settings(max_examples=300, deadline=None)
@given(ratio=st.floats(0.1, 100), eff=st.floats(0.3, 1.0), t_l=st.floats(-500, 500).filter(lambda t: abs(t) > 1e-3),
       w=st.floats(-500, 500).filter(lambda w: abs(w) > 1e-3))
def test_gearing_power_balance(ratio, eff, t_l, w):
    # The gear only loses power: the side that delivers gives eff times less than it puts in.
    g = Gearing(ratio, eff)
    t_m = float(g.refer_torque(t_l, w))
    p_motor, p_load = t_m * w, t_l * (w / ratio)
    if p_load > 0:   # motor drives the load
        assert_allclose(p_motor * eff, p_load, rtol=1e-12)
    else:            # the load drives the motor
        assert_allclose(p_motor, p_load * eff, rtol=1e-12)
    if p_load > 0:   # never more power out than in, to rounding
        assert abs(p_motor) >= abs(p_load) * (1 - 1e-12)
    else:
        assert abs(p_motor) <= abs(p_load) * (1 + 1e-12)


def test_gearing_validation():
    for bad in ({"ratio": 0}, {"ratio": -2}, {"efficiency": 0}, {"efficiency": 1.1}, {"ratio": float("nan")}):
        with pytest.raises(ParameterError):
            Gearing(**bad)
    assert_allclose(Gearing(4, 0.5).refer_inertia(16.0), 1.0)
    with pytest.raises(ParameterError):
        ConstantTorque(5.0, gearing=3)


# --------------------------------------------------------------------------------------------
# Fans and pumps: affinity laws Q ~ n, H ~ n^2, P ~ n^3 (common practice, no source).
# --------------------------------------------------------------------------------------------
def test_affinity_helpers():
    assert_allclose(affinity_flow(10.0, 1000, 500), 5.0)
    assert_allclose(affinity_head(40.0, 1000, 500), 10.0)
    assert_allclose(affinity_power(8000.0, 1000, 500), 1000.0)
    with pytest.raises(ParameterError):
        affinity_power(1.0, 0.0, 1.0)


@settings(max_examples=200, deadline=None)
@given(w_r=st.floats(10, 400), p_r=st.floats(100, 1e5), k=st.floats(0.05, 1.5))
def test_fan_follows_affinity_power_law(w_r, p_r, k):
    fan = Fan.from_duty(w_r, power=p_r)
    w = k * w_r
    assert_allclose(float(fan.torque(w)) * w, affinity_power(p_r, w_r, w), rtol=1e-10)
    assert_allclose(float(fan.torque(w)), p_r / w_r * k**2, rtol=1e-10)
    assert_allclose(fan.torque(-w), -fan.torque(w))      # odd: opposes the motion both ways


def test_fan_pump_static_part_and_validation():
    f = Fan(rated_speed=100.0, rated_torque=50.0, static_torque=2.0)
    assert_allclose(f.torque([0.0, 50.0, 100.0]), [2.0, 2 + 48 / 4, 50.0])
    assert f.breakaway_torque == 2.0 and f.kind == "fan"
    p = Pump.from_static_head(150.0, torque=80.0, static_head_fraction=0.25)
    assert p.kind == "pump" and p.static_torque == 20.0
    assert_allclose(p.torque(150.0), 80.0)
    q = Quadratic.from_duty(100.0, torque=10.0, gearing=Gearing(2.0, 1.0))
    assert_allclose(q.torque(200.0), 5.0)  # duty at the driven shaft, referred
    with pytest.raises(ParameterError):
        Fan.from_duty(100.0, torque=1.0, power=100.0)
    with pytest.raises(ParameterError):
        Fan.from_duty(100.0)
    with pytest.raises(ParameterError):
        Fan(100.0, 10.0, static_torque=11.0)
    with pytest.raises(ParameterError):
        Pump.from_static_head(100.0, torque=1.0, static_head_fraction=1.0)


# --------------------------------------------------------------------------------------------
# Breakaway friction: more torque to start than to run.
# --------------------------------------------------------------------------------------------
def test_breakaway_exceeds_running():
    b = Breakaway(running_torque=5.0, breakaway_torque=8.0, release_speed=2.0)
    w = np.linspace(0.0, 5.0, 501)
    t = b.torque(w)
    assert b.breakaway_torque == 8.0 == t[0]
    assert b.breakaway_torque > b.torque(2.0) == 5.0
    assert np.all(np.diff(t) <= 0)          # fades monotonically
    assert np.all(t[w >= 2.0] == 5.0)
    assert_allclose(b.slope([0.0, 2.0, 3.0]), 0.0, atol=1e-12)  # smooth at both ends of the fade
    assert b.slope(1.0) < 0                 # the stick-slip region
    assert_allclose(b.torque(-1.0), -b.torque(1.0))
    with pytest.raises(ParameterError):
        Breakaway(running_torque=5.0, breakaway_torque=4.0, release_speed=1.0)
    with pytest.raises(ParameterError):
        Breakaway(5.0, 8.0, 0.0)


def test_constant_power_and_linear_and_constant_torque():
    cp = ConstantPower(power=3000.0, min_speed=20.0)
    assert_allclose(cp.torque([10.0, 20.0, 60.0]), [150.0, 150.0, 50.0])
    assert_allclose(cp.torque(60.0) * 60.0, 3000.0)
    assert cp.breakaway_torque == 150.0 and cp.kind == "winder"
    lin = Linear(coefficient=0.5, offset=2.0)
    assert_allclose(lin.torque([0.0, 10.0]), [2.0, 7.0])
    passive = ConstantTorque(12.0)
    active = ConstantTorque(12.0, active=True)
    assert_allclose(passive.torque([-1.0, 0.0, 1.0]), [-12.0, 12.0, 12.0])
    assert_allclose(active.torque([-1.0, 1.0]), [12.0, 12.0])
    with pytest.raises(ParameterError):
        ConstantPower(0.0, 1.0)
    with pytest.raises(ParameterError):
        Linear(-1.0)


def test_conveyor_from_mass():
    c = Conveyor.from_mass(mass=5000, friction_coefficient=0.03, pulley_diameter=0.5,
                           incline=math.radians(10), gearing=Gearing(20, 0.95))
    f_f = 0.03 * 5000 * STANDARD_GRAVITY * math.cos(math.radians(10))
    f_l = 5000 * STANDARD_GRAVITY * math.sin(math.radians(10))
    assert_allclose(c.torque(100.0), (f_f + f_l) * 0.25 / (20 * 0.95))
    # running backwards the friction reverses but the lift does not: the load still pulls back
    assert_allclose(c.torque(-100.0), (f_l - f_f) * 0.25 * 0.95 / 20)
    assert_allclose(c.belt_speed(20.0), 0.25)
    assert_allclose(c.inertia, 5000 * 0.25**2 / 400)
    assert "conveyor" in c.describe()


def test_sum_load_adds_everything():
    a = Fan.from_duty(100.0, torque=20.0, load_inertia=1.0)
    b = ConstantTorque(3.0, gearing=Gearing(2.0, 0.8), load_inertia=4.0)
    c = Breakaway(1.0, 2.0, 1.0)
    s = a + b + c
    assert isinstance(s, SumLoad) and len(s.loads) == 3 and s.kind == "sum"
    assert sum([a, b, c]) == s
    w = np.array([0.5, 50.0, 120.0])
    assert_allclose(s.torque(w), a.torque(w) + b.torque(w) + c.torque(w))
    assert_allclose(s.slope(w), a.slope(w) + b.slope(w) + c.slope(w))
    assert_allclose(s.inertia, 1.0 + 1.0)
    assert_allclose(s.breakaway_torque, 0.0 + 3.0 / 1.6 + 2.0)
    assert s.describe().count("|") == 2
    with pytest.raises(ParameterError):
        SumLoad((a, "fan"))


# --------------------------------------------------------------------------------------------
# Tables from CSV files.
# --------------------------------------------------------------------------------------------
def test_table_from_csv_units_and_interpolation():
    t = TableLoad.from_csv(DATA / "loads_fan_table.csv")
    assert t.kind == "table" and len(t.speed) == 5 and "loads_fan_table.csv" in t.describe()
    # r/min and lbf*ft converted with the NIST SP 811 factors (units module)
    assert_allclose(t.speed[-1], 1200 * 2 * math.pi / 60)
    assert_allclose(t.torque(1200 * RPM), 40.00 * 1.3558179483314, rtol=1e-12)
    assert_allclose(t.torque(600 * RPM), 11.50 * LBF_FT)
    mid = float(t.torque(450 * RPM))
    assert 4.38 * LBF_FT < mid < 11.50 * LBF_FT      # PCHIP keeps monotone data monotone
    assert t.breakaway_torque == pytest.approx(2.0 * LBF_FT)


def test_table_outside_range_holds_ends_and_warns_once():
    t = TableLoad(speed=(0.0, 10.0, 20.0), torque_values=(1.0, 2.0, 5.0))
    with pytest.warns(RuntimeWarning, match="outside its speed range"):
        out = t.torque([-5.0, 30.0])
    assert_allclose(out, [1.0, 5.0])
    assert_allclose(t.torque([25.0]), [5.0])   # second time: no warning (warnings are errors here)
    assert_allclose(t.slope([25.0]), [0.0])


def _write(tmp_path, text):
    p = tmp_path / "t.csv"
    p.write_text(text)
    return p


@pytest.mark.parametrize("text, line, words", [
    ("speed_rpm,torque_n_m\n0,1\n100,abc\n", 3, ["torque_n_m", "'abc'", "not a number"]),
    ("# c\nspeed_rpm,torque_n_m\n0,1\n100,nan\n", 4, ["torque_n_m", "'nan'", "finite"]),
    ("speed_rpm,torque_n_m\n0,1\n\n100,\n", 4, ["torque_n_m", "missing"]),
    ("speed_rpm,torque_n_m\n0,1\n100,2\n50,3\n", 4, ["speed_rpm", "'50'", "increase"]),
    ("speed_rpm,torque_n_m\n0,1\n0,2\n", 3, ["speed_rpm", "increase"]),
    ("speed_rpm,force_n\n0,1\n", 1, ["torque", "torque_n_m"]),
    ("rpm,torque_n_m\n0,1\n", 1, ["speed", "speed_rad_s"]),
    ("speed_rpm,speed_rad_s,torque_n_m\n0,0,1\n", 1, ["exactly one speed"]),
    ("speed_rad_s,torque_lbf_ft\n5,inf\n", 2, ["torque_lbf_ft", "'inf'"]),
])
def test_csv_errors_name_line_column_and_value(tmp_path, text, line, words):
    p = _write(tmp_path, text)
    with pytest.raises(ScenarioError) as e:
        TableLoad.from_csv(p)
    assert e.value.path == f"{p}:{line}"
    for w in words:
        assert w in str(e.value)


def test_csv_too_few_rows_and_missing_file(tmp_path):
    with pytest.raises(ScenarioError, match="at least 2 data rows, found 1"):
        TableLoad.from_csv(_write(tmp_path, "speed_rad_s,torque_n_m\n1,2\n"))
    with pytest.raises(ScenarioError, match="no header"):
        TableLoad.from_csv(_write(tmp_path, "# only a comment\n"))
    with pytest.raises(ScenarioError, match="cannot read"):
        TableLoad.from_csv(tmp_path / "absent.csv")
    with pytest.raises(ParameterError):
        TableLoad(speed=(0.0, 0.0), torque_values=(1.0, 2.0))
    with pytest.raises(ParameterError):
        TableLoad(speed=(0.0, 1.0), torque_values=(1.0,))


# --------------------------------------------------------------------------------------------
# Typed formulas.
# --------------------------------------------------------------------------------------------
def test_formula_load_units():
    f = FormulaLoad("5 + 1e-5*n**2")                 # n in r/min
    w = 1000 * RPM
    assert_allclose(f.torque(w), 5 + 1e-5 * 1000**2)
    assert_allclose(f.slope(w), 2e-5 * 1000 / RPM)   # per rad/s
    g = FormulaLoad("5 + 0.1*w", speed_unit="rad/s", gearing=Gearing(10.0, 0.5))
    assert_allclose(g.torque(100.0), (5 + 0.1 * 10) / 5)
    assert g.kind == "formula" and "rad/s" in g.describe()
    with pytest.raises(FormulaError):
        FormulaLoad("__import__('os')")
    with pytest.raises(ParameterError):
        FormulaLoad("n", speed_unit="rps")


def test_every_load_is_a_frozen_dataclass_with_the_contract():
    loads = [ConstantTorque(1.0), Conveyor(10.0, 0.5), Hoist(100.0), Quadratic(10.0, 1.0), Fan(10.0, 1.0),
             Pump(10.0, 1.0), Linear(0.1), ConstantPower(10.0, 1.0), Breakaway(1.0, 2.0, 1.0),
             TableLoad((0.0, 1.0), (1.0, 2.0)), FormulaLoad("1 + n"), ConstantTorque(1.0) + Fan(10.0, 1.0)]
    for load in loads:
        assert isinstance(load, Load)
        with pytest.raises(AttributeError):
            load.kind_of_thing = 1  # frozen
        t = load.torque(np.array([0.5, 1.0]))
        assert t.dtype == np.float64 and t.shape == (2,)
        assert load.slope(np.array([0.5])).shape == (1,)
        assert load.breakaway_torque >= float(load.torque(0.0)) - 1e-12
        assert load.inertia >= 0.0 and isinstance(load.describe(), str) and load.kind


# --------------------------------------------------------------------------------------------
# slope() equals a central finite difference of torque() for every analytic load.
# Tolerance: |s - fd| <= 1e-5*|s| + 1e-7*(1 + |T|), with h = 1e-6*max(1, |w|) (truncation
# error O(h^2) and rounding eps*|T|/h are both far below it). Points within 1e-3 (relative) of a
# corner of the curve (standstill, min_speed, release_speed, table knots, a zero of the load
# torque) are skipped: there the one-sided slopes differ by design.
# --------------------------------------------------------------------------------------------
gearings = st.one_of(st.none(), st.builds(Gearing, st.floats(0.5, 50), st.floats(0.5, 1.0)))
pos = st.floats(0.5, 200)


def _corners(load):
    g = getattr(load, "gearing", None)
    r = g.ratio if g is not None else 1.0
    c = [0.0]
    if isinstance(load, ConstantPower):
        c += [load.min_speed * r, -load.min_speed * r]
    if isinstance(load, Breakaway):
        c += [load.release_speed, -load.release_speed]
    if isinstance(load, TableLoad):
        c += [x * r for x in load.speed]
    if isinstance(load, Linear) and load.coefficient > 0:
        c.append(-load.offset / load.coefficient * r)
    return c


loads = st.one_of(
    st.builds(ConstantTorque, pos, gearings, st.just(0.0), st.booleans()),
    st.builds(Conveyor, pos, st.floats(0.1, 2), st.floats(-50, 50), st.just(0.0), gearings),
    st.builds(Hoist, pos, st.floats(0, 10), st.floats(0, 10), st.floats(0.1, 2), st.floats(1, 8), gearings),
    st.builds(lambda w, t, s, g: Fan(w, t, s * t, g), pos, pos, st.floats(0, 1), gearings),
    st.builds(lambda w, t, s, g: Pump(w, t, s * t, g), pos, pos, st.floats(0, 1), gearings),
    st.builds(Linear, st.floats(0, 5), st.floats(-50, 50), gearings),
    st.builds(ConstantPower, st.floats(10, 1e4), st.floats(0.5, 50), gearings),
    st.builds(lambda a, b, r: Breakaway(a, a + b, r), st.floats(0, 50), st.floats(0, 50), st.floats(0.5, 20)),
    st.builds(lambda ts, g: TableLoad(tuple(10.0 * i for i in range(len(ts))), tuple(ts), gearing=g),
              st.lists(st.floats(0.5, 100), min_size=2, max_size=8), gearings),
    st.builds(lambda a, b, g: FormulaLoad(f"{a} + {b}*n**2 + sqrt(abs(n))", gearing=g),
              st.floats(0, 50), st.floats(0, 1e-3), gearings),
)


@settings(max_examples=1500, deadline=None)
@given(loads, st.floats(-3000, 3000))
def test_slope_is_the_derivative_of_torque(load, w):
    assume(all(abs(w - c) > 1e-3 * max(1.0, abs(c)) for c in _corners(load)))
    if isinstance(load, TableLoad):   # stay inside the table (outside it warns, tested above)
        r = load._gear.ratio
        assume(load.speed[0] * r < w < load.speed[-1] * r)
    h = 1e-6 * max(1.0, abs(w))
    fd = (float(load.torque(w + h)) - float(load.torque(w - h))) / (2 * h)
    s = float(load.slope(w))
    t = float(load.torque(w))
    assert abs(s - fd) <= 1e-5 * abs(s) + 1e-7 * (1 + abs(t)), (load, w, s, fd)


@settings(max_examples=200, deadline=None)
@given(w=st.floats(-400.0, 400.0, allow_nan=False), ratio=st.floats(1.0, 30.0), eff=st.floats(0.5, 1.0))
def test_float_fast_path_equals_array_path(w, ratio, eff):
    """The float path used inside root finders gives exactly what the vectorized path gives."""
    from dcchar.models.loads import ConstantTorque, Conveyor, Fan, Hoist, Linear

    g = Gearing(ratio, eff)
    loads = [ConstantTorque(40.0, gearing=g), ConstantTorque(40.0, gearing=g, active=True),
             Conveyor(friction_pull=900.0, pulley_diameter=0.5, lift_pull=300.0, gearing=g),
             Hoist(load_mass=800.0, drum_diameter=0.4, reeving=2, gearing=g),
             Fan.from_duty(120.0, torque=60.0, static_torque=3.0, gearing=g), Linear(0.2, 5.0, gearing=g)]
    for load in loads:
        t_fast, s_fast = load.torque(float(w)), load.slope(float(w))
        assert isinstance(t_fast, float)
        t_arr, s_arr = load.torque(np.array([w])), load.slope(np.array([w]))
        assert t_fast == pytest.approx(float(t_arr[0]), rel=1e-14, abs=1e-14)
        assert s_fast == pytest.approx(float(s_arr[0]), rel=1e-14, abs=1e-14)


def test_lowering_hoist_with_reversed_armature():
    """Lowering with the armature reversed: in the motor's frame the gravity torque aids the
    motion, referred with the gear efficiency multiplying (the load drives), as in Dubey,
    Fundamentals of Electrical Drives, 2nd ed., ch. 2 (active loads, power flow through gears)."""
    from dcchar.models.loads import LoweringHoist

    h = Hoist(load_mass=1500.0, hook_mass=80.0, drum_diameter=0.4, reeving=2, gearing=Gearing(20.0, 0.92))
    low = LoweringHoist.of(h)
    assert_allclose(low.torque(np.array([50.0])), -h.drum_torque * 0.92 / 20.0, rtol=1e-12)
    assert low.kind == "hoist" and low.inertia == h.inertia


@pytest.mark.parametrize("ratio", [1.0, 7.5])
def test_lossless_gearing_refers_by_the_ratio_alone(ratio):
    # With no gear loss the referred torque is T_l/ratio whichever way power flows (Dubey,
    # Fundamentals of Electrical Drives, 2nd ed., ch. 2, with efficiency 1).
    g = Gearing(ratio, 1.0)
    w = np.array([-3.0, 0.0, 2.0, 5.0])
    t_l = np.array([4.0, -1.0, -6.0, 2.0])
    np.testing.assert_allclose(g.refer_torque(t_l, w), t_l / ratio, rtol=1e-15)
    np.testing.assert_array_equal(g.refer_torque(t_l, w), t_l * g.factor(t_l, w))


def test_breakaway_torque_is_computed_once_for_an_immutable_load():
    load = Quadratic(rated_speed=100.0, rated_torque=50.0, static_torque=4.0, gearing=Gearing(2.0, 0.8))
    first = load.breakaway_torque
    assert first == pytest.approx(4.0 / (2.0 * 0.8), rel=1e-15)
    assert load.breakaway_torque == first and load.__dict__["_breakaway_cache"] == first
    assert load == Quadratic(rated_speed=100.0, rated_torque=50.0, static_torque=4.0, gearing=Gearing(2.0, 0.8))
