"""Steady-state models of every field connection against published worked examples.

Book answers are printed to 3-5 significant figures; each check holds the tool to half a unit of
the last printed digit unless said otherwise. Values recomputed here from the same data and the
same assumptions are held to 1e-9 relative.
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.errors import DcCharError, ParameterError
from dcchar.models.connections import Compound, PermanentMagnet, Rating, SeparatelyExcited, Series, Shunt
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import LinearMagnetization, TabulatedMagnetization
from dcchar.models.units import RPM


def _linear_for(kphi, excitation, reference_speed=100.0):
    """A linear magnetization giving machine constant ``kphi`` at ``excitation``."""
    return LinearMagnetization(slope=kphi * reference_speed / excitation, reference_speed=reference_speed)


# --- separately excited: Fitzgerald, Kingsley, Umans, Electric Machinery, 6th ed., Example 7.1, p. 371.
# 25 kW, 125 V machine, Ra = 0.02 ohm, 3000 r/min, field set for Ea = 125 V; brush drop and rotational
# loss neglected. (a) Vt = 128 V: motor, Ia = 150 A in, 19.2 kW at the terminals, 18.75 kW converted,
# 59.7 N*m. (b) Vt = 124 V: generator, Ia = 50 A out, 6.2 kW out, 6.25 kW converted, 19.9 N*m.
@pytest.fixture
def fitzgerald_7_1():
    kphi = 125.0 / (3000.0 * RPM)
    return SeparatelyExcited(armature_resistance=0.02, magnetization=_linear_for(kphi, 1.0),
                             field_resistance=100.0, field_voltage=100.0)


def test_separately_excited_motor_fitzgerald_7_1(fitzgerald_7_1):
    c = fitzgerald_7_1.characteristic(voltage=128.0, current=[150.0])
    assert_allclose(c.speed_rpm, 3000.0, rtol=1e-12)
    assert_allclose(c.input_power, 19.2e3, rtol=1e-12)  # printed 19.2 kW (exact from the data)
    assert_allclose(c.emf * c.armature_current, 18.75e3, rtol=1e-12)
    assert_allclose(c.developed_torque, 59.7, atol=0.05)  # printed 59.7 N*m


def test_separately_excited_generator_fitzgerald_7_1(fitzgerald_7_1):
    c = fitzgerald_7_1.characteristic(voltage=124.0, current=[-50.0])
    assert_allclose(c.speed_rpm, 3000.0, rtol=1e-12)
    assert_allclose(-c.input_power, 6.2e3, rtol=1e-12)  # 6.2 kW delivered at the terminals
    assert_allclose(-c.emf * c.armature_current, 6.25e3, rtol=1e-12)
    assert_allclose(-c.developed_torque, 19.9, atol=0.05)  # printed 19.9 N*m (driving torque)
    # generating efficiency = electrical out / mechanical in, below 1
    assert 0 < c.efficiency[0] < 1


# --- shunt: Bakshi & Bakshi, DC Machines and Synchronous Machines, Ex. 3.1 (= Theraja, A Textbook of
# Electrical Technology, vol. II, Ex. 29.44). 6-pole 500 V shunt motor, wave wound (A = 2), Z = 1200,
# phi = 20 mWb, Ra = 0.5 ohm, Rsh = 250 ohm, IL = 20 A, mechanical losses 900 W. Answers: Ia = 18 A,
# Eb = 491 V, N = 409.167 r/min, Tg = 206.26 N*m, Tsh = 185.26 N*m, Pout = 7938 W, eta = 79.38 %.
def test_shunt_bakshi_3_1():
    kphi = 6 * 1200 * 0.020 / (2 * math.pi * 2)  # P*Z*phi/(2*pi*A)
    m = Shunt(armature_resistance=0.5, magnetization=_linear_for(kphi, 500.0 / 250.0), field_resistance=250.0,
              rotational_loss=RotationalLoss(fixed_power=900.0, fade_speed=1e-3))
    c = m.characteristic(voltage=500.0, current=[18.0])
    assert_allclose(c.supply_current, 20.0, rtol=1e-12)
    assert_allclose(c.emf, 491.0, rtol=1e-12)
    assert_allclose(c.speed_rpm, 409.167, atol=5e-4)
    assert_allclose(c.developed_torque, 206.26, atol=5e-3)
    assert_allclose(c.shaft_torque, 185.26, atol=5e-3)
    assert_allclose(c.output_power, 7938.0, atol=0.5)
    assert_allclose(c.efficiency, 0.7938, atol=5e-5)


# --- shunt: Chapman, Electric Machinery Fundamentals, 4th/5th ed., Example 9-1 (from memory, unverified):
# 50 hp, 250 V, 1200 r/min shunt motor with compensating windings, RA = 0.06 ohm, field circuit 50 ohm,
# no-load speed 1200 r/min. Speeds at input currents 100, 200, 300 A: 1173, 1144, 1115 r/min.
@pytest.mark.parametrize("line_current, speed_rpm", [(100.0, 1173.0), (200.0, 1144.0), (300.0, 1115.0)])
def test_shunt_speed_with_load_chapman_9_1(line_current, speed_rpm):
    kphi = 250.0 / (1200.0 * RPM)  # no-load EMF = supply voltage (Ia ~ 0 in the book)
    m = Shunt(armature_resistance=0.06, magnetization=_linear_for(kphi, 5.0), field_resistance=50.0)
    c = m.characteristic(voltage=250.0, current=[line_current - 5.0])
    assert_allclose(c.speed_rpm, speed_rpm, atol=0.5)
    assert_allclose(c.supply_current, line_current, rtol=1e-12)


# --- series, unsaturated: Theraja, A Textbook of Electrical Technology, vol. II, ch. 29 (from memory,
# unverified as to the example number): a 220 V series motor runs at 800 r/min drawing 100 A; total
# armature and field resistance 0.1 ohm; unsaturated. Speed when developing half the torque: 1147 r/min.
def test_series_half_torque_theraja():
    from scipy.optimize import brentq

    kphi_per_amp = (220.0 - 100.0 * 0.1) / (800.0 * RPM) / 100.0
    mag = LinearMagnetization(slope=kphi_per_amp * 100.0, reference_speed=100.0)
    m = Series(armature_resistance=0.06, magnetization=mag, series_turns=1.0, series_resistance=0.04)
    full = m.characteristic(voltage=220.0, current=[100.0])
    assert_allclose(full.speed_rpm, 800.0, rtol=1e-12)
    half = 0.5 * full.developed_torque[0]
    i2 = brentq(lambda i: m.characteristic(220.0, [i]).developed_torque[0] - half, 1.0, 100.0, xtol=1e-12)
    c = m.characteristic(220.0, [i2])
    assert_allclose(i2, 100.0 / math.sqrt(2.0), rtol=1e-9)  # T ~ I^2 when unsaturated
    assert_allclose(c.speed_rpm, 1147.0, atol=0.5)


# --- series, saturated (flux ratio given): problem statement as published ("DC Series Motor Question",
# brainmass.com; textbook origin not confirmed): 230 V series motor, 900 r/min at 75 A, armature circuit
# 0.13 ohm, series field 0.09 ohm; flux at 25 A is 45 % of that at 75 A. Speed at 25 A, recomputed:
# 900 * (230 - 25*0.22)/(230 - 75*0.22) / 0.45 = 2103.0 r/min.
def test_series_saturated_flux_ratio():
    e75 = 230.0 - 75.0 * 0.22
    mag = TabulatedMagnetization([25.0, 75.0], [0.45 * e75, e75], reference_speed=900.0 * RPM)
    m = Series(armature_resistance=0.13, magnetization=mag, series_turns=1.0, series_resistance=0.09)
    c = m.characteristic(voltage=230.0, current=[75.0, 25.0])
    assert_allclose(c.speed_rpm[0], 900.0, rtol=1e-12)
    expected = 900.0 * (230.0 - 25.0 * 0.22) / e75 / 0.45
    assert_allclose(c.speed_rpm[1], expected, rtol=1e-9)
    assert_allclose(c.speed_rpm[1], 2103.0, atol=0.5)


# --- compound, long shunt, cumulative: problem statement as published on a homework site; textbook
# origin believed to be P. C. Sen, Principles of Electric Machines and Power Electronics (from memory,
# unverified). 250 V, internal resistance with the series winding 0.08 ohm, 1000 shunt turns and 5 series
# turns per pole, magnetization at 1200 r/min Ea = 150 + 0.02*F, losses and armature reaction neglected.
# (a) Shunt field resistance for 1200 r/min at no load: 50 ohm. (b) At Ia = 100 A, recomputed:
# F = 5500 At, Ea(1200) = 260 V, n = 1200*242/260 = 1116.92 r/min, speed regulation 7.44 %,
# T = 242*100/omega = 206.9 N*m, eta = 24200/26250 = 92.19 %.
def test_long_shunt_cumulative_compound():
    mag = LinearMagnetization(slope=0.02, reference_speed=1200.0 * RPM, residual_emf=150.0)
    shunt_amperes = float(mag.excitation_for_emf(250.0)) / 1000.0
    field_resistance = 250.0 / shunt_amperes
    assert_allclose(field_resistance, 50.0, rtol=1e-12)
    m = Compound(armature_resistance=0.05, series_resistance=0.03, magnetization=mag, field_turns=1000.0,
                 field_resistance=field_resistance, series_turns=5.0, shunt_connection="long", kind="cumulative")
    c = m.characteristic(voltage=250.0, current=[100.0])
    n_fl = 1200.0 * 242.0 / 260.0
    assert_allclose(c.excitation, 5500.0, rtol=1e-12)
    assert_allclose(c.speed_rpm, n_fl, rtol=1e-9)
    assert_allclose(c.developed_torque, 242.0 * 100.0 / (n_fl * RPM), rtol=1e-9)
    assert_allclose(c.developed_torque, 206.9, atol=0.05)
    assert_allclose(c.efficiency, 24200.0 / 26250.0, rtol=1e-9)
    assert_allclose(c.no_load_speed / RPM, 1200.0, rtol=1e-6)  # no-load limit Ia -> 0+
    regulation = (c.no_load_speed / RPM - n_fl) / n_fl * 100.0
    assert_allclose(regulation, 7.44, atol=5e-3)


def test_short_shunt_field_current_divides_as_the_circuit_says():
    # textbook short-shunt relation, common practice: If = (V - IL*Rs)/Rf with IL = Ia + If
    mag = LinearMagnetization(slope=0.02, reference_speed=120.0, residual_emf=10.0)
    m = Compound(armature_resistance=0.1, series_resistance=0.05, magnetization=mag, field_turns=800.0,
                 field_resistance=100.0, series_turns=4.0, shunt_connection="short")
    c = m.characteristic(voltage=230.0, current=[60.0])
    IL, If = c.supply_current[0], c.field_current[0]
    assert_allclose(If, (230.0 - IL * 0.05) / 100.0, rtol=1e-12)
    assert_allclose(IL, 60.0 + If, rtol=1e-12)
    assert_allclose(c.emf, 230.0 - IL * 0.05 - 60.0 * 0.1, rtol=1e-12)


def test_differential_compound_weakens_with_load():
    # common practice, no source: the differential series field opposes the shunt field
    mag = LinearMagnetization(slope=0.02, reference_speed=120.0)
    kw = dict(armature_resistance=0.1, series_resistance=0.05, magnetization=mag, field_turns=800.0,
              field_resistance=100.0, series_turns=4.0)
    cum = Compound(kind="cumulative", **kw).characteristic(230.0, [0.0, 100.0])
    dif = Compound(kind="differential", **kw).characteristic(230.0, [0.0, 100.0])
    assert cum.kphi[1] > cum.kphi[0] and dif.kphi[1] < dif.kphi[0]
    assert dif.speed[1] > cum.speed[1]


def test_permanent_magnet_temperature_coefficient():
    # hard ferrite -0.20 %/K reversible coefficient (magnet makers' data, two sources agree)
    m20 = PermanentMagnet(armature_resistance=0.5, kphi=0.5, magnet_material="ferrite")
    m70 = m20.with_(magnet_temperature=70.0)
    assert_allclose(m70.hot_kphi / m20.hot_kphi, 1 - 0.002 * 50, rtol=1e-12)
    # and the no-load speed rises as the flux falls: w0 = V/kphi with no losses
    assert_allclose(m70.characteristic(24.0, [0.0]).speed, 24.0 / m70.hot_kphi, rtol=1e-12)


def test_winding_temperature_uses_copper_constant():
    # copper, 234.5 constant (IEC 60228 parameters): 25 -> 75 degC multiplies R by 1.193 (table A16)
    m = Shunt(armature_resistance=1.0, magnetization=_linear_for(1.0, 1.0), field_resistance=100.0,
              reference_temperature=25.0, winding_temperature=75.0)
    assert_allclose(m.hot_armature_resistance, 1.193, atol=5e-4)
    assert_allclose(m.field_circuit_resistance, 119.27, atol=5e-3)


def test_series_runaway_flagged_not_plotted():
    # common practice, no source: an unloaded series motor without residual flux has no speed bound
    mag = LinearMagnetization(slope=1.0, reference_speed=100.0)
    m = Series(armature_resistance=0.2, magnetization=mag, series_turns=1.0, series_resistance=0.1,
               safe_speed=300.0)
    c = m.characteristic(voltage=220.0)
    assert math.isinf(c.no_load_speed)
    assert c.runs_away
    assert not c.within_safe_speed[0]
    # the current where the speed falls to the safe speed: (220 - I*0.3)/(0.01*I) = 300 -> I = 220/3.3
    assert_allclose(c.runaway.current, 220.0 / 3.3, rtol=1e-9)
    assert np.all(np.abs(c.speed[c.within_safe_speed]) <= 300.0)
    assert any(x.code == "series_no_load" for x in c.cautions)


def test_locked_rotor_figures():
    m = Shunt(armature_resistance=0.5, brush_drop=2.0, magnetization=_linear_for(1.2, 2.0),
              field_resistance=110.0)
    c = m.characteristic(voltage=220.0)
    assert_allclose(c.locked_rotor_current, (220.0 - 2.0) / 0.5, rtol=1e-12)
    assert_allclose(c.locked_rotor_torque, 1.2 * 436.0, rtol=1e-12)
    assert_allclose(c.locked_rotor_supply_current, 436.0 + 2.0, rtol=1e-12)
    assert_allclose(c.speed[-1], 0.0, atol=1e-9)


# --- bad input names the field, the value and what is allowed


@pytest.mark.parametrize("kwargs, field", [
    (dict(armature_resistance=0.0), "armature_resistance"),
    (dict(armature_resistance=-1.0), "armature_resistance"),
    (dict(field_resistance=float("nan")), "field_resistance"),
    (dict(brush_drop=-2.0), "brush_drop"),
    (dict(field_turns=0.0), "field_turns"),
])
def test_bad_shunt_parameters(kwargs, field):
    base = dict(armature_resistance=0.5, magnetization=_linear_for(1.0, 1.0), field_resistance=100.0)
    base.update(kwargs)
    with pytest.raises(ParameterError) as e:
        Shunt(**base)
    assert e.value.field == field
    assert field in str(e.value) and "expected" in str(e.value)
    assert isinstance(e.value, DcCharError) and isinstance(e.value, ValueError)


def test_compound_without_series_turns_is_refused():
    with pytest.raises(ParameterError, match="series_turns=0"):
        Compound(armature_resistance=0.1, series_resistance=0.05, magnetization=_linear_for(1.0, 1.0),
                 field_resistance=100.0, series_turns=0)


def test_impossible_rating_is_refused():
    with pytest.raises(ParameterError, match="rating.output"):
        Rating(voltage=220.0, current=10.0, speed=100.0, output=2500.0)


def test_nan_current_is_refused():
    m = Shunt(armature_resistance=0.5, magnetization=_linear_for(1.0, 1.0), field_resistance=100.0)
    with pytest.raises(ParameterError, match="current"):
        m.characteristic(220.0, [1.0, float("nan")])


def test_magnetization_must_be_a_curve():
    with pytest.raises(ParameterError, match="magnetization"):
        Shunt(armature_resistance=0.5, magnetization=1.5, field_resistance=100.0)


def test_short_shunt_locked_rotor_current_makes_emf_zero():
    # the standstill current is where the back EMF is zero, the shunt field's share through the
    # series field included (short-shunt circuit relation, common practice)
    mag = LinearMagnetization(slope=0.02, reference_speed=120.0, residual_emf=10.0)
    m = Compound(armature_resistance=0.1, series_resistance=0.05, magnetization=mag, field_turns=800.0,
                 field_resistance=100.0, series_turns=4.0, shunt_connection="short", brush_drop=2.0)
    i_lr = m.locked_rotor_current(230.0)
    c = m.characteristic(230.0, [i_lr])
    assert_allclose(c.emf, 0.0, atol=1e-9)
    assert_allclose(c.speed, 0.0, atol=1e-9)


def test_speed_torque_arrays_equal_the_full_state():
    # the two-output kernel is lambdified from the same sympy expressions as the full one
    # (reference: Machine.state_arrays)
    from dcchar.studies.demo import DEMO_RATING, demo_family

    for m in demo_family().values():
        i = np.linspace(-0.5, 1.5, 41) * m.locked_rotor_current(DEMO_RATING.voltage)
        w, t = m.speed_torque_arrays(DEMO_RATING.voltage, i)
        st = m.state_arrays(DEMO_RATING.voltage, i)
        assert_allclose(w, st["speed"], rtol=1e-12, atol=0.0)
        assert_allclose(t, st["shaft_torque"], rtol=1e-12, atol=1e-12 * DEMO_RATING.torque)
